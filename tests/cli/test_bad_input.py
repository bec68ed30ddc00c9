"""Bad input, end to end: every case of the corpus ends with exit code 2, one short message, no output files.

The corpus is data, walked by these tests:

* ``tests/data/bad_specs/`` — one file per case. Its first lines say what the message must hold
  (``# expect: banks[0] (Line 3).supply.voltage_v``, one line per fragment) and, optionally, the command line
  (``# args: kvar --loads {spec}``; the default is ``size {spec} --out {out}``). A file that cannot carry
  comment lines (an empty file, a photo, a folder, a missing file) has them in ``NAME.expect`` beside it;
  ``*.args`` files are command-line cases that read no spec of their own.
* ``tests/data/bad_tables/`` — one folder per case, with the table files and ``expect.txt``. The case runs as
  ``size plant.yaml --catalogs CASE``, or, when the folder holds its own ``spec.yaml`` (whose ``catalogs: .``
  names the folder), as ``size CASE/spec.yaml``.

Placeholders in ``args``: ``{spec}`` the case file, ``{case}`` the case folder, ``{data}`` the corpus folder,
``{good}`` a valid spec, ``{out}`` an output folder that must not appear, ``{outfile}`` a file the test creates
first (for cases about a path that is taken).

A result that cannot meet a rule is not bad input: the last tests check it comes out as a flagged check with
exit code 0 and its documents.
"""

from __future__ import annotations

import json
import shlex
import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path

import pytest

from bankbuild.cli.app import run

DATA = Path(__file__).parents[1] / "data"
SPECS = DATA / "bad_specs"
TABLES = DATA / "bad_tables"
GOOD = TABLES / "plant.yaml"
MAX_LINES = 3  # "one clear line", with room for a wrapped path


@dataclass(frozen=True)
class Case:
    name: str
    target: Path  # the case file or folder (may be missing on purpose)
    expects: tuple[str, ...]
    args: str


def _header(text: str) -> tuple[list[str], str | None]:
    expects, args = [], None
    for line in text.splitlines():
        if line.startswith("# expect:"):
            expects.append(line.removeprefix("# expect:").strip())
        elif line.startswith("# args:"):
            args = line.removeprefix("# args:").strip()
    return expects, args


def spec_cases() -> list[Case]:
    cases = []
    for path in sorted(SPECS.iterdir()):
        if path.name.endswith(".expect"):
            target = path.with_name(path.name.removesuffix(".expect"))
            expects, args = _header(path.read_text(encoding="utf-8"))
        elif (path.with_name(path.name + ".expect")).exists() or path.is_dir():
            continue  # described by its .expect file
        else:
            target = path
            head = path.read_bytes()[:2000].decode("utf-8", errors="replace")
            expects, args = _header(head)
        cases.append(Case(target.name, target, tuple(expects), args or "size {spec} --out {out}"))
    return cases


def table_cases() -> list[Case]:
    cases = []
    for folder in sorted(p for p in TABLES.iterdir() if p.is_dir()):
        expects, args = _header((folder / "expect.txt").read_text(encoding="utf-8"))
        default = "size {case}/spec.yaml --out {out}" if (folder / "spec.yaml").exists() else \
            "size {good} --catalogs {case} --out {out}"
        cases.append(Case(folder.name, folder, tuple(expects), args or default))
    return cases


SPEC_CASES = spec_cases()
TABLE_CASES = table_cases()


def run_case(case: Case, tmp_path: Path, capsys, monkeypatch) -> tuple[int, str, str, Path]:
    """Run the case's command line in-process from an empty working folder."""
    work = tmp_path / "work"
    work.mkdir()
    monkeypatch.chdir(work)
    out = work / "out"
    outfile = work / "taken"
    if "{outfile}" in case.args:
        outfile.write_text("already here\n", encoding="utf-8")
    values = {"spec": case.target, "case": case.target, "data": SPECS, "good": GOOD, "out": out,
              "outfile": outfile}
    argv = [part.format(**{k: str(v) for k, v in values.items()}) for part in shlex.split(case.args)]
    capsys.readouterr()
    code = run(argv)
    captured = capsys.readouterr()
    return code, captured.out, captured.err, work


def assert_refused(case: Case, code: int, out: str, err: str, work: Path) -> None:
    assert code == 2, f"{case.name}: exit {code}\n{out}\n{err}"
    assert err.startswith("bankbuild: error: "), err
    lines = err.rstrip("\n").split("\n")
    assert len(lines) <= MAX_LINES, err
    assert "Traceback" not in err
    assert "\x1b" not in err  # nothing from a hostile file reaches the terminal as a control sequence
    for fragment in case.expects:
        assert fragment in err, f"{case.name}: {fragment!r} not in {err!r}"
    assert out == ""
    left = sorted(p.name for p in work.iterdir())
    assert left in ([], ["taken"]), f"{case.name}: wrote {left}"


def test_corpus_is_large_enough() -> None:
    spec_files = [c for c in SPEC_CASES if c.target.name.endswith(".yaml") and "{spec}" in c.args]
    options = [c for c in SPEC_CASES if c.target.name.endswith(".args")]
    assert len(spec_files) >= 40 and len(options) >= 10
    assert len(TABLE_CASES) >= 15


@pytest.mark.parametrize("case", SPEC_CASES + TABLE_CASES, ids=lambda c: c.name)
def test_case_has_expectations(case: Case) -> None:
    assert case.expects, f"{case.name}: no '# expect:' line"
    assert all(case.expects)


@pytest.mark.parametrize("case", SPEC_CASES, ids=lambda c: c.name)
def test_bad_spec(case: Case, tmp_path: Path, capsys, monkeypatch) -> None:
    code, out, err, work = run_case(case, tmp_path, capsys, monkeypatch)
    assert_refused(case, code, out, err, work)
    if case.args.startswith("size {spec}"):
        assert case.target.name in err or any(e.endswith((".yaml", ".csv")) for e in case.expects), err


@pytest.mark.parametrize("case", TABLE_CASES, ids=lambda c: c.name)
def test_bad_table(case: Case, tmp_path: Path, capsys, monkeypatch) -> None:
    code, out, err, work = run_case(case, tmp_path, capsys, monkeypatch)
    assert_refused(case, code, out, err, work)


@pytest.mark.parametrize("case", [c for c in TABLE_CASES if not (c.target / "spec.yaml").exists()][:6],
                         ids=lambda c: c.name)
def test_bad_table_through_catalog_check(case: Case, tmp_path: Path, capsys, monkeypatch) -> None:
    """``bankbuild catalog check`` gives the same message as a run that uses the table."""
    check = Case(case.name, case.target, case.expects, "catalog check {case}")
    code, out, err, work = run_case(check, tmp_path, capsys, monkeypatch)
    assert_refused(check, code, out, err, work)


@pytest.mark.parametrize("name", ["voltage_quoted.yaml", "photo_of_nameplate.yaml", "missing_spec.yaml"])
def test_installed_command_exits_2_without_traceback(name: str, tmp_path: Path) -> None:
    """The real entry point (a new process) prints one line and exits 2: nothing in-process hides a crash."""
    done = subprocess.run([sys.executable, "-c", "from bankbuild.cli.app import main; main()", "size",
                           str(SPECS / name), "--out", str(tmp_path / "out")],
                          capture_output=True, text=True, timeout=60, cwd=tmp_path, check=False)
    assert done.returncode == 2, done.stderr
    assert done.stderr.count("\n") == 1 and "Traceback" not in done.stderr
    assert done.stdout == ""
    assert not (tmp_path / "out").exists()


# -- a rule the result cannot meet is a flagged check, not bad input ----------------------------------------


def _size_json(argv: list[str], capsys) -> dict:
    capsys.readouterr()
    assert run(argv) == 0
    return json.loads(capsys.readouterr().out)


def test_conductor_table_too_small_is_a_flagged_check(tmp_path: Path, capsys) -> None:
    from bankbuild.tables.load import builtin_dir

    text = (builtin_dir() / "conductors_nec.csv").read_text(encoding="utf-8").split("\n")
    kept = [line for line in text if not line[:4].isdigit() or line.split(",")[1].endswith("AWG")
            and not line.split(",")[1].startswith(("1/0", "2/0", "3/0", "4/0"))]
    tables = tmp_path / "tables"
    tables.mkdir()
    (tables / "conductors_nec.csv").write_text("\n".join(kept), encoding="utf-8")
    out = tmp_path / "out"
    # max_parallel_sets 1: the largest conductor left (1 AWG) cannot carry a 400 kvar main.
    spec = tmp_path / "spec.yaml"
    spec.write_text("banks:\n  - name: Big\n    supply: {voltage_v: 480, frequency_hz: 60}\n"
                    "    need: {kvar: 400}\n    protection: {max_parallel_sets: 1}\n", encoding="utf-8")
    data = _size_json(["size", str(spec), "--catalogs", str(tables), "--out", str(out), "--json"], capsys)
    bank = data["banks"][0]
    failed = [c for c in bank["checks"] if not c["ok"]]
    assert failed, bank["checks"]
    assert bank["main"]["conductor"] == "none"
    assert (out / "results.json").exists()


def test_no_unit_voltage_high_enough_is_a_flagged_check(tmp_path: Path, capsys) -> None:
    from bankbuild.tables.load import builtin_dir

    text = (builtin_dir() / "capacitor_units.csv").read_text(encoding="utf-8").split("\n")
    kept = [line for line in text if not line.startswith("CU-") or line.startswith("CU-240-60-")]
    tables = tmp_path / "tables"
    tables.mkdir()
    (tables / "capacitor_units.csv").write_text("\n".join(kept), encoding="utf-8")
    spec = tmp_path / "spec.yaml"
    spec.write_text("banks:\n  - name: Line 3\n    supply: {voltage_v: 480, frequency_hz: 60}\n"
                    "    need: {kvar: 50}\n", encoding="utf-8")
    data = _size_json(["size", str(spec), "--catalogs", str(tables), "--out", str(tmp_path / "o"), "--json"],
                      capsys)
    bank = data["banks"][0]
    assert bank["capacitor_voltage_v"] == 240
    voltage = [c for c in bank["checks"] if c["name"].startswith("Unit voltage")]
    assert voltage and not voltage[0]["ok"]


def test_corpus_folders_hold_no_strays() -> None:
    """Every file in the spec corpus is a case or describes one (a stray file would be silently skipped)."""
    names = {p.name for p in SPECS.iterdir()}
    for name in names:
        if name.endswith(".expect"):
            continue
        assert name.endswith((".yaml", ".args")), name
