"""Faults of the machine and of signals, and valid but enormous input, through the real command.

Each test runs ``bankbuild`` as a user would (the console script in a subprocess, or ``run(argv)`` where a
fault has to be planted in the process) and checks the promises of the README's reliability section: one line
and an exit code, never a traceback; the output folder holds the previous set of documents whole or the new set
whole, never a mix, never a temporary file or the lock; no worker process outlives the run.
"""

from __future__ import annotations

import json
import os
import resource
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from bankbuild.cli.app import run
from bankbuild.files import FileSet
from bankbuild.reports.render import WARM_MAX_BANKS
from bankbuild.tables.load import MAX_TABLE_ROWS, builtin_dir

sys.path.insert(0, str(Path(__file__).parents[2] / "benchmarks"))
from bigtable import HUGE_NEED, big_units_table  # noqa: E402
from plant import write_plant_spec  # noqa: E402

SPECS = Path(__file__).parents[1] / "data" / "specs"
SPEC = SPECS / "line3_300kvar.yaml"
SCRIPT = shutil.which("bankbuild", path=str(Path(sys.executable).parent))
DOCS = {"results.json", "bill-of-materials.pdf", "bill-of-materials.csv", "bill-of-materials.xlsx",
        "bill-of-materials.json", "protection-worksheet.pdf", "one-line-1.svg"}


def bankbuild(*argv, timeout: float = 180, **kwargs) -> subprocess.CompletedProcess:
    return subprocess.run([SCRIPT, *map(str, argv)], capture_output=True, text=True, timeout=timeout, **kwargs)


def one_error_line(proc: subprocess.CompletedProcess, code: int = 2) -> str:
    assert proc.returncode == code, (proc.returncode, proc.stderr)
    assert "Traceback" not in proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1, proc.stderr
    return lines[0]


def first_set(out: Path) -> dict[str, bytes]:
    """Size the example into ``out`` and return its documents (the 'previous set' of a test)."""
    proc = bankbuild("size", SPEC, "--out", out)
    assert proc.returncode == 0, proc.stderr
    return {p.name: p.read_bytes() for p in out.iterdir()}


def assert_clean(out: Path, expected: dict[str, bytes]) -> None:
    """The folder holds exactly ``expected`` (no temporary folder, no lock, nothing cut short)."""
    assert {p.name: p.read_bytes() for p in out.iterdir()} == expected


# --- the output folder ----------------------------------------------------------------------------------------

def test_a_folder_squatting_on_a_document_name_is_refused_before_the_work(tmp_path):
    out = tmp_path / "out"
    (out / "bill-of-materials.pdf").mkdir(parents=True)
    line = one_error_line(bankbuild("size", SPEC, "--out", out))
    assert "bill-of-materials.pdf: --out: a folder has the name of a document" in line
    assert sorted(p.name for p in out.iterdir()) == ["bill-of-materials.pdf"]


@pytest.mark.parametrize("argv", [("size", SPEC), ("rerate", SPEC, "--voltage-v", "460")], ids=["size", "rerate"])
def test_an_existing_file_as_out_is_refused_before_the_work(tmp_path, argv):
    target = tmp_path / "a-file"
    target.write_text("mine")
    line = one_error_line(bankbuild(*argv, "--out", target))
    assert "--out: is a file, not a folder" in line
    assert target.read_text() == "mine"


def test_an_empty_out_path_is_refused(tmp_path):
    line = one_error_line(bankbuild("size", SPEC, "--out", "", cwd=tmp_path))
    assert "--out: an empty path" in line
    assert list(tmp_path.iterdir()) == []


def _read_only_mount(tmp_path: Path) -> Path:
    """A read-only tmpfs (root ignores file permissions, so a read-only filesystem is the honest test)."""
    where = tmp_path / "ro"
    where.mkdir()
    if shutil.which("mount") is None or subprocess.run(["mount", "-t", "tmpfs", "-o", "ro,size=64k", "tmpfs",
                                                        str(where)], capture_output=True).returncode != 0:
        if os.geteuid() == 0:
            pytest.skip("no way to make a read-only folder here (root, and no mount)")
        where.chmod(0o555)
    return where


@pytest.mark.parametrize("argv", [("size", SPEC), ("rerate", SPEC, "--voltage-v", "460")], ids=["size", "rerate"])
def test_a_read_only_out_is_one_line_not_a_traceback(tmp_path, argv):
    where = _read_only_mount(tmp_path)
    try:
        line = one_error_line(bankbuild(*argv, "--out", where))
        assert "--out: cannot write into the folder (" in line
        line = one_error_line(bankbuild(*argv, "--out", where / "sub"))
        assert "--out: cannot create the folder in" in line
    finally:
        subprocess.run(["umount", str(where)], capture_output=True)
        where.chmod(0o755)


# --- a full disk ----------------------------------------------------------------------------------------------

def _file_size_limit(limit: int):
    def start() -> None:  # a full disk, as far as this process can tell: writes past `limit` bytes fail
        signal.signal(signal.SIGXFSZ, signal.SIG_IGN)
        resource.setrlimit(resource.RLIMIT_FSIZE, (limit, limit))
    return start


def test_a_full_disk_leaves_the_previous_set_whole(tmp_path):
    out = tmp_path / "out"
    before = first_set(out)
    proc = bankbuild("size", SPEC, "--out", out, preexec_fn=_file_size_limit(20_000))
    line = one_error_line(proc)
    assert "--out: cannot write " in line and "nothing was changed" in line, line
    assert_clean(out, before)


def test_a_full_disk_on_a_new_folder_leaves_no_folder(tmp_path):
    out = tmp_path / "new" / "out"
    one_error_line(bankbuild("size", SPEC, "--out", out, preexec_fn=_file_size_limit(20_000)))
    assert not (tmp_path / "new").exists()


def test_a_full_disk_under_json_on_stdout_is_one_line(tmp_path):
    with open(tmp_path / "stdout.json", "wb") as sink:
        proc = subprocess.run([SCRIPT, "size", str(SPEC), "--json"], stdout=sink, stderr=subprocess.PIPE, text=True,
                              timeout=180, preexec_fn=_file_size_limit(2_000))
    assert proc.returncode == 2, proc.stderr
    assert proc.stderr.strip() == "bankbuild: error: cannot write to the standard output (File too large)"


def test_catalog_copy_on_a_full_disk_leaves_no_table_cut_short(tmp_path):
    dest = tmp_path / "tables"
    proc = bankbuild("catalog", "copy", dest, preexec_fn=_file_size_limit(4_000))
    assert "nothing was changed" in one_error_line(proc)
    assert not dest.exists()
    proc = bankbuild("catalog", "copy", dest)
    assert proc.returncode == 0, proc.stderr
    shipped = [*builtin_dir().glob("*.csv"), *builtin_dir().glob("rules-*.yaml")]
    assert sorted(p.name for p in dest.iterdir()) == sorted(p.name for p in shipped)


# --- two runs on one folder -----------------------------------------------------------------------------------

def test_a_second_run_waits_then_names_the_holder(tmp_path):
    out = tmp_path / "out"
    with FileSet(out, "out_dir"):  # this test process holds the folder, as a first run would
        line = one_error_line(bankbuild("size", SPEC, "--out", out))
    assert f"--out: another bankbuild run is writing into this folder (pid {os.getpid()}, started " in line
    assert not out.exists()  # the holder made the folder and, committing nothing, removed it again


def test_two_concurrent_runs_leave_one_whole_set(tmp_path):
    out = tmp_path / "out"
    procs = [subprocess.Popen([SCRIPT, "size", str(SPEC), "--out", str(out)], stdout=subprocess.PIPE,
                              stderr=subprocess.PIPE, text=True) for _ in range(2)]
    results = [(p.wait(timeout=300), p.stderr.read()) for p in procs]
    for p in procs:
        p.stdout.close()
        p.stderr.close()
    assert any(code == 0 for code, _ in results), results
    for code, err in results:  # the other finished too, or gave up naming the holder
        assert code == 0 or (code == 2 and "another bankbuild run is writing into this folder" in err), err
    assert {p.name for p in out.iterdir()} == DOCS
    json.loads((out / "results.json").read_text())


# --- signals --------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("banks", [WARM_MAX_BANKS, 30], ids=["workers started before sizing", "forked after"])
@pytest.mark.parametrize("name", ["SIGTERM", "SIGINT", "SIGHUP"])
def test_a_signal_while_rendering_stops_cleanly(tmp_path, name, banks):
    """A plant whose documents take long enough to be interrupted: a small one (rendered by the workers started
    before sizing) and a larger one (by workers forked after it)."""
    out = tmp_path / "out"
    before = first_set(out)
    spec = write_plant_spec(tmp_path, banks)
    proc = subprocess.Popen([SCRIPT, "size", str(spec), "--out", str(out)], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, start_new_session=True)
    deadline = time.monotonic() + 120
    while not list(out.glob(".bankbuild-new-*")) and proc.poll() is None and time.monotonic() < deadline:
        time.sleep(0.005)  # the run holds the folder: rendering has begun
    if proc.poll() is not None:
        pytest.skip("the run finished before the signal could be sent")
    time.sleep(0.2)
    signum = getattr(signal, name)
    proc.send_signal(signum)
    code = proc.wait(timeout=60)
    err = proc.stderr.read()
    proc.stdout.close()
    proc.stderr.close()
    assert code == 128 + signum, err
    assert err.strip().splitlines() == [f"bankbuild: stopped ({name}); temporary files removed, the output folder "
                                        "holds the previous documents or the new ones, whole"]
    assert_clean(out, before)
    deadline = time.monotonic() + 20  # workers die with the run (a kill the system delivers, slower under load)
    while time.monotonic() < deadline:
        try:
            os.killpg(proc.pid, 0)
        except ProcessLookupError:
            break
        time.sleep(0.1)
    with pytest.raises(ProcessLookupError):  # no worker of the run is left
        os.killpg(proc.pid, 0)


# --- unexpected errors ----------------------------------------------------------------------------------------

def test_an_unexpected_error_is_one_line_and_debug_shows_the_traceback(tmp_path, capsys, monkeypatch):
    import bankbuild.cli.app as app

    def broken(*args, **kwargs):
        raise ZeroDivisionError("float division by zero")

    monkeypatch.setattr(app, "run_spec", broken, raising=False)
    monkeypatch.setattr("bankbuild.api.run_spec", broken, raising=False)
    code = run(["size", str(SPEC), "--json"])
    out, err = capsys.readouterr()
    assert code == 1
    assert err == ("bankbuild: error: unexpected failure (ZeroDivisionError: float division by zero); this is a "
                   "bug; run again with --debug to see where it happened\n")
    with pytest.raises(ZeroDivisionError):
        run(["size", str(SPEC), "--json", "--debug"])


# --- valid but enormous input ---------------------------------------------------------------------------------

def test_a_huge_derived_need_is_refused_with_its_derivation(tmp_path):
    spec = tmp_path / "huge.yaml"
    spec.write_text(SPEC.read_text().replace("need: {kvar: 300}", HUGE_NEED))
    line = one_error_line(bankbuild("size", spec, "--json", timeout=60))
    assert "banks[0] (Line 3).need: kw 1,000 at pf_present 1e-06 to pf_target" in line
    assert "at most 100,000 kvar can be sized (as for need.kvar)" in line


def test_kvar_with_a_vanishing_pf_is_refused_not_infinity():
    line = one_error_line(bankbuild("kvar", "--kw", "100", "--pf-present", "1e-300", "--pf-target", "0.95", "--json",
                                    timeout=60))
    assert "pf_present" in line or "--pf-present" in line
    line = one_error_line(bankbuild("kvar", "--kw", "100", "--pf-present", "0.8", "--pf-target", "0.95",
                                    "--voltage-v", "1e-300", timeout=60))
    assert "--voltage-v" in line


def test_a_twenty_thousand_row_table_sizes_in_bounded_memory(tmp_path):
    tables = tmp_path / "tables"
    big_units_table(tables, MAX_TABLE_ROWS)
    proc = bankbuild("size", SPEC, "--json", "--catalogs", tables, timeout=300)
    assert proc.returncode == 0, proc.stderr
    assert json.loads(proc.stdout)["banks"][0]["delivered_kvar"] >= 300 - 1e-6
    peak_mb = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024  # Linux: kB
    assert peak_mb < 600, peak_mb


def test_a_table_over_the_row_limit_is_refused(tmp_path):
    tables = tmp_path / "tables"
    big_units_table(tables, MAX_TABLE_ROWS + 1)
    line = one_error_line(bankbuild("size", SPEC, "--json", "--catalogs", tables, timeout=120))
    assert f"more than {MAX_TABLE_ROWS:,} data rows" in line


# --- smaller items --------------------------------------------------------------------------------------------

def test_an_over_long_out_path_keeps_its_problem_in_the_message(tmp_path):
    out = tmp_path / "/".join(["d" * 200] * 25)  # about 5,000 bytes: over the system's 4,096
    line = one_error_line(bankbuild("size", SPEC, "--out", out))
    assert line.endswith("the system allows at most 4,095"), line
    assert "…" in line  # the middle of the path gave way, not the problem


def test_a_file_that_is_no_spec_is_refused_without_quoting_it(tmp_path):
    other = tmp_path / "settings.yaml"
    other.write_text("api_token: s3cr3t-value-never-echoed\nhost: example.invalid\n")
    line = one_error_line(bankbuild("size", other, "--json"))
    assert "not a bankbuild spec" in line
    assert "s3cr3t" not in line and "example.invalid" not in line


def test_a_table_with_lone_cr_line_endings_is_read(tmp_path):
    tables = tmp_path / "tables"
    shutil.copytree(builtin_dir(), tables)
    path = tables / "capacitor_units.csv"
    path.write_bytes(path.read_bytes().replace(b"\r\n", b"\n").replace(b"\n", b"\r"))
    proc = bankbuild("catalog", "check", tables)
    assert proc.returncode == 0, proc.stderr
    assert "ok  capacitor_units.csv" in proc.stdout


def test_a_link_loop_among_the_spec_s_tables_is_one_line(tmp_path):
    spec = tmp_path / "spec.yaml"
    spec.write_text("catalogs: tables\n" + SPEC.read_text())
    (tmp_path / "tables").mkdir()
    (tmp_path / "tables" / "capacitor_units.csv").symlink_to("capacitor_units.csv")  # a link to itself
    line = one_error_line(bankbuild("size", spec, "--json"))
    assert "catalogs: capacitor_units.csv in 'tables' is a loop of links, not a table" in line
    shutil.rmtree(tmp_path / "tables")
    (tmp_path / "tables").symlink_to("tables")  # the folder itself
    line = one_error_line(bankbuild("size", spec, "--json"))
    assert "catalogs: 'tables' is a loop of links, not a folder" in line
