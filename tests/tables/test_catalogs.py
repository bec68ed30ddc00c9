"""The rating tables and their loader: built-in values against their sources, and every kind of bad table."""

from __future__ import annotations

import dataclasses
import hashlib
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from bankbuild.errors import CatalogError
from bankbuild.tables.load import (
    Catalogs,
    builtin_dir,
    check_catalogs,
    copy_catalogs,
    load_catalogs,
)
from bankbuild.tables.registry import TABLES, describe_tables

BAD = Path(__file__).parents[1] / "data" / "bad_catalogs"

# Source: NEC 240.6(A) (standard ampere ratings for fuses and inverse time circuit breakers).
NEC_240_6_A = [15, 20, 25, 30, 35, 40, 45, 50, 60, 70, 80, 90, 100, 110, 125, 150, 175, 200, 225, 250, 300,
               350, 400, 450, 500, 600, 700, 800, 1000, 1200, 1600, 2000, 2500, 3000, 4000, 5000, 6000]
NEC_240_6_A_FUSES_ALSO = [1, 3, 6, 10, 601]  # Source: NEC 240.6(A)


@pytest.fixture(scope="module")
def cats() -> Catalogs:
    return load_catalogs()


def ratings(cats: Catalogs, basis: str, device: str) -> list[float]:
    return [r.rating_a for r in cats.device_ratings if (r.basis, r.device) == (basis, device)]


def nec(cats: Catalogs, edition: int, size: str):
    (row,) = [c for c in cats.conductors_nec if (c.edition, c.size) == (edition, size)]
    return row


def iec(cats: Catalogs, insulation: str, method: str, area_mm2: float) -> float:
    (row,) = [c for c in cats.conductors_iec
              if (c.insulation, c.method, c.area_mm2) == (insulation, method, area_mm2)]
    return row.ampacity_a


# -- the built-in tables -------------------------------------------------------------------------------------


def test_builtin_tables_load_with_provenance(cats: Catalogs) -> None:
    assert cats.source_dir is None
    required = [t for t in TABLES if not t.optional]  # the price table is used only when given
    assert [t.file_name for t in cats.tables] == [t.file_name for t in required]
    assert cats.prices == ()
    for schema, info in zip(required, cats.tables, strict=True):
        rows = getattr(cats, schema.attr)
        assert rows, schema.file_name
        assert all(r.table == schema.file_name for r in rows)
        path = builtin_dir() / schema.file_name
        assert info.path == str(path)
        assert info.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
        assert any("Source" in n or "source" in n for n in info.notes), schema.file_name
    assert load_catalogs() is cats  # cached


def test_rows_know_their_line_number(cats: Catalogs) -> None:
    unit = cats.capacitor_units[0]
    lines = (builtin_dir() / "capacitor_units.csv").read_text(encoding="utf-8").split("\n")
    assert lines[unit.row - 1].startswith(unit.unit_id + ",")


def test_nec_240_6_a_breakers(cats: Catalogs) -> None:
    assert ratings(cats, "nec", "breaker") == NEC_240_6_A  # Source: NEC 240.6(A)


def test_nec_240_6_a_fuses(cats: Catalogs) -> None:
    expected = sorted(NEC_240_6_A + NEC_240_6_A_FUSES_ALSO)  # Source: NEC 240.6(A)
    assert ratings(cats, "nec", "fuse") == expected


def test_iec_gg_fuses(cats: Catalogs) -> None:
    # from memory: IEC 60269 gG ratings as listed in trade-facts (marked memory there).
    assert ratings(cats, "iec", "fuse") == [2, 4, 6, 8, 10, 12, 16, 20, 25, 32, 40, 50, 63, 80, 100, 125, 160,
                                            200, 250, 315, 400, 500, 630, 800, 1000, 1250]


@pytest.mark.parametrize(
    ("size", "a60", "a75", "a90"),
    [
        ("14 AWG", 15, 20, 25),  # Source: NEC Table 310.16, 2023
        ("3 AWG", 85, 100, 115),  # Source: NEC Table 310.16, 2023
        ("1 AWG", 110, 130, 145),  # Source: NEC Table 310.16, 2023
        ("4/0 AWG", 195, 230, 260),  # Source: NEC Table 310.16, 2023
        ("250 kcmil", 215, 255, 290),  # Source: NEC Table 310.16, 2023
        ("500 kcmil", 320, 380, 430),  # Source: NEC Table 310.16, 2023
        ("600 kcmil", 350, 420, 475),  # Source: NEC Table 310.16, 2023
        ("1000 kcmil", 455, 545, 615),  # from memory
    ],
)
def test_nec_310_16_2023(cats: Catalogs, size: str, a60: float, a75: float, a90: float) -> None:
    row = nec(cats, 2023, size)
    assert (row.ampacity_60c_a, row.ampacity_75c_a, row.ampacity_90c_a) == (a60, a75, a90)


def test_nec_310_16_2020_differs_in_two_cells(cats: Catalogs) -> None:
    # from memory: the older-edition cells named in trade-facts (3 AWG and 1 AWG at 90 C).
    assert nec(cats, 2020, "3 AWG").ampacity_90c_a == 110
    assert nec(cats, 2020, "1 AWG").ampacity_90c_a == 150
    def cells(edition: int) -> set[tuple[str, float, float, float]]:
        rows = [c for c in cats.conductors_nec if c.edition == edition]
        return {(c.size, c.ampacity_60c_a, c.ampacity_75c_a, c.ampacity_90c_a) for c in rows}

    assert {size for size, *_ in cells(2020) ^ cells(2023)} == {"3 AWG", "1 AWG"}


def test_nec_area_of_sizes(cats: Catalogs) -> None:
    # common practice (no single source): 4/0 AWG is about 107.2 mm2; 1 kcmil = 0.506707 mm2, so
    # 500 kcmil = 253.35 mm2 (computed). The table keeps two decimals.
    assert nec(cats, 2023, "4/0 AWG").area_mm2 == pytest.approx(107.2, abs=0.05)
    assert nec(cats, 2023, "500 kcmil").area_mm2 == pytest.approx(253.35, abs=0.005)


@pytest.mark.parametrize(
    ("insulation", "method", "area", "amps"),
    [
        ("PVC", "B1", 2.5, 21),  # Source: IEC 60364-5-52 Table B.52.4
        ("PVC", "B1", 120, 239),  # Source: IEC 60364-5-52 Table B.52.4
        ("PVC", "C", 1.5, 17.5),  # Source: IEC 60364-5-52, method C (confirmed cell)
        ("PVC", "C", 6, 41),  # Source: IEC 60364-5-52, method C (confirmed cell)
        ("PVC", "C", 95, 223),  # from memory
        ("PVC", "E", 16, 80),  # Source: IEC 60364-5-52 Table B.52.10
        ("PVC", "E", 120, 276),  # Source: IEC 60364-5-52 Table B.52.10
        ("XLPE", "E", 1.5, 23),  # Source: IEC 60364-5-52 Table B.52.12
        ("XLPE", "E", 120, 346),  # Source: IEC 60364-5-52 Table B.52.12
        ("XLPE", "E", 300, 621),  # from memory
    ],
)
def test_iec_60364_5_52(cats: Catalogs, insulation: str, method: str, area: float, amps: float) -> None:
    assert iec(cats, insulation, method, area) == amps


def test_capacitor_units(cats: Catalogs) -> None:
    units = cats.capacitor_units
    for u in units:
        scheme = f"CU-{u.rated_voltage_v:g}-{u.rated_frequency_hz:g}-{u.rated_kvar:.1f}"
        assert u.unit_id == scheme
        if u.rated_frequency_hz == 60:
            assert (u.discharge_voltage_v, u.discharge_time_s) == (50, 60)  # Source: NEC 460.6(A)
        else:
            assert (u.discharge_voltage_v, u.discharge_time_s) == (75, 180)  # Source: IEC 60831-1
    keys = [(u.rated_frequency_hz, u.rated_voltage_v, u.rated_kvar) for u in units]
    assert keys == sorted(set(keys))
    by_supply = {(u.rated_voltage_v, u.rated_frequency_hz) for u in units}
    wanted = {(240, 60), (480, 60), (600, 60), (400, 50), (415, 50), (440, 50), (480, 50), (525, 50)}
    assert wanted <= by_supply
    at_480 = {u.rated_kvar for u in units if (u.rated_voltage_v, u.rated_frequency_hz) == (480, 60)}
    assert {12.5, 15, 20, 25, 30, 40, 50} <= at_480


def test_frames_and_disconnects(cats: Catalogs) -> None:
    # common practice (no single source), from memory
    assert [f.frame_a for f in cats.breaker_frames if f.basis == "nec"][:5] == [100, 125, 150, 225, 250]
    switches = [d.rating_a for d in cats.disconnect_ratings if d.basis == "nec"]
    assert switches[:8] == [30, 60, 100, 200, 400, 600, 800, 1200]


# -- the schema ----------------------------------------------------------------------------------------------

UNIT_SUFFIX = {
    "A": "_a", "V": "_v", "Hz": "_hz", "kvar": "_kvar", "s": "_s", "W/kvar": "_w_per_kvar", "mm2": "_mm2",
    "%": "_pct", "mH": "_mh", "W": "_w", "VA": "_va", "m3/h": "_m3_per_h", "mm": "_mm", "d": "_days",
}


def test_unit_is_part_of_every_number_column_name() -> None:
    for t in TABLES:
        for c in t.columns:
            if c.unit:
                assert c.name.endswith(UNIT_SUFFIX[c.unit]), (t.file_name, c.name)
            assert c.dtype in (str, float, int)


def test_registry_matches_catalogs_and_rows() -> None:
    names = [f.name for f in dataclasses.fields(Catalogs)]
    assert names == [t.attr for t in TABLES] + ["tables", "source_dir"]
    for t in TABLES:
        assert list(t.row_type._fields) == [*t.names, "table", "row"]
        row = t.row_type(*range(len(t.row_type._fields)))
        with pytest.raises(AttributeError):  # immutable
            row.table = "other.csv"


def test_readme_lists_the_schema() -> None:
    readme = (builtin_dir() / "README.md").read_text(encoding="utf-8")
    assert describe_tables() in readme


def test_import_does_not_load_pandas() -> None:
    code = "import sys, bankbuild.tables.load; sys.exit('pandas' in sys.modules)"
    done = subprocess.run([sys.executable, "-c", code], cwd=Path(__file__).parents[2], check=False)
    assert done.returncode == 0


# -- bad tables ----------------------------------------------------------------------------------------------

BAD_CASES = {
    # case folder: (file name, field in the message, words of the problem)
    "duplicate_row": ("device_ratings.csv", "row 5", "duplicate of row 4"),
    "missing_column": ("capacitor_units.csv", "row 3, column losses_w_per_kvar", "missing column"),
    "unknown_column": ("disconnect_ratings.csv", "row 2, column notes", "unknown column 'notes'"),
    "text_in_number": ("conductors_iec.csv", "row 4, column ampacity_a", "'twenty-one' is not a number"),
    "nan_value": ("conductors_nec.csv", "row 4, column ampacity_75c_a", "not a finite number"),
    "inf_value": ("breaker_frames.csv", "row 4, column frame_a", "not a finite number"),
    "negative": ("capacitor_units.csv", "row 4, column rated_kvar", "-10 is outside 0.1 to 500 kvar"),
    "empty_file": ("device_ratings.csv", "", "empty"),
    "binary_file": ("breaker_frames.csv", "row 3", "not a text file"),
    "wrong_unit": ("capacitor_units.csv", "row 2, column rated_voltage_kv", "did you mean 'rated_voltage_v'"),
    "not_utf8": ("disconnect_ratings.csv", "row 2", "not UTF-8 text"),
    "ampacity_falls": ("conductors_nec.csv", "row 5, column ampacity_75c_a", "must not fall"),
    "across_row": ("conductors_nec.csv", "row 4, column ampacity_75c_a", "below ampacity_60c_a 25"),
    "not_allowed": ("device_ratings.csv", "row 4, column basis", "'ul' is not one of nec, iec"),
    "duplicate_column": ("breaker_frames.csv", "row 2, column frame_a", "more than once"),
    "header_only": ("disconnect_ratings.csv", "", "no data rows after the header on row 2"),
    "ragged_row": ("device_ratings.csv", "row 4", "4 cells, but the header has 3 columns"),
    "empty_cell": ("conductors_iec.csv", "row 3, column method", "empty cell"),
    "not_whole": ("conductors_nec.csv", "row 3, column edition", "not a whole number"),
    "frequency_not_allowed": (
        "capacitor_units.csv", "row 3, column rated_frequency_hz", "55 is not one of 50, 60 Hz"
    ),
    "unknown_file": ("capacitor_unit.csv", "", "did you mean capacitor_units.csv?"),
}


def test_every_bad_table_has_a_case() -> None:
    assert sorted(p.name for p in BAD.iterdir() if p.is_dir()) == sorted(BAD_CASES)


@pytest.mark.parametrize("case", sorted(BAD_CASES))
@pytest.mark.parametrize("entry", [check_catalogs, load_catalogs])
def test_bad_table(case: str, entry) -> None:
    file_name, field, words = BAD_CASES[case]
    with pytest.raises(CatalogError) as caught:
        entry(BAD / case)
    err = caught.value
    message = str(err)
    assert Path(err.where).name == file_name
    assert file_name in message and words in message
    assert err.field == field
    assert message == f"{BAD / case / file_name}: {field + ': ' if field else ''}{err.problem}"


# -- folders -------------------------------------------------------------------------------------------------


def test_user_folder_replaces_one_table(tmp_path: Path, cats: Catalogs) -> None:
    text = (builtin_dir() / "device_ratings.csv").read_text(encoding="utf-8")
    kept = [line for line in text.splitlines() if not line.startswith(("nec,fuse,601", "iec,"))]
    (tmp_path / "device_ratings.csv").write_text("\n".join(kept) + "\n", encoding="utf-8")
    user = load_catalogs(tmp_path)
    assert user.source_dir == str(tmp_path)
    assert 601 not in ratings(user, "nec", "fuse") and not ratings(user, "iec", "breaker")
    assert ratings(user, "nec", "breaker") == NEC_240_6_A
    assert user.tables[1].path == str(tmp_path / "device_ratings.csv")
    assert user.tables[0] == cats.tables[0] and user.capacitor_units == cats.capacitor_units


def test_user_rows_may_be_commented_out_with_blank_lines_and_a_bom(tmp_path: Path) -> None:
    text = "# notes\n\nbasis,frame_a\r\nnec,100\r\n# nec,125\n\nnec,150\n"
    (tmp_path / "breaker_frames.csv").write_bytes(b"\xef\xbb\xbf" + text.encode())
    user = load_catalogs(tmp_path)
    assert [(f.frame_a, f.row) for f in user.breaker_frames] == [(100, 4), (150, 7)]
    assert user.tables[2].notes == ("notes",)


def test_spreadsheet_lock_files_are_ignored(tmp_path: Path) -> None:
    shutil.copy(builtin_dir() / "breaker_frames.csv", tmp_path)
    (tmp_path / "~$breaker_frames.csv").write_bytes(b"lock")
    assert [t.file_name for t in check_catalogs(tmp_path)] == ["breaker_frames.csv"]


def test_folder_problems(tmp_path: Path) -> None:
    with pytest.raises(CatalogError, match="catalog folder not found"):
        load_catalogs(tmp_path / "nowhere")
    (tmp_path / "file.txt").write_text("x")
    with pytest.raises(CatalogError, match="not a folder"):
        load_catalogs(tmp_path / "file.txt")
    empty = tmp_path / "empty"
    empty.mkdir()
    with pytest.raises(CatalogError, match="no rating tables found; expected one of capacitor_units.csv"):
        check_catalogs(empty)
    (empty / "device_ratings.csv").mkdir()
    with pytest.raises(CatalogError, match="device_ratings.csv: not a regular file"):
        load_catalogs(empty)


def test_copy_then_check_round_trip(tmp_path: Path, cats: Catalogs) -> None:
    dest = tmp_path / "mine" / "tables"
    written = copy_catalogs(dest)
    # the tables in their fixed order, then the rule-basis files that sit beside them
    assert [p.name for p in written] == [t.file_name for t in TABLES] + [
        "rules-csa.yaml", "rules-iec.yaml", "rules-nec-2020.yaml", "rules-nec-2023.yaml"]
    infos = check_catalogs(dest)
    assert [i.sha256 for i in infos if i.file_name != "prices.csv"] == [t.sha256 for t in cats.tables]
    assert load_catalogs(dest).conductors_nec == cats.conductors_nec


def test_copy_never_overwrites(tmp_path: Path) -> None:
    (tmp_path / "conductors_iec.csv").write_text("my edits\n")
    with pytest.raises(CatalogError, match="conductors_iec.csv: already exists"):
        copy_catalogs(tmp_path)
    assert (tmp_path / "conductors_iec.csv").read_text() == "my edits\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["conductors_iec.csv"]
