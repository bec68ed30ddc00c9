"""Detuning reactors: tuning frequency, capacitor voltage rise, inductance, harmonic currents and the reactor table.

Sources are named beside each value: trade-facts.md (detuned-step formulas, IEC 61642 style), IEEE Std 18
voltage limits (trade-facts.md), and circuit theory for the impedance of a series LC branch.
"""

from __future__ import annotations

import cmath
import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.calc.detuning import capacitor_voltages_v, harmonic_current_pct
from bankbuild.design.reactors import pick_reactor, step_reactor
from bankbuild.results.sizing import Detuning, Step


def detuned_step(kvar: float, voltage_v: float, frequency_hz: float, p: float) -> Step:
    """A sized detuned step delivering ``kvar`` at the supply (capacitor's own kvar (1 − p)·kvar)."""
    return Step(index=1, target_kvar=kvar, kvar=kvar, rated_kvar=kvar, rated_current_a=1.0, line_current_a=1.0,
                capacitance_uf_per_leg=1.0, units=[], device="fuse", device_rating_a=0.0, conductor="",
                conductor_ampacity_a=0.0, sizing=[],
                detuning=Detuning(tuning_pct=p * 100, tuning_frequency_hz=0.0, tuning_order=0.0,
                                  capacitor_voltage_v=0.0, capacitor_kvar_at_supply=kvar * (1 - p),
                                  reactor_inductance_mh=0.0, reactor_current_a=0.0))


@pytest.mark.parametrize(("f", "expected_hz"), [
    (50.0, 189.0),  # Source: trade-facts.md - p = 7 % -> 189 Hz at 50 Hz (f_r = f1/√p)
    (60.0, 227.0),  # Source: trade-facts.md - p = 7 % -> 227 Hz at 60 Hz
])
def test_tuning_frequency(catalogs, f, expected_hz):
    r = step_reactor(detuned_step(50.0, 400.0 if f == 50 else 480.0, f, 0.07), 400.0 if f == 50 else 480.0, f, 7.0,
                     525.0, {}, catalogs.reactors, 5.0)
    assert r.tuning_frequency_hz == pytest.approx(expected_hz, abs=0.5)


def test_capacitor_voltage_rise(catalogs):
    # Source: trade-facts.md - U_C = U/(1 − p): 400 V with p = 7 % -> 430.1 V; 480 V -> 516.1 V.
    r = step_reactor(detuned_step(50.0, 400.0, 50.0, 0.07), 400.0, 50.0, 7.0, 440.0, {}, catalogs.reactors, 5.0)
    assert r.capacitor_voltage_v == pytest.approx(430.1, abs=0.05)
    assert r.voltage_margin_pct == pytest.approx((440 / 430.11 - 1) * 100, abs=0.01)
    assert r.voltage_ok
    r = step_reactor(detuned_step(50.0, 480.0, 60.0, 0.07), 480.0, 60.0, 7.0, 480.0, {}, catalogs.reactors, 5.0)
    assert r.capacitor_voltage_v == pytest.approx(516.1, abs=0.05)
    assert not r.voltage_ok  # Source: trade-facts.md - a 480 V unit cannot take 516 V


def test_inductance_of_a_50_kvar_400_v_step(catalogs):
    # Source: trade-facts.md detuned-step formulas, worked by hand: 50 kvar at 400 V 50 Hz with p = 7 %: the
    # capacitor's own output 46.5 kvar, X_C = 400²/46 500 = 3.4409 Ω, X_L = 0.07 × X_C = 0.24086 Ω,
    # L = X_L/(2π·50) = 0.7667 mH per phase.
    r = step_reactor(detuned_step(50.0, 400.0, 50.0, 0.07), 400.0, 50.0, 7.0, 440.0, {}, catalogs.reactors, 5.0)
    assert r.required_inductance_mh == pytest.approx(0.7667, abs=0.0005)
    assert r.reactor.designation == "DR-400-50-7-50"
    assert r.actual_tuning_frequency_hz == pytest.approx(189.0, abs=0.5)
    # Source: three-phase current I = Q/(√3·V) (trade-facts.md): 50 kvar at 400 V = 72.17 A.
    assert r.fundamental_current_a == pytest.approx(72.17, abs=0.01)


def test_every_table_reactor_matches_its_formula(catalogs):
    # Source: trade-facts.md - L = p·X_C/ω with X_C = V²/(Q_step·(1 − p)); the table rounds to 4 significant figures.
    for row in catalogs.reactors:
        p = row.tuning_pct / 100
        x_c = row.voltage_v**2 / (row.step_kvar * 1000 * (1 - p))
        expected = 1000 * p * x_c / (2 * math.pi * row.frequency_hz)
        assert row.inductance_mh == pytest.approx(expected, rel=6e-4), row.reactor_id
        fundamental = row.step_kvar * 1000 / (math.sqrt(3) * row.voltage_v)
        assert row.current_a > fundamental, row.reactor_id


@settings(max_examples=100, deadline=None)
@given(p=st.sampled_from([0.0567, 0.07, 0.14]), h=st.sampled_from([5, 7, 11, 13]),
       u_pct=st.floats(min_value=0.5, max_value=8.0), f=st.sampled_from([50.0, 60.0]))
def test_harmonic_current_matches_the_branch_impedance(p, h, u_pct, f):
    # Source: circuit theory - a series L-C branch; at order h its impedance is j(hωL − 1/(hωC)). Computed here
    # with complex numbers from an arbitrary capacitor, independently of the closed form in the code.
    c = 500e-6
    w = 2 * math.pi * f
    x_c = 1 / (w * c)
    inductance = p * x_c / w
    z1 = complex(0, w * inductance - 1 / (w * c))
    zh = complex(0, h * w * inductance - 1 / (h * w * c))
    i1 = 230 / abs(z1)
    ih = 230 * u_pct / 100 / abs(zh)
    assert harmonic_current_pct(p, {h: u_pct})[h] == pytest.approx(100 * ih / i1, rel=1e-9)
    # the capacitor's share of the harmonic voltage: I_h · X_C/h against the fundamental I_1 · X_C
    uc_h = ih * x_c / h
    uc_1 = i1 * x_c
    rms, total = capacitor_voltages_v(uc_1, {h: 100 * ih / i1})
    assert rms == pytest.approx(abs(cmath.sqrt(uc_1**2 + uc_h**2)), rel=1e-9)
    assert total == pytest.approx(uc_1 + uc_h, rel=1e-9)


def test_seven_percent_step_with_the_default_spectrum(catalogs):
    # Source: regression value, worked by hand - supply harmonics 6/5/3.5/3 % at orders 5/7/11/13 (IEC 61000-2-4
    # class 2, from memory) through a 7 % step: 37.2, 13.4, 4.8, 3.3 % of the fundamental current, so the rms
    # current is 1.077 × fundamental.
    r = step_reactor(detuned_step(50.0, 400.0, 50.0, 0.07), 400.0, 50.0, 7.0, 440.0,
                     {5: 6.0, 7: 5.0, 11: 3.5, 13: 3.0}, catalogs.reactors, 5.0)
    assert [round(r.harmonic_current_pct[h], 1) for h in (5, 7, 11, 13)] == [37.2, 13.4, 4.8, 3.3]
    assert r.required_current_a / r.fundamental_current_a == pytest.approx(1.077, abs=0.001)
    assert r.required_current_a <= r.current_rating_a
    # Source: IEEE Std 18 (trade-facts.md) - continuous ≤ 110 % rms and ≤ 120 % peak: 440 V units pass.
    assert r.capacitor_voltage_rms_v <= 1.10 * 440 and r.capacitor_voltage_sum_v <= 1.20 * 440


def test_harmonic_at_the_tuning_order_is_unbounded():
    assert harmonic_current_pct(0.04, {5: 1.0})[5] == math.inf  # 1/√0.04 = 5: series resonance


def test_no_table_reactor_means_made_to_order(catalogs):
    # a 415 V supply: the table has 400 V rows only at 50 Hz (a lower voltage class does not qualify)
    r = step_reactor(detuned_step(43.0, 415.0, 50.0, 0.07), 415.0, 50.0, 7.0, 480.0, {5: 6.0},
                     catalogs.reactors, 5.0)
    assert r.reactor is None and r.made_to_order
    assert r.inductance_mh == r.required_inductance_mh
    assert r.current_rating_a == r.required_current_a
    assert r.losses_w == pytest.approx(5.0 * 43.0)  # Source: from memory, 5 W per step kvar (reactors.csv notes)


def test_pick_reactor_respects_tolerance_and_current():
    from types import SimpleNamespace as R

    rows = [R(frequency_hz=60.0, tuning_pct=7.0, voltage_v=480.0, inductance_mh=1.0, current_a=50.0),
            R(frequency_hz=60.0, tuning_pct=7.0, voltage_v=600.0, inductance_mh=1.02, current_a=80.0),
            R(frequency_hz=60.0, tuning_pct=14.0, voltage_v=480.0, inductance_mh=1.0, current_a=90.0)]
    assert pick_reactor(rows, 60, 7, 480, 1.04, 40, 5).inductance_mh == 1.0  # within 5 %, smallest current
    assert pick_reactor(rows, 60, 7, 480, 1.04, 60, 5).voltage_v == 600.0  # current needs the larger one
    assert pick_reactor(rows, 60, 7, 480, 1.2, 40, 5) is None  # 17 % off
    assert pick_reactor(rows, 60, 7, 480, 1.04, 100, 5) is None  # no current rating large enough
    assert pick_reactor(rows, 50, 7, 480, 1.0, 10, 5) is None  # wrong frequency
