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
    RULE_GREY,
    SHADE,
    P,
    para_text,
    paragraph_class,
    plain_text,
    styles,
)
from bankbuild.results.sizing import ProjectResult


@dataclass(frozen=True)
class CellText:
    """Literal text for a table cell: :func:`grid` draws it as a plain string when it fits on one line (fast),
    else as a wrapping Paragraph."""

    text: str
    style: str = "cell"
    colour: tuple[float, float, float] | None = None


def C(text: object, style: str = "cell", colour: tuple[float, float, float] | None = None) -> CellText:  # noqa: N802
    """A table cell of literal ``text`` in one of the styles of :func:`~.pdf_common.styles`."""
    return CellText(plain_text(text), style, colour)


def verdict(ok: bool, passed: str = "pass", failed: str = "FLAG") -> CellText:
    """A pass / flag cell, coloured, bold on a flag."""
    return C(passed, "cell", PASS_GREEN) if ok else C(failed, "cell_bold", FLAG_RED)


def wrap_lines(text: str, font: str, size: float, width: float) -> list[str] | None:
    """``text`` broken into lines of at most ``width`` points, as a reportlab Paragraph breaks plain text; None
    where a Paragraph would draw a line differently from a plain string: a word wider than a line (it splits
    the word) or a line that fits only with its spaces narrowed.

    The same greedy rule as reportlab's: words split on white space, a word goes on the line while the line
    stays within the width plus 5 % of a space per word already on it (its ``spaceShrinkage``); a line over the
    width is then drawn with narrower spaces.

    >>> wrap_lines("one two three", "Helvetica", 10, 40)
    ['one two', 'three']
    >>> wrap_lines("unbreakable", "Helvetica", 10, 20) is None
    True
    """
    from reportlab import rl_config
    from reportlab.pdfbase.pdfmetrics import stringWidth

    space = stringWidth(" ", font, size)
    shrink = rl_config.spaceShrinkage * space
    lines: list[str] = []
    line: list[str] = []
    used = -space
    for word in text.split():
        word_w = stringWidth(word, font, size)
        new_w = used + space + word_w
        if new_w > width + shrink * len(line):
            if word_w > width:
                return None
            if line:
                lines.append(" ".join(line))
                line, used = [word], word_w
                continue
        elif new_w > width:
            return None
        line.append(word)
        used = new_w
    if line:
        lines.append(" ".join(line))
    return lines


class _GridStyle:
    """The table-wide text defaults of :func:`grid` (the ``cell`` style) and the commands for cells that differ."""

    def __init__(self):
        from reportlab.lib.colors import Color, black

        base = styles()["cell"]
        self.base = base
        self.ink = Color(*INK)
        self.black = black
        self.colours: dict = {}
        self.defaults = [("FONTNAME", (0, 0), (-1, -1), base.fontName), ("FONTSIZE", (0, 0), (-1, -1), base.fontSize),
                         ("LEADING", (0, 0), (-1, -1), base.leading), ("TEXTCOLOR", (0, 0), (-1, -1), self.ink)]

    def colour(self, rgb):
        from reportlab.lib.colors import Color

        if rgb not in self.colours:
            self.colours[rgb] = Color(*rgb)
        return self.colours[rgb]


def _cell(cell, row: int, col: int, width: float, cmds: list, look: _GridStyle):
    """A cell as the table draws it: CellText as a plain string (its lines broken here, which is much faster
    than a Paragraph per cell), with commands only where its style differs from the table's defaults."""
    at = (col, row), (col, row)
    if isinstance(cell, str):  # a bare string keeps reportlab's own cell defaults (an empty cell is 12 pt high)
        cmds += [("LEADING", *at, 12), ("TEXTCOLOR", *at, look.black)]
        return cell
    if not isinstance(cell, CellText):
        return cell
    from reportlab.pdfbase.pdfmetrics import stringWidth

    style = styles()[cell.style]
    if stringWidth(cell.text, style.fontName, style.fontSize) <= width - 6.5:
        lines = [cell.text]  # fits as it is
    else:
        lines = wrap_lines(cell.text, style.fontName, style.fontSize, width - 6)
    if lines is None:  # a word wider than the column: the Paragraph splits it
        if cell.colour is not None:
            style = style.clone(f"{style.name}-c", textColor=look.colour(cell.colour))
        return paragraph_class()(para_text(cell.text), style)
    base = look.base
    if style.fontName != base.fontName:
        cmds.append(("FONTNAME", *at, style.fontName))
    if style.fontSize != base.fontSize:
        cmds.append(("FONTSIZE", *at, style.fontSize))
    if style.leading != base.leading:
        cmds.append(("LEADING", *at, style.leading))
    if cell.colour is not None:
        cmds.append(("TEXTCOLOR", *at, look.colour(cell.colour)))
    if style.alignment == 2:
        cmds.append(("ALIGN", *at, "RIGHT"))
    return "\n".join(lines)


def grid(rows: Sequence[Sequence], widths: Sequence[float], header_rows: int = 1, zebra: bool = True,
         spans: Sequence[int] = (), row_heights: Sequence[float | None] | None = None,
         joined: Sequence[tuple[int, int, int]] = ()):
    """A ruled table whose header rows repeat on every page; ``spans`` are rows drawn as full-width bands;
    ``joined`` are cells spanning columns, each ``(row, first column, last column)``.

    Cells are flowables, or :class:`CellText` (drawn as plain strings, broken into lines here: much faster than
    a Paragraph per cell, and laid out the same).
    """
    from reportlab.lib.colors import Color
    from reportlab.platypus import Table, TableStyle

    look = _GridStyle()
    cmds = [
        ("VALIGN", (0, 0), (-1, -1), "TOP"),
        *look.defaults,
        ("LEFTPADDING", (0, 0), (-1, -1), 3),
        ("RIGHTPADDING", (0, 0), (-1, -1), 3),
        ("TOPPADDING", (0, 0), (-1, -1), 2),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 2.5),
        ("LINEBELOW", (0, 0), (-1, -1), 0.25, Color(*RULE_GREY)),
        ("BOX", (0, 0), (-1, -1), 0.6, look.ink),
    ]
    if header_rows:
        cmds += [("BACKGROUND", (0, 0), (-1, header_rows - 1), Color(*SHADE)),
                 ("LINEBELOW", (0, header_rows - 1), (-1, header_rows - 1), 0.8, look.ink)]
    if zebra:
        for r in range(header_rows + 1, len(rows), 2):
            if r not in spans:
                cmds.append(("BACKGROUND", (0, r), (-1, r), Color(0.975, 0.98, 0.985)))
    for r in spans:
        cmds += [("SPAN", (0, r), (-1, r)), ("BACKGROUND", (0, r), (-1, r), Color(0.84, 0.88, 0.92)),
                 ("LINEABOVE", (0, r), (-1, r), 0.8, look.ink)]
    cell_widths = {(r, 0): sum(widths) for r in spans}
    for r, first, last in joined:
        cmds.append(("SPAN", (first, r), (last, r)))
        cell_widths[r, first] = sum(widths[first:last + 1])
    data = []
    for r, row in enumerate(rows):
        data.append([_cell(cell, r, c, cell_widths.get((r, c), widths[c]), cmds, look) for c, cell in enumerate(row)])
    table = Table(data, colWidths=list(widths), repeatRows=header_rows, hAlign="LEFT",
                  rowHeights=list(row_heights) if row_heights else None)
    table.setStyle(TableStyle(cmds))
    return table


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


