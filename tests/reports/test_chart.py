"""The shared figure and chart modules: the SVG parses and holds the labels; the PDF drawing holds the same text;
ticks are tidy and cover the data; importing them loads no drawing library."""

from __future__ import annotations

import math
import subprocess
import sys
import xml.etree.ElementTree as ET

from hypothesis import example, given, settings
from hypothesis import strategies as st
from pdf_text import pages_text

from bankbuild.reports.chart import Axis, Chart, Mark, Series, chart_drawing, chart_figure, chart_svg, nice_ticks
from bankbuild.reports.figure import Figure, Line, Text, stack, text_width, to_svg

SVG = "{http://www.w3.org/2000/svg}"


def svg_texts(svg: str) -> list[str]:
    root = ET.fromstring(svg.encode("utf-8"))
    return ["".join(el.itertext()) for el in root.iter(f"{SVG}text")]


def sample_chart() -> Chart:
    return Chart("Leg voltage after switch-off", Axis("Time after switch-off", "s"), Axis("Leg voltage", "V"),
                 (Series("with the units' resistors", ((0, 679.0), (20, 300.0), (40, 130.0), (60, 58.0)),
                         marker="circle"),
                  Series("limit curve", ((0, 679.0), (60, 50.0)), style="dashed"),
                  Series("bars <&>", ((10, 100.0), (30, 200.0)), draw="bars")),
                 (Mark("hline", y=50, label="50 V limit"), Mark("vline", x=60, label="60 s"),
                  Mark("point", x=60, y=50, label="rule: 50 V at 60 s"), Mark("gap", x=30, y=100, y2=200,
                                                                              label="largest gap 100 kvar")),
                 note="Source data in the table beside the chart.")


def test_svg_parses_and_holds_every_label_and_axis_unit():
    chart = sample_chart()
    texts = svg_texts(chart_svg(chart))
    for wanted in ("Time after switch-off [s]", "Leg voltage [V]", "50 V limit", "rule: 50 V at 60 s",
                   "largest gap 100 kvar", "bars <&>", "with the units' resistors", chart.title):
        assert wanted in texts
    assert texts == chart_figure(chart).texts()


def test_pdf_drawing_holds_the_same_text(tmp_path):
    from reportlab.platypus import SimpleDocTemplate

    path = tmp_path / "chart.pdf"
    SimpleDocTemplate(str(path)).build([chart_drawing(sample_chart())])
    text = "".join(pages_text(path.read_bytes()))
    for wanted in ("Time after switch-off [s]", "Leg voltage [V]", "50 V limit", "largest gap 100 kvar"):
        assert wanted in text


def test_svg_escapes_markup_and_drops_characters_xml_forbids():
    svg = to_svg(Figure(50, 20, (Text(1, 1, "a <b> & \x01 \"c\""), Line(0, 0, 1, 1))))
    assert svg_texts(svg) == ['a <b> &  "c"']


def test_stack_keeps_order_top_to_bottom():
    fig = stack([Figure(10, 10, (Text(0, 0, "first"),)), Figure(10, 10, (Text(0, 0, "second"),))], gap=5)
    first, second = fig.items
    assert fig.height == 25 and first.y > second.y


def test_equal_scale_draws_one_unit_the_same_length_on_both_axes():
    chart = Chart("Triangle", Axis("Active power", "kW"), Axis("Reactive power", "kvar"),
                  (Series("before", ((0, 0), (800, 0), (800, 600), (0, 0))),), equal_scale=True)
    fig = chart_figure(chart)
    poly = next(item for item in fig.items if getattr(item, "points", None) and len(item.points) == 4)
    (x0, y0), (x1, _), (_, y2), _ = poly.points
    assert abs((x1 - x0) / 800 - (y2 - y0) / 600) < 1e-9


def test_text_width_matches_the_pdf_font():
    from reportlab.pdfbase.pdfmetrics import stringWidth

    from bankbuild.reports.pdf_common import FONT, FONT_BOLD, register_fonts

    register_fonts()
    for text in ("CU-600-60-50.0", "2/0 AWG", "Step 16: 100 A gG"):
        # the table holds whole thousandths of an em: within 0.1 % of the font's own width
        assert abs(text_width(text, 7) / stringWidth(text, FONT, 7) - 1) < 1e-3
        assert abs(text_width(text, 7, bold=True) / stringWidth(text, FONT_BOLD, 7) - 1) < 1e-3


@settings(max_examples=300)
@example(0.0, 250001.0)  # once missed its last tick
@example(100000.0, 1e-06)  # a span a ten-billionth of its magnitude: ticks rounded onto each other
@given(st.floats(-1e6, 1e6), st.floats(0, 1e6))
def test_ticks_cover_the_range_in_even_steps(low, span):
    ticks = nice_ticks(low, low + span)
    assert 2 <= len(ticks) <= 14
    steps = [b - a for a, b in zip(ticks, ticks[1:], strict=False)]
    # equal to a millionth of a step, or to the float resolution at the ticks' magnitude (16384 + 2e-6 steps)
    assert max(steps) - min(steps) <= 1e-6 * max(steps) + 4 * math.ulp(max(abs(ticks[0]), abs(ticks[-1])))
    step = steps[0]  # a value a millionth of a step beyond the end tick counts as on it
    assert ticks[0] <= low + 1e-6 * step and ticks[-1] >= low + span - 1e-6 * step


def test_importing_the_chart_modules_loads_no_drawing_library():
    code = ("import sys, bankbuild.reports.chart, bankbuild.reports.figure; "
            "print(any(m.startswith('reportlab') for m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "False"
