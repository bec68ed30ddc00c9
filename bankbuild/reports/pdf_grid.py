"""Our own ruled table and plain-text paragraph for the PDF documents, drawn straight onto the page.

The documents are mostly tables of plain text: thousands of rows in a plant of hundreds of banks. reportlab's
general Table resolves a style command list per cell and draws each string through a text object; its Paragraph
parses markup through an HTML parser. Here a cell's lines are broken once, with cached word widths, as a
Paragraph would break them (:func:`.pdf_blocks.wrap_lines`), and a table writes its page operators itself: the
encoded text of each string is cached per document, and a table is a handful of string joins.

The look is reportlab's own, operator for operator: the same paddings (3 pt left and right, 2 pt above, 2.5 pt
below), the first baseline one font size below the cell's top, rows as tall as their tallest cell, backgrounds,
then text, then rules (hairlines below every row, the box, the heavier rule under the header and above each band
row). A table splits between rows, its header rows repeated, exactly where a reportlab Table with ``repeatRows``
would. A line that fits only with its spaces narrowed gets the Paragraph's word spacing. A cell this module
cannot draw as plain lines (a word wider than its column, markup) is a reportlab Paragraph, laid out and drawn as
a Table would.

reportlab is imported inside the functions, so importing this module costs nothing until a PDF is drawn.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import dataclass

from bankbuild.reports.pdf_common import INK, RULE_GREY, styles, text_width

PAD_LEFT = PAD_RIGHT = 3.0
PAD_TOP = 2.0
PAD_BOTTOM = 2.5
BARE_LEADING = 12.0  # a bare string cell (an empty filler) keeps reportlab's table default leading
BARE_SIZE = 7.4
_TEXT_CACHE_MAX = 1 << 15


def _fp(*values: float) -> str:
    """Numbers as reportlab writes them into page content (its C formatter, imported on first use)."""
    global _fp
    from reportlab.lib.rl_accel import fp_str

    _fp = fp_str
    return fp_str(*values)


def text_ops(canv, font_name: str, size: float, leading: float, text: str) -> str:
    """The operators that show ``text`` in ``font_name`` at ``size`` inside a text object (font and string), as
    reportlab writes them; remembered per document (a string's glyph codes in the font subsets never change)."""
    doc = canv._doc
    cache = getattr(doc, "_bankbuild_text", None)
    if cache is None:
        cache = doc._bankbuild_text = {}
    key = (font_name, size, text)
    ops = cache.get(key)
    if ops is None:
        from reportlab.lib.rl_accel import escapePDF
        from reportlab.pdfbase.pdfmetrics import getFont

        font = getFont(font_name)
        head = f"{_fp(size)} Tf {_fp(leading)} TL"
        ops = " ".join(f"{font.getSubsetInternalName(subset, doc)} {head} ({escapePDF(part)}) Tj"
                       for subset, part in font.splitString(text, doc))
        if len(cache) >= _TEXT_CACHE_MAX:  # bounded memory: start again
            cache.clear()
        cache[key] = ops
    return ops


_COLOURS: dict[tuple, str] = {}


def colour_ops(rgb: Sequence[float], stroke: bool = False) -> str:
    """A fill (or stroke) colour operator as reportlab writes it."""
    key = (*rgb, stroke)
    ops = _COLOURS.get(key)
    if ops is None:
        ops = _COLOURS[key] = f"{_fp(*rgb)} {'RG' if stroke else 'rg'}"
    return ops


@dataclass(slots=True)
class Run:
    """A piece of one line in one font."""

    font: str
    size: float
    text: str


@dataclass(slots=True)
class TextCell:
    """A cell drawn as plain lines: each line a list of runs; the first baseline one ``first_size`` below the
    cell's top padding, the next ones ``leading`` apart; right-aligned lines end at the right padding."""

    lines: list[list[Run]]
    leading: float
    first_size: float
    colours: list[tuple[float, float, float]]  # one per line
    right: bool = False
    spacing: list[float] | None = None  # per line: the word spacing of a line set with its spaces narrowed
    drawn: tuple = ()  # (document serial, width, first line's x, operators) as last written: see cell_ops

    @property
    def height(self) -> float:
        return self.leading * len(self.lines)

    def text(self) -> str:
        """The cell's lines as text, joined by line breaks (for tests and debugging)."""
        return "\n".join("".join(run.text for run in line) for line in self.lines)


def plain_cell(lines: list[str], font: str, size: float, leading: float, colour, right: bool = False,
               spacing: list[float] | None = None) -> TextCell:
    """A cell of ``lines`` in one font and colour (``spacing``: see :class:`TextCell`)."""
    return TextCell([[Run(font, size, line)] for line in lines], leading, size, [colour] * len(lines), right,
                    spacing if spacing and any(spacing) else None)


_SERIALS = itertools.count(1)


def document_serial(canv) -> int:
    """A number of the canvas's document of its own, never reused (a font subset's codes hold in one document)."""
    doc = canv._doc
    serial = getattr(doc, "_bankbuild_serial", None)
    if serial is None:
        serial = doc._bankbuild_serial = next(_SERIALS)
    return serial


def cell_ops(cell: TextCell, canv, width: float) -> tuple[float, str]:
    """A text cell's lines as the inside of one text object, for a cell ``width`` wide: each line's text, its
    word spacing where narrowed, its colour where it changes, and the move to the next line (``Td``); with the
    first line's offset from the cell's left edge. The caller sets the first line's origin (``Tm``) and the
    first line's colour. Remembered on the cell for its document, since the same cells recur bank after bank.
    """
    serial = document_serial(canv)
    if cell.drawn and cell.drawn[0] == serial and cell.drawn[1] == width:
        return cell.drawn[2], cell.drawn[3]
    parts = []
    previous_x = None
    colour = cell.colours[0] if cell.colours else None
    for i, (line, line_colour) in enumerate(zip(cell.lines, cell.colours, strict=True)):
        spacing = cell.spacing[i] if cell.spacing else 0.0
        x = PAD_LEFT
        if cell.right and not spacing:
            x = width - PAD_RIGHT - sum(_width_of(run) for run in line)
        if previous_x is None:
            first_x = x
        else:
            parts.append(f"{_fp(x - previous_x, -cell.leading)} Td")
        previous_x = x
        if line_colour != colour:
            parts.append(colour_ops(line_colour))
            colour = line_colour
        shown = " ".join(text_ops(canv, run.font, run.size, cell.leading, run.text) for run in line if run.text)
        if shown and spacing:
            parts.append(f"{_fp(spacing)} Tw {shown} 0 Tw")
        elif shown:
            parts.append(shown)
    ops = " ".join(parts) if any(run.text for line in cell.lines for run in line) else ""
    cell.drawn = (serial, width, first_x if previous_x is not None else PAD_LEFT, ops)
    return cell.drawn[2], ops


def word_spacing(line: str, spare: float) -> float:
    """The word spacing a Paragraph sets on a line whose spare width is negative (its spaces narrowed to fit):
    the spare width over the spaces; 0 for a line that fits as it is or has no space to narrow."""
    if spare > -1e-8:
        return 0.0
    spaces = len(line.split(" ")) - 1
    return spare / spaces if spaces > 0 else 0.0


@dataclass(slots=True)
class Row:
    """One table row: its cells (None where a spanning cell covers it), each cell's left edge and width, its
    background, and the weight of a rule above it (a band row)."""

    cells: list
    lefts: list[float]
    widths: list[float]
    shade: tuple[float, float, float] | None = None
    rule_above: float = 0.0
    middle: bool = False
    fixed_height: float | None = None
    height: float = 0.0


def _width_of(run: Run) -> float:
    return text_width(run.text, run.font, run.size)


def _grid_class():
    from reportlab.platypus.flowables import Flowable

    class RuledGrid(Flowable):
        """A ruled table of prepared rows; header rows repeat on every page it continues onto."""

        def __init__(self, rows: list[Row], widths: Sequence[float], header_rows: int,
                     underlines: Sequence[tuple[int, int, int, int, float]] = (), top: bool = True,
                     bottom: bool = True, tail_rule: float = 0.0):
            super().__init__()
            # A part that ends just above a band row draws that row's rule at its foot too, as reportlab does.
            self.tail_rule = tail_rule
            # The box's top and bottom rules belong to the table's first and last rows: a part of a split table
            # draws its top rule only when it starts with the first row or repeats the header, and its bottom
            # rule only when it ends with the last row (as a reportlab Table splits its box).
            self.top = top
            self.bottom = bottom
            self.rows = rows
            self.col_widths = list(widths)
            self.header_rows = header_rows
            self.underlines = tuple(underlines)
            self.hAlign = "LEFT"
            self.width = sum(widths)
            self.height = 0.0
            self._measured = False

        # -- layout
        def _measure(self) -> None:
            if self._measured:
                return
            for row in self.rows:
                if row.fixed_height is not None:
                    row.height = row.fixed_height
                    continue
                tallest = 0.0
                for cell, width in zip(row.cells, row.widths, strict=True):
                    if cell is None:
                        continue
                    if isinstance(cell, TextCell):
                        h = cell.height
                    else:
                        h = cell.wrap(width - PAD_LEFT - PAD_RIGHT, 1e9)[1]
                    tallest = max(tallest, h + PAD_TOP + PAD_BOTTOM)
                row.height = tallest
            self.height = sum(row.height for row in self.rows)
            self._measured = True

        def wrap(self, avail_width, avail_height):
            self._measure()
            return self.width, self.height

        def split(self, avail_width, avail_height):
            self._measure()
            used, fits = 0.0, 0
            for row in self.rows:
                if used + row.height > avail_height:
                    break
                used += row.height
                fits += 1
            if fits <= self.header_rows:
                return []
            if fits == len(self.rows):
                return [self]
            head = self.rows[:self.header_rows]
            cls = type(self)
            first = cls(self.rows[:fits], self.col_widths, self.header_rows, self.underlines, self.top, False,
                        self.rows[fits].rule_above)
            rest = cls(head + self.rows[fits:], self.col_widths, self.header_rows, self.underlines,
                       self.header_rows > 0, self.bottom, self.tail_rule)
            return [first, rest]

        # -- drawing
        def draw(self):
            canv = self.canv
            self._measure()
            width = self.width
            tops = []
            y = self.height
            for row in self.rows:
                tops.append(y)
                y -= row.height
            code = canv._code
            code.append("q")
            for row, top in zip(self.rows, tops, strict=True):
                if row.shade is not None:
                    code.append(f"{colour_ops(row.shade)}\nn {_fp(0, top, width, -row.height)} re f*")
            flowables = []
            colour = None
            for row, top in zip(self.rows, tops, strict=True):
                for cell, left, cell_w in zip(row.cells, row.lefts, row.widths, strict=True):
                    if cell is None:
                        continue
                    if not isinstance(cell, TextCell):
                        flowables.append((cell, left, top, cell_w, row))
                        continue
                    if row.middle:
                        y = top - row.height + (PAD_BOTTOM + row.height - PAD_TOP + cell.height) / 2 - cell.first_size
                    else:
                        y = top - PAD_TOP - cell.first_size
                    x, ops = cell_ops(cell, canv, cell_w)
                    if not ops:
                        continue
                    if cell.colours[0] != colour:
                        code.append(colour_ops(cell.colours[0]))
                    colour = cell.colours[-1]
                    code.append(f"BT 1 0 0 1 {_fp(left + x, y)} Tm {ops} ET")
            code.append("Q")
            for cell, left, top, cell_w, row in flowables:
                _, h = cell.wrap(cell_w - PAD_LEFT - PAD_RIGHT, 1e9)
                if row.middle:
                    y = top - row.height + (row.height + PAD_BOTTOM - PAD_TOP + h) / 2 - h
                else:
                    y = top - PAD_TOP - h
                cell.drawOn(canv, left + PAD_LEFT, y)
            self._draw_rules(tops)

        def _draw_rules(self, tops: list[float]) -> None:
            code = self.canv._code
            width = self.width
            out = ["q", "1 J", "1 j"]
            state = {"colour": None, "weight": None}

            def line(x0, y0, x1, y1, weight, rgb):
                if rgb != state["colour"]:
                    out.append(colour_ops(rgb, stroke=True))
                    state["colour"] = rgb
                if weight != state["weight"]:
                    out.append(f"{_fp(weight)} w")
                    state["weight"] = weight
                out.append(f"n {_fp(x0, y0)} m {_fp(x1, y1)} l S")

            if not self.top:  # a headerless continuation keeps the hairline under the row before it
                line(0, self.height, width, self.height, 0.25, RULE_GREY)
            for row, top in zip(self.rows, tops, strict=True):
                line(0, top - row.height, width, top - row.height, 0.25, RULE_GREY)
            if self.top:
                line(0, self.height, width, self.height, 0.6, INK)
            if self.bottom:
                line(0, 0, width, 0, 0.6, INK)
            line(0, 0, 0, self.height, 0.6, INK)
            line(width, 0, width, self.height, 0.6, INK)
            if self.header_rows:
                bottom = tops[self.header_rows - 1] - self.rows[self.header_rows - 1].height
                line(0, bottom, width, bottom, 0.8, INK)
            for row, top in zip(self.rows, tops, strict=True):
                if row.rule_above:
                    line(0, top, width, top, row.rule_above, INK)
            if self.tail_rule:
                line(0, 0, width, 0, self.tail_rule, INK)
            lefts = [0.0]
            for w in self.col_widths:
                lefts.append(lefts[-1] + w)
            for first_col, first_row, last_col, last_row, weight in self.underlines:
                for index in range(first_row, len(self.rows) if last_row < 0 else last_row + 1):
                    bottom = tops[index] - self.rows[index].height
                    line(lefts[first_col], bottom, lefts[last_col + 1], bottom, weight, INK)
            out.append("Q")
            code.append("\n".join(out))

        def cell_text(self, row: int, col: int) -> str | None:
            """The text of a plain cell (None for a Paragraph or a covered cell): for tests."""
            cell = self.rows[row].cells[col]
            return cell.text() if isinstance(cell, TextCell) else None

    return RuledGrid


_GRID = None


def grid_flowable(rows: list[Row], widths: Sequence[float], header_rows: int,
                  underlines: Sequence[tuple[int, int, int, int, float]] = ()):
    """A ruled table of prepared ``rows`` (see :class:`Row`); ``underlines`` are extra rules under cells, each
    ``(first column, first row, last column, last row, weight)`` (a negative last row counts from the end)."""
    global _GRID
    if _GRID is None:
        _GRID = _grid_class()
    return _GRID(rows, widths, header_rows, underlines)


def _text_block_class():
    from reportlab.platypus.flowables import Flowable

    from bankbuild.reports.pdf_common import para_text, paragraph_class

    class PlainParagraph(Flowable):
        """Plain text in one style, broken into lines as a Paragraph breaks it and drawn as one would draw it;
        a Paragraph is made instead where the lines would differ (see :func:`.pdf_blocks.wrap_lines`) and when
        the block is split across pages (rare; a Paragraph splits with its widow and orphan rules)."""

        def __init__(self, text: str, style):
            super().__init__()
            self.text = text
            self.style = style
            self.lines: list[tuple[str, float]] | None = None
            self._para = None
            self._width = None
            self.width = self.height = 0.0

        def _paragraph(self):
            if self._para is None:
                self._para = paragraph_class()(para_text(self.text), self.style)
            return self._para

        def wrap(self, avail_width, avail_height):
            from bankbuild.reports.pdf_blocks import wrap_spaced

            style = self.style
            if self._width != avail_width:
                self._width = avail_width
                usable = avail_width - style.leftIndent - style.rightIndent
                self.lines = wrap_spaced(self.text, style.fontName, style.fontSize, usable)
            if self.lines is None:
                self.width, self.height = self._paragraph().wrap(avail_width, avail_height)
            else:
                self.width, self.height = avail_width, style.leading * len(self.lines)
            return self.width, self.height

        def split(self, avail_width, avail_height):
            para = self._paragraph()
            para.wrap(avail_width, avail_height)
            return para.split(avail_width, avail_height)

        def draw(self):
            if self.lines is None:
                self._paragraph().drawOn(self.canv, 0, 0)
                return
            style = self.style
            lines = [line for line, _ in self.lines]
            block = plain_cell(lines, style.fontName, style.fontSize, style.leading, style.textColor.rgb(),
                               spacing=[word_spacing(line, spare) for line, spare in self.lines])
            x, ops = cell_ops(block, self.canv, self.width)  # x: the cell's left padding, not wanted here
            if ops:
                x += style.leftIndent - PAD_LEFT
                y = self.height - style.fontSize
                self.canv._code.append(f"q {colour_ops(block.colours[0])} BT 1 0 0 1 {_fp(x, y)} Tm {ops} ET Q")

    return PlainParagraph


_BLOCK = None


def text_block(text: str, style_name: str):
    """A flowable of plain ``text`` in one of :func:`~.pdf_common.styles` (left-aligned, no bullet)."""
    global _BLOCK
    if _BLOCK is None:
        _BLOCK = _text_block_class()
    return _BLOCK(text, styles()[style_name])
