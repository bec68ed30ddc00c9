"""The worksheet's harmonic-study section prints what the results hold: the demo's study, page text and chart."""

from __future__ import annotations

import math

import pytest
from pdf_text import whole

from bankbuild.api import demo_spec_path, run_spec
from bankbuild.reports.pdf_common import num
from bankbuild.reports.pdf_harmonic_chart import scan_chart, scan_svg
from bankbuild.reports.pdf_worksheet import worksheet_pdf


@pytest.fixture(scope="module")
def demo():
    return run_spec(demo_spec_path())


@pytest.fixture(scope="module")
def scan(demo):
    return next(b for b in demo.banks if b.harmonics is not None).harmonics.scan


def test_demo_has_one_bank_with_a_study(demo):
    studied = [b for b in demo.banks if b.harmonics is not None]
    assert len(studied) == 1


def test_section_prints_the_results(demo):
    bank = next(b for b in demo.banks if b.harmonics is not None)
    text = whole(worksheet_pdf(demo))
    assert "Harmonicstudyofthebankinitsnetwork" in text
    assert "|Z_bus|againstharmonicorder" in text
    for combo in bank.harmonics.combinations:
        assert num(combo.bus_thd_pct, 2, "%").replace(" ", "") in text
    worst = bank.harmonics.worst
    assert num(worst.capacitor_current_rms_pu, 3) in text
    assert "[U+" not in text


def test_chart_carries_the_results_points(scan):
    chart = scan_chart(scan)
    assert [s.label for s in chart.series] == [c.label for c in scan.curves]
    for series, curve in zip(chart.series, scan.curves, strict=True):
        assert [x for x, _ in series.points] == scan.orders
        assert [10**y for _, y in series.points] == pytest.approx(curve.impedance_ohm, rel=1e-9)
    assert {m.label for m in chart.marks} == {f"h{h}" for h in scan.marked_orders}
    # told apart without colour: each curve has its own line style and weight
    assert len({(s.style, s.weight) for s in chart.series}) == len(chart.series)


def test_log_axis_holds_every_point_in_whole_decades(scan):
    chart = scan_chart(scan)
    assert chart.y.ticks == tuple(float(k) for k in range(int(chart.y.low), int(chart.y.high) + 1))
    assert all(chart.y.low <= y <= chart.y.high for s in chart.series for _, y in s.points)
    assert chart.y.labels[0] == f"{10.0**chart.y.low:g}" and math.isfinite(chart.y.high)


def test_svg_has_the_labels(scan):
    svg = scan_svg(scan)
    assert "h5" in svg and "without the bank" in svg
