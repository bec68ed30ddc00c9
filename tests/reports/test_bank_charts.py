"""The bank's charts read back: the staircase's points are the results' reachable values, the marks carry the
results' figures, every axis has its unit, and the worksheet holds the charts with their source tables."""

from __future__ import annotations

import xml.etree.ElementTree as ET

import pytest
from fuzz_support import run_spec_data, spec
from hypothesis import HealthCheck, given, settings
from pdf_text import pages_text, squash

from bankbuild.api import demo_spec_path, run_spec
from bankbuild.reports.bank_charts import (
    discharge_chart,
    discharge_rows,
    staircase_chart,
    staircase_rows,
    triangle_chart,
    triangle_rows,
)
from bankbuild.reports.chart import chart_svg
from bankbuild.reports.pdf_common import gnum, num

SVG = "{http://www.w3.org/2000/svg}"


@pytest.fixture(scope="module")
def demo():
    return run_spec(demo_spec_path())


def svg_texts(svg: str) -> list[str]:
    return ["".join(el.itertext()) for el in ET.fromstring(svg.encode("utf-8")).iter(f"{SVG}text")]


def test_staircase_points_are_the_reachable_values(demo):
    drawn = 0
    for bank in demo.banks:
        chart = staircase_chart(bank, 500)
        if len(bank.steps) < 2:
            assert chart is None
            continue
        drawn += 1
        (series,) = chart.series
        assert [y for _, y in series.points] == bank.step_plan.reachable_kvar
        texts = svg_texts(chart_svg(chart))
        assert f"largest gap {num(bank.step_plan.largest_gap_kvar, 1)} kvar" in texts
        assert f"need {num(bank.required_kvar, 1)} kvar" in texts
        assert "Reactive power at the supply [kvar]" in texts and "Controller setting, lowest to highest [no.]" in texts
        head, rows = staircase_rows(bank)
        assert sorted(float(r[1].replace(",", "")) for r in rows) == pytest.approx(
            [round(v, 1) for v in bank.step_plan.reachable_kvar], abs=0.051)
    assert drawn >= 2


@settings(deadline=None, derandomize=True, database=None, max_examples=30,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large, HealthCheck.filter_too_much])
@given(data=spec())
def test_random_specs_staircase_is_the_reachable_values(data):
    result = run_spec_data(data)
    if result is None:
        return
    for bank in result.banks:
        chart = staircase_chart(bank, 500)
        if chart is not None:
            assert [y for _, y in chart.series[0].points] == bank.step_plan.reachable_kvar
            ET.fromstring(chart_svg(chart).encode("utf-8"))
        if bank.power_triangle is not None:
            ET.fromstring(chart_svg(triangle_chart(bank.power_triangle, 500)).encode("utf-8"))
        if bank.discharge_curve is not None:
            ET.fromstring(chart_svg(discharge_chart(bank.discharge_curve, 500)).encode("utf-8"))


def test_discharge_chart_marks_the_rule_point_and_the_reconnection_delay(demo):
    bank = next(b for b in demo.banks if b.reconnection is not None)
    curve = bank.discharge_curve
    chart = discharge_chart(curve, 500)
    texts = svg_texts(chart_svg(chart))
    assert f"rule: ≤ {gnum(curve.limit_v)} V within {gnum(curve.time_s)} s" in texts
    assert f"reconnection delay {gnum(curve.reconnection_delay_s)} s" in texts
    assert "Leg voltage [V]" in texts and "Time after switch-off [s]" in texts
    dashed = next(s for s in chart.series if s.style == "dashed")
    assert [p for p in dashed.points] == [(p.time_s, p.voltage_v) for p in curve.rule_curve]
    head, rows = discharge_rows(curve)
    listed = [cell for row in rows for cell in row]
    assert all(num(p.voltage_v, 1) in listed for p in curve.rule_curve)


def test_triangle_is_drawn_to_one_scale_with_its_currents(demo):
    bank = demo.banks[0]
    t = bank.power_triangle
    chart = triangle_chart(t, 500)
    assert chart.equal_scale
    texts = svg_texts(chart_svg(chart))
    assert f"before: line current {num(t.current_before_a, 0)} A" in texts
    assert f"after: line current {num(t.current_after_a, 0)} A" in texts
    assert "Active power [kW]" in texts
    _, rows = triangle_rows(t)
    assert rows[-1][1:] == [num(t.current_before_a, 1), num(t.current_after_a, 1)]


def test_worksheet_holds_the_charts_and_their_tables(demo):
    from bankbuild.reports.pdf_worksheet import worksheet_pdf

    text = squash("".join(pages_text(worksheet_pdf(demo))))
    for wanted in ("Power triangle before and after the bank (to scale)", "Reactive power, lagging positive [kvar]",
                   "Reachable kvar: ", "Controller setting, lowest to highest [no.]",
                   "Discharge of the largest step: leg voltage from its peak", "Time after switch-off [s]",
                   "Own resistors [V]", "Line current I = S/(√3·V) [A]"):
        assert squash(wanted) in text, wanted
