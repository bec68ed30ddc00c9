"""Tests for bankbuild.calc.detuning: published tuning frequencies and circuit identities."""

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from bankbuild.calc import capacitor, detuning

# --- published values -------------------------------------------------------------------------------------


def test_7pct_tunes_to_189hz_at_50hz():
    # Source: trade-facts — "7% -> 189 Hz at 50 Hz" (detuned step formulas).
    assert detuning.tuning_frequency_hz(50.0, 0.07) == pytest.approx(189.0, abs=0.5)


def test_7pct_tunes_to_227hz_at_60hz():
    # Source: trade-facts — "7% -> 227 Hz at 60 Hz" (detuned step formulas).
    assert detuning.tuning_frequency_hz(60.0, 0.07) == pytest.approx(227.0, abs=0.5)


@pytest.mark.parametrize(
    ("p", "order"),
    [
        (0.0567, 4.2),  # common practice (no single source): 5.67 % tunes to 4.2 x f1 (210 Hz at 50 Hz)
        (0.07, 3.78),  # Source: trade-facts — 7 % -> 189 Hz at 50 Hz, i.e. order 3.78
        (0.14, 2.67),  # common practice (no single source): 14 % tunes to about 2.67 x f1 (134 Hz at 50 Hz)
    ],
)
def test_usual_tuning_factors(p, order):
    assert detuning.tuning_order(p) == pytest.approx(order, abs=0.005)
    assert detuning.p_from_tuning_order(detuning.tuning_order(p)) == pytest.approx(p, rel=1e-12)


# --- circuit identities (the series L-C branch solved from first principles) -----------------------------


@pytest.mark.parametrize(("q", "v", "f", "p"), [(50.0, 400.0, 50.0, 0.07), (25.0, 480.0, 60.0, 0.14)])
def test_step_output_from_series_impedance(q, v, f, p):
    # From trade-facts: Q = U² / (X_C − X_L). Build X_C from the capacitance (wye equivalent) and X_L from the
    # reactor inductance, then solve the series branch directly.
    omega = 2.0 * math.pi * f
    c_f = capacitor.capacitance_uf_per_leg(q, v, f, "wye") * 1e-6
    l_h = detuning.reactor_inductance_mh(q, v, f, p) * 1e-3
    x_c, x_l = 1.0 / (omega * c_f), omega * l_h
    assert x_l / x_c == pytest.approx(p, rel=1e-12)
    step_kvar = v**2 / (x_c - x_l) / 1000.0
    assert detuning.detuned_kvar(q, p) == pytest.approx(step_kvar, rel=1e-12)
    # Voltage across the capacitor: I · X_C with I = V_ph / (X_C − X_L), back to line-to-line.
    i_a = (v / math.sqrt(3.0)) / (x_c - x_l)
    assert detuning.capacitor_voltage_v(v, p) == pytest.approx(i_a * x_c * math.sqrt(3.0), rel=1e-12)
    # Series resonance of that L and C sits at the tuning frequency.
    f_r = 1.0 / (2.0 * math.pi * math.sqrt(l_h * c_f))
    assert detuning.tuning_frequency_hz(f, p) == pytest.approx(f_r, rel=1e-12)
    # Fundamental reactor current equals the series-branch current.
    assert detuning.reactor_current_a(step_kvar, v) == pytest.approx(i_a, rel=1e-12)


def test_reactor_current_with_harmonics():
    # rms of a sum of sinusoids: √(I1² + I5² + I7²).
    i1 = detuning.reactor_current_a(50.0, 400.0)
    expected = math.sqrt(i1**2 + (0.30 * i1) ** 2 + (0.10 * i1) ** 2)
    assert detuning.reactor_current_a(50.0, 400.0, {5: 30.0, 7: 10.0}) == pytest.approx(expected)
    assert detuning.reactor_current_a(50.0, 400.0, {}) == pytest.approx(i1)


# --- properties -------------------------------------------------------------------------------------------


@given(
    q=st.floats(min_value=0.1, max_value=1e4),
    p=st.floats(min_value=1e-6, max_value=0.999, exclude_max=False),
)
def test_detuned_output_exceeds_capacitor_output(q, p):
    assert detuning.detuned_kvar(q, p) > q


@given(p=st.floats(min_value=1e-4, max_value=0.99))
def test_order_and_p_are_inverse(p):
    assert detuning.p_from_tuning_order(detuning.tuning_order(p)) == pytest.approx(p, rel=1e-12)


# --- behaviour at the edges -------------------------------------------------------------------------------


def test_no_reactor_is_allowed_where_it_means_something():
    assert detuning.capacitor_voltage_v(400.0, 0.0) == 400.0
    assert detuning.detuned_kvar(50.0, 0.0) == 50.0
    assert detuning.reactor_inductance_mh(50.0, 400.0, 50.0, 0.0) == 0.0


@pytest.mark.parametrize(
    "call",
    [
        lambda: detuning.tuning_order(0.0),
        lambda: detuning.tuning_order(1.0),
        lambda: detuning.tuning_order(7.0),  # percent passed where a fraction is expected
        lambda: detuning.tuning_frequency_hz(-50.0, 0.07),
        lambda: detuning.capacitor_voltage_v(400.0, -0.07),
        lambda: detuning.detuned_kvar(-1.0, 0.07),
        lambda: detuning.reactor_inductance_mh(0.0, 400.0, 50.0, 0.07),
        lambda: detuning.reactor_current_a(50.0, 400.0, {1: 10.0}),
        lambda: detuning.reactor_current_a(50.0, 400.0, {5: -10.0}),
        lambda: detuning.reactor_current_a(50.0, 0.0),
        lambda: detuning.p_from_tuning_order(1.0),
    ],
)
def test_impossible_input_raises(call):
    with pytest.raises(ValueError):
        call()
