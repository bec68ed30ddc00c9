"""The bill of materials: merged lines that add up to the parts of every step, the table rows they name, the
project list, and the CSV / XLSX / JSON files (formula text neutralised).
"""

from __future__ import annotations

import csv
import io
import json
import zipfile
from collections import Counter

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.api import demo_spec_path
from bankbuild.design.bom import Part, merge, project_bom
from bankbuild.reports.tables import (
    COLUMNS,
    PROJECT_SCOPE,
    bom_csv,
    bom_json,
    bom_xlsx,
    neutralise,
    risky,
    sheet_title,
)
from bankbuild.tables.load import builtin_dir
from bankbuild.tables.registry import TABLES_BY_FILE


@pytest.fixture(scope="module")
def demo():
    from bankbuild.api import run_spec

    return run_spec(demo_spec_path())


def qty(bank, category: str, words: str = "") -> float:
    return sum(line.qty for line in bank.bom if line.category == category and words in line.description)


# --- merging ---------------------------------------------------------------------------------------------------


@settings(max_examples=100, deadline=None)
@given(st.lists(st.tuples(st.sampled_from(["Capacitor units", "Enclosure", "Step switching"]),
                          st.sampled_from(["A", "B", "C"]), st.integers(min_value=1, max_value=9),
                          st.integers(min_value=1, max_value=6)), min_size=1, max_size=30))
def test_merge_keeps_every_part(parts):
    lines = merge([Part(cat, desc, n, where=[step]) for cat, desc, n, step in parts])
    # one line per distinct part, quantities summed, items numbered 1..n in category order
    expected = Counter()
    for cat, desc, n, _ in parts:
        expected[(cat, desc)] += n
    assert {(line.category, line.description): line.qty for line in lines} == expected
    assert [line.item for line in lines] == list(range(1, len(lines) + 1))
    order = ["Capacitor units", "Step switching", "Enclosure"]
    assert [order.index(line.category) for line in lines] == sorted(order.index(line.category) for line in lines)


def test_merge_names_the_steps_and_keeps_distinct_notes():
    lines = merge([Part("Capacitor units", "CU-1", 2, notes="a", where=[1]),
                   Part("Capacitor units", "CU-1", 2, notes="a", where=[2]),
                   Part("Capacitor units", "CU-1", 1, notes="b", where=[3])])
    assert len(lines) == 1 and lines[0].qty == 5
    assert lines[0].notes == "steps 1–3; a; b"


# --- the demo banks ----------------------------------------------------------------------------------------------


def test_bank_bom_adds_up_to_its_steps(demo):
    for bank in demo.banks:
        units = Counter()
        for step in bank.steps:
            for u in step.units:
                units[u.id] += u.qty
        listed = {line.description.split(":")[0]: line.qty for line in bank.bom if line.category == "Capacitor units"}
        assert listed == units
        automatic = bank.step_plan.form != "fixed"
        assert qty(bank, "Step switching") == (len(bank.steps) if automatic else 0)
        assert qty(bank, "Detuning reactors") == (len(bank.steps) if bank.detuning_pct else 0)
        if len(bank.steps) > 1 and bank.main.device == "fuse":
            assert qty(bank, "Step protection", "Fuse-link") == 3 * len(bank.steps)  # one per phase
        assert qty(bank, "Control and measurement", "controller") == (1 if automatic else 0)


def test_single_step_bank_lists_its_circuit_once(demo):
    fixed = next(b for b in demo.banks if b.step_plan.form == "fixed")
    assert qty(fixed, "Step protection") == 0
    assert qty(fixed, "Main protection", "Circuit breaker") == 1 or qty(fixed, "Main protection", "Fuse-link") == 3


def test_every_table_row_named_in_the_bom_exists(demo):
    for bank in [*demo.banks, demo]:
        for line in bank.bom:
            if not line.table:
                assert line.row is None
                continue
            assert line.table in TABLES_BY_FILE, line.table
            text = (builtin_dir() / line.table).read_text(encoding="utf-8").split("\n")
            assert not text[line.row - 1].startswith("#"), (line.table, line.row)
            first_cell = text[line.row - 1].split(",")[0]
            if line.category in ("Capacitor units", "Detuning reactors", "Step switching"):
                assert line.description.startswith(first_cell), (line.description, first_cell)


def test_contactor_lines_show_the_kvar_derived_from_the_current(demo):
    # Source: three-phase reactive power Q = √3·U·I (any circuits textbook); the numbers are the step's own.
    for bank in demo.banks:
        for step in bank.steps:
            sw = step.switching
            if sw is None or sw.contactor is None:
                continue
            amps, volts = sw.contactor_current_a, sw.contactor_voltage_v
            assert sw.contactor_kvar == pytest.approx(3 ** 0.5 * volts * amps / 1000, rel=1e-12)
            text = f"AC-6b {amps:g} A at {volts:g} V: Q = √3 × {volts:g} V × {amps:g} A = {sw.contactor_kvar:.1f} kvar"
            lines = [b.description for b in bank.bom if b.description.startswith(sw.contactor.designation + ":")]
            assert lines and all(line.endswith(text) for line in lines)


def test_project_bom_merges_the_banks(demo):
    totals = Counter()
    for bank in demo.banks:
        for line in bank.bom:
            totals[(line.category, line.description, line.table, line.row)] += line.qty
    merged = {(line.category, line.description, line.table, line.row): line.qty for line in demo.bom}
    assert merged == totals
    shared = [line for line in demo.bom if line.notes.count(":") > 1]
    assert shared, "some part (e.g. a 480 V unit) is used by two banks and names both"


def test_project_bom_notes_name_banks_and_quantities():
    from types import SimpleNamespace as Bank

    from bankbuild.results.sizing import BomLine

    line = BomLine(item=1, qty=2, unit="pcs", category="Enclosure", description="Label", table="", row=None)
    merged = project_bom([Bank(name="North", bom=[line]), Bank(name="South", bom=[line])])
    assert [(m.qty, m.notes) for m in merged] == [(4.0, "North: 2; South: 2")]


# --- the files ---------------------------------------------------------------------------------------------------


def test_csv_has_a_header_and_every_line(demo):
    data = bom_csv(demo)
    assert data.startswith("\ufeff".encode())  # so spreadsheets read µ and ≥ as UTF-8
    rows = list(csv.reader(io.StringIO(data.decode("utf-8-sig"))))
    assert tuple(rows[0]) == COLUMNS
    assert len(rows) - 1 == len(demo.bom) + sum(len(b.bom) for b in demo.banks)
    assert rows[1][0] == PROJECT_SCOPE
    first = demo.bom[0]
    assert rows[1][1:] == [str(first.item), first.part_id, f"{first.qty:g}", first.unit, first.category,
                           first.description, first.table, str(first.row), first.notes]
    assert first.part_id == first.description.split(":")[0]  # a capacitor unit: its unit_id


def test_json_round_trip(demo):
    doc = json.loads(bom_json(demo))
    assert doc["bom"] == [line.model_dump() for line in demo.bom]
    assert [b["name"] for b in doc["banks"]] == [b.name for b in demo.banks]
    assert doc["cautions"] and doc["tables"]


def test_xlsx_is_a_tidy_workbook(demo):
    import openpyxl

    book = openpyxl.load_workbook(io.BytesIO(bom_xlsx(demo)))
    assert book.sheetnames[0] == "Project" and book.sheetnames[-1] == "About"
    assert len(book.sheetnames) == len(demo.banks) + 2
    sheet = book["Project"]
    header = [c.value for c in sheet[1]]
    assert header == list(COLUMNS[1:])
    assert all(c.font.bold for c in sheet[1])
    assert sheet.freeze_panes == "A2"
    assert sheet.column_dimensions["F"].width >= 60  # description
    assert sheet.max_row == len(demo.bom) + 1
    assert sheet.cell(row=2, column=2).value == demo.bom[0].part_id
    assert sheet.cell(row=2, column=3).value == demo.bom[0].qty
    assert sheet.cell(row=2, column=3).number_format == "#,##0"
    # print setup: landscape, one page wide, the header row on every page
    assert sheet.page_setup.orientation == "landscape" and sheet.page_setup.fitToWidth == 1
    assert sheet.sheet_properties.pageSetUpPr.fitToPage and sheet.print_title_rows == "$1:$1"
    # every list cell of every sheet wraps at the top; headers are bold on grey and do not wrap
    for name in book.sheetnames[:-1]:
        rows = list(book[name].iter_rows())
        assert all(c.font.bold and c.fill.fgColor.rgb.endswith("DDDDDD") and not c.alignment.wrap_text
                   for c in rows[0])
        body = [c for row in rows[1:] for c in row if c.value is not None and str(row[0].value) != "total"]
        assert body and all(c.alignment.wrap_text and c.alignment.vertical == "top" for c in body)


def test_risky_text_is_neutralised():
    # OWASP CSV-injection guidance (common practice): cells starting =, +, -, @, tab or CR are prefixed.
    for text in ("=1+1", "+1", "-1+2", "@SUM(A1)", "\tx", "\rx"):
        assert risky(text) and neutralise(text) == "'" + text
    assert neutralise("Fuse-link 100 A") == "Fuse-link 100 A"
    # The same after a list separator (',' ';' '|' tab) or a line break: a reader whose locale separates on ';'
    # would otherwise start a new cell with the formula.
    for text, safe in (("Line 3;=cmd|' /C calc'!A0", "Line 3;'=cmd|' /C calc'!A0"), ("a, +1", "a, '+1"),
                       ("a\t=x", "a\t'=x"), ("a\r\n@x", "a\r\n'@x"), ("\t=x", "'\t'=x"), ("a|-1", "a|'-1")):
        assert risky(text) and neutralise(text) == safe
    assert not risky("3 × 50 kvar; delta; 480 V") and not risky("Fuse-link 100 A, time-delay")


def test_csv_text_cells_are_quoted_so_no_separator_splits_them(size):
    """Read as a ';'-separated file (a European spreadsheet's locale), no cell starts a formula."""
    result = size({"banks": [{"name": "Line 3;=cmd|' /C calc'!A0", "supply": {"voltage_v": 480, "frequency_hz": 60},
                              "need": {"kvar": 100}}]})
    text = bom_csv(result).decode("utf-8-sig")
    for separator in (",", ";", "\t"):
        for row in csv.reader(io.StringIO(text), delimiter=separator):
            assert not any(cell.lstrip(" ").startswith(("=", "+", "-", "@")) for cell in row), row


def test_hostile_bank_name_never_becomes_a_formula(size):
    hostile = "=HYPERLINK(\"http://example.invalid\",\"x\")"
    result = size({"banks": [{"name": hostile, "supply": {"voltage_v": 480, "frequency_hz": 60},
                              "need": {"kvar": 100}, "steps": [50, 50]},
                             {"name": "@cmd", "supply": {"voltage_v": 480, "frequency_hz": 60},
                              "need": {"kvar": 50}}]})
    cells = [cell for row in csv.reader(io.StringIO(bom_csv(result).decode("utf-8-sig"))) for cell in row]
    assert not [c for c in cells if risky(c)]
    assert "'" + hostile in cells and "'@cmd" in cells  # the text is kept, behind an apostrophe
    data = bom_xlsx(result)
    with zipfile.ZipFile(io.BytesIO(data)) as z:
        sheets = [z.read(n).decode() for n in z.namelist() if n.startswith("xl/worksheets/")]
    assert not any("<f>" in s for s in sheets)  # no formula anywhere in the workbook
    import openpyxl

    book = openpyxl.load_workbook(io.BytesIO(data))
    texts = [c for ws in book.worksheets for row in ws.iter_rows() for c in row if isinstance(c.value, str)]
    assert all(c.data_type == "s" and not risky(c.value) for c in texts)
    assert any(c.value.startswith("'" + hostile) for c in texts)  # in the project sheet's notes
    assert sheet_title(hostile, set()) in book.sheetnames


def test_sheet_titles_are_valid_and_unique():
    taken: set[str] = set()
    titles = [sheet_title(n, taken) for n in ["A/B", "A:B", "x" * 40, "x" * 40, "[]"]]
    assert len({t.lower() for t in titles}) == len(titles)
    assert all(len(t) <= 31 and not set(t) & set("[]:*?/\\") for t in titles)
