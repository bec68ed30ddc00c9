"""Priced quotes: a user price table (part id or pattern -> unit price, currency, lead time, supplier note) on the
bill of materials, in every format; and rating tables whose appended rows come out of order."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import bankbuild
from bankbuild.errors import CatalogError
from bankbuild.reports.tables import bom_csv, bom_json, bom_xlsx
from bankbuild.tables.load import builtin_dir, load_catalogs

DATA = Path(__file__).parents[1] / "data"
SPEC = {"banks": [{"name": "Line 3", "supply": {"voltage_v": 480, "frequency_hz": 60}, "need": {"kvar": 300},
                   "steps": [100, 100, 100]}]}
HEADER = "part,unit_price,currency,lead_time_days,supplier_note\n"


def prices(tmp_path: Path, rows: str, name: str = "t") -> Path:
    folder = tmp_path / name
    folder.mkdir()
    (folder / "prices.csv").write_text("# Our prices (a test table)\n" + HEADER + rows, encoding="utf-8")
    return folder


@pytest.fixture(scope="module")
def demo():
    return bankbuild.demo()


def test_demo_is_priced_with_invented_prices_marked_so(demo):
    total = demo.bom_total
    assert total is not None and total.invented and total.source == "prices.csv" and total.currency == "USD"
    assert all("invented" in line.supplier_note for line in demo.bom if line.price_status == "priced")
    for lines, t in [(demo.bom, total)] + [(b.bom, b.bom_total) for b in demo.banks]:
        priced = [line for line in lines if line.extended_price is not None]
        for line in priced:
            assert line.extended_price == pytest.approx(line.unit_price * line.qty)
        assert t.total == pytest.approx(sum(line.extended_price for line in priced))
        assert t.unpriced_items == [line.item for line in lines if line.price_status == "no price"]
        assert t.priced_lines + t.unpriced_lines == len(lines)
    assert total.total == pytest.approx(sum(b.bom_total.total for b in demo.banks))  # the banks add up
    assert total.unpriced_lines  # conductors and enclosures are left unpriced in the demo table, and flagged


def test_no_price_table_no_prices():
    result = bankbuild.size(SPEC)
    assert result.bom_total is None and result.banks[0].bom_total is None
    assert {line.price_status for line in result.bom} == {""}
    header = next(csv.reader(io.StringIO(bom_csv(result).decode("utf-8-sig"))))
    assert "unit_price" not in header and "part_id" in header


def test_user_prices_exact_id_beats_pattern(tmp_path):
    folder = prices(tmp_path, "CU-480-60-50.0,210.00,EUR,14,our stock\nCU-*,999,EUR,60,\n"
                              "Fuse-link *,11.5,EUR,3,\n")
    result = bankbuild.size(SPEC, catalogs_dir=folder)
    lines = {line.part_id or line.description: line for line in result.banks[0].bom}
    unit = lines["CU-480-60-50.0"]
    assert (unit.unit_price, unit.extended_price, unit.currency, unit.lead_time_days, unit.supplier_note) == (
        210.0, 210.0 * unit.qty, "EUR", 14, "our stock")
    fuses = [line for line in result.banks[0].bom if line.description.startswith("Fuse-link")]
    assert fuses and all(line.unit_price == 11.5 for line in fuses)
    total = result.banks[0].bom_total
    assert not total.invented and total.currency == "EUR" and total.longest_lead_time_days == 14


@pytest.mark.parametrize(("rows", "words"), [
    ("A,1,USD,1,\nB,2,EUR,1,\n", "'EUR' differs from 'USD' on row 3; one currency for the whole table"),
    ("A,1,USD,1,\nA,2,USD,1,\n", "duplicate of row 3"),
    ("A,1,usd,1,\n", "'usd' is not in the expected form ([A-Z]{3})"),
    ("A,-1,USD,1,\n", "-1 is outside 0 to 1e+09"),
    ("A,1,USD,2.5,\n", "2.5 is not a whole number"),
])
def test_price_table_is_checked(tmp_path, rows, words):
    with pytest.raises(CatalogError) as info:
        load_catalogs(prices(tmp_path, rows))
    assert info.value.where.endswith("prices.csv") and words in info.value.problem


def test_files_show_prices_and_totals(demo):
    rows = list(csv.DictReader(io.StringIO(bom_csv(demo).decode("utf-8-sig"))))
    totals = [r for r in rows if r["item"] == "total"]
    assert len(totals) == 1 + len(demo.banks)
    assert float(totals[0]["extended_price"]) == pytest.approx(demo.bom_total.total)
    assert "invented demo prices" in totals[0]["description"]
    assert {r["price_status"] for r in rows} == {"priced", "no price", "total"}
    doc = json.loads(bom_json(demo))
    assert doc["bom_total"]["total"] == pytest.approx(demo.bom_total.total)
    assert doc["banks"][0]["bom_total"]["unpriced_items"] == demo.banks[0].bom_total.unpriced_items


def test_semicolon_csv_writes_decimal_commas(demo):
    text = bom_csv(demo, ";").decode("utf-8-sig")
    rows = list(csv.DictReader(io.StringIO(text), delimiter=";"))
    priced = next(r for r in rows if r["price_status"] == "priced")
    line = demo.bom[int(priced["item"]) - 1]
    assert priced["unit_price"] == str(line.unit_price).replace(".", ",")


def test_xlsx_prices_formats_and_total(demo):
    import openpyxl

    sheet = openpyxl.load_workbook(io.BytesIO(bom_xlsx(demo)))["Project"]
    header = [c.value for c in sheet[1]]
    price, extended = header.index("unit_price") + 1, header.index("extended_price") + 1
    assert sheet.cell(row=2, column=price).number_format == "#,##0.00"
    unpriced = demo.bom_total.unpriced_items[0]
    assert sheet.cell(row=unpriced + 1, column=extended).fill.fgColor.rgb.endswith("FFE8A8")  # flagged
    last = sheet.max_row
    assert sheet.cell(row=last, column=1).value == "total"
    assert sheet.cell(row=last, column=extended).value == pytest.approx(demo.bom_total.total)


def test_copy_includes_the_price_table(tmp_path):
    written = bankbuild.copy_tables(tmp_path / "mine")
    assert "prices.csv" in [p.name for p in written]
    assert (tmp_path / "mine" / "prices.csv").read_bytes() == (builtin_dir() / "prices.csv").read_bytes()


@pytest.mark.parametrize("case", ["swapped_ratings", "groups_out_of_order", "appended_rows"])
def test_rows_out_of_order_are_sorted_on_load(case):
    mine = load_catalogs(DATA / "unsorted_tables" / case).device_ratings
    key = [(r.basis, r.device, r.rating_a) for r in mine]
    assert key == sorted(key)
    assert [r.row for r in mine] != sorted(r.row for r in mine)  # the file's own order was different


def _reference_price_for(line, prices):
    """The rule as written (exact name first; else the pattern with most fixed characters, the earlier row among
    equals), matched with the standard library's fnmatch, one row at a time."""
    from fnmatch import fnmatchcase

    names = [n for n in (line.part_id, line.description) if n]
    exact = next((p for p in prices if p.part in names), None)
    if exact is not None:
        return exact
    best = None
    for p in prices:
        if not set(p.part) & set("*?["):
            continue
        if any(fnmatchcase(n.lower(), p.part.lower()) for n in names):
            if best is None or sum(ch not in "*?[" for ch in p.part) > sum(ch not in "*?[" for ch in best.part):
                best = p
    return best


@settings(max_examples=200, deadline=None)
@given(parts=st.lists(st.text(alphabet="ab-*?1[]", min_size=1, max_size=6), min_size=1, max_size=12),
       part_id=st.text(alphabet="ab-1", max_size=6), description=st.text(alphabet="AB-1 ", min_size=1, max_size=8))
def test_the_row_picked_is_the_rules_row(parts, part_id, description):
    from types import SimpleNamespace

    from bankbuild.design.pricing import price_for
    from bankbuild.results.sizing import BomLine

    prices = tuple(SimpleNamespace(part=part, row=i) for i, part in enumerate(parts, start=2))
    line = BomLine(item=1, qty=1, unit="pcs", category="c", description=description, part_id=part_id)
    ours, theirs = price_for(line, prices), _reference_price_for(line, prices)
    assert (ours.row if ours else None) == (theirs.row if theirs else None)


@settings(max_examples=500, deadline=None)
@given(pattern=st.text(alphabet="ab*", min_size=1, max_size=8), name=st.text(alphabet="ab", max_size=10))
def test_a_star_only_pattern_matches_as_fnmatch_does(pattern, name):
    """The string-search matcher of ``*`` patterns against the standard library's fnmatch (small alphabets, so
    that most pairs come close to matching)."""
    from fnmatch import fnmatchcase

    from bankbuild.design.pricing import _matcher

    assert bool(_matcher(pattern)(name)) == fnmatchcase(name, pattern)
