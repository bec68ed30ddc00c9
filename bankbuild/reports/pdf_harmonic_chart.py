"""The frequency-scan chart of the harmonic study on the shared chart module: |Z_bus| against harmonic order,
one curve per combination shown, the stated and characteristic orders marked. Readable in black and white
(curves differ by line style and weight). It draws the points the results carry and computes no physics; the
impedance axis is logarithmic, drawn as decades (the chart plots log10 of the carried values).
"""

from __future__ import annotations

import math

from bankbuild.reports.chart import LINE_STYLES, Axis, Chart, Mark, Series, chart_drawing, chart_svg
from bankbuild.results.harmonics import HarmonicScan


def _decades(values: list[float]) -> tuple[int, int]:
    """The whole decades that hold every positive value.

    >>> _decades([0.004, 0.8])
    (-3, 0)
    """
    positive = [v for v in values if v > 0 and math.isfinite(v)]
    low = math.floor(math.log10(min(positive))) if positive else -3
    high = math.ceil(math.log10(max(positive))) if positive else 0
    return low, max(high, low + 1)


def scan_chart(scan: HarmonicScan, width: float = 460.0, height: float = 240.0) -> Chart:
    """The scan as a :class:`~bankbuild.reports.chart.Chart`."""
    low, high = _decades([v for c in scan.curves for v in c.impedance_ohm])
    floor = 10.0**low
    series = []
    for i, curve in enumerate(scan.curves):
        points = tuple((h, math.log10(max(z, floor))) for h, z in zip(scan.orders, curve.impedance_ohm, strict=True))
        series.append(Series(curve.label, points, style=LINE_STYLES[i % len(LINE_STYLES)],
                             weight=1.5 if i == 0 else 0.9))
    ticks = tuple(float(k) for k in range(low, high + 1))
    y_axis = Axis("|Z_bus| per phase, log scale", "Ω", low=low, high=high, ticks=ticks,
                  labels=tuple(f"{10.0**k:g}" for k in range(low, high + 1)))
    x_axis = Axis("harmonic order h", "-", low=scan.orders[0], high=scan.orders[-1],
                  ticks=tuple(float(h) for h in (1, 5, 10, 15, 20, 25, 30, 35, 40, 45, 50)
                              if scan.orders[0] <= h <= scan.orders[-1]))
    marks = tuple(Mark("vline", x=float(h), label=f"h{h}", style="dotted") for h in scan.marked_orders
                  if scan.orders[0] <= h <= scan.orders[-1])
    return Chart("|Z_bus| against harmonic order, one curve per combination", x_axis, y_axis, tuple(series),
                 marks, width=width, height=height)


def scan_drawing(scan: HarmonicScan, width: float, height: float = 240.0):
    """The scan chart as a reportlab Drawing for the worksheet."""
    return chart_drawing(scan_chart(scan, width, height))


def scan_svg(scan: HarmonicScan, width: float = 460.0, height: float = 240.0) -> str:
    """The scan chart as a standalone SVG document."""
    return chart_svg(scan_chart(scan, width, height))
