"""Tests for bankbuild.calc.power against published values and an outside library (electricpy 0.3.0)."""

import math

import electricpy  # outside oracle, imported once (slow)
import pytest
from hypothesis import given
from hypothesis import strategies as st

from bankbuild.calc import power

# --- published values -------------------------------------------------------------------------------------


def test_multiplier_table_070_to_095():
    # Source: trade-facts — standard multiplier tables, 0.70 -> 0.95 = 0.691.
    # The formula gives 0.69152, so the tables truncate rather than round; tolerance is one unit in the
    # last published place.
    multiplier = power.tan_phi(0.70) - power.tan_phi(0.95)
    assert multiplier == pytest.approx(0.691, abs=1e-3)
    assert power.required_kvar(1.0, 0.70, 0.95) == pytest.approx(0.691, abs=1e-3)


def test_multiplier_table_080_to_095():
    # Source: trade-facts — standard multiplier tables, 0.80 -> 0.95 = 0.421.
    multiplier = power.tan_phi(0.80) - power.tan_phi(0.95)
    assert multiplier == pytest.approx(0.421, abs=5e-4)
    assert power.required_kvar(1.0, 0.80, 0.95) == pytest.approx(0.421, abs=5e-4)


def test_208v_10kva_pf08_to_unity_line_currents():
    # Source: trade-facts — "208 V, 10 kVA load, PF 0.8 -> 1.0: line current 27.76 -> 22.21 A".
    p_kw = 10.0 * 0.8
    q_kvar = power.reactive_kvar(p_kw, 0.8)
    assert power.three_phase_current_a(10.0, 208.0) == pytest.approx(27.76, abs=0.005)
    qc = power.correction_kvar(p_kw, q_kvar, 1.0)
    s_after = power.apparent_kva(p_kw, q_kvar - qc)
    assert power.three_phase_current_a(s_after, 208.0) == pytest.approx(22.21, abs=0.005)
    assert power.corrected_power_factor(p_kw, q_kvar, qc) == pytest.approx(1.0, abs=1e-12)


def test_hp_to_kw_constant():
    # Source: NIST SP 811 (2008), Appendix B.8: 1 hp (550 ft·lbf/s) = 745.6999 W.
    assert power.hp_to_kw(1.0) == pytest.approx(0.7456999, abs=1e-7)


# --- electricpy 0.3.0 as an outside oracle ----------------------------------------------------------------

PF_CASES = [
    # (P kW, PF present, PF target, V_LL)
    (250.0, 0.72, 0.96, 480.0),
    (100.0, 0.70, 0.95, 400.0),
    (8.0, 0.80, 1.00, 208.0),
    (1500.0, 0.65, 0.98, 690.0),
    (37.0, 0.85, 0.90, 415.0),
]


@pytest.mark.parametrize(("p_kw", "pf1", "pf2", "v"), PF_CASES)
def test_required_kvar_matches_electricpy(p_kw, pf1, pf2, v):
    # Source: electricpy 0.3.0 pfcorrection (takes apparent power S in VA: pass P/PF_old).
    _c_f, qc_var = electricpy.pfcorrection(p_kw * 1000.0 / pf1, pf1, pf2, VLL=v, freq=60)
    assert power.required_kvar(p_kw, pf1, pf2) == pytest.approx(float(qc_var) / 1000.0, rel=1e-9)
    q_kvar = power.reactive_kvar(p_kw, pf1)
    assert power.correction_kvar(p_kw, q_kvar, pf2) == pytest.approx(float(qc_var) / 1000.0, rel=1e-9)


def test_oracles_md_example_250kw():
    # Source: oracles.md — pfcorrection(250e3/0.72, 0.72, 0.96, VLL=480) -> Qc 168,046.5 var.
    assert power.required_kvar(250.0, 0.72, 0.96) == pytest.approx(168.0465, abs=5e-5)


@pytest.mark.parametrize(("s_kva", "v"), [(10.0, 208.0), (168.0465, 480.0), (500.0, 400.0)])
def test_line_current_matches_electricpy_acpiv(s_kva, v):
    # Source: electricpy 0.3.0 acpiv(S=VA, VLL=V) -> three-phase line current.
    expected = abs(electricpy.acpiv(S=s_kva * 1000.0, VLL=v))
    assert power.three_phase_current_a(s_kva, v) == pytest.approx(expected, rel=1e-12)
    assert power.three_phase_kva(v, expected) == pytest.approx(s_kva, rel=1e-12)


# --- properties -------------------------------------------------------------------------------------------

pfs = st.floats(min_value=0.1, max_value=1.0)
kws = st.floats(min_value=0.01, max_value=1e5)


@given(p_kw=kws, pf_a=pfs, pf_b=pfs)
def test_required_kvar_nonnegative_and_reaches_target(p_kw, pf_a, pf_b):
    pf1, pf2 = min(pf_a, pf_b), max(pf_a, pf_b)
    qc = power.required_kvar(p_kw, pf1, pf2)
    assert qc >= 0.0
    q = power.reactive_kvar(p_kw, pf1)
    assert power.corrected_power_factor(p_kw, q, qc) == pytest.approx(pf2, abs=1e-9)
    assert not power.is_leading(q, qc) or math.isclose(q, qc, rel_tol=1e-12)


@given(p_kw=kws, pf=pfs)
def test_power_triangle_round_trip(p_kw, pf):
    q = power.reactive_kvar(p_kw, pf)
    assert power.power_factor(p_kw, q) == pytest.approx(pf, abs=1e-12)
    assert power.apparent_kva(p_kw, q) == pytest.approx(p_kw / pf, rel=1e-12)


# --- behaviour at the edges -------------------------------------------------------------------------------


def test_correction_floors_at_zero_when_already_better():
    # common practice (no single source): no correction is offered when the load already meets the target.
    assert power.correction_kvar(100.0, 10.0, 0.9) == 0.0
    assert power.correction_kvar(100.0, -20.0, 0.9) == 0.0


def test_leading_after_over_correction():
    p_kw, q_kvar = 50.0, 20.0
    pf = power.corrected_power_factor(p_kw, q_kvar, 40.0)
    assert pf == pytest.approx(50.0 / math.hypot(50.0, 20.0))
    assert power.is_leading(q_kvar, 40.0)
    assert not power.is_leading(q_kvar, 10.0)


def test_power_factor_of_nothing_is_one():
    assert power.power_factor(0.0, 0.0) == 1.0


def test_motor_input():
    assert power.motor_input_kw(90.0, 0.9) == pytest.approx(100.0)


@pytest.mark.parametrize(
    "call",
    [
        lambda: power.tan_phi(0.0),
        lambda: power.tan_phi(1.01),
        lambda: power.tan_phi(float("nan")),
        lambda: power.reactive_kvar(-1.0, 0.8),
        lambda: power.required_kvar(100.0, 0.95, 0.80),
        lambda: power.required_kvar(100.0, 0.8, 1.2),
        lambda: power.motor_input_kw(10.0, 0.0),
        lambda: power.motor_input_kw(10.0, 1.5),
        lambda: power.hp_to_kw(-5.0),
        lambda: power.three_phase_current_a(10.0, 0.0),
        lambda: power.three_phase_current_a(10.0, -400.0),
        lambda: power.three_phase_kva(-400.0, 10.0),
        lambda: power.correction_kvar(100.0, 50.0, 0.0),
        lambda: power.corrected_power_factor(100.0, 50.0, -1.0),
    ],
)
def test_impossible_input_raises(call):
    with pytest.raises(ValueError):
        call()
