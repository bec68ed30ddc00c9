"""The frequency-scan chart of the harmonic study: |Z_bus| against harmonic order, one curve per combination,
the characteristic orders marked. A reportlab Drawing for the worksheet, readable in black and white: curves
differ by line style and width, not by colour. It draws the points the results carry and computes no physics.

Kept small and apart so that it can move onto the shared chart module when that lands.
"""

from __future__ import annotations

import math

from bankbuild.reports.pdf_common import FONT, INK, register_fonts
from bankbuild.results.harmonics import HarmonicScan

DASHES = (None, (4, 2), (1, 1.6), (6, 2, 1, 2), (8, 3), (2, 3))
WIDTHS = (1.4, 0.9, 0.9, 0.9, 0.9, 0.9)


def _decades(values: list[float]) -> tuple[int, int]:
    positive = [v for v in values if v > 0 and math.isfinite(v)]
    low = math.floor(math.log10(min(positive))) if positive else -3
    high = math.ceil(math.log10(max(positive))) if positive else 0
    return low, max(high, low + 1)


def scan_drawing(scan: HarmonicScan, width: float, height: float = 230.0):
    """The scan as a Drawing ``width`` × ``height`` points: log |Z| against linear order."""
    from reportlab.graphics.shapes import Drawing, Line, PolyLine, String
    from reportlab.lib.colors import Color

    register_fonts()
    ink, grey = Color(*INK), Color(0.6, 0.6, 0.6)
    left, right, bottom, top = 46.0, width - 8.0, 34.0, height - 46.0
    h_lo, h_hi = scan.orders[0], scan.orders[-1]
    d_lo, d_hi = _decades([v for c in scan.curves for v in c.impedance_ohm])

    def px(h: float) -> float:
        return left + (h - h_lo) / (h_hi - h_lo) * (right - left)

    def py(z: float) -> float:
        z = min(max(z, 10.0**d_lo), 10.0**d_hi)
        return bottom + (math.log10(z) - d_lo) / (d_hi - d_lo) * (top - bottom)

    d = Drawing(width, height, initialFontName=FONT, initialFontSize=7)  # no Helvetica in the initial state
    for k in range(d_lo, d_hi + 1):  # decade grid
        y = py(10.0**k)
        d.add(Line(left, y, right, y, strokeColor=grey, strokeWidth=0.3))
        d.add(String(left - 4, y - 3, f"{10.0**k:g}", fontName=FONT, fontSize=6.5, textAnchor="end"))
    for h in range(int(math.ceil(h_lo / 5) * 5), int(h_hi) + 1, 5):
        d.add(String(px(h), bottom - 10, f"{h}", fontName=FONT, fontSize=6.5, textAnchor="middle"))
    for h in scan.marked_orders:  # the characteristic orders: thin dotted verticals, labelled at the top
        if h_lo <= h <= h_hi:
            d.add(Line(px(h), bottom, px(h), top, strokeColor=grey, strokeWidth=0.5, strokeDashArray=(1, 2)))
            d.add(String(px(h), top + 2, f"h{h}", fontName=FONT, fontSize=6, textAnchor="middle"))
    d.add(Line(left, bottom, right, bottom, strokeColor=ink, strokeWidth=0.6))
    d.add(Line(left, bottom, left, top, strokeColor=ink, strokeWidth=0.6))
    d.add(String((left + right) / 2, bottom - 22, "harmonic order h [-]", fontName=FONT, fontSize=7,
                 textAnchor="middle"))
    d.add(String(left - 40, top + 12, "|Z_bus| [Ω] per phase, log scale", fontName=FONT, fontSize=7))
    for i, curve in enumerate(scan.curves):
        points = []
        for h, z in zip(scan.orders, curve.impedance_ohm, strict=True):
            points += [px(h), py(z)]
        dash = DASHES[i % len(DASHES)]
        line = PolyLine(points, strokeColor=ink, strokeWidth=WIDTHS[i % len(WIDTHS)], fillColor=None)
        if dash:
            line.strokeDashArray = dash
        d.add(line)
    # legend: one row under the title line, a sample of each line style
    x, y = left, height - 14.0
    for i, curve in enumerate(scan.curves):
        sample = Line(x, y + 2.5, x + 18, y + 2.5, strokeColor=ink, strokeWidth=WIDTHS[i % len(WIDTHS)])
        if DASHES[i % len(DASHES)]:
            sample.strokeDashArray = DASHES[i % len(DASHES)]
        d.add(sample)
        d.add(String(x + 21, y, curve.label, fontName=FONT, fontSize=6.5))
        x += 28 + 3.6 * len(curve.label)
        if x > right - 60:
            x, y = left, y - 10
    return d
