"""Tests for bankbuild.calc.discharge against code limits and electricpy's RC discharge."""

import math

import pytest
from electricpy import passive  # outside oracle, imported once (slow)
from hypothesis import given
from hypothesis import strategies as st

from bankbuild.calc import discharge

# (capacitance per element µF, rated voltage V, limit V, time s)
RULE_CASES = [
    (100.0, 480.0, 50.0, 60.0),  # Source: trade-facts — NEC 460.6(A): ≤ 50 V within 1 min, ≤ 1000 V
    (1934.71, 480.0, 50.0, 60.0),  # Source: trade-facts — NEC 460.6(A), oracles.md example capacitance
    (300.0, 400.0, 75.0, 180.0),  # Source: trade-facts — IEC 60831-1: ≤ 75 V within 3 min from √2·U_N
    (50.0, 690.0, 75.0, 180.0),  # Source: trade-facts — IEC 60831-1: ≤ 75 V within 3 min from √2·U_N
]


@pytest.mark.parametrize(("c_uf", "v_rated", "v_lim", "t_s"), RULE_CASES)
def test_max_resistance_meets_rule_per_electricpy(c_uf, v_rated, v_lim, t_s):
    # Source: electricpy 0.3.0 passive.vcapdischarge (Vs·e^(−t/RC)) confirms the resistance reaches the
    # limit at exactly the allowed time, and that 1 % more resistance misses it.
    v0 = discharge.start_voltage_v(v_rated)
    r = discharge.max_resistance_ohm(c_uf, v0, v_lim, t_s)
    assert passive.vcapdischarge(t_s, v0, r, c_uf * 1e-6) == pytest.approx(v_lim, rel=1e-9)
    assert passive.vcapdischarge(t_s, v0, 1.01 * r, c_uf * 1e-6) > v_lim
    assert discharge.voltage_after_v(v0, t_s, r, c_uf) == pytest.approx(v_lim, rel=1e-9)
    assert discharge.discharge_time_s(r, c_uf, v0, v_lim) == pytest.approx(t_s, rel=1e-9)


def test_start_voltage_is_peak_of_rated():
    # Source: trade-facts — IEC 60831-1, discharge from √2·U_N (start value marked *memory*).
    assert discharge.start_voltage_v(400.0) == pytest.approx(565.685, abs=5e-4)


def test_resistor_power():
    # P = V²/R: 480 V across 230 kΩ dissipates about 1 W.
    assert discharge.resistor_power_w(480.0, 230e3) == pytest.approx(480.0**2 / 230e3)


def test_already_below_limit():
    assert discharge.max_resistance_ohm(100.0, 40.0, 50.0, 60.0) == math.inf
    assert discharge.max_resistance_ohm(100.0, 50.0, 50.0, 60.0) == math.inf
    assert discharge.discharge_time_s(1e5, 100.0, 40.0, 50.0) == 0.0


@given(
    r=st.floats(min_value=1e3, max_value=1e7),
    c_uf=st.floats(min_value=1.0, max_value=5000.0),
    v0=st.floats(min_value=100.0, max_value=2000.0),
    v_lim=st.floats(min_value=10.0, max_value=99.0),
)
def test_discharge_time_round_trip(r, c_uf, v0, v_lim):
    t = discharge.discharge_time_s(r, c_uf, v0, v_lim)
    assert discharge.voltage_after_v(v0, t, r, c_uf) == pytest.approx(v_lim, rel=1e-9)


@given(
    c_uf=st.floats(min_value=1.0, max_value=5000.0),
    v0=st.floats(min_value=100.0, max_value=2000.0),
    v_lim=st.floats(min_value=10.0, max_value=99.0),
    t_s=st.floats(min_value=1.0, max_value=600.0),
)
def test_max_resistance_round_trip(c_uf, v0, v_lim, t_s):
    r = discharge.max_resistance_ohm(c_uf, v0, v_lim, t_s)
    assert discharge.discharge_time_s(r, c_uf, v0, v_lim) == pytest.approx(t_s, rel=1e-9)


@pytest.mark.parametrize(
    "call",
    [
        lambda: discharge.start_voltage_v(-480.0),
        lambda: discharge.max_resistance_ohm(0.0, 678.8, 50.0, 60.0),
        lambda: discharge.max_resistance_ohm(100.0, 678.8, 0.0, 60.0),
        lambda: discharge.max_resistance_ohm(100.0, 678.8, 50.0, -1.0),
        lambda: discharge.discharge_time_s(0.0, 100.0, 678.8, 50.0),
        lambda: discharge.voltage_after_v(678.8, -1.0, 1e5, 100.0),
        lambda: discharge.resistor_power_w(480.0, 0.0),
    ],
)
def test_impossible_input_raises(call):
    with pytest.raises(ValueError):
        call()
