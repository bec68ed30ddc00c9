"""The bill of materials as tables: CSV, XLSX and JSON, each rendered to bytes in memory.

One consolidated list for the project (every bank merged) and one per bank. Text that a spreadsheet would take
for a formula (a cell starting with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return) is neutralised: in
both the CSV and the XLSX it gets a leading apostrophe (and in the XLSX every text is a text cell), so no
spreadsheet runs it. A CSV is read with the list separator of the reader's locale (``;`` in much of Europe), so
text such as ``Line 3;=cmd|…`` would split into a formula cell there: every text cell of a CSV is therefore
quoted (no separator inside quotes splits a cell), and a formula character that starts a piece of text after a
separator or a line break gets its apostrophe too. openpyxl is imported inside :func:`bom_xlsx` only.
"""

from __future__ import annotations

import csv
import io
import json
import re
from copy import copy

from bankbuild.results.sizing import BomLine, ProjectResult

COLUMNS = ("scope", "item", "part_id", "qty", "unit", "category", "description", "table", "row", "notes")
PRICE_COLUMNS = ("unit_price", "extended_price", "currency", "lead_time_days", "supplier_note", "price_status")
NO_PRICE = "no price"
PROJECT_SCOPE = "Project (all banks)"
FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
SHEET_FORBIDDEN = '[]:*?/\\'
SHEET_MAX = 31


# A formula character that starts a piece of the text after a list separator or a line break (spaces between).
_INNER_FORMULA = re.compile(r"([,;|\t\r\n][ ]*)([=+\-@\t\r])")


def risky(text: str) -> bool:
    """Whether a spreadsheet could take ``text``, or a piece of it after a separator, for a formula.

    >>> risky("=SUM(A1:A3)"), risky("-5 A"), risky("Fuse-link 100 A"), risky("Line 3;=cmd|' /C calc'!A0")
    (True, True, False, True)
    """
    return text.startswith(FORMULA_START) or _INNER_FORMULA.search(text) is not None


def neutralise(text: str) -> str:
    """Text made safe for a spreadsheet cell: an apostrophe before each formula character that starts the text
    or a piece of it after a list separator (``,`` ``;`` ``|`` tab) or a line break.

    >>> neutralise("=HYPERLINK(\\"x\\")"), neutralise("@cmd"), neutralise("Bank A")
    ('\\'=HYPERLINK("x")', "'@cmd", 'Bank A')
    >>> neutralise("Line 3; =cmd|' /C calc'!A0"), neutralise("a\\n-1")
    ("Line 3; '=cmd|' /C calc'!A0", "a\\n'-1")
    """
    if not risky(text):
        return text
    text = _INNER_FORMULA.sub(lambda m: m.group(1) + "'" + m.group(2), text)
    return "'" + text if text.startswith(FORMULA_START) else text


def csv_writer(buffer: io.StringIO, lineterminator: str = "\r\n", delimiter: str = ","):
    """A CSV writer that quotes every text cell (numbers stay bare), so that no list separator inside a text
    splits it into cells whatever the reader's locale; pass each text through :func:`neutralise` too."""
    return csv.writer(buffer, lineterminator=lineterminator, delimiter=delimiter, quoting=csv.QUOTE_NONNUMERIC)


def whole_qty(value: float) -> int | float:
    """Whole quantities as integers.

    >>> whole_qty(3.0), whole_qty(12.5)
    (3, 12.5)
    """
    return int(value) if float(value).is_integer() else value


def bom_rows(result: ProjectResult) -> list[tuple[str, BomLine]]:
    """(scope, line) for the project list, then each bank's list."""
    rows = [(PROJECT_SCOPE, line) for line in result.bom]
    for bank in result.banks:
        rows += [(bank.name, line) for line in bank.bom]
    return rows


def columns(result: ProjectResult) -> tuple[str, ...]:
    """The columns of the bill of materials: the price columns only when a price table was used."""
    return COLUMNS + (PRICE_COLUMNS if result.bom_total is not None else ())


def _blank(value):
    return "" if value is None else value


def _cells(scope: str, line: BomLine, priced: bool = False) -> list:
    cells = [scope, line.item, line.part_id, whole_qty(line.qty), line.unit, line.category, line.description,
             line.table, line.row if line.row is not None else "", line.notes]
    if priced:
        cells += [_blank(line.unit_price), _blank(line.extended_price), line.currency, _blank(line.lead_time_days),
                  line.supplier_note, line.price_status]
    return cells


def total_text(total) -> str:
    """The total's label: what it covers and which lines have no price.

    >>> from bankbuild.results.sizing import BomTotal
    >>> print(total_text(BomTotal(currency="USD", total=10.0, priced_lines=3, unpriced_lines=2, unpriced_items=[4, 9],
    ...                           longest_lead_time_days=30, complete=False, source="prices.csv", invented=True)))
    Total of 3 priced lines (USD; 2 lines without a price: items 4, 9; longest lead time 30 days; invented demo prices)
    """
    parts = [total.currency]
    if total.unpriced_lines:
        items = ", ".join(str(i) for i in total.unpriced_items[:20]) + ("…" if total.unpriced_lines > 20 else "")
        parts.append(f"{total.unpriced_lines} line{'s' if total.unpriced_lines > 1 else ''} without a price: "
                     f"item{'s' if total.unpriced_lines > 1 else ''} {items}")
    if total.longest_lead_time_days is not None:
        parts.append(f"longest lead time {total.longest_lead_time_days} days")
    if total.invented:
        parts.append("invented demo prices")
    return f"Total of {total.priced_lines} priced line{'s' if total.priced_lines != 1 else ''} ({'; '.join(parts)})"


def _totals(result: ProjectResult) -> list[tuple[str, object]]:
    """(scope, total) for the project and each bank, in the CSV's order."""
    return [(PROJECT_SCOPE, result.bom_total)] + [(bank.name, bank.bom_total) for bank in result.banks]


def bom_csv(result: ProjectResult, delimiter: str = ",") -> bytes:
    """The bill of materials as CSV (UTF-8 with a byte-order mark, so spreadsheets read µ and ≥ right).

    One header row, then the project list and each bank's list; the ``scope`` column says which. With prices,
    each scope ends with a total row (item ``total``). ``delimiter``: ``,``, ``;`` (for spreadsheets set to a
    locale whose decimal mark is a comma: decimals are then written with a comma) or a tab.
    """
    priced = result.bom_total is not None
    comma = delimiter == ";"  # a locale whose lists split on ';' writes decimals with a comma

    def cell(value):
        if isinstance(value, str):
            return neutralise(value)
        return str(value).replace(".", ",") if comma and isinstance(value, float) else value

    buffer = io.StringIO()
    writer = csv_writer(buffer, delimiter=delimiter)
    head = columns(result)
    writer.writerow(head)
    rows = bom_rows(result)
    totals = dict(_totals(result)) if priced else {}
    for index, (scope, line) in enumerate(rows):
        writer.writerow([cell(c) for c in _cells(scope, line, priced)])
        last = index + 1 == len(rows) or rows[index + 1][0] != scope
        if priced and last and totals.get(scope) is not None:
            total = totals[scope]
            row = dict.fromkeys(head, "") | {"scope": scope, "item": "total", "description": total_text(total),
                                              "extended_price": total.total, "currency": total.currency,
                                              "price_status": "total"}
            writer.writerow([cell(row[c]) for c in head])
    return buffer.getvalue().encode("utf-8-sig")


def bom_json(result: ProjectResult) -> bytes:
    """The bill of materials as JSON: project fields, provenance, the project list, each bank's list."""
    doc = {
        "project": result.project,
        "version": result.provenance.version,
        "rules": result.provenance.rules,
        "tables": [{"file_name": t.file_name, "sha256": t.sha256} for t in result.provenance.tables],
        "bom": [line.model_dump() for line in result.bom],
        "bom_total": result.bom_total.model_dump() if result.bom_total is not None else None,
        "banks": [{"name": bank.name, "bom": [line.model_dump() for line in bank.bom],
                   "bom_total": bank.bom_total.model_dump() if bank.bom_total is not None else None}
                  for bank in result.banks],
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


WIDTHS = {"scope": 24, "item": 6, "part_id": 18, "qty": 7, "unit": 6, "category": 22, "description": 70,
          "table": 24, "row": 6, "notes": 50, "unit_price": 12, "extended_price": 14, "currency": 9,
          "lead_time_days": 10, "supplier_note": 30, "price_status": 11}
MONEY_FORMAT = "#,##0.00"
QTY_FORMATS = {True: "#,##0", False: "#,##0.0##"}  # whole quantities, measured ones


def _put(ws, row: int, col: int, value):
    """Write one cell; text always as a text cell, neutralised where it looks like a formula."""
    cell = ws.cell(row=row, column=col)
    if isinstance(value, str):
        cell.value = neutralise(value)
        cell.data_type = "s"
    else:
        cell.value = value
    return cell


class _Styles:
    """Cell styles of a workbook by name, applied fast: the first cell of a style is styled through openpyxl's
    own attributes, the next ones copy its style record (openpyxl hashes and compares the style objects on every
    assignment: 40 % of the workbook's time when each cell was styled on its own). Where the record is not
    there (another openpyxl), every cell is styled through the attributes."""

    def __init__(self):
        from openpyxl.styles import Alignment, Font, PatternFill

        wrap = Alignment(wrap_text=True, vertical="top")
        flag = PatternFill("solid", fgColor="FFE8A8")
        bold = Font(bold=True)
        self.specs = {
            "head": {"font": bold, "fill": PatternFill("solid", fgColor="DDDDDD")},
            "bold": {"font": bold},
            "wrap": {"alignment": wrap},
            "flag": {"alignment": wrap, "fill": flag},
            "money": {"alignment": wrap, "number_format": MONEY_FORMAT},
            "money-flag": {"alignment": wrap, "number_format": MONEY_FORMAT, "fill": flag},
            "bold-money": {"font": bold, "number_format": MONEY_FORMAT},
            **{f"qty-{whole}": {"alignment": wrap, "number_format": QTY_FORMATS[whole]} for whole in (True, False)},
        }
        self.records: dict[str, object] = {}

    def apply(self, cell, name: str):
        record = self.records.get(name)
        if record is not None:
            cell._style = copy(record)
            return cell
        for attribute, value in self.specs[name].items():
            setattr(cell, attribute, value)
        if hasattr(cell, "_style"):
            self.records[name] = copy(cell._style)
        return cell


def _bom_sheet(ws, lines: list[BomLine], scope: str, head: tuple[str, ...], total, rules: str,
               looks: _Styles) -> None:
    from openpyxl.utils import get_column_letter

    priced = total is not None
    names = head[1:]
    at = {name: col for col, name in enumerate(names, start=1)}
    for col, name in enumerate(names, start=1):
        looks.apply(_put(ws, 1, col, name), "head")
        ws.column_dimensions[get_column_letter(col)].width = WIDTHS[name]
    qty_col = at["qty"]
    price_cols = {at["unit_price"], at["extended_price"]} if priced else set()
    flag_cols = price_cols | {at["price_status"]} if priced else set()
    for r, line in enumerate(lines, start=2):
        unpriced = priced and line.extended_price is None
        qty = f"qty-{float(line.qty).is_integer()}"
        for col, value in enumerate(_cells(scope, line, priced)[1:], start=1):
            if col == qty_col:
                look = qty
            elif col in price_cols:
                look = "money-flag" if unpriced else "money"
            elif unpriced and col in flag_cols:
                look = "flag"
            else:
                look = "wrap"
            looks.apply(_put(ws, r, col, value), look)
    last = len(lines) + 1
    if priced:
        last += 1
        looks.apply(_put(ws, last, at["description"], total_text(total)), "bold")
        looks.apply(_put(ws, last, at["extended_price"], total.total), "bold-money")
        _put(ws, last, at["currency"], total.currency)
        looks.apply(_put(ws, last, at["item"], "total"), "bold")
    ws.freeze_panes = "A2"
    ws.auto_filter.ref = f"A1:{get_column_letter(len(names))}{max(1, len(lines) + 1)}"
    _print_setup(ws, rules)


def _print_setup(ws, rules: str) -> None:
    """Landscape, one page wide (as many pages down as it takes), the header row repeated on every page."""
    ws.page_setup.orientation = "landscape"
    ws.page_setup.paperSize = ws.PAPERSIZE_LETTER if rules == "nec" else ws.PAPERSIZE_A4
    ws.page_setup.fitToWidth = 1
    ws.page_setup.fitToHeight = 0
    ws.sheet_properties.pageSetUpPr.fitToPage = True
    ws.print_title_rows = "1:1"
    ws.print_options.gridLines = True


def bom_xlsx(result: ProjectResult) -> bytes:
    """The bill of materials as an XLSX workbook: a sheet for the project, one per bank, and an About sheet.

    Each list sheet has a bold header row (frozen, with a filter) and set column widths; text cells are text,
    never formulas.
    """
    from openpyxl import Workbook
    from openpyxl.styles import Alignment, Font

    wb = Workbook()
    ws = wb.active
    taken = {"about"}
    ws.title = sheet_title("Project", taken)
    head, rules = columns(result), result.provenance.rules
    looks = _Styles()
    _bom_sheet(ws, list(result.bom), PROJECT_SCOPE, head, result.bom_total, rules, looks)
    for bank in result.banks:
        _bom_sheet(wb.create_sheet(sheet_title(bank.name, taken)), list(bank.bom), bank.name, head, bank.bom_total,
                   rules, looks)
    about = wb.create_sheet("About")
    rows = [("Bill of materials", "")]
    rows += [(k.replace("_", " ").capitalize(), str(v)) for k, v in result.project.items() if v]
    rows += [("bankbuild version", result.provenance.version), ("Rule basis", result.provenance.edition),
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
