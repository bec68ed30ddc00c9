"""Switching: inrush on energising and back-to-back, damping, the contactor pick, and the reconnection delay.

Sources are named beside each value: the IEEE C37.012-style inrush formulas of trade-facts.md (back-to-back
constant 1747 at 60 Hz, 1917 at 50 Hz; energising √2·√(I_sc·I_1), from memory), electricpy 0.3.0 as an outside
oracle (oracles.md), and the RC discharge law.
"""

from __future__ import annotations

import math
from types import SimpleNamespace as Row

import pytest
from electricpy import passive  # outside oracle, imported once (slow)
from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.calc import system
from bankbuild.calc.discharge import discharge_tau_s
from bankbuild.calc.switching import (
    capacitance_uf,
    damping_inductance_uh,
    delay_setting_s,
    inrush_peak_a,
    parallel_uh,
    reconnection_times_s,
    series_uf,
    source_inductance_uh,
)
from bankbuild.design.switching import contactor_kvar, pick_contactor, step_switching


def c_from_current(i_a: float, v: float, f: float) -> float:
    """Wye-equivalent capacitance per phase [µF] of a bank drawing ``i_a`` at ``v`` (line-to-line)."""
    return i_a / (2 * math.pi * f * v / math.sqrt(3)) * 1e6


@pytest.mark.parametrize(("f", "constant"), [
    (60.0, 1747.0),  # Source: trade-facts.md - IEEE C37.012 back-to-back formula, 60 Hz constant 1747
    (50.0, 1917.0),  # Source: trade-facts.md - same formula, 50 Hz constant ≈ 1917
])
def test_back_to_back_against_the_published_constant(f, constant):
    v, i1, i2, l_uh = 480.0, 60.1, 120.3, 5.0
    c_eq = series_uf(c_from_current(i1, v, f), c_from_current(i2, v, f))
    published = constant * math.sqrt(v / 1000 * i1 * i2 / (l_uh * (i1 + i2)))
    assert inrush_peak_a(v, c_eq, l_uh) == pytest.approx(published, rel=3e-3)  # the constant's own rounding


@pytest.mark.parametrize(("v", "i1", "i2", "l_uh", "f"), [(480.0, 30.1, 150.4, 5.0, 60.0),
                                                         (400.0, 72.2, 288.7, 20.0, 50.0)])
def test_back_to_back_matches_electricpy(v, i1, i2, l_uh, f):
    # Source: electricpy 0.3.0 passive.capbacktoback(C1, C2, Lm, VLL=...) (oracles.md).
    c1, c2 = c_from_current(i1, v, f), c_from_current(i2, v, f)
    imax, ifreq = passive.capbacktoback(c1 * 1e-6, c2 * 1e-6, l_uh * 1e-6, VLL=v)
    assert inrush_peak_a(v, series_uf(c1, c2), l_uh) == pytest.approx(imax, rel=1e-9)
    assert system.inrush_frequency_hz(l_uh, series_uf(c1, c2)) == pytest.approx(ifreq, rel=1e-9)


def test_energising_equals_the_short_circuit_formula():
    # Source: trade-facts.md - I_pk ≈ √2·√(I_sc·I_1) (from memory, C37.012-style), with the source inductance
    # L_s = V_ph/(ω·I_sc) in the loop.
    v, f, i_sc, i1 = 480.0, 60.0, 20917.0, 120.3
    l_s = source_inductance_uh(i_sc, v, f)
    assert inrush_peak_a(v, c_from_current(i1, v, f), l_s) == pytest.approx(math.sqrt(2 * i_sc * i1), rel=1e-9)
    assert inrush_peak_a(v, c_from_current(i1, v, f), l_s) == pytest.approx(
        system.energising_inrush_peak_a(i_sc, i1), rel=1e-9)


def test_capacitance_from_nameplate():
    # Source: trade-facts.md - wye C = Q/(ω·V_LL²): 100 kvar at 480 V 60 Hz -> 1151.3 µF per phase.
    assert capacitance_uf(100.0, 480.0, 60.0) == pytest.approx(1151.3, abs=0.1)


@settings(max_examples=100, deadline=None)
@given(peak=st.floats(min_value=100, max_value=50000), limit=st.floats(min_value=100, max_value=50000),
       loop=st.floats(min_value=0.5, max_value=500))
def test_damping_inductance_brings_the_peak_to_the_limit(peak, limit, loop):
    # The peak scales with 1/√L (I_pk = √2·V_ph·√(C/L)): after adding the inductance it equals the limit.
    extra = damping_inductance_uh(peak, limit, loop)
    assert extra >= 0
    after = peak * math.sqrt(loop / (loop + extra))
    assert after == pytest.approx(min(peak, limit), rel=1e-9)


def test_parallel_inductance():
    assert parallel_uh([600.0, 300.0]) == pytest.approx(200.0)
    assert parallel_uh([]) == 0.0


CONTACTORS = [
    Row(contactor_id="P-32", damping="none", voltage_v=480.0, ac6b_current_a=32.0, max_peak_a=960.0, table="t", row=1),
    Row(contactor_id="P-63", damping="none", voltage_v=480.0, ac6b_current_a=63.0, max_peak_a=1890.0, table="t",
        row=2),
    Row(contactor_id="R-32", damping="resistors", voltage_v=480.0, ac6b_current_a=32.0, max_peak_a=6400.0, table="t",
        row=3),
    Row(contactor_id="R-63", damping="resistors", voltage_v=480.0, ac6b_current_a=63.0, max_peak_a=12600.0,
        table="t", row=4),
]


def test_contactor_pick_prefers_no_damping_when_the_peak_allows():
    row, damped = pick_contactor(CONTACTORS, 30.0, 800.0, 3000.0)
    assert (row.contactor_id, damped) == ("P-32", False)


def test_contactor_pick_uses_resistors_instead_of_an_oversized_frame():
    # 1500 A would fit the larger plain frame, but the practice is damping, not oversizing.
    row, damped = pick_contactor(CONTACTORS, 30.0, 1500.0, 3000.0)
    assert (row.contactor_id, damped) == ("R-32", True)


def test_contactor_pick_when_even_resistors_are_not_enough():
    row, damped = pick_contactor(CONTACTORS, 30.0, 9000.0, 3000.0)
    assert (row.contactor_id, damped) == ("R-32", True)  # the caller adds damping reactors
    assert pick_contactor(CONTACTORS, 80.0, 500.0, 3000.0) == (None, True)


def test_contactor_frames_are_named_by_current_on_the_r10_series(catalogs):
    # Source: ISO 3 preferred numbers, series R10 (1, 1.25, 1.6, 2, 2.5, 3.15, 4, 5, 6.3, 8; 3.15 written 3.2 as
    # rated currents usually are), from memory. Each frame's id names its AC-6b current at 400 V and whether it
    # has damping resistors.
    at_400 = [r for r in catalogs.contactors if r.voltage_v == 400.0]
    assert sorted({r.ac6b_current_a for r in at_400}) == [16, 20, 25, 32, 40, 50, 63, 80, 100, 125, 160]
    for r in at_400:
        tag = {"none": "PLAIN", "resistors": "DAMPED"}[r.damping]
        assert r.contactor_id == f"SWD-{r.ac6b_current_a:g}A-{tag}"


def test_contactor_kvar_is_derived_from_its_current(catalogs):
    # Source: three-phase reactive power Q = √3·U·I (any circuits textbook): the 25 A frame switches
    # √3 × 400 V × 25 A = 17.32 kvar at 400 V and √3 × 480 V × 25 A = 20.78 kvar at 480 V.
    by_key = {(r.contactor_id, r.voltage_v): r for r in catalogs.contactors}
    assert contactor_kvar(by_key["SWD-25A-PLAIN", 400.0]) == pytest.approx(17.32, abs=0.005)
    assert contactor_kvar(by_key["SWD-25A-DAMPED", 480.0]) == pytest.approx(20.78, abs=0.005)
    for r in catalogs.contactors:
        assert contactor_kvar(r) == pytest.approx(math.sqrt(3) * r.voltage_v * r.ac6b_current_a / 1000, rel=1e-12)


def test_step_switching_carries_the_kvar_derivation(catalogs):
    # A 50 kvar step at 480 V draws 60.1 A (Q / (√3·U)); the smallest frame carrying 60.1 A is 63 A, which at
    # 480 V switches √3 × 480 V × 63 A = 52.4 kvar (Q = √3·U·I).
    sw = step_switching(0, [capacitance_uf(50.0, 480.0, 60.0)], [0.0], 60.1, 60.1, 480.0, 5.0, None,
                        catalogs.contactors)
    assert sw.contactor.designation == "SWD-63A-PLAIN" and sw.contactor.value == 63.0
    assert (sw.contactor_current_a, sw.contactor_voltage_v) == (63.0, 480.0)
    assert sw.contactor_kvar == pytest.approx(52.38, abs=0.005)


def test_detuned_steps_limit_back_to_back_inrush(catalogs):
    # Two 50 kvar steps at 480 V 60 Hz: plain steps with 5 µH between them versus detuned steps with their
    # 7 % reactors (about 0.8 mH each) in the loop. Source: I_pk ∝ 1/√L (trade-facts.md inrush formulas).
    caps = [capacitance_uf(50.0, 480.0, 60.0)] * 2
    plain = step_switching(1, caps, [0.0, 0.0], 60.1, 60.1, 480.0, 5.0, None,
                           catalogs.contactors)
    detuned = step_switching(1, caps, [800.0, 800.0], 60.1, 60.1, 480.0, 5.0, None,
                             catalogs.contactors)
    assert plain.loop_inductance_uh == 5.0 and detuned.loop_inductance_uh == 1605.0
    assert detuned.back_to_back_peak_a == pytest.approx(plain.back_to_back_peak_a * math.sqrt(5 / 1605))
    assert plain.damping_needed and plain.damping == "resistors"
    assert not detuned.damping_needed and detuned.damping == "none"
    # Source: IEC 60831-1 (from memory) - a unit takes at most 100 × its rated current as inrush peak.
    assert plain.capacitor_limit_a == pytest.approx(6010.0)


def test_no_contactor_large_enough_is_reported_not_raised(catalogs):
    sw = step_switching(0, [9000.0], [0.0], 800.0, 800.0, 480.0, 5.0, None, catalogs.contactors)
    assert sw.contactor is None and sw.contactor_current_a == 0.0


def test_reconnection_times_follow_the_rc_law():
    # Source: electricpy 0.3.0 passive.vcapdischarge (V = Vs·e^(−t/RC)) as the outside oracle: after the computed
    # times the voltage is exactly at the 10 % and 50 V limits.
    tau = discharge_tau_s(480.0, 50.0, 60.0)
    v0, limit, t10, t50 = reconnection_times_s(tau, 480.0)
    c = 100e-6
    r = tau / c
    assert v0 == pytest.approx(math.sqrt(2) * 480)
    assert limit == pytest.approx(48.0)  # Source: IEC 60831-1 (from memory) - 10 % of rated voltage
    assert passive.vcapdischarge(t10, v0, r, c) == pytest.approx(48.0, rel=1e-9)
    assert passive.vcapdischarge(t50, v0, r, c) == pytest.approx(50.0, rel=1e-9)
    # the unit's own data: √2 × 480 V down to 50 V within 60 s (capacitor_units.csv notes, NEC 460.6(A))
    assert t50 == pytest.approx(60.0)
    assert delay_setting_s(max(t10, t50)) == 65.0
