"""``bankbuild survey`` through its real entry points: the stable JSON keys, the files written (spec that ``size``
takes, JSON, PDF), and bad files or options ending with exit code 2, one line and nothing written."""

from __future__ import annotations

import json
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from bankbuild.cli.app import run
from bankbuild.spec.demo_meter import write_demo_csv

SCRIPT = shutil.which("bankbuild", path=str(Path(sys.executable).parent))


def cli(capsys, *argv) -> tuple[int, str, str]:
    code = run([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture(scope="module")
def hourly_year(tmp_path_factory) -> Path:
    """The demo generator's year at hourly readings (8,760 rows): quick, and the same every run."""
    path = tmp_path_factory.mktemp("meter") / "meter.csv"
    write_demo_csv(path, minutes=60)
    return path


def test_json_has_the_stable_keys(capsys, hourly_year):
    code, out, err = cli(capsys, "survey", hourly_year, "--voltage-v", "480", "--pf-target", "0.95", "--json")
    assert (code, err) == (0, "")
    doc = json.loads(out)
    assert doc["intervals"] == 8760 and doc["interval_s"] == 3600
    assert set(doc["need_kvar"]) >= {"max", "p95"}
    assert isinstance(doc["light_load_kvar"], float)
    assert set(doc["proposed"]) >= {"total_kvar", "fixed_kvar", "steps"}
    assert set(doc["simulation"]) >= {"share_meeting_target", "leading_intervals", "switching_per_step_per_year"}
    assert len(doc["simulation"]["switching_per_step_per_year"]) == len(doc["proposed"]["steps"])
    assert [m["month"] for m in doc["monthly"]] == [f"2026-{m:02d}" for m in range(1, 13)]
    for month in doc["monthly"]:
        assert set(month) >= {"month", "billing_pf_before", "billing_pf_after", "kwh", "kvarh_before"}
        # billing PF = kWh / √(kWh² + kvarh²) (product design)
        assert month["billing_pf_before"] == pytest.approx(
            month["kwh"] / (month["kwh"] ** 2 + month["kvarh_before"] ** 2) ** 0.5, rel=1e-12)
    assert doc["proposed"]["total_kvar"] == pytest.approx(
        doc["proposed"]["fixed_kvar"] + sum(doc["proposed"]["steps"]), abs=0.01)
    assert "charts" not in doc


def test_out_writes_spec_json_and_pdf_and_size_takes_the_spec(capsys, tmp_path, hourly_year):
    out_dir = tmp_path / "survey"
    code, out, err = cli(capsys, "survey", hourly_year, "--voltage-v", "480", "--pf-target", "0.95", "--out",
                         out_dir, "--name", "Packaging line")
    assert (code, err) == (0, "")
    assert sorted(p.name for p in out_dir.iterdir()) == ["spec.yaml", "survey-report.pdf", "survey.json"]
    assert "target met in" in out and "spec.yaml" in out
    assert (out_dir / "survey-report.pdf").read_bytes().startswith(b"%PDF")
    summary = json.loads((out_dir / "survey.json").read_text(encoding="utf-8"))
    code, out, err = cli(capsys, "size", out_dir / "spec.yaml", "--json")
    assert (code, err) == (0, "")
    (bank,) = json.loads(out)["banks"]
    assert bank["name"] == "Packaging line"
    planned = ([summary["proposed"]["fixed_kvar"]] if summary["proposed"]["fixed_kvar"] else []) \
        + summary["proposed"]["steps"]
    assert [s["kvar"] for s in bank["steps"]] == pytest.approx(planned, abs=0.01)


def test_pdf_says_what_the_results_hold(capsys, tmp_path, hourly_year):
    from pdf_text import squash, whole

    out_dir = tmp_path / "s"
    assert cli(capsys, "survey", hourly_year, "--voltage-v", "480", "--pf-target", "0.95", "--out", out_dir)[0] == 0
    summary = json.loads((out_dir / "survey.json").read_text(encoding="utf-8"))
    text = whole((out_dir / "survey-report.pdf").read_bytes())
    for fragment in ("kvar duration curve", "Monthly billing power factor", "Cautions", "qualified persons",
                     f"{summary['proposed']['total_kvar']:,.1f} kvar", summary["monthly"][0]["month"],
                     f"{summary['monthly'][0]['billing_pf_after']:.3f}"):
        assert squash(fragment) in text, fragment


def test_the_installed_command(tmp_path, hourly_year):
    done = subprocess.run([SCRIPT, "survey", str(hourly_year), "--voltage-v", "480", "--pf-target", "0.95",
                           "--json"], capture_output=True, text=True, check=False)
    assert done.returncode == 0, done.stderr
    assert json.loads(done.stdout)["intervals"] == 8760


@pytest.mark.parametrize(("text", "args", "fragments"), [
    ("time,kW,kvar\n2026-01-01 00:00,100,75\n2026-01-01 00:15,1e,75\n", [], ["row 3", "column 'kW'"]),
    ("time,kW,kvar\n2026-01-01 00:00,100,75\n2026-13-01 00:15,100,75\n", [], ["row 3", "column 'time'"]),
    ("time,kW\n2026-01-01 00:00,100\n", [], ["row 1", "two of kW"]),
    ("time,kW,kvar\n2026-01-01 00:00,100,75\n2026-01-01 00:15,100,75\n", ["--pf-target", "1.5"],
     ["--pf-target", "outside"]),
    ("time,kW,kvar\n2026-01-01 00:00,100,75\n2026-01-01 00:15,100,75\n", ["--kvar-sign", "up"], ["--kvar-sign"]),
    ("time,kW,kvar\n2026-01-01 00:00,100,75\n2026-01-01 00:15,100,75\n", ["--pattern", "2:0"], ["--pattern"]),
    ("time,kW,kvar\n2026-01-01 00:00,100,75\n2026-01-01 00:15,100,75\n", ["--kw-column", "P"], ["--kw-column"]),
])
def test_bad_files_and_options_exit_2_with_one_line(capsys, tmp_path, text, args, fragments):
    path = tmp_path / "bad.csv"
    path.write_text(text, encoding="utf-8")
    out_dir = tmp_path / "out"
    argv = ["survey", path, "--voltage-v", "480", "--pf-target", "0.95", "--out", out_dir, *args]
    if "--pf-target" in args:
        argv = ["survey", path, "--voltage-v", "480", "--out", out_dir, *args]
    code, out, err = cli(capsys, *argv)
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and err.startswith("bankbuild: error: ") and "Traceback" not in err
    for fragment in fragments:
        assert fragment in err
    assert not out_dir.exists()


def test_missing_file_exit_2(capsys, tmp_path):
    code, _, err = cli(capsys, "survey", tmp_path / "none.csv", "--voltage-v", "480", "--pf-target", "0.95")
    assert code == 2 and "not found" in err
