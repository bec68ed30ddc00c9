"""The survey report's three charts as reportlab drawings: line charts with reference lines, and paired bars.

Kept small and apart on purpose: a shared chart module for every document is being built; these move onto it
once it is on main. Charts draw only what the results hold.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from bankbuild.reports.pdf_common import FONT, FONT_BOLD, INK, RULE_GREY

BEFORE = (0.62, 0.25, 0.15)  # rust: the plant as metered
AFTER = (0.10, 0.36, 0.58)  # blue: with the proposed bank
REFERENCE = (0.35, 0.35, 0.35)
LEVEL = (0.55, 0.62, 0.70)


@dataclass(frozen=True)
class Series:
    """A named line: points (x, y) and its colour; ``dash`` for a dashed line."""

    label: str
    x: Sequence[float]
    y: Sequence[float]
    colour: tuple[float, float, float]
    dash: bool = False


@dataclass(frozen=True)
class Level:
    """A horizontal reference line across the plot, optionally labelled at its right end."""

    y: float
    label: str = ""
    colour: tuple[float, float, float] = REFERENCE
    strong: bool = False


def nice_step(span: float, ticks: int = 5) -> float:
    """A round tick spacing (1, 2, 2.5 or 5 × 10ⁿ) giving about ``ticks`` intervals over ``span``.

    >>> nice_step(340.0), nice_step(0.5), nice_step(100.0)
    (100.0, 0.1, 20.0)
    """
    if span <= 0:
        return 1.0
    raw = span / ticks
    power = 10 ** math.floor(math.log10(raw))
    for m in (1.0, 2.0, 2.5, 5.0, 10.0):
        if raw <= m * power * 1.0001:
            return m * power
    return 10 * power


def _frame(drawing, x0, y0, w, h, xr, yr, x_label, y_label, y_fmt):
    from reportlab.graphics.shapes import Line, String
    from reportlab.lib.colors import Color

    grey = Color(*RULE_GREY)
    ink = Color(*INK)
    step = nice_step(yr[1] - yr[0])
    v = math.ceil(yr[0] / step - 1e-9) * step
    while v <= yr[1] + 1e-9:
        y = y0 + (v - yr[0]) / (yr[1] - yr[0]) * h
        drawing.add(Line(x0, y, x0 + w, y, strokeColor=Color(0.88, 0.89, 0.91), strokeWidth=0.4))
        drawing.add(String(x0 - 4, y - 2.5, y_fmt(v), fontName=FONT, fontSize=6.5, fillColor=ink, textAnchor="end"))
        v += step
    step = nice_step(xr[1] - xr[0])
    v = math.ceil(xr[0] / step - 1e-9) * step
    while v <= xr[1] + 1e-9:
        x = x0 + (v - xr[0]) / (xr[1] - xr[0]) * w
        drawing.add(Line(x, y0, x, y0 - 3, strokeColor=grey, strokeWidth=0.5))
        drawing.add(String(x, y0 - 11, f"{v:g}", fontName=FONT, fontSize=6.5, fillColor=ink, textAnchor="middle"))
        v += step
    drawing.add(Line(x0, y0, x0 + w, y0, strokeColor=grey, strokeWidth=0.7))
    drawing.add(Line(x0, y0, x0, y0 + h, strokeColor=grey, strokeWidth=0.7))
    drawing.add(String(x0 + w / 2, y0 - 22, x_label, fontName=FONT, fontSize=7, fillColor=ink, textAnchor="middle"))
    label = String(0, 0, y_label, fontName=FONT, fontSize=7, fillColor=ink, textAnchor="middle")
    from reportlab.graphics.shapes import Group

    group = Group(label)
    group.translate(x0 - 34, y0 + h / 2)
    group.rotate(90)
    drawing.add(group)


def line_chart(width: float, height: float, title: str, series: Sequence[Series], levels: Sequence[Level],
               x_range: tuple[float, float], y_range: tuple[float, float], x_label: str, y_label: str,
               y_fmt=lambda v: f"{v:g}"):
    """A line chart with a title, axes, horizontal reference levels and a legend. Returns a Drawing."""
    from reportlab.graphics.shapes import Drawing, Line, PolyLine, String
    from reportlab.lib.colors import Color
    from reportlab.pdfbase.pdfmetrics import stringWidth

    d = Drawing(width, height)
    x0, y0 = 46, 34
    w, h = width - x0 - 96, height - y0 - 34
    d.add(String(0, height - 10, title, fontName=FONT_BOLD, fontSize=8.5, fillColor=Color(*INK)))
    _frame(d, x0, y0, w, h, x_range, y_range, x_label, y_label, y_fmt)

    def px(x):
        return x0 + (x - x_range[0]) / (x_range[1] - x_range[0]) * w

    def py(y):
        return y0 + (min(max(y, y_range[0]), y_range[1]) - y_range[0]) / (y_range[1] - y_range[0]) * h

    for level in levels:
        if not y_range[0] <= level.y <= y_range[1]:
            continue
        d.add(Line(x0, py(level.y), x0 + w, py(level.y), strokeColor=Color(*level.colour),
                   strokeWidth=1.0 if level.strong else 0.5, strokeDashArray=None if level.strong else [2, 2]))
        if level.label:
            d.add(String(x0 + w + 3, py(level.y) - 2.5, level.label, fontName=FONT_BOLD if level.strong else FONT,
                         fontSize=6.3, fillColor=Color(*level.colour)))
    for s in series:
        points = [v for x, y in zip(s.x, s.y, strict=True) for v in (px(x), py(y))]
        d.add(PolyLine(points, strokeColor=Color(*s.colour), strokeWidth=1.3,
                       strokeDashArray=[4, 2] if s.dash else None))
    x = x0
    for s in series:  # the legend: one row under the title
        y = height - 24
        d.add(Line(x, y + 2.5, x + 14, y + 2.5, strokeColor=Color(*s.colour), strokeWidth=1.5,
                   strokeDashArray=[4, 2] if s.dash else None))
        d.add(String(x + 18, y, s.label, fontName=FONT, fontSize=6.8, fillColor=Color(*INK)))
        x += 30 + stringWidth(s.label, FONT, 6.8)
    return d


def paired_bars(width: float, height: float, title: str, labels: Sequence[str], before: Sequence[float],
                after: Sequence[float], target: float, y_range: tuple[float, float], y_label: str):
    """Two bars per label (before, after) with a target line. Returns a Drawing."""
    from reportlab.graphics.shapes import Drawing, Line, Rect, String
    from reportlab.lib.colors import Color
    from reportlab.pdfbase.pdfmetrics import stringWidth

    d = Drawing(width, height)
    x0, y0 = 46, 34
    w, h = width - x0 - 96, height - y0 - 34
    ink = Color(*INK)
    d.add(String(0, height - 10, title, fontName=FONT_BOLD, fontSize=8.5, fillColor=ink))
    _frame(d, x0, y0, w, h, (0, 1), y_range, "", y_label, lambda v: f"{v:.2f}")
    # the frame drew a 0..1 x scale; cover its tick labels with the month labels instead
    d.contents = [c for c in d.contents if not (isinstance(c, String) and c.y == y0 - 11)]
    n = max(len(labels), 1)
    slot = w / n
    bar = min(slot * 0.36, 14)

    def py(y):
        return y0 + (min(max(y, y_range[0]), y_range[1]) - y_range[0]) / (y_range[1] - y_range[0]) * h

    for i, (lab, b, a) in enumerate(zip(labels, before, after, strict=True)):
        cx = x0 + slot * (i + 0.5)
        d.add(Rect(cx - bar, y0, bar, py(b) - y0, fillColor=Color(*BEFORE), strokeColor=None))
        d.add(Rect(cx, y0, bar, py(a) - y0, fillColor=Color(*AFTER), strokeColor=None))
        d.add(String(cx, y0 - 11, lab, fontName=FONT, fontSize=6.2, fillColor=ink, textAnchor="middle"))
    d.add(Line(x0, py(target), x0 + w, py(target), strokeColor=Color(*REFERENCE), strokeWidth=1.0))
    d.add(String(x0 + w + 3, py(target) - 2.5, f"target {target:g}", fontName=FONT_BOLD, fontSize=6.3,
                 fillColor=Color(*REFERENCE)))
    x = x0
    for name, colour in (("before (metered)", BEFORE), ("after (simulated)", AFTER)):
        y = height - 24
        d.add(Rect(x, y, 10, 6, fillColor=Color(*colour), strokeColor=None))
        d.add(String(x + 14, y, name, fontName=FONT, fontSize=6.8, fillColor=ink))
        x += 26 + stringWidth(name, FONT, 6.8)
    return d
