"""The numbers behind the charts: the discharge curve samples and the power triangle, checked against an outside
library (electricpy) and textbook arithmetic, through the pipeline's results."""

from __future__ import annotations

import math

import pytest
from electricpy import acpiv
from electricpy.passive import vcapdischarge
from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.api import demo_spec_path, run_spec
from bankbuild.design.figures import discharge_curve, power_triangle
from bankbuild.design.stepplan import reachable
from bankbuild.results.sizing import Discharge, NeedSummary


@pytest.fixture(scope="module")
def demo():
    return run_spec(demo_spec_path())


def test_rule_curve_reaches_the_limit_at_the_rules_time(demo):
    for bank in demo.banks:
        curve, dis = bank.discharge_curve, bank.discharge
        assert curve is not None
        # V(t) = V0·e^(−t/RC) through R_max: exactly the limit at the rule's time (the definition of R_max)
        at_rule = vcapdischarge(dis.time_s, dis.start_voltage_v, dis.max_resistance_ohm,
                                dis.capacitance_uf_per_leg * 1e-6)
        assert at_rule == pytest.approx(dis.limit_v, rel=1e-9)
        for point in curve.rule_curve:  # every sample is the RC law (electricpy's, not ours)
            assert point.voltage_v == pytest.approx(vcapdischarge(point.time_s, dis.start_voltage_v,
                                                                  dis.max_resistance_ohm,
                                                                  dis.capacitance_uf_per_leg * 1e-6), rel=1e-9)
        assert curve.rule_curve[0].voltage_v == dis.start_voltage_v
        assert curve.end_time_s >= dis.time_s


def test_own_resistor_curve_meets_the_limit_at_the_units_own_time(demo):
    for bank in demo.banks:
        curve, dis = bank.discharge_curve, bank.discharge
        if not curve.builtin_curve:
            continue
        tau = curve.builtin_resistance_ohm * dis.capacitance_uf_per_leg * 1e-6
        assert dis.start_voltage_v * math.exp(-dis.builtin_time_s / tau) == pytest.approx(dis.limit_v, rel=1e-9)


def test_reconnection_delay_is_carried_for_automatic_banks_only(demo):
    for bank in demo.banks:
        expected = bank.reconnection.delay_s if bank.reconnection is not None else None
        assert bank.discharge_curve.reconnection_delay_s == expected


def test_no_curve_when_the_start_is_already_below_the_limit():
    d = Discharge(step_index=1, capacitance_uf_per_leg=10.0, leg_voltage_v=28.0, start_voltage_v=40.0, limit_v=50.0,
                  time_s=60.0,
                  rule="r", max_resistance_ohm=1e6, resistor_power_w=0.1, builtin_time_s=0.0, builtin_ok=True,
                  ok=True)
    assert discharge_curve(d, None) is None


def test_triangle_textbook_example():
    # 800 kW at PF 0.8 lagging: Q = 600 kvar, S = 1000 kVA (3-4-5 triangle, textbook); at 480 V the line
    # current is S/(√3·V) = 1202.8 A, checked with electricpy.acpiv.
    need = NeedSummary(form="power", active_kw=800.0, reactive_kvar=600.0, pf_present=0.8, pf_target=0.95,
                       pf_corrected=None, required_kvar=337.1)
    t = power_triangle(need, 600.0, 480.0)
    assert t.kva_before == pytest.approx(1000.0) and t.pf_before == pytest.approx(0.8)
    assert t.current_before_a == pytest.approx(acpiv(S=1000e3, VLL=480), rel=1e-9)
    assert t.kvar_after == pytest.approx(0.0) and t.pf_after == pytest.approx(1.0) and not t.leading_after
    assert t.angle_before_deg == pytest.approx(math.degrees(math.acos(0.8)))


def test_triangle_of_the_demo_matches_its_need_and_delivery(demo):
    for bank in demo.banks:
        t = bank.power_triangle
        if bank.need.active_kw is None:
            assert t is None
            continue
        assert t.kvar_before - t.kvar_after == pytest.approx(bank.delivered_kvar)
        assert t.current_after_a == pytest.approx(acpiv(S=t.kva_after * 1e3, VLL=bank.supply_voltage_v), rel=1e-9)


@settings(max_examples=200, deadline=None)
@given(st.lists(st.integers(1, 60), min_size=1, max_size=8))
def test_largest_gap_starts_at_a_reachable_value_with_the_next_one_a_gap_above(steps):
    reach = reachable([float(s) for s in steps])
    values = reach.values_kvar
    assert reach.gap_from_kvar in values
    above = [v for v in values if v > reach.gap_from_kvar + 1e-9]
    if above:
        assert above[0] - reach.gap_from_kvar == pytest.approx(reach.largest_gap_kvar)
        gaps = [b - a for a, b in zip(values, values[1:], strict=False)]
        assert max(gaps) == pytest.approx(reach.largest_gap_kvar)
