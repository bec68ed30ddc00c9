"""The worksheet's harmonic-study section prints what the results hold: the demo's study, page text and chart."""

from __future__ import annotations

import pytest
from pdf_text import whole

from bankbuild.api import demo_spec_path, run_spec
from bankbuild.reports.pdf_common import num
from bankbuild.reports.pdf_harmonic_chart import scan_drawing
from bankbuild.reports.pdf_worksheet import worksheet_pdf


@pytest.fixture(scope="module")
def demo():
    return run_spec(demo_spec_path())


def test_demo_has_one_bank_with_a_study(demo):
    studied = [b for b in demo.banks if b.harmonics is not None]
    assert len(studied) == 1


def test_section_prints_the_results(demo):
    bank = next(b for b in demo.banks if b.harmonics is not None)
    text = whole(worksheet_pdf(demo))
    assert "Harmonicstudyofthebankinitsnetwork" in text
    assert "Frequencyscan" in text
    for combo in bank.harmonics.combinations:
        assert num(combo.bus_thd_pct, 2, "%").replace(" ", "") in text
    worst = bank.harmonics.worst
    assert num(worst.capacitor_current_rms_pu, 3) in text
    assert "[U+" not in text


def test_chart_has_one_line_per_curve_and_marks(demo):
    from reportlab.graphics.shapes import PolyLine, String

    scan = next(b for b in demo.banks if b.harmonics is not None).harmonics.scan
    drawing = scan_drawing(scan, 480.0)
    lines = [s for s in drawing.contents if isinstance(s, PolyLine)]
    labels = {s.text for s in drawing.contents if isinstance(s, String)}
    assert len(lines) == len(scan.curves)
    assert {f"h{h}" for h in scan.marked_orders} <= labels
    assert {c.label for c in scan.curves} <= labels
    # told apart without colour: the curves' dash patterns or widths differ
    styles = {(tuple(getattr(line, "strokeDashArray", None) or ()), line.strokeWidth) for line in lines}
    assert len(styles) == len(lines)
