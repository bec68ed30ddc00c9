"""Building blocks of the PDF documents: ruled tables, pass/flag cells, headings that are never orphaned, the
title block, the provenance block and the cautions box. reportlab is imported inside the functions.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from bankbuild.reports.pdf_common import (
    CAUTION_EDGE,
    CAUTION_FILL,
    FLAG_RED,
    FONT,
    INK,
    PASS_GREEN,
    PM,
    SHADE,
    P,
    para_text,
    paragraph_class,
    plain_text,
    styles,
    text_width,
)
from bankbuild.reports.pdf_grid import (
    BARE_LEADING,
    BARE_SIZE,
    Row,
    Run,
    TextCell,
    grid_flowable,
    plain_cell,
    word_spacing,
)
from bankbuild.results.sizing import ProjectResult


@dataclass(frozen=True)
class CellText:
    """Literal text for a table cell, drawn as plain lines by :func:`grid` (a Paragraph only where plain lines
    would be drawn differently). ``lead`` is a bold lead-in on the first line (a band row's name); ``note`` is
    set beneath the text in small italics, in ``note_colour`` (the text's colour when None)."""

    text: str
    style: str = "cell"
    colour: tuple[float, float, float] | None = None
    lead: str = ""
    note: str = ""
    note_colour: tuple[float, float, float] | None = None

    def markup(self) -> str:
        """The same cell as Paragraph markup (for a cell plain lines cannot draw)."""
        text = para_text(self.text)
        if self.lead:
            text = f"<b>{para_text(self.lead)}</b>{text}"
        if self.note:
            colour = "" if self.note_colour is None else ' color="#{}"'.format(
                "".join(f"{round(c * 255):02x}" for c in self.note_colour))
            text += f'<br/><font name="{FONT}" size="{NOTE_SIZE:g}"{colour}><i>{para_text(self.note)}</i></font>'
        return text


NOTE_SIZE = 6.6


def C(text: object, style: str = "cell", colour: tuple[float, float, float] | None = None, *,  # noqa: N802
      lead: str = "", note: str = "", note_colour: tuple[float, float, float] | None = None) -> CellText:
    """A table cell of literal ``text`` in one of the styles of :func:`~.pdf_common.styles` (see
    :class:`CellText` for ``lead`` and ``note``)."""
    return CellText(plain_text(text), style, colour, plain_text(lead) if lead else "",
                    plain_text(note) if note else "", note_colour)


def verdict(ok: bool, passed: str = "pass", failed: str = "FLAG") -> CellText:
    """A pass / flag cell, coloured, bold on a flag."""
    return C(passed, "cell", PASS_GREEN) if ok else C(failed, "cell_bold", FLAG_RED)


def wrap_lines(text: str, font: str, size: float, width: float) -> list[str] | None:
    """``text`` broken into lines of at most ``width`` points, as a reportlab Paragraph breaks plain text; None
    where a Paragraph would draw a line differently from a plain string: a word wider than a line (it splits
    the word) or a line that fits only with its spaces narrowed (see :func:`wrap_spaced` for those).

    >>> wrap_lines("one two three", "Helvetica", 10, 40)
    ['one two', 'three']
    >>> wrap_lines("unbreakable", "Helvetica", 10, 20) is None
    True
    """
    lines = wrap_spaced(text, font, size, width)
    if lines is None or any(extra < 0 for _, extra in lines):
        return None
    return [line for line, _ in lines]


def wrap_spaced(text: str, font: str, size: float, width: float) -> list[tuple[str, float]] | None:
    """``text`` broken into lines as a reportlab Paragraph breaks plain text, each with its spare width [pt]:
    negative where the line fits only with its spaces narrowed (a Paragraph then sets the word spacing to the
    spare width over the spaces); None where a word is wider than a line (a Paragraph splits the word).

    The same greedy rule as reportlab's: words split on white space, a word goes on the line while the line
    stays within the width plus 5 % of a space per word already on it (its ``spaceShrinkage``).

    >>> [(line, round(spare, 2)) for line, spare in wrap_spaced("one two three", "Helvetica", 10, 40)]
    [('one two', 4.98), ('three', 17.21)]
    """
    from reportlab import rl_config

    space = text_width(" ", font, size)
    shrink = rl_config.spaceShrinkage * space
    lines: list[tuple[str, float]] = []
    line: list[str] = []
    used = -space
    for word in text.split():
        word_w = text_width(word, font, size)
        new_w = used + space + word_w
        if new_w > width + shrink * len(line):
            if word_w > width:
                return None
            if line:
                lines.append((" ".join(line), width - used))
                line, used = [word], word_w
                continue
        line.append(word)
        used = new_w
    if line:
        lines.append((" ".join(line), width - used))
    return lines


def _lines(text: str, font: str, size: float, width: float) -> list[tuple[str, float]] | None:
    """The lines of a cell's text in its column, each with its spare width (the whole text when it fits, as a
    Table draws a string); see :func:`wrap_spaced`."""
    if text_width(text, font, size) <= width - 6.5:
        return [(text, 0.0)]
    return wrap_spaced(text, font, size, width - 6)


_LAID_OUT: dict[tuple[CellText, float], object] = {}


def _cell(cell, width: float):
    """A cell as :mod:`.pdf_grid` draws it: CellText as plain lines (broken here), a bare string in the table's
    defaults (an empty filler), a Paragraph where plain lines would be drawn differently; flowables as they are.

    The plain lines of a text at a width are remembered: a plant's worksheet repeats the same cells (headings,
    rules, formulas) bank after bank, ~13 times each on average. A cached cell is never changed afterwards.
    """
    if isinstance(cell, CellText):
        key = (cell, width)
        laid = _LAID_OUT.get(key)
        if laid is None:
            laid = _lay_out(cell, width)
            if not isinstance(laid, TextCell):
                return laid  # a Paragraph holds layout state of its own: one per cell
            if len(_LAID_OUT) >= 1 << 14:  # bounded memory: start again
                _LAID_OUT.clear()
            _LAID_OUT[key] = laid
        return laid
    return _lay_out(cell, width)


def _lay_out(cell, width: float):
    if isinstance(cell, str):
        return plain_cell(cell.split("\n"), FONT, BARE_SIZE, BARE_LEADING, (0.0, 0.0, 0.0))
    if not isinstance(cell, CellText):
        return cell
    style = styles()[cell.style]
    font, size, leading = style.fontName, style.fontSize, style.leading
    colour = cell.colour if cell.colour is not None else INK
    if cell.lead:  # a bold lead-in: drawn plain when the whole line fits
        bold = styles()["cell_bold"].fontName
        if not cell.note and text_width(cell.lead, bold, size) + text_width(cell.text, font, size) <= width - 6.5:
            return TextCell([[Run(bold, size, cell.lead), Run(font, size, cell.text)]], leading, size, [colour])
        return paragraph_class()(cell.markup(), style)
    spaced = _lines(cell.text, font, size, width)
    if spaced is None:  # a word wider than the column: the Paragraph splits it
        if cell.colour is not None:
            style = style.clone(f"{style.name}-c", textColor=look_colour(cell.colour))
        return paragraph_class()(cell.markup(), style)
    lines = [line for line, _ in spaced]
    if not cell.note:
        return plain_cell(lines, font, size, leading, colour, right=style.alignment == 2,
                          spacing=[word_spacing(line, spare) for line, spare in spaced])
    italic = styles()["note"].fontName
    note_lines = wrap_lines(cell.note, italic, NOTE_SIZE, width - 6)
    if note_lines is None or style.alignment == 2 or any(spare < 0 for _, spare in spaced):
        return paragraph_class()(cell.markup(), style)
    note_colour = cell.note_colour if cell.note_colour is not None else colour
    return TextCell([[Run(font, size, line)] for line in lines] + [[Run(italic, NOTE_SIZE, n)] for n in note_lines],
                    leading, size, [colour] * len(lines) + [note_colour] * len(note_lines))


def look_colour(rgb):
    """A reportlab colour of ``rgb``."""
    from reportlab.lib.colors import Color

    return Color(*rgb)


ZEBRA = (0.975, 0.98, 0.985)
BAND = (0.84, 0.88, 0.92)


def grid(rows: Sequence[Sequence], widths: Sequence[float], header_rows: int = 1, zebra: bool = True,
         spans: Sequence[int] = (), row_heights: Sequence[float | None] | None = None,
         joined: Sequence[tuple[int, int, int]] = (), middle_from: int | None = None,
         underlines: Sequence[tuple[int, int, int, int, float]] = ()):
    """A ruled table whose header rows repeat on every page; ``spans`` are rows drawn as full-width bands;
    ``joined`` are cells spanning columns, each ``(row, first column, last column)``; rows from ``middle_from``
    on are centred vertically; ``underlines`` are rules under cells (see :func:`.pdf_grid.grid_flowable`).

    Cells are flowables, or :class:`CellText` (drawn as plain lines, broken here: much faster than a Paragraph
    per cell, and laid out the same).
    """
    lefts = [0.0]
    for w in widths:
        lefts.append(lefts[-1] + w)
    total = lefts[-1]
    span_rows = set(spans)
    joins = {r: (first, last) for r, first, last in joined}
    prepared = []
    for r, row in enumerate(rows):
        cells, cell_lefts, cell_widths = [], [], []
        join = joins.get(r)
        for c, cell in enumerate(row):
            width = widths[c]
            covered = False
            if r in span_rows:
                width, covered = (total, False) if c == 0 else (widths[c], True)
            elif join is not None and join[0] <= c <= join[1]:
                width, covered = (lefts[join[1] + 1] - lefts[c], False) if c == join[0] else (widths[c], True)
            if covered:  # a spanning cell covers it: only a bare string filler still counts in the row height
                cells.append(_cell(cell, width) if isinstance(cell, str) else None)
                covered_at = len(cells) - 1
                cell_lefts.append(lefts[c])
                cell_widths.append(width)
                if cells[covered_at] is not None:
                    cells[covered_at].lines = [[]] * len(cells[covered_at].lines)  # measured, never drawn
                continue
            cells.append(_cell(cell, width))
            cell_lefts.append(lefts[c])
            cell_widths.append(width)
        shade = None
        if r < header_rows:
            shade = SHADE
        elif r in span_rows:
            shade = BAND
        elif zebra and r >= header_rows + 1 and (r - header_rows - 1) % 2 == 0:
            shade = ZEBRA
        fixed = row_heights[r] if row_heights and r < len(row_heights) else None
        prepared.append(Row(cells, cell_lefts, cell_widths, shade, 0.8 if r in span_rows else 0.0,
                            middle_from is not None and r >= middle_from, fixed))
    return grid_flowable(prepared, widths, header_rows, underlines)


def key_values(pairs: Sequence[tuple[str, object]], width: float, key_share: float = 0.28):
    """A two-column table of labels and values (values may be flowables, cells or text)."""
    rows = [[C(k, "cell_bold"), v if not isinstance(v, str) else C(v)] for k, v in pairs]
    return grid(rows, [width * key_share, width * (1 - key_share)], header_rows=0)


TITLE_BANKS = 12  # bank names listed in the title block; the rest are counted


def title_block(result: ProjectResult, doc_title: str, purpose: str, width: float) -> list:
    """Document title and the boxed project fields from the spec (project, site, banks, revision, date, people)."""
    from reportlab.platypus import Spacer

    project = result.project
    banks = "; ".join(f"{i}. {b.name}" for i, b in enumerate(result.banks[:TITLE_BANKS], start=1)) or "—"
    if len(result.banks) > TITLE_BANKS:  # a plant of hundreds of banks would overflow the page
        banks += f"; … and {len(result.banks) - TITLE_BANKS} more ({len(result.banks)} banks, one section each)"

    def field(key: str) -> str:
        return project.get(key, "") or "—"

    half = width / 2
    rows = [
        [C("Project", "cell_bold"), C(field("name")), "", ""],
        [C("Site", "cell_bold"), C(field("site")), "", ""],
        [C("Banks", "cell_bold"), C(banks), "", ""],
        [C("Revision", "cell_bold"), C(field("revision")), C("Date", "cell_bold"), C(field("date"))],
        [C("Prepared by", "cell_bold"), C(field("prepared_by")), C("Checked by", "cell_bold"),
         C(field("checked_by"))],
        [C("Rule basis", "cell_bold"), C(result.provenance.edition), C("Generated by", "cell_bold"),
         C(f"bankbuild {result.provenance.version}")],
    ]
    key_w = width * 0.14
    table = grid(rows, [key_w, half - key_w, key_w, half - key_w], header_rows=0, zebra=False,
                 joined=[(0, 1, 3), (1, 1, 3), (2, 1, 3)])
    return [P(doc_title, "title"), P(purpose, "subtitle"), table, Spacer(1, 8)]


def provenance_block(result: ProjectResult, width: float) -> list:
    """Where every number came from: program version, rule basis and edition, spec hash, each table's hash."""
    prov = result.provenance
    rows = [[C("Program", "cell_bold"), C(f"bankbuild {prov.version}")],
            [C("Rule basis", "cell_bold"), C(prov.edition + (f" — file {prov.rule_basis_file}, SHA-256 "
                                                               f"{prov.rule_basis_sha256}" if prov.rule_basis_file
                                                               else ""))],
            [C("Rule basis note", "cell_bold"), C(prov.rule_basis_note or "—")],
            [C("Spec file", "cell_bold"), C(prov.spec_file or "—")],
            [C("Spec SHA-256", "cell_bold"), C(prov.spec_sha256 or "—")]]
    table_rows = [[C("Rating table", "head"), C("SHA-256 of the file as read", "head")]]
    table_rows += [[C(t.file_name), C(t.sha256)] for t in prov.tables]
    from reportlab.platypus import KeepTogether

    return [KeepTogether([
        P("Provenance", "h2"),
        grid(rows, [width * 0.2, width * 0.8], header_rows=0, zebra=False),
        _gap(4),
        grid(table_rows, [width * 0.3, width * 0.7]),
        P("A table's hash changes whenever its file changes: compare these with 'bankbuild catalog check' "
          "to see that the tables used are the tables in hand. Each table's own source notes (standard, "
          "edition, values from memory) are in its file header.", "note")])]


def cautions_box(cautions: Sequence[str], width: float, heading: str = "Cautions — read before use"):
    """The cautions of the results in a ruled, tinted box that is never split across pages."""
    from reportlab.lib.colors import Color
    from reportlab.platypus import Table, TableStyle

    body = [PM(f'<font color="#8a4b00"><b>{para_text(heading)}</b></font>', "body")]
    body += [PM(para_text(c), "caution") for c in cautions]
    for item in body[1:]:
        item.bulletText = "•"
    table = Table([[b] for b in body], colWidths=[width], hAlign="LEFT")
    table.setStyle(TableStyle([
        ("FONTNAME", (0, 0), (-1, -1), FONT),
        ("BOX", (0, 0), (-1, -1), 1.2, Color(*CAUTION_EDGE)),
        ("BACKGROUND", (0, 0), (-1, -1), Color(*CAUTION_FILL)),
        ("LEFTPADDING", (0, 0), (-1, -1), 7), ("RIGHTPADDING", (0, 0), (-1, -1), 7),
        ("TOPPADDING", (0, 0), (-1, -1), 2), ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
        ("TOPPADDING", (0, 0), (-1, 0), 6), ("BOTTOMPADDING", (0, -1), (-1, -1), 6),
    ]))
    table.keepWithNext = 0
    return table


def _gap(height: float):
    from reportlab.platypus import Spacer

    return Spacer(1, height)


def gap(height: float = 6):
    """Vertical space [pt]."""
    return _gap(height)


def section_break(min_space: float = 140):
    """Start a new page unless ``min_space`` points remain, so a heading is never left alone at a page foot."""
    from reportlab.platypus import CondPageBreak

    return CondPageBreak(min_space)


def heading(text: object, level: str = "h2", min_space: float = 100) -> list:
    """A heading that starts a new page unless ``min_space`` points remain below it (no orphan headings).

    Long tables after it still split across pages, their header rows repeated.
    """
    return [section_break(min_space), P(text, level)]


