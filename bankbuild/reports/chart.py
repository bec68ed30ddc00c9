"""Charts from plain data: axes with units, line, step and bar series, markers, reference marks, a legend.

Describe a chart with :class:`Chart` (two :class:`Axis`, some :class:`Series`, optional :class:`Mark`) and draw
it with :func:`chart_drawing` (a reportlab Drawing for a PDF story) or :func:`chart_svg` (a standalone SVG
string); both come from one layout, :func:`chart_figure`. The chart draws the numbers it is given and computes
none: the values come from the results.

Style, for print: ink on white, thin grey grid, series told apart by line style and marker (not by colour),
the unit of each axis in brackets after its title.

>>> chart = Chart("Demo", Axis("Time", "s"), Axis("Voltage", "V"),
...               (Series("leg voltage", ((0, 679), (30, 150), (60, 35)), marker="circle"),),
...               (Mark("hline", y=50, label="limit 50 V"),))
>>> "Voltage [V]" in chart_figure(chart).texts() and "limit 50 V" in chart_svg(chart)
True
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from bankbuild.reports.figure import (
    GREY,
    INK,
    LIGHT,
    PALE,
    WHITE,
    Circle,
    Colour,
    Figure,
    Item,
    Line,
    Poly,
    Rect,
    Text,
    text_width,
    to_drawing,
    to_svg,
)

LINE_STYLES = ("solid", "dashed", "dotted", "dashdot", "long")
MARKERS = ("", "circle", "square", "triangle", "diamond", "cross")
BAR_FILLS: tuple[Colour, ...] = (WHITE, (0.55, 0.57, 0.60), PALE, INK)
"""Fills of the bar series in order: hollow, mid grey, pale grey, ink — distinct in black and white."""


@dataclass(frozen=True)
class Axis:
    """One axis: its title and unit (shown as ``title [unit]``), optional range and ticks.

    ``low``/``high`` default to the data's range (widened to tidy ticks); ``ticks`` to 1-2-5 steps; ``labels``
    give text for the ticks (categories such as step numbers).
    """

    title: str
    unit: str
    low: float | None = None
    high: float | None = None
    ticks: tuple[float, ...] | None = None
    labels: tuple[str, ...] | None = None

    def caption(self) -> str:
        """``title [unit]``, or the title alone when the unit is empty.

        >>> Axis("Time", "s").caption(), Axis("Step", "").caption()
        ('Time [s]', 'Step')
        """
        return f"{self.title} [{self.unit}]" if self.unit else self.title


@dataclass(frozen=True)
class Series:
    """Data drawn one way: ``draw`` is ``line`` (straight segments), ``step`` (each y held until the next x, the
    last for one spacing more),
    ``bars`` (a bar at each x, grouped beside the other bar series) or ``markers`` (markers only).

    ``style`` is a line style of :data:`LINE_STYLES`, ``marker`` one of :data:`MARKERS`.
    """

    label: str
    points: tuple[tuple[float, float], ...]
    style: str = "solid"
    draw: str = "line"
    marker: str = ""
    weight: float = 1.2
    fill: Colour | None = None


@dataclass(frozen=True)
class Mark:
    """A reference over the plot: ``hline`` at y, ``vline`` at x, ``point`` at (x, y), ``gap`` (a double arrow
    from (x, y) to (x, y2)), or ``text`` at (x, y); each with its label."""

    kind: str
    x: float = 0.0
    y: float = 0.0
    y2: float = 0.0
    label: str = ""
    style: str = "dashed"


@dataclass(frozen=True)
class Chart:
    """A chart of ``width`` × ``height`` points. ``equal_scale`` draws both axes to one scale (a power
    triangle); ``note`` is a line of small text beneath."""

    title: str
    x: Axis
    y: Axis
    series: tuple[Series, ...]
    marks: tuple[Mark, ...] = ()
    width: float = 460.0
    height: float = 210.0
    equal_scale: bool = False
    note: str = ""


def nice_ticks(low: float, high: float, count: int = 6) -> tuple[float, ...]:
    """About ``count`` tick values in steps of 1, 2 or 5 times a power of ten, covering ``low``–``high``.

    >>> nice_ticks(0, 330)
    (0.0, 50.0, 100.0, 150.0, 200.0, 250.0, 300.0, 350.0)
    >>> nice_ticks(0.2, 0.93, 5)
    (0.2, 0.4, 0.6, 0.8, 1.0)
    >>> nice_ticks(5, 5)
    (4.0, 4.5, 5.0, 5.5, 6.0)
    """
    if not (math.isfinite(low) and math.isfinite(high)):
        return (0.0, 1.0)
    # a range narrower than a hundred-thousandth of its magnitude is drawn as flat: ticks a millionth apart
    # could not be told apart in twelve significant digits (nor on a page)
    if high - low <= 1e-5 * max(1.0, abs(high)):
        spread = abs(high) * 0.2 if abs(high) > 1e-9 else 1.0
        low, high = low - spread, high + spread
    raw = (high - low) / max(count - 1, 1)
    power = 10 ** math.floor(math.log10(raw))
    step = next(m * power for m in (1, 2, 2.5, 5, 10) if m * power >= raw * 0.75)
    first = math.floor(low / step + 1e-9) * step
    ticks = [float(f"{first:.12g}") + 0.0]
    while ticks[-1] < high - step * 1e-6:  # until a tick reaches the top (a hair short counts as on it)
        ticks.append(float(f"{first + len(ticks) * step:.12g}") + 0.0)
    return tuple(ticks)


def tick_text(value: float, step: float) -> str:
    """A tick value with as many decimals as the tick step needs, thousands separated.

    >>> tick_text(1500.0, 500.0), tick_text(0.25, 0.05), tick_text(-0.0, 1.0)
    ('1,500', '0.25', '0')
    """
    fraction = f"{abs(step):.6f}".rstrip("0").split(".")[1] if step else ""
    decimals = len(fraction)
    text = f"{value:,.{decimals}f}"
    return "0" if text.strip("-0.,") == "" else text


def _extent(chart: Chart) -> tuple[list[float], list[float]]:
    xs = [x for s in chart.series for x, _ in s.points]
    xs += [_step_end(s) for s in chart.series if s.draw == "step" and len(s.points) > 1]
    ys = [y for s in chart.series for _, y in s.points]
    if any(s.draw == "bars" for s in chart.series):
        ys.append(0.0)
    for mark in chart.marks:
        if mark.kind in ("hline", "point", "gap", "text"):
            ys.append(mark.y)
        if mark.kind == "gap":
            ys.append(mark.y2)
        if mark.kind in ("vline", "point", "gap", "text"):
            xs.append(mark.x)
    finite = [v for v in xs if math.isfinite(v)], [v for v in ys if math.isfinite(v)]
    return finite[0] or [0.0, 1.0], finite[1] or [0.0, 1.0]


def _step_end(series: Series) -> float:
    """Where a step series' last level ends: one spacing past its last point."""
    (x1, _), (x2, _) = series.points[-2], series.points[-1]
    return x2 + (x2 - x1)


def _range(axis: Axis, data: Sequence[float], pad_bars: float = 0.0) -> tuple[float, float, tuple[float, ...]]:
    """The axis range and ticks: as given, else the data's, widened to the ticks (bars get half a slot)."""
    if axis.ticks:
        ticks = tuple(axis.ticks)
        low = axis.low if axis.low is not None else min(min(ticks), min(data)) - pad_bars
        high = axis.high if axis.high is not None else max(max(ticks), max(data)) + pad_bars
        return low, high, ticks
    low = axis.low if axis.low is not None else min(data) - pad_bars
    high = axis.high if axis.high is not None else max(data) + pad_bars
    ticks = nice_ticks(low, high)
    if axis.low is None and not pad_bars:
        low = min(low, ticks[0])
    if axis.high is None and not pad_bars:
        high = max(high, ticks[-1])
    if high <= low:
        high = low + 1.0
    return low, high, tuple(t for t in ticks if low - 1e-9 * abs(high - low) <= t <= high + 1e-9 * abs(high - low))


def _inside(ticks: tuple[float, ...], low: float, high: float) -> tuple[float, ...]:
    """The ticks within low–high (a billionth of the range either side counts as inside)."""
    eps = 1e-9 * (high - low)
    return tuple(t for t in ticks if low - eps <= t <= high + eps)


def _marker(kind: str, x: float, y: float, size: float = 2.4) -> list[Item]:
    """A marker centred on (x, y): hollow circle and triangle, filled square, hollow diamond, a cross."""
    if kind == "circle":
        return [Circle(x, y, size, width=0.8, fill=WHITE)]
    if kind == "square":
        return [Rect(x - size, y - size, 2 * size, 2 * size, width=0.5, fill=INK)]
    if kind == "triangle":
        h = size * 1.15
        return [Poly(((x - h, y - h * 0.8), (x + h, y - h * 0.8), (x, y + h * 1.1)), width=0.8, closed=True,
                     fill=WHITE)]
    if kind == "diamond":
        h = size * 1.25
        return [Poly(((x - h, y), (x, y + h), (x + h, y), (x, y - h)), width=0.8, closed=True, fill=WHITE)]
    if kind == "cross":
        return [Line(x - size, y - size, x + size, y + size, width=0.9),
                Line(x - size, y + size, x + size, y - size, width=0.9)]
    return []


def _legend(chart: Chart, left: float, top: float, right: float) -> tuple[list[Item], float]:
    """Legend entries flowing left to right under the title; returns the items and the height used."""
    items: list[Item] = []
    entries = [s for s in chart.series if s.label]
    if len(entries) < 2 and not any(s.marker for s in entries):
        return items, 0.0
    x, y, row = left, top - 8, 0
    for s in entries:
        width = 26 + text_width(s.label, 6.8)
        if x + width > right and x > left:
            row += 1
            x, y = left, y - 10
        if s.draw == "bars":
            items.append(Rect(x + 4, y - 1, 10, 7, width=0.7, fill=s.fill or WHITE))
        else:
            items.append(Line(x, y + 2.5, x + 18, y + 2.5, width=s.weight, dash=s.style))
            items += _marker(s.marker, x + 9, y + 2.5)
        items.append(Text(x + 22, y, s.label, 6.8))
        x += width + 10
    return items, 10.0 * (row + 1) + 2


def chart_figure(chart: Chart) -> Figure:
    """Lay the chart out as a :class:`~.figure.Figure` (lines and text in points)."""
    xs, ys = _extent(chart)
    bar_series = [s for s in chart.series if s.draw == "bars"]
    slot = 1.0
    if bar_series:
        distinct = sorted({x for s in bar_series for x, _ in s.points})
        gaps = [b - a for a, b in zip(distinct, distinct[1:], strict=False) if b > a]
        slot = min(gaps) if gaps else 1.0
    x_low, x_high, x_ticks = _range(chart.x, xs, pad_bars=slot * 0.6 if bar_series else 0.0)
    y_low, y_high, y_ticks = _range(chart.y, ys)
    y_step = (y_ticks[1] - y_ticks[0]) if len(y_ticks) > 1 else 1.0
    x_step = (x_ticks[1] - x_ticks[0]) if len(x_ticks) > 1 else 1.0
    y_labels = chart.y.labels or tuple(tick_text(t, y_step) for t in y_ticks)
    x_labels = chart.x.labels or tuple(tick_text(t, x_step) for t in x_ticks)

    items: list[Item] = [Text(0, chart.height - 10, chart.title, 8.6, bold=True)]
    legend, legend_h = _legend(chart, 0, chart.height - 14, chart.width)
    items += legend
    label_w = max((text_width(t, 6.8) for t in y_labels), default=10)
    left = 14 + label_w + 6
    bottom = 30 + (10 if chart.note else 0)
    top = chart.height - 18 - legend_h
    right = chart.width - 8
    plot_w, plot_h = max(right - left, 10), max(top - bottom, 10)
    if chart.equal_scale:  # one scale for both axes: widen the shorter range to fill the plot
        scale = min(plot_w / (x_high - x_low), plot_h / (y_high - y_low))
        x_high = x_low + plot_w / scale
        y_high = y_low + plot_h / scale
        if chart.x.ticks is None:  # the widened axis gets its ticks to the new end
            x_ticks = _inside(nice_ticks(x_low, x_high), x_low, x_high)
            x_step = (x_ticks[1] - x_ticks[0]) if len(x_ticks) > 1 else 1.0
            x_labels = tuple(tick_text(t, x_step) for t in x_ticks)
        if chart.y.ticks is None:
            y_ticks = _inside(nice_ticks(y_low, y_high), y_low, y_high)
            y_step = (y_ticks[1] - y_ticks[0]) if len(y_ticks) > 1 else 1.0
            y_labels = tuple(tick_text(t, y_step) for t in y_ticks)

    def px(x: float) -> float:
        return left + (x - x_low) / (x_high - x_low) * plot_w

    def py(y: float) -> float:
        return bottom + (y - y_low) / (y_high - y_low) * plot_h

    # grid, frame, ticks
    for t, text in zip(y_ticks, y_labels, strict=False):
        items.append(Line(left, py(t), right, py(t), width=0.3, colour=LIGHT))
        items.append(Text(left - 4, py(t) - 2.4, text, 6.8, anchor="end"))
    for t, text in zip(x_ticks, x_labels, strict=False):
        items.append(Line(px(t), bottom, px(t), bottom - 3, width=0.6))
        items.append(Text(px(t), bottom - 11, text, 6.8, anchor="middle"))
    items.append(Rect(left, bottom, plot_w, plot_h, width=0.7, fill=None))
    if y_low < 0 < y_high:
        items.append(Line(left, py(0), right, py(0), width=0.6, colour=GREY))
    items.append(Text(left + plot_w / 2, bottom - 22, chart.x.caption(), 7.4, anchor="middle"))
    items.append(Text(9, bottom + plot_h / 2, chart.y.caption(), 7.4, anchor="middle", angle=90))
    if chart.note:
        items.append(Text(0, 3, chart.note, 6.4, italic=True, colour=GREY))

    # series
    bar_w = slot * 0.8 / max(len(bar_series), 1)
    for s in chart.series:
        points = [(x, y) for x, y in s.points if math.isfinite(x) and math.isfinite(y)]
        if s.draw == "bars":
            k = bar_series.index(s)
            fill = s.fill or BAR_FILLS[k % len(BAR_FILLS)]
            base = max(y_low, min(0.0, y_high))
            for x, y in points:
                x0 = px(x - slot * 0.4 + k * bar_w)
                width = px(x - slot * 0.4 + (k + 1) * bar_w) - x0
                y0, y1 = sorted((py(base), py(y)))
                items.append(Rect(x0, y0, width, max(y1 - y0, 0.3), width=0.7, fill=fill))
            continue
        path: list[tuple[float, float]] = []
        if s.draw == "step":
            for i, (x, y) in enumerate(points):
                path.append((px(x), py(y)))
                if i + 1 < len(points):
                    path.append((px(points[i + 1][0]), py(y)))
                elif len(points) > 1:  # the last level is held for one more spacing
                    path.append((px(_step_end(s)), py(y)))
        elif s.draw == "line":
            path = [(px(x), py(y)) for x, y in points]
        if len(path) > 1:
            items.append(Poly(tuple(path), width=s.weight, dash=s.style))
        for x, y in points:
            items += _marker(s.marker, px(x), py(y))

    # marks
    for mark in chart.marks:
        items += _mark_items(mark, px, py, left, right, bottom, top)
    return Figure(chart.width, chart.height, tuple(items), chart.title)


def _mark_items(mark: Mark, px, py, left: float, right: float, bottom: float, top: float) -> list[Item]:
    items: list[Item] = []
    size = 6.6
    if mark.kind == "hline":
        y = py(mark.y)
        items.append(Line(left, y, right, y, width=0.9, dash=mark.style))
        if mark.label:
            items.append(Rect(right - 3 - text_width(mark.label, size) - 2, y + 1.2, text_width(mark.label, size) + 4,
                              size + 1.5, width=0, fill=WHITE))
            items.append(Text(right - 3, y + 2.5, mark.label, size, anchor="end"))
    elif mark.kind == "vline":
        x = px(mark.x)
        items.append(Line(x, bottom, x, top, width=0.9, dash=mark.style))
        if mark.label:
            at_right = x + 3 + text_width(mark.label, size) > right
            items.append(Text(x - 3 if at_right else x + 3, top - 9, mark.label, size,
                              anchor="end" if at_right else "start"))
    elif mark.kind == "point":
        x, y = px(mark.x), py(mark.y)
        items.append(Circle(x, y, 2.8, width=0.8, fill=INK))
        if mark.label:
            at_right = x + 5 + text_width(mark.label, size) > right
            items.append(Text(x - 5 if at_right else x + 5, y + 4, mark.label, size,
                              anchor="end" if at_right else "start"))
    elif mark.kind == "gap":
        x, y1, y2 = px(mark.x), py(mark.y), py(mark.y2)
        lo, hi = min(y1, y2), max(y1, y2)
        items.append(Line(x, lo, x, hi, width=0.9))
        for tip, sign in ((lo, 1), (hi, -1)):
            items.append(Poly(((x - 2.2, tip + sign * 4.5), (x, tip), (x + 2.2, tip + sign * 4.5)), width=0.9))
        if mark.label:
            at_right = x + 5 + text_width(mark.label, size) > right
            items.append(Text(x - 5 if at_right else x + 5, (lo + hi) / 2 - 2, mark.label, size, bold=True,
                              anchor="end" if at_right else "start"))
    elif mark.kind == "text":
        items.append(Text(px(mark.x), py(mark.y), mark.label, size, anchor="middle"))
    return items


def chart_drawing(chart: Chart):
    """The chart as a reportlab Drawing (a flowable for a PDF story)."""
    return to_drawing(chart_figure(chart))


def chart_svg(chart: Chart) -> str:
    """The chart as a standalone SVG document."""
    return to_svg(chart_figure(chart))
