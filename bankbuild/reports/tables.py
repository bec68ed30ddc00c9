"""The bill of materials as tables: CSV, XLSX and JSON, each rendered to bytes in memory.

One consolidated list for the project (every bank merged) and one per bank. Text that a spreadsheet would take
for a formula (a cell starting with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return) is neutralised: in
both the CSV and the XLSX it gets a leading apostrophe (and in the XLSX every text is a text cell), so no
spreadsheet runs it. openpyxl is imported inside :func:`bom_xlsx` only.
"""

from __future__ import annotations

import csv
import io
import json

from bankbuild.results.sizing import BomLine, ProjectResult

COLUMNS = ("scope", "item", "qty", "unit", "category", "description", "table", "row", "notes")
PROJECT_SCOPE = "Project (all banks)"
FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
SHEET_FORBIDDEN = '[]:*?/\\'
SHEET_MAX = 31


def risky(text: str) -> bool:
    """Whether a spreadsheet could take ``text`` for a formula.

    >>> risky("=SUM(A1:A3)"), risky("-5 A"), risky("Fuse-link 100 A")
    (True, True, False)
    """
    return text.startswith(FORMULA_START)


def neutralise(text: str) -> str:
    """Text made safe for a CSV cell: a leading apostrophe where a spreadsheet could see a formula.

    >>> neutralise("=HYPERLINK(\\"x\\")"), neutralise("@cmd"), neutralise("Bank A")
    ('\\'=HYPERLINK("x")', "'@cmd", 'Bank A')
    """
    return "'" + text if risky(text) else text


def _qty(value: float) -> int | float:
    """Whole quantities as integers.

    >>> _qty(3.0), _qty(12.5)
    (3, 12.5)
    """
    return int(value) if float(value).is_integer() else value


def bom_rows(result: ProjectResult) -> list[tuple[str, BomLine]]:
    """(scope, line) for the project list, then each bank's list."""
    rows = [(PROJECT_SCOPE, line) for line in result.bom]
    for bank in result.banks:
        rows += [(bank.name, line) for line in bank.bom]
    return rows


def _cells(scope: str, line: BomLine) -> list:
    return [scope, line.item, _qty(line.qty), line.unit, line.category, line.description, line.table,
            line.row if line.row is not None else "", line.notes]


def bom_csv(result: ProjectResult) -> bytes:
    """The bill of materials as CSV (UTF-8 with a byte-order mark, so spreadsheets read µ and ≥ right).

    One header row, then the project list and each bank's list; the ``scope`` column says which.
    """
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\r\n")
    writer.writerow(COLUMNS)
    for scope, line in bom_rows(result):
        writer.writerow([neutralise(c) if isinstance(c, str) else c for c in _cells(scope, line)])
    return buffer.getvalue().encode("utf-8-sig")


def bom_json(result: ProjectResult) -> bytes:
    """The bill of materials as JSON: project fields, provenance, the project list, each bank's list."""
    doc = {
        "project": result.project,
        "version": result.provenance.version,
        "rules": result.provenance.rules,
        "tables": [{"file_name": t.file_name, "sha256": t.sha256} for t in result.provenance.tables],
        "bom": [line.model_dump() for line in result.bom],
        "banks": [{"name": bank.name, "bom": [line.model_dump() for line in bank.bom]} for bank in result.banks],
        "cautions": list(result.cautions),
    }
    return (json.dumps(doc, indent=2, ensure_ascii=False) + "\n").encode("utf-8")


def sheet_title(name: str, taken: set[str]) -> str:
    """A worksheet title from a bank name: no ``[]:*?/\\``, at most 31 characters, unique (case-blind).

    >>> sheet_title("Line 3: main/aux [new]", set())
    'Line 3 main aux new'
    >>> sheet_title("Bank", {"bank"})
    'Bank (2)'
    """
    clean = " ".join("".join(" " if ch in SHEET_FORBIDDEN else ch for ch in name).split()).strip("'") or "Bank"
    title = clean[:SHEET_MAX]
    n = 2
    while title.lower() in taken:
        suffix = f" ({n})"
        title = clean[: SHEET_MAX - len(suffix)] + suffix
        n += 1
    taken.add(title.lower())
    return title


WIDTHS = {"scope": 24, "item": 6, "qty": 7, "unit": 6, "category": 22, "description": 70, "table": 24, "row": 6,
          "notes": 50}


def _put(ws, row: int, col: int, value):
    """Write one cell; text always as a text cell, neutralised where it looks like a formula."""
    cell = ws.cell(row=row, column=col)
    if isinstance(value, str):
        cell.value = neutralise(value)
        cell.data_type = "s"
    else:
        cell.value = value
    return cell


HEAD_STYLE = "bankbuild header"
TEXT_STYLE = "bankbuild wrapped"


def _add_styles(wb) -> None:
    """The workbook's two named styles, each defined once: a bold shaded header, and wrapped text set at the
    top (assigning a named style is one lookup, where a font or alignment per cell is hashed and compared)."""
    from openpyxl.styles import Alignment, Font, NamedStyle, PatternFill

    wb.add_named_style(NamedStyle(HEAD_STYLE, font=Font(bold=True), fill=PatternFill("solid", fgColor="DDDDDD")))
    wb.add_named_style(NamedStyle(TEXT_STYLE, alignment=Alignment(wrap_text=True, vertical="top")))


def _bom_sheet(ws, lines: list[BomLine], scope: str) -> None:
    from openpyxl.utils import get_column_letter

    columns = COLUMNS[1:]
    for col, name in enumerate(columns, start=1):
        _put(ws, 1, col, name).style = HEAD_STYLE
        ws.column_dimensions[get_column_letter(col)].width = WIDTHS[name]
    for r, line in enumerate(lines, start=2):
        for col, value in enumerate(_cells(scope, line)[1:], start=1):
            _put(ws, r, col, value).style = TEXT_STYLE
    ws.freeze_panes = "A2"
    ws.auto_filter.ref = f"A1:{get_column_letter(len(columns))}{max(1, len(lines) + 1)}"


def bom_xlsx(result: ProjectResult) -> bytes:
    """The bill of materials as an XLSX workbook: a sheet for the project, one per bank, and an About sheet.

    Each list sheet has a bold header row (frozen, with a filter) and set column widths; text cells are text,
    never formulas.
    """
    from openpyxl import Workbook
    from openpyxl.styles import Alignment, Font

    wb = Workbook()
    _add_styles(wb)
    ws = wb.active
    taken = {"about"}
    ws.title = sheet_title("Project", taken)
    _bom_sheet(ws, list(result.bom), PROJECT_SCOPE)
    for bank in result.banks:
        _bom_sheet(wb.create_sheet(sheet_title(bank.name, taken)), list(bank.bom), bank.name)
    about = wb.create_sheet("About")
    rows = [("Bill of materials", "")]
    rows += [(k.replace("_", " ").capitalize(), str(v)) for k, v in result.project.items() if v]
    rows += [("bankbuild version", result.provenance.version), ("Rule basis", result.provenance.edition),
             ("Rule-basis file", result.provenance.rule_basis_file),
             ("Rule-basis SHA-256", result.provenance.rule_basis_sha256),
             ("Spec file", result.provenance.spec_file), ("Spec SHA-256", result.provenance.spec_sha256), ("", "")]
    rows += [(f"Table {t.file_name}", f"SHA-256 {t.sha256}") for t in result.provenance.tables]
    rows += [("", "")] + [("Caution", text) for text in result.cautions]
    for r, (key, value) in enumerate(rows, start=1):
        _put(about, r, 1, key).font = Font(bold=True)
        _put(about, r, 2, value).alignment = Alignment(wrap_text=True, vertical="top")
    about.column_dimensions["A"].width = 32
    about.column_dimensions["B"].width = 100
    buffer = io.BytesIO()
    wb.save(buffer)
    return buffer.getvalue()
