"""Hostile files: nothing in a spec or a table may run code, exhaust the machine, reach outside the paths the
user gave, or reach a spreadsheet, a PDF or the terminal as anything but text.

The limits tested here are the tool's own choices (no standard sets them): common practice (no single source).
"""

from __future__ import annotations

import csv
import os
import time
from pathlib import Path

import pytest

from bankbuild.cli.app import run
from bankbuild.spec.read import MAX_DEPTH, MAX_NODES, MAX_SPEC_BYTES
from bankbuild.tables.load import MAX_TABLE_BYTES, builtin_dir

GOOD = """\
banks:
  - name: Line 3
    supply: {voltage_v: 480, frequency_hz: 60}
    need: {kvar: 300}
"""
QUICK_S = 3.0  # "refused quickly": far below what expanding or building the document would take


def cli(argv: list[str], capsys) -> tuple[int, str, str]:
    capsys.readouterr()
    code = run([str(a) for a in argv])
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def refused(path: Path, capsys, *extra: str) -> str:
    """Run ``size PATH`` and return the error line; asserts exit 2, one line, and no output folder."""
    out = path.parent / "out-refused"
    start = time.perf_counter()
    code, stdout, err = cli(["size", path, "--out", out, *extra], capsys)
    elapsed = time.perf_counter() - start
    assert code == 2, err
    assert stdout == ""
    assert err.count("\n") == 1 and err.startswith("bankbuild: error: ")
    assert not out.exists()
    assert elapsed < QUICK_S, f"took {elapsed:.1f} s"
    return err


# -- YAML ----------------------------------------------------------------------------------------------------


@pytest.mark.parametrize("tag", [
    '!!python/object/apply:os.system ["touch {marker}"]',
    '!!python/object/apply:subprocess.check_call [["touch", "{marker}"]]',
    '!!python/object/new:os.system ["touch {marker}"]',
    "!!python/name:os.system",
    '!!python/module:os',
])
def test_yaml_tags_never_construct_objects(tag: str, tmp_path: Path, capsys) -> None:
    marker = tmp_path / "ran"
    spec = tmp_path / "spec.yaml"
    spec.write_text(f"project:\n  name: {tag.format(marker=marker)}\n" + GOOD, encoding="utf-8")
    err = refused(spec, capsys)
    assert "not valid YAML" in err
    assert not marker.exists()


def billion_laughs(levels: int = 12, fan: int = 10) -> str:
    lines = ["l0: &l0 [" + ", ".join(["lol"] * fan) + "]"]
    for k in range(1, levels):
        lines.append(f"l{k}: &l{k} [" + ", ".join([f"*l{k - 1}"] * fan) + "]")
    return "\n".join(lines) + "\n" + GOOD


def test_alias_bomb_is_refused_before_expansion(tmp_path: Path, capsys) -> None:
    spec = tmp_path / "bomb.yaml"
    spec.write_text(billion_laughs(), encoding="utf-8")  # 10**12 items if it were expanded
    assert "aliases" in refused(spec, capsys)


def test_deep_flow_nesting_is_refused_quickly(tmp_path: Path, capsys) -> None:
    spec = tmp_path / "deep.yaml"
    spec.write_text("banks: " + "[" * 200_000 + "]" * 200_000 + "\n", encoding="utf-8")
    err = refused(spec, capsys)
    assert "nest" in err


def test_deep_block_nesting_is_refused(tmp_path: Path, capsys) -> None:
    spec = tmp_path / "deep.yaml"
    spec.write_text("".join(f"{'  ' * i}k{i}:\n" for i in range(MAX_DEPTH + 5)) + "  " * (MAX_DEPTH + 5) + "x\n",
                    encoding="utf-8")
    assert f"nested more than {MAX_DEPTH} levels deep" in refused(spec, capsys)


def test_nesting_at_the_limit_is_read(tmp_path: Path) -> None:
    from bankbuild.spec.read import parse_yaml

    text = "top: " + "[" * (MAX_DEPTH - 1) + "]" * (MAX_DEPTH - 1) + "\n"
    assert parse_yaml(text.encode(), "t.yaml")["top"] is not None


def test_spec_over_the_size_limit_is_refused_before_reading(tmp_path: Path, capsys) -> None:
    spec = tmp_path / "huge.yaml"
    with spec.open("wb") as handle:
        handle.write(GOOD.encode())
        handle.truncate(64 * 1024**3)  # a sparse 64 GB file: reading it would never finish
    err = refused(spec, capsys)
    assert f"a spec may be at most {MAX_SPEC_BYTES:,} bytes" in err


def test_spec_just_over_the_limit_is_refused(tmp_path: Path, capsys) -> None:
    spec = tmp_path / "big.yaml"
    spec.write_text(GOOD + "# " + "x" * (MAX_SPEC_BYTES - len(GOOD)) + "\n", encoding="utf-8")
    assert "at most" in refused(spec, capsys)


def test_millions_of_entries_are_refused_quickly(tmp_path: Path, capsys) -> None:
    row = "  - [" + ", ".join("1" for _ in range(50)) + "]\n"
    spec = tmp_path / "many.yaml"
    spec.write_text("x:\n" + row * ((MAX_SPEC_BYTES - 100) // len(row)) + GOOD, encoding="utf-8")
    assert f"more than {MAX_NODES:,} entries" in refused(spec, capsys)


def test_devices_and_pipes_are_not_read(tmp_path: Path, capsys) -> None:
    assert "not a regular file" in refused(Path("/dev/zero"), capsys)
    fifo = tmp_path / "pipe.yaml"
    os.mkfifo(fifo)
    assert "not a regular file" in refused(fifo, capsys)


def test_hostile_file_name_cannot_reach_the_terminal(tmp_path: Path, capsys) -> None:
    name = tmp_path / "spec\x1b[2J\x1b]0;owned\x07\nsecond line.yaml"
    name.write_text("banks: []\n", encoding="utf-8")
    err = refused(name, capsys)
    assert "\x1b" not in err and "\x07" not in err
    assert "\\x1b" in err


# -- text fields ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize("length", [200, 201, 100_000])
def test_text_field_length(length: int, tmp_path: Path, capsys) -> None:
    spec = tmp_path / "spec.yaml"
    spec.write_text(f"project: {{name: {'N' * length}}}\n" + GOOD, encoding="utf-8")
    if length <= 200:  # the limit of a title-block field, models.TEXT_MAX
        code, _, err = cli(["size", spec, "--out", tmp_path / "out", "--json"], capsys)
        assert code == 0, err
    else:
        err = refused(spec, capsys)
        assert "project.name" in err and "at most 200" in err
        assert len(err) < 400  # the message quotes the value only in part


@pytest.mark.parametrize("char", ["\x1b", "\x07", "\x08", "\r", "\x7f", "\x85", "\u202e", "\u2066"])
def test_control_characters_in_text_are_refused(char: str, tmp_path: Path, capsys) -> None:
    escaped = char.encode("unicode_escape").decode("ascii").replace("\\x", "\\x")
    spec = tmp_path / "spec.yaml"
    spec.write_text(GOOD.replace("name: Line 3", f'name: "Line {escaped}3"'), encoding="utf-8")
    err = refused(spec, capsys)
    assert "banks[0].name" in err and f"U+{ord(char):04X}" in err


def test_control_characters_in_keys_are_refused(tmp_path: Path, capsys) -> None:
    spec = tmp_path / "spec.yaml"
    spec.write_text(GOOD + '    "need\\e[8m": {kvar: 5}\n', encoding="utf-8")
    assert "U+001B" in refused(spec, capsys)


# -- paths: nothing reaches outside what the user gave ------------------------------------------------------


def _tables(folder: Path, name: str = "device_ratings.csv") -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    (folder / name).write_bytes((builtin_dir() / name).read_bytes())
    return folder


@pytest.mark.parametrize("value", ["../outside", "/tmp", "sub/../../outside", "sub/../..", "'~/'"])
def test_spec_catalogs_stay_in_the_spec_folder(value: str, tmp_path: Path, capsys) -> None:
    _tables(tmp_path / "outside")
    (tmp_path / "project" / "sub").mkdir(parents=True)
    spec = tmp_path / "project" / "spec.yaml"
    spec.write_text(f"catalogs: {value}\n" + GOOD, encoding="utf-8")
    err = refused(spec, capsys)
    assert "catalogs" in err
    assert "outside the spec's folder" in err or "not found" in err


def test_spec_catalogs_linked_folder_outside_is_refused(tmp_path: Path, capsys) -> None:
    _tables(tmp_path / "outside")
    (tmp_path / "project").mkdir()
    (tmp_path / "project" / "tables").symlink_to(tmp_path / "outside", target_is_directory=True)
    spec = tmp_path / "project" / "spec.yaml"
    spec.write_text("catalogs: tables\n" + GOOD, encoding="utf-8")
    assert "outside the spec's folder" in refused(spec, capsys)


def test_spec_catalogs_linked_table_outside_is_refused(tmp_path: Path, capsys) -> None:
    secret = tmp_path / "secret.csv"
    secret.write_text("password,hunter2\n", encoding="utf-8")
    tables = tmp_path / "project" / "tables"
    tables.mkdir(parents=True)
    (tables / "device_ratings.csv").symlink_to(secret)
    spec = tmp_path / "project" / "spec.yaml"
    spec.write_text("catalogs: tables\n" + GOOD, encoding="utf-8")
    err = refused(spec, capsys)
    assert "links to a file outside the spec's folder" in err
    assert "hunter2" not in err and "password" not in err


def test_catalogs_folder_the_user_types_may_be_anywhere(tmp_path: Path, capsys) -> None:
    tables = _tables(tmp_path / "elsewhere" / "tables")
    (tmp_path / "project").mkdir()
    spec = tmp_path / "project" / "spec.yaml"
    spec.write_text(GOOD, encoding="utf-8")
    code, _, err = cli(["size", spec, "--catalogs", tables, "--out", tmp_path / "out"], capsys)
    assert code == 0, err


HOSTILE_NAMES = ["../../escaped", "/tmp/escaped-abs", "..", ".", "a/b/c", "con", "nul.txt", "x" * 180,
                 "Line 3 <b>bold</b> & <font size=60>big</font>", "=HYPERLINK(\"http://example.invalid\")"]


def test_documents_stay_in_the_out_folder(tmp_path: Path, capsys) -> None:
    """Bank and project names never become paths: every file written is inside --out, and nothing else."""
    banks = "".join(f"  - name: {n!r}\n    supply: {{voltage_v: 480, frequency_hz: 60}}\n    need: {{kvar: 50}}\n"
                    for n in HOSTILE_NAMES)
    work = tmp_path / "deep" / "er" / "work"
    work.mkdir(parents=True)
    spec = work / "spec.yaml"
    spec.write_text("project: {name: '../../../project', site: /etc/passwd}\nbanks:\n" + banks, encoding="utf-8")
    before = {p for p in tmp_path.rglob("*")}
    code, _, err = cli(["size", spec, "--out", work / "out"], capsys)
    assert code == 0, err
    created = {p for p in tmp_path.rglob("*")} - before
    assert created and all(p.is_relative_to(work / "out") for p in created), created
    assert not Path("/tmp/escaped-abs").exists()
    assert all(p.is_file() and not p.is_symlink() for p in created if p != work / "out")


def test_a_link_in_the_out_folder_is_replaced_not_followed(tmp_path: Path, capsys) -> None:
    victim = tmp_path / "victim.txt"
    victim.write_text("keep me\n", encoding="utf-8")
    out = tmp_path / "out"
    out.mkdir()
    (out / "results.json").symlink_to(victim)
    spec = tmp_path / "spec.yaml"
    spec.write_text(GOOD, encoding="utf-8")
    code, _, err = cli(["size", spec, "--out", out], capsys)
    assert code == 0, err
    assert victim.read_text(encoding="utf-8") == "keep me\n"
    assert not (out / "results.json").is_symlink()


# -- tables --------------------------------------------------------------------------------------------------


def test_table_over_the_size_limit_is_refused_quickly(tmp_path: Path, capsys) -> None:
    tables = _tables(tmp_path / "tables", "breaker_frames.csv")
    with (tables / "breaker_frames.csv").open("ab") as handle:
        handle.truncate(16 * 1024**3)  # sparse 16 GB
    spec = tmp_path / "spec.yaml"
    spec.write_text(GOOD, encoding="utf-8")
    err = refused(spec, capsys, "--catalogs", str(tables))
    assert f"over {MAX_TABLE_BYTES:,} bytes" in err and "breaker_frames.csv" in err


def test_pipe_named_like_a_table_is_not_read(tmp_path: Path, capsys) -> None:
    tables = tmp_path / "tables"
    tables.mkdir()
    os.mkfifo(tables / "device_ratings.csv")
    spec = tmp_path / "spec.yaml"
    spec.write_text(GOOD, encoding="utf-8")
    assert "not a regular file" in refused(spec, capsys, "--catalogs", str(tables))


# -- what reaches spreadsheets, PDFs and the terminal --------------------------------------------------------

FORMULAS = ['=HYPERLINK("http://example.invalid/a","x")', "+1+cmd|' /C calc'!A0", "-2+3+cmd|' /C calc'!A0",
            "@SUM(1+1)*cmd|' /C calc'!A0"]


def _hostile_run(tmp_path: Path, capsys) -> Path:
    """Size a spec whose text fields and unit table carry formulas and PDF markup; return the out folder."""
    units = (builtin_dir() / "capacitor_units.csv").read_text(encoding="utf-8").split("\n")
    rows = []
    for line in units:
        if line.startswith("CU-480-60-50.0,"):  # the unit a 100 kvar step takes: give it hostile text
            cells = next(csv.reader([line]))
            cells[-1] = FORMULAS[0] + " <b>bold</b> <font size=80>&amp;</font>"
            line = ",".join(f'"{c}"' if ("," in c or '"' in c) else c for c in
                            [c.replace('"', '""') for c in cells])
        rows.append(line)
    tables = tmp_path / "tables"
    tables.mkdir()
    (tables / "capacitor_units.csv").write_text("\n".join(rows), encoding="utf-8")
    spec = tmp_path / "spec.yaml"
    spec.write_text(
        f"project: {{name: {FORMULAS[0]!r}, site: {FORMULAS[1]!r}, prepared_by: {FORMULAS[2]!r}, "
        f"revision: {FORMULAS[3]!r}}}\n"
        "banks:\n"
        "  - name: 'Line <b>3</b> & <i>unclosed <font color=red'\n"
        "    supply: {voltage_v: 480, frequency_hz: 60, transformer_kva: 1500, transformer_z_pct: 5.75}\n"
        "    need: {kvar: 200}\n    steps: [100, 100]\n"
        f"  - name: {FORMULAS[2]!r}\n    supply: {{voltage_v: 480, frequency_hz: 60}}\n    need: {{kvar: 100}}\n",
        encoding="utf-8")
    out = tmp_path / "out"
    code, _, err = cli(["size", spec, "--catalogs", tables, "--out", out], capsys)
    assert code == 0, err  # unbalanced markup in a name must not crash the PDF engine
    code, _, err = cli(["rerate", spec, "--catalogs", tables, "--voltage-v", "600", "--out", out / "rerate"],
                       capsys)
    assert code == 0, err
    return out


def test_terminal_summary_shows_markup_as_text(tmp_path: Path, capsys) -> None:
    _hostile_run(tmp_path, capsys)
    spec = tmp_path / "spec.yaml"
    code, out, _ = cli(["size", spec, "--catalogs", tmp_path / "tables", "--out", tmp_path / "out2"], capsys)
    assert code == 0
    assert "Line <b>3</b> & <i>unclosed <font color=red" in out


def _dangerous(text: str) -> bool:
    """A spreadsheet would run this cell as a formula (a number such as -2.5 is harmless)."""
    if not text or text[0] not in "=+-@\t\r":
        return False
    try:
        float(text)
    except ValueError:
        return True
    return False


def test_csv_documents_neutralise_formulas(tmp_path: Path, capsys) -> None:
    out = _hostile_run(tmp_path, capsys)
    files = sorted(out.rglob("*.csv"))
    assert {p.name for p in files} >= {"bill-of-materials.csv", "rerate-bom-difference.csv"}
    for path in files:
        seen = 0
        for row in csv.reader(path.read_text(encoding="utf-8-sig").splitlines()):
            for cell in row:
                assert not _dangerous(cell), (path.name, cell)
                seen += "example.invalid" in cell or "cmd|" in cell
        assert seen, f"the hostile text should appear (neutralised) in {path.name}"


def test_xlsx_documents_neutralise_formulas(tmp_path: Path, capsys) -> None:
    out = _hostile_run(tmp_path, capsys)
    files = sorted(out.rglob("*.xlsx"))
    assert files
    import openpyxl

    seen = 0
    for path in files:
        book = openpyxl.load_workbook(path)
        for sheet in book.worksheets:
            for row in sheet.iter_rows():
                for cell in row:
                    if isinstance(cell.value, str) and ("example.invalid" in cell.value or "cmd|" in cell.value):
                        seen += 1
                        assert cell.data_type == "s" and not _dangerous(cell.value), (path.name, cell.value)
    assert seen, "the hostile text should appear (neutralised) in the workbook"


def test_pdf_documents_show_markup_as_text(tmp_path: Path, capsys) -> None:
    out = _hostile_run(tmp_path, capsys)
    files = sorted(out.glob("*.pdf"))
    assert len(files) == 2
    from pypdf import PdfReader

    text = ""
    for path in files:
        text += "\n".join(page.extract_text() or "" for page in PdfReader(path).pages)
    flat = " ".join(text.split())
    assert "<b>3</b>" in flat  # the tags of the bank's name are printed, not obeyed
    assert "<font size=80>&amp;</font>" in flat  # and so are those of a unit's description from a table


def test_a_broken_link_named_like_a_table_is_reported_not_skipped(tmp_path: Path, capsys) -> None:
    tables = _tables(tmp_path / "tables", "fans.csv")  # one good table, so the folder is not empty
    (tables / "breaker_frames.csv").symlink_to(tmp_path / "gone.csv")
    (tables / "device_ratings.csv").symlink_to(tables / "device_ratings.csv")  # a loop
    spec = tmp_path / "spec.yaml"
    spec.write_text(GOOD, encoding="utf-8")
    err = refused(spec, capsys, "--catalogs", str(tables))
    assert "device_ratings.csv: a link to a file that is not there" in err  # the first in table order
