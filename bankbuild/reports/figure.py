"""Vector figures from plain data, drawn two ways: a reportlab flowable (inside the PDFs) and an SVG string.

A :class:`Figure` is a width, a height and a list of primitives (:class:`Line`, :class:`Poly`, :class:`Rect`,
:class:`Circle`, :class:`Text`) in points, origin at the bottom left, y upwards (reportlab's convention; the SVG
writer flips it). Charts (:mod:`.chart`) and the one-line diagram (:mod:`.oneline`) lay themselves out as
figures, so both outputs hold the same lines and the same text.

The SVG is written with the standard library only; reportlab is imported inside :func:`to_drawing`, whose flowable
paints the items with the canvas's own calls. Text widths
come from the metrics of the Bitstream Vera faces the PDFs use (:func:`text_width`), so a layout needs no font
library; the SVG names Vera's metric-compatible descendants first (DejaVu Sans).

Style: ink on white, greys for fills, dash patterns (not colour) to tell lines apart, so a figure reads the
same printed in black and white.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from xml.sax.saxutils import escape, quoteattr

Colour = tuple[float, float, float]

INK: Colour = (0.12, 0.14, 0.17)
GREY: Colour = (0.45, 0.47, 0.50)
LIGHT: Colour = (0.80, 0.82, 0.85)
PALE: Colour = (0.93, 0.94, 0.95)
WHITE: Colour = (1.0, 1.0, 1.0)

DASHES: dict[str, tuple[float, ...]] = {
    "solid": (),
    "dashed": (5.0, 3.0),
    "dotted": (1.0, 2.0),
    "dashdot": (6.0, 2.5, 1.2, 2.5),
    "long": (9.0, 3.0),
}
"""Named dash patterns [pt on, pt off, …]: the line styles that tell series apart in black and white."""

# Advance widths of the printable ASCII characters (32–126) in Bitstream Vera Sans and Sans Bold [1/1000 em],
# read from the fonts shipped inside reportlab. Other characters count as 0.64 em (Vera's digit width).
_ADVANCE = (
    (318, 401, 460, 838, 636, 950, 780, 275, 390, 390, 500, 838, 318, 361, 318, 337, 636, 636, 636, 636, 636, 636,
     636, 636, 636, 636, 337, 337, 838, 838, 838, 531, 1000, 684, 686, 698, 770, 632, 575, 775, 752, 295, 295, 656,
     557, 863, 748, 787, 603, 787, 695, 635, 611, 732, 684, 989, 685, 611, 685, 390, 337, 390, 838, 500, 500, 613,
     635, 550, 635, 615, 352, 635, 634, 278, 278, 579, 278, 974, 634, 612, 635, 635, 411, 521, 392, 634, 592, 818,
     592, 592, 525, 636, 337, 636, 838),
    (348, 456, 521, 838, 696, 1002, 872, 306, 457, 457, 523, 838, 380, 415, 380, 365, 696, 696, 696, 696, 696, 696,
     696, 696, 696, 696, 400, 400, 838, 838, 838, 580, 1000, 774, 762, 734, 830, 683, 683, 821, 837, 372, 372, 775,
     637, 995, 837, 850, 733, 850, 770, 720, 682, 812, 774, 1103, 771, 724, 725, 457, 365, 457, 838, 500, 500, 675,
     716, 593, 716, 678, 435, 716, 712, 343, 343, 665, 343, 1042, 712, 687, 716, 716, 493, 595, 478, 712, 652, 924,
     645, 652, 582, 712, 365, 712, 838),
)


def text_width(text: str, size: float, bold: bool = False) -> float:
    """Width of ``text`` set in Vera at ``size`` points [pt].

    >>> round(text_width("100 A", 10), 1)
    29.1
    """
    return _em_width(text, bold) * size


@lru_cache(maxsize=1 << 14)
def _em_width(text: str, bold: bool) -> float:
    """Width of ``text`` at 1 pt [pt]."""
    table = _ADVANCE[1 if bold else 0]
    return sum(table[code - 32] if 32 <= code <= 126 else 640 for code in map(ord, text)) / 1000


@dataclass(frozen=True)
class Line:
    """A straight line from (x1, y1) to (x2, y2) [pt]."""

    x1: float
    y1: float
    x2: float
    y2: float
    width: float = 0.8
    dash: str = "solid"
    colour: Colour = INK


@dataclass(frozen=True)
class Poly:
    """A polyline through ``points`` [pt]; ``closed`` makes it a polygon, filled with ``fill`` if given."""

    points: tuple[tuple[float, float], ...]
    width: float = 0.8
    dash: str = "solid"
    colour: Colour = INK
    closed: bool = False
    fill: Colour | None = None


@dataclass(frozen=True)
class Rect:
    """A rectangle with its lower-left corner at (x, y) [pt]; no outline when ``width`` is 0."""

    x: float
    y: float
    w: float
    h: float
    width: float = 0.8
    dash: str = "solid"
    colour: Colour = INK
    fill: Colour | None = None


@dataclass(frozen=True)
class Circle:
    """A circle of radius ``r`` about (cx, cy) [pt]."""

    cx: float
    cy: float
    r: float
    width: float = 0.8
    colour: Colour = INK
    fill: Colour | None = None


@dataclass(frozen=True)
class Text:
    """One line of literal text; (x, y) is its baseline at the ``anchor`` (start | middle | end); ``angle``
    turns it anticlockwise about that point [degrees]."""

    x: float
    y: float
    text: str
    size: float = 7.0
    anchor: str = "start"
    bold: bool = False
    italic: bool = False
    angle: float = 0.0
    colour: Colour = INK


Item = Line | Poly | Rect | Circle | Text


@dataclass(frozen=True)
class Figure:
    """A drawing of ``width`` × ``height`` points; ``title`` names it (the SVG's title element)."""

    width: float
    height: float
    items: tuple[Item, ...] = field(default_factory=tuple)
    title: str = ""

    def texts(self) -> list[str]:
        """Every text the figure draws, in drawing order (what a reader of the PDF or SVG finds).

        >>> Figure(10, 10, (Text(0, 0, "a"), Line(0, 0, 1, 1), Text(0, 0, "b"))).texts()
        ['a', 'b']
        """
        return [item.text for item in self.items if isinstance(item, Text)]


def stack(figures: Sequence[Figure], gap: float = 0.0, title: str = "") -> Figure:
    """Figures one above the other (the first on top) as one figure, as wide as the widest.

    >>> tall = stack([Figure(10, 5, (Text(1, 1, "top"),)), Figure(20, 5, (Text(1, 1, "below"),))], gap=2)
    >>> tall.width, tall.height, [t.y for t in tall.items]
    (20, 12, [8, 1])
    """
    width = max((f.width for f in figures), default=0)
    height = sum(f.height for f in figures) + gap * max(len(figures) - 1, 0)
    items: list[Item] = []
    top = height
    for fig in figures:
        dy = top - fig.height
        items += [shift(item, 0, dy) for item in fig.items]
        top = dy - gap
    return Figure(width, height, tuple(items), title or (figures[0].title if figures else ""))


def shift(item: Item, dx: float, dy: float) -> Item:
    """``item`` moved by (dx, dy) [pt]."""
    from dataclasses import replace

    if isinstance(item, Line):
        return replace(item, x1=item.x1 + dx, y1=item.y1 + dy, x2=item.x2 + dx, y2=item.y2 + dy)
    if isinstance(item, Poly):
        return replace(item, points=tuple((x + dx, y + dy) for x, y in item.points))
    if isinstance(item, Rect):
        return replace(item, x=item.x + dx, y=item.y + dy)
    if isinstance(item, Circle):
        return replace(item, cx=item.cx + dx, cy=item.cy + dy)
    return replace(item, x=item.x + dx, y=item.y + dy)


# --- SVG -----------------------------------------------------------------------------------------------------

SVG_FONTS = "'DejaVu Sans', 'Bitstream Vera Sans', Verdana, Arial, sans-serif"


def _n(value: float) -> str:
    """A coordinate for SVG: at most two decimals, no trailing zeros.

    >>> _n(12.0), _n(3.14159), _n(-0.001)
    ('12', '3.14', '0')
    """
    text = f"{value:.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


@lru_cache(maxsize=64)
def _rgb(colour: Colour | None) -> str:
    if colour is None:
        return "none"
    r, g, b = (max(0, min(255, round(c * 255))) for c in colour)
    return f"#{r:02x}{g:02x}{b:02x}"


def _stroke(width: float, dash: str, colour: Colour) -> str:
    attrs = f' stroke="{_rgb(colour)}" stroke-width="{_n(width)}"'
    pattern = DASHES.get(dash, ())
    if pattern:
        attrs += f' stroke-dasharray="{" ".join(_n(d) for d in pattern)}"'
    return attrs


def _svg_text(value: str) -> str:
    """Text for SVG character data: XML-escaped, with characters XML 1.0 forbids dropped."""
    if value.isprintable():
        return escape(value)
    clean = "".join(ch for ch in value if ch in "\t\n\r" or (ord(ch) >= 0x20 and not 0xD800 <= ord(ch) <= 0xDFFF
                                                              and ch not in "\ufffe\uffff"))
    return escape(clean.replace("\t", " ").replace("\n", " ").replace("\r", " "))


def _svg_item(item: Item, height: float) -> str:
    def y(v: float) -> float:
        return height - v

    if isinstance(item, Line):
        return (f'<line x1="{_n(item.x1)}" y1="{_n(y(item.y1))}" x2="{_n(item.x2)}" y2="{_n(y(item.y2))}"'
                f'{_stroke(item.width, item.dash, item.colour)}/>')
    if isinstance(item, Poly):
        tag = "polygon" if item.closed else "polyline"
        points = " ".join(f"{_n(px)},{_n(y(py))}" for px, py in item.points)
        stroke = _stroke(item.width, item.dash, item.colour) if item.width > 0 else ' stroke="none"'
        return f'<{tag} points="{points}" fill="{_rgb(item.fill)}"{stroke}/>'
    if isinstance(item, Rect):
        stroke = _stroke(item.width, item.dash, item.colour) if item.width > 0 else ' stroke="none"'
        return (f'<rect x="{_n(item.x)}" y="{_n(y(item.y + item.h))}" width="{_n(item.w)}" height="{_n(item.h)}"'
                f' fill="{_rgb(item.fill)}"{stroke}/>')
    if isinstance(item, Circle):
        return (f'<circle cx="{_n(item.cx)}" cy="{_n(y(item.cy))}" r="{_n(item.r)}" fill="{_rgb(item.fill)}"'
                f'{_stroke(item.width, "solid", item.colour)}/>')
    anchor = item.anchor if item.anchor in ("start", "middle", "end") else "start"
    attrs = f'x="{_n(item.x)}" y="{_n(y(item.y))}" font-size="{_n(item.size)}"'
    if anchor != "start":
        attrs += f' text-anchor="{anchor}"'
    if item.bold:
        attrs += ' font-weight="bold"'
    if item.italic:
        attrs += ' font-style="italic"'
    if item.colour != INK:
        attrs += f' fill="{_rgb(item.colour)}"'
    if item.angle:
        attrs += f' transform="rotate({_n(-item.angle)} {_n(item.x)} {_n(y(item.y))})"'
    return f"<text {attrs}>{_svg_text(item.text)}</text>"


def to_svg(figure: Figure) -> str:
    """The figure as a standalone SVG document (UTF-8 text), sized in points.

    >>> svg = to_svg(Figure(40, 20, (Line(0, 0, 40, 20, dash="dashed"), Text(2, 2, "R < 5 Ω & more"))))
    >>> svg.splitlines()[1][:60]
    '<svg xmlns="http://www.w3.org/2000/svg" width="40pt" height='
    >>> "R &lt; 5 Ω &amp; more" in svg and 'stroke-dasharray="5 3"' in svg
    True
    """
    w, h = figure.width, figure.height
    lines = ['<?xml version="1.0" encoding="UTF-8"?>',
             f'<svg xmlns="http://www.w3.org/2000/svg" width="{_n(w)}pt" height="{_n(h)}pt" '
             f'viewBox="0 0 {_n(w)} {_n(h)}" font-family={quoteattr(SVG_FONTS)} fill="{_rgb(INK)}" '
             'stroke-linecap="butt" stroke-linejoin="miter">']
    if figure.title:
        lines.append(f"<title>{_svg_text(figure.title)}</title>")
    lines.append(f'<rect x="0" y="0" width="{_n(w)}" height="{_n(h)}" fill="#ffffff" stroke="none"/>')
    lines += [_svg_item(item, h) for item in figure.items]
    lines.append("</svg>")
    return "\n".join(lines) + "\n"


# --- reportlab -----------------------------------------------------------------------------------------------

def to_drawing(figure: Figure):
    """The figure as a reportlab flowable: it goes straight into a PDF story and draws itself on the canvas.

    The lines and text are put on the page with the canvas's own calls, item by item (reportlab's ``Drawing``
    renders the same shapes through a state tracker per shape, several times slower for a diagram of a few
    hundred items). Text is set in the documents' Vera faces (:mod:`.pdf_common`), characters they lack
    replaced the same way as in the tables.
    """
    from bankbuild.reports.pdf_common import register_fonts

    register_fonts()
    return _flowable_class()(figure)


@lru_cache(maxsize=1)
def _flowable_class():
    from reportlab.platypus import Flowable

    class FigureFlowable(Flowable):
        """A :class:`Figure` as a flowable of its own size."""

        def __init__(self, figure: Figure):
            super().__init__()
            self.figure = figure
            self.width, self.height = figure.width, figure.height

        def wrap(self, avail_width, avail_height):
            return self.figure.width, self.figure.height

        def draw(self):
            paint(self.figure, self.canv)

    return FigureFlowable


def paint(figure: Figure, canvas) -> None:
    """Draw every item of ``figure`` on a reportlab canvas, the figure's origin at the canvas's origin."""
    from bankbuild.reports.pdf_common import FONT, FONT_BOLD, FONT_BOLD_ITALIC, FONT_ITALIC, plain_text

    fonts = {(False, False): FONT, (True, False): FONT_BOLD, (False, True): FONT_ITALIC,
             (True, True): FONT_BOLD_ITALIC}
    state: dict[str, object] = {}

    def stroke(width: float, dash: str, colour: Colour) -> None:
        if state.get("width") != width:
            canvas.setLineWidth(width)
            state["width"] = width
        if state.get("dash") != dash:
            pattern = DASHES.get(dash, ())
            canvas.setDash(list(pattern)) if pattern else canvas.setDash()
            state["dash"] = dash
        if state.get("stroke") != colour:
            canvas.setStrokeColorRGB(*colour)
            state["stroke"] = colour

    def fill(colour: Colour) -> None:
        if state.get("fill") != colour:
            canvas.setFillColorRGB(*colour)
            state["fill"] = colour

    canvas.saveState()
    canvas.setLineCap(0)
    canvas.setLineJoin(0)
    for item in figure.items:
        if isinstance(item, Line):
            stroke(item.width, item.dash, item.colour)
            canvas.line(item.x1, item.y1, item.x2, item.y2)
        elif isinstance(item, Poly):
            if len(item.points) < 2:
                continue
            path = canvas.beginPath()
            path.moveTo(*item.points[0])
            for point in item.points[1:]:
                path.lineTo(*point)
            if item.closed:
                path.close()
            if item.width > 0:
                stroke(item.width, item.dash, item.colour)
            if item.fill is not None:
                fill(item.fill)
            canvas.drawPath(path, stroke=1 if item.width > 0 else 0, fill=1 if item.fill is not None else 0)
        elif isinstance(item, Rect):
            if item.width > 0:
                stroke(item.width, item.dash, item.colour)
            if item.fill is not None:
                fill(item.fill)
            canvas.rect(item.x, item.y, item.w, item.h, stroke=1 if item.width > 0 else 0,
                        fill=1 if item.fill is not None else 0)
        elif isinstance(item, Circle):
            stroke(item.width, "solid", item.colour)
            if item.fill is not None:
                fill(item.fill)
            canvas.circle(item.cx, item.cy, item.r, stroke=1, fill=1 if item.fill is not None else 0)
        else:
            fill(item.colour)
            canvas.setFont(fonts[(item.bold, item.italic)], item.size)
            text = plain_text(item.text)
            draw = {"middle": canvas.drawCentredString, "end": canvas.drawRightString}.get(item.anchor,
                                                                                           canvas.drawString)
            if item.angle:
                canvas.saveState()
                canvas.translate(item.x, item.y)
                canvas.rotate(item.angle)
                draw(0, 0, text)
                canvas.restoreState()
                state.clear()  # the restore brings back the colours and widths of before
            else:
                draw(item.x, item.y, text)
    canvas.restoreState()
