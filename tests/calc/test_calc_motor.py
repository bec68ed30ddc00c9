"""Tests for bankbuild.calc.motor: capacitors at motor terminals (self-excitation limit, NEC 460.9 current,
NEC 460.8(A) conductor rule), checked against electricpy and the power triangle."""

import math

import electricpy  # outside oracle, imported once (slow)
import pytest
from hypothesis import given
from hypothesis import strategies as st

from bankbuild.calc import motor

# --- magnetising kvar (self-excitation limit) -------------------------------------------------------------


@pytest.mark.parametrize(("voltage_v", "no_load_a"), [(460.0, 30.0), (480.0, 40.0), (400.0, 12.5), (600.0, 85.0)])
def test_magnetising_kvar_matches_electricpy_three_phase_power(voltage_v, no_load_a):
    # Source: electricpy 0.3.0 acpiv(S=…, VLL=…) gives the three-phase line current of an apparent power; the
    # no-load current taken as wholly magnetising is the current of Q_0 (CSA C22.1 26-218 limit, trade-facts).
    q0 = motor.magnetising_kvar(voltage_v, no_load_a)
    assert abs(electricpy.acpiv(S=q0 * 1000.0, VLL=voltage_v)) == pytest.approx(no_load_a, rel=1e-9)


def test_magnetising_kvar_with_no_load_power_factor():
    # Source: power triangle, Q = S·sin φ (trade-facts formulas): 460 V, 30 A, PF 0.1 -> 23.90 · √(1 − 0.01).
    s_kva = math.sqrt(3) * 460.0 * 30.0 / 1000.0  # 23.90 kVA
    assert motor.magnetising_kvar(460.0, 30.0, 0.1) == pytest.approx(s_kva * math.sqrt(0.99), rel=1e-12)
    assert round(s_kva, 2) == 23.9  # Source: S = √3·V·I (trade-facts), 460 V × 30 A


# --- NEC 460.9: line current with the capacitor -----------------------------------------------------------


@pytest.mark.parametrize(("v", "i_fl", "pf", "q_c"),
                         [(460.0, 124.0, 0.85, 30.0), (480.0, 96.0, 0.82, 20.0), (400.0, 180.0, 0.88, 40.0),
                          (600.0, 52.0, 0.80, 50.0)])
def test_reduced_current_matches_electricpy(v, i_fl, pf, q_c):
    # Source: electricpy 0.3.0 acpiv(S=…, VLL=…): line current of the corrected apparent power
    # S' = √(P² + (Q − Q_c)²), P and Q of the motor at full load (trade-facts power triangle).
    s = math.sqrt(3) * v * i_fl
    p, q = s * pf, s * math.sqrt(1 - pf**2)
    s_after = math.hypot(p, q - q_c * 1000.0)
    expected = abs(electricpy.acpiv(S=s_after, VLL=v))
    assert motor.reduced_line_current_a(v, i_fl, pf, q_c) == pytest.approx(expected, rel=1e-9)


def test_reduced_current_follows_the_power_factor_ratio():
    # Source: Electrical Installation Guide, "Power factor correction of induction motors": the overload setting
    # is reduced in the ratio cos φ before / cos φ after. 124 A at PF 0.85 corrected to PF 0.967 (30 kvar, 460 V).
    reduced = motor.reduced_line_current_a(460.0, 124.0, 0.85, 30.0)
    pf_after = motor.improved_power_factor(0.85, 124.0, reduced)
    assert reduced == pytest.approx(124.0 * 0.85 / pf_after, rel=1e-12)
    assert round(reduced, 1) == 109.0  # regression value (worked by hand above: 86.83 kVA / (√3 × 460 V))
    assert round(pf_after, 3) == 0.967  # regression value: 83.98 kW / 86.83 kVA


def test_full_correction_leaves_the_active_current():
    # Source: power triangle (trade-facts): with Q_c = Q the line current is the active current I·PF.
    v, i_fl, pf = 480.0, 100.0, 0.8
    q = math.sqrt(3) * v * i_fl * math.sqrt(1 - pf**2) / 1000.0
    assert motor.reduced_line_current_a(v, i_fl, pf, q) == pytest.approx(i_fl * pf, rel=1e-12)


# --- NEC 460.8(A): conductor to a motor circuit -----------------------------------------------------------


@pytest.mark.parametrize(("i_c", "motor_ampacity", "expected"), [
    (36.08, 150.0, 50.0),  # Source: NEC 460.8(A): 150 A / 3 = 50 A beats 1.35 × 36.08 = 48.7 A
    (36.08, 90.0, 48.708),  # Source: NEC 460.8(A): 1.35 × 36.08 = 48.7 A beats 90 / 3 = 30 A
    (120.3, 300.0, 162.405),  # Source: NEC 460.8(A): 1.35 × 120.3 A = 162.4 A beats 100 A
])
def test_capacitor_conductor_rule(i_c, motor_ampacity, expected):
    assert motor.min_capacitor_conductor_ampacity_a(i_c, motor_ampacity) == pytest.approx(expected, abs=1e-9)


def test_bad_inputs_raise():
    with pytest.raises(ValueError, match="no_load_pf"):
        motor.magnetising_kvar(480.0, 30.0, 1.2)
    with pytest.raises(ValueError, match="voltage_v"):
        motor.reduced_line_current_a(0.0, 10.0, 0.8, 5.0)
    with pytest.raises(ValueError, match="capacitor_kvar"):
        motor.reduced_line_current_a(480.0, 10.0, 0.8, math.nan)


# --- properties ----------------------------------------------------------------------------------------------

volts = st.floats(100.0, 1000.0)
amps = st.floats(0.5, 2000.0)
pfs = st.floats(0.3, 0.99)


@given(volts, amps)
def test_no_load_current_round_trip(v, i0):
    assert motor.no_load_current_a(v, motor.magnetising_kvar(v, i0)) == pytest.approx(i0, rel=1e-12)


@given(volts, amps, pfs, st.floats(0.0, 1.0))
def test_a_capacitor_up_to_the_motor_kvar_never_raises_the_current(v, i_fl, pf, share):
    # Any Q_c between 0 and 2·Q lowers |Q − Q_c|, so the line current cannot rise (power triangle).
    q = math.sqrt(3) * v * i_fl * math.sqrt(1 - pf**2) / 1000.0
    reduced = motor.reduced_line_current_a(v, i_fl, pf, share * 2 * q)
    assert i_fl * pf - 1e-9 <= reduced <= i_fl * (1 + 1e-12)


@given(st.floats(0.0, 5000.0), st.floats(0.0, 5000.0))
def test_conductor_rule_meets_both_limbs(i_c, ampacity):
    need = motor.min_capacitor_conductor_ampacity_a(i_c, ampacity)
    assert need >= 1.35 * i_c - 1e-9 and need >= ampacity / 3 - 1e-9
    assert need == pytest.approx(max(1.35 * i_c, ampacity / 3))
