"""The command line through its real entry points: ``bankbuild.cli.app.run(argv)`` in-process, and the installed
``bankbuild`` console script in a subprocess. Output is asserted exactly where the layout is ours to keep."""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
import typer

from bankbuild.cli.app import app, run

SPECS = Path(__file__).parents[1] / "data" / "specs"
BAD_CATALOGS = Path(__file__).parents[1] / "data" / "bad_catalogs"
SCRIPT = shutil.which("bankbuild", path=str(Path(sys.executable).parent))


def cli(capsys, *argv: str) -> tuple[int, str, str]:
    code = run([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def size_json(capsys, tmp_path, spec: Path, *extra: str) -> dict:
    code, out, err = cli(capsys, "size", spec, "--json", "--out", tmp_path / "out", *extra)
    assert (code, err) == (0, "")
    return json.loads(out)


# --- size --json: the stable keys ---------------------------------------------------------------------------

BANK_KEYS = {"name": str, "required_kvar": float, "delivered_kvar": float, "supply_voltage_v": float,
             "frequency_hz": float, "capacitor_voltage_v": float, "rated_kvar": float, "rated_current_a": float,
             "line_current_a": float, "capacitance_uf_per_phase": float, "steps": list, "main": dict,
             "discharge": dict, "resonance": list, "checks": list}
STEP_KEYS = {"kvar": float, "rated_kvar": float, "rated_current_a": float, "units": list, "device_rating_a": float,
             "conductor": str, "conductor_ampacity_a": float}
MAIN_KEYS = {"conductor": str, "conductor_ampacity_a": float, "device_rating_a": float, "disconnect_rating_a": float}
DISCHARGE_KEYS = {"max_resistance_ohm": float, "limit_v": float, "time_s": float, "ok": bool}


def has_keys(mapping: dict, keys: dict) -> None:
    for key, kind in keys.items():
        assert key in mapping, key
        value = mapping[key]
        assert isinstance(value, kind) or (kind is float and isinstance(value, int) and not isinstance(value, bool)), \
            (key, value)


@pytest.mark.parametrize("spec", sorted(SPECS.glob("*.yaml")), ids=lambda p: p.name)
def test_size_json_has_the_stable_keys(capsys, tmp_path, spec):
    doc = size_json(capsys, tmp_path, spec)
    assert doc["banks"]
    for bank in doc["banks"]:
        has_keys(bank, BANK_KEYS)
        for step in bank["steps"]:
            has_keys(step, STEP_KEYS)
            for unit in step["units"]:
                has_keys(unit, {"id": str, "qty": int})
        has_keys(bank["main"], MAIN_KEYS)
        has_keys(bank["discharge"], DISCHARGE_KEYS)
        for point in bank["resonance"]:
            has_keys(point, {"kvar": float, "harmonic_order": float})
        for check in bank["checks"]:
            has_keys(check, {"name": str, "ok": bool, "detail": str})


def test_size_json_values_of_the_worked_example(capsys, tmp_path):
    (bank,) = size_json(capsys, tmp_path, SPECS / "line3_300kvar.yaml")["banks"]
    # Hand-worked in test_published_bank: 360.84 A, 600 A fuse (NEC 240.6(A)), 2 × 350 kcmil (NEC Table 310.16,
    # 2023, 75 °C, × 0.82 at 45 °C: 508.4 A), 600 A switch, 1151.29 µF per leg, R ≤ 19,980 Ω.
    assert bank["name"] == "Line 3"
    assert (bank["required_kvar"], bank["delivered_kvar"], bank["rated_kvar"]) == (300, 300, 300)
    assert (bank["supply_voltage_v"], bank["frequency_hz"], bank["capacitor_voltage_v"]) == (480, 60, 480)
    assert bank["rated_current_a"] == pytest.approx(360.84, abs=0.005)
    assert bank["capacitance_uf_per_phase"] == pytest.approx(1151.29, abs=0.005)
    assert bank["steps"][0]["units"] == [{"id": "CU-480-60-50.0", "qty": 6} | {
        k: v for k, v in bank["steps"][0]["units"][0].items() if k not in ("id", "qty")}]
    assert bank["main"]["device_rating_a"] == 600
    assert bank["main"]["conductor"] == "2 × 350 kcmil"
    assert bank["main"]["conductor_ampacity_a"] == pytest.approx(508.4, abs=1e-9)
    assert bank["main"]["disconnect_rating_a"] == 600
    assert bank["discharge"]["max_resistance_ohm"] == pytest.approx(19980, abs=1)
    assert (bank["discharge"]["limit_v"], bank["discharge"]["time_s"], bank["discharge"]["ok"]) == (50, 60, True)
    assert bank["resonance"] == []


def test_size_json_resonance_entries(capsys, tmp_path):
    doc = size_json(capsys, tmp_path, SPECS / "iec_detuned_400v.yaml")
    (bank,) = doc["banks"]
    assert len(bank["resonance"]) == len(bank["steps"]) == 4
    # Detuned steps (p = 7 %): the source X_s resonates with the branch X_L − X_C where X_s·h = X_C/h − p·X_C·h,
    # so h = √(X_C / (X_s + p·X_C)) with X_s = V²/S_sc, X_C = V²/Q_C (textbook derivation; trade-facts:
    # h_r = 1/√(p + Q_C/S_sc)). S_sc = 1000 kVA × 100 / 6 %; Q_C = the capacitors' kvar at the supply voltage =
    # delivered × (1 − p) (trade-facts: detuned output Q = Q_C/(1 − p)).
    p = 0.07
    s_sc_kva = 1000 * 100 / 6
    for point in bank["resonance"]:
        q_c = point["kvar"] * (1 - p)
        x_s, x_c = 1 / s_sc_kva, 1 / q_c  # per unit of V², in 1/kvar
        assert point["harmonic_order"] == pytest.approx((x_c / (x_s + p * x_c)) ** 0.5, rel=1e-9)
        assert point["harmonic_order"] < 1 / p**0.5  # always below the tuning order


def test_size_writes_results_json(capsys, tmp_path):
    code, out, _ = cli(capsys, "size", SPECS / "line3_300kvar.yaml", "--out", tmp_path / "docs")
    assert code == 0
    written = json.loads((tmp_path / "docs" / "results.json").read_text(encoding="utf-8"))
    assert written["banks"][0]["name"] == "Line 3"
    assert f"  {tmp_path / 'docs' / 'results.json'}" in out.splitlines()


def test_user_tables_beside_the_spec(capsys, tmp_path):
    (bank,) = size_json(capsys, tmp_path, SPECS / "user_tables.yaml")["banks"]
    # The folder holds only 30 kvar units: 100 kvar needs four of them (120 kvar).
    assert [(u["id"], u["qty"]) for u in bank["steps"][0]["units"]] == [("CU-480-60-30.0", 4)]
    assert bank["delivered_kvar"] == 120


# --- size: the terminal summary -----------------------------------------------------------------------------


def test_size_terminal_summary(capsys, tmp_path):
    code, out, err = cli(capsys, "size", SPECS / "line3_300kvar.yaml", "--out", tmp_path / "docs")
    assert (code, err) == (0, "")
    lines = out.splitlines()
    assert lines[0] == "bankbuild 0.1.0 — Tandrellow Mill (invented site)"
    assert lines[1].startswith("rule basis: NEC 2023 (rules-nec-2023.yaml, SHA-256 ")
    for expected in [
        "== Line 3 ==",
        "  supply        480 V, 60 Hz, delta",
        "  need          300.0 kvar (given)",
        "  delivered     300.0 kvar at the supply; units rated 480 V, nameplate 300.0 kvar",
        "  currents      rated 360.8 A, operating 360.8 A; 1,151.3 µF per leg (delta)",
        "     1    300.0 kvar  6 × 50 kvar                  fuse 600 A, 2 × 350 kcmil (508.4 A)",
        "  main          fuse 600 A, disconnect 600 A, conductor 2 × 350 kcmil (508.4 A) on 360.8 A",
        "  discharge     step 1: R ≤ 19,980 Ω per leg (11.5 W) for ≤ 50 V in 60 s; built-in 60 s: meets the rule",
    ]:
        assert expected in lines
    assert any(line.startswith("CAUTION: Capacitors hold a charge") for line in lines)
    assert any("no statement of compliance" in line for line in lines if line.startswith("CAUTION: "))


def test_size_terminal_flags(capsys, tmp_path):
    code, out, _ = cli(capsys, "size", SPECS / "two_banks.yaml", "--out", tmp_path / "docs")
    assert code == 0
    assert "== Boiler house ==" in out and "== Workshop ==" in out
    assert "  need          84.3 kvar: 200.0 kW from PF 0.800 to 0.950 (corrected PF 0.958)" in out
    assert "    FLAG  Resonance: " in out  # 90 kvar on 750 kVA, 5.5%: h = √(75000 / (5.5 × 90)) = 12.31, near 13


@pytest.mark.parametrize("threads", [None, "4"])
def test_demo(capsys, tmp_path, monkeypatch, threads):
    monkeypatch.setenv("OPENBLAS_NUM_THREADS", threads or "")  # recorded, so that the test leaves it as it was
    if threads is None:
        monkeypatch.delenv("OPENBLAS_NUM_THREADS")
    code, out, err = cli(capsys, "demo", "--out", tmp_path / "demo", "--json")
    assert (code, err) == (0, "")
    doc = json.loads(out)
    assert len(doc["banks"]) == 4  # the demo plant: detuned automatic, fixed, automatic, motor terminals
    assert (tmp_path / "demo" / "results.json").is_file()
    # numpy (imported by the workbook library) starts no spinning thread pool for the documents; a user's own
    # setting stands
    assert os.environ["OPENBLAS_NUM_THREADS"] == (threads or "1")


# --- init ------------------------------------------------------------------------------------------------------


def test_init_writes_a_spec_that_size_accepts(capsys, tmp_path):
    path = tmp_path / "new.yaml"
    code, out, _ = cli(capsys, "init", path)
    assert code == 0
    assert out.startswith(f"wrote {path}: edit it, then run 'bankbuild size {path}'\n")
    schema = json.loads((tmp_path / "bankbuild.schema.json").read_text(encoding="utf-8"))
    assert path.read_text(encoding="utf-8").splitlines()[0] == "# yaml-language-server: $schema=bankbuild.schema.json"
    assert schema["title"] == "bankbuild spec" and "banks" in schema["properties"]
    code, out, err = cli(capsys, "size", path, "--out", tmp_path / "docs", "--json")
    assert (code, err) == (0, "")
    assert json.loads(out)["banks"][0]["name"] == "Main bank"


def test_init_keeps_an_existing_file(capsys, tmp_path):
    path = tmp_path / "keep.yaml"
    path.write_text("mine\n", encoding="utf-8")
    code, _, err = cli(capsys, "init", path)
    assert code == 2
    assert err == f"bankbuild: error: {path}: already exists; use --force to replace it\n"
    assert path.read_text(encoding="utf-8") == "mine\n"
    assert cli(capsys, "init", path, "--force")[0] == 0
    assert path.read_text(encoding="utf-8").splitlines()[1].startswith("# bankbuild spec")


# --- kvar -------------------------------------------------------------------------------------------------------


def test_kvar_text(capsys):
    code, out, err = cli(capsys, "kvar", "--kw", "250", "--pf-present", "0.72", "--pf-target", "0.96")
    assert (code, err) == (0, "")
    # Figures checked against electricpy in test_quick (168,046.5 var; 644.90 / 1934.71 µF; 202.13 A).
    assert out == (
        "load            250.0 kW, 241.0 kvar, PF 0.720\n"
        "correction      168.0 kvar to reach PF 0.960 (multiplier tan φ1 − tan φ2 = 0.672)\n"
        "at 480 V, 60 Hz: 644.9 µF per leg in delta, 1,934.7 µF per leg in wye\n"
        "currents        capacitor 202.1 A; line 417.6 A before, 313.2 A after\n"
        "assumed         480 V (no --voltage-v given), 60 Hz (no --frequency-hz given)\n")


def test_kvar_json(capsys):
    code, out, _ = cli(capsys, "kvar", "--kw", "8", "--pf-present", "0.8", "--pf-target", "1", "--voltage-v", "208",
                       "--json")
    assert code == 0
    doc = json.loads(out)
    # Source: trade-facts, checkable example: 208 V, 10 kVA, PF 0.8 -> 1.0: delta 122.6 µF, wye 367.9 µF,
    # line current 27.76 -> 22.21 A.
    assert doc["required_kvar"] == pytest.approx(6.0)
    assert doc["capacitance_uf_per_leg_delta"] == pytest.approx(122.6, abs=0.05)
    assert doc["capacitance_uf_per_leg_wye"] == pytest.approx(367.9, abs=0.05)
    assert doc["line_current_before_a"] == pytest.approx(27.76, abs=0.005)
    assert doc["line_current_after_a"] == pytest.approx(22.21, abs=0.005)
    assert (doc["voltage_v"], doc["frequency_hz"], doc["source"]) == (208, 60, "options")


def test_kvar_loads_file(capsys, write_yaml):
    path = write_yaml("pf_target: 0.95\nloads:\n  - {input_kw: 100, pf: 0.8}\n", "loads.yaml")
    code, out, _ = cli(capsys, "kvar", "--loads", path, "--json")
    assert code == 0
    # 100 kW at PF 0.8 -> 0.95: 100 × (0.75 − 0.32868) = 42.13 kvar (textbook formula).
    assert json.loads(out)["required_kvar"] == pytest.approx(42.13, abs=0.005)


# --- catalog -----------------------------------------------------------------------------------------------------


def test_catalog_check_builtin(capsys):
    code, out, err = cli(capsys, "catalog", "check")
    assert (code, err) == (0, "")
    names = [line.split()[1] for line in out.splitlines()]
    assert {"capacitor_units.csv", "device_ratings.csv", "conductors_nec.csv", "conductors_iec.csv"} <= set(names)
    assert all(line.startswith("ok  ") and " sha256 " in line for line in out.splitlines())


def test_catalog_copy_then_check_then_size(capsys, tmp_path):
    folder = tmp_path / "tables"
    code, out, _ = cli(capsys, "catalog", "copy", folder)
    assert code == 0
    assert f"wrote {folder / 'capacitor_units.csv'}" in out.splitlines()
    assert (folder / "device_ratings.csv").is_file()
    code, out, _ = cli(capsys, "catalog", "check", folder)
    assert code == 0 and "ok  capacitor_units.csv" in out
    doc = size_json(capsys, tmp_path, SPECS / "line3_300kvar.yaml", "--catalogs", folder)
    assert doc["banks"][0]["main"]["device_rating_a"] == 600


def test_catalog_check_bad_table(capsys):
    code, out, err = cli(capsys, "catalog", "check", BAD_CATALOGS / "duplicate_row")
    assert code == 2
    assert err.startswith("bankbuild: error: ") and err.count("\n") == 1
    assert "duplicate_row" in err


# --- bad input: exit 2, one line, no traceback, nothing written ------------------------------------------------


def bad_input_cases(tmp_path: Path) -> list[tuple[list, str]]:
    bad_field = tmp_path / "bad_field.yaml"
    bad_field.write_text((SPECS / "line3_300kvar.yaml").read_text(encoding="utf-8").replace(
        "voltage_v: 480", "voltage_v: '480'"), encoding="utf-8")
    bad_yaml = tmp_path / "bad_yaml.yaml"
    bad_yaml.write_text("banks: [\n", encoding="utf-8")
    outside = tmp_path / "sub" / "outside.yaml"
    outside.parent.mkdir()
    outside.write_text((SPECS / "line3_300kvar.yaml").read_text(encoding="utf-8") + "catalogs: ../tables\n",
                       encoding="utf-8")
    a_file = tmp_path / "a_file"
    a_file.write_text("x", encoding="utf-8")
    out = tmp_path / "out"
    return [
        (["size", tmp_path / "missing.yaml", "--out", out], "missing.yaml: no such file"),
        (["size", bad_field, "--out", out], "bad_field.yaml: banks[0] (Line 3).supply.voltage_v: input should be"),
        (["size", bad_yaml, "--out", out], "bad_yaml.yaml: line 2, column 1: not valid YAML"),
        (["size", outside, "--out", out], "outside.yaml: catalogs: '../tables' points outside the spec's folder"),
        (["size", SPECS / "line3_300kvar.yaml", "--out", out, "--catalogs", BAD_CATALOGS / "duplicate_row"],
         "duplicate_row"),
        (["size", SPECS / "line3_300kvar.yaml", "--out", out, "--catalogs", tmp_path / "nowhere"], "nowhere"),
        (["size", SPECS / "line3_300kvar.yaml", "--out", a_file], "a_file: --out: "),
        (["size", SPECS / "line3_300kvar.yaml", "--out", out, "--bogus"], "--bogus: unknown option"),
        (["size", "--out", out], "SPEC: required argument is missing"),
        (["kvar", "--kw", "abc", "--pf-present", "0.8", "--pf-target", "0.9"], "--kw: must be a number (got 'abc')"),
        (["kvar", "--kw", "100", "--pf-present", "0.9", "--pf-target", "0.8"], "--pf-target: 0.8 is below"),
        (["kvar", "--kw", "100", "--pf-present", "0.8", "--pf-target", "0.9", "--voltage-v", "-1"],
         "--voltage-v: must be in"),
        (["kvar", "--kw", "100", "--pf-present", "0.8", "--pf-target", "0.9", "--loads", tmp_path / "none.yaml"],
         "--loads: give either --loads or --kw"),
        (["frobnicate"], "frobnicate: unknown command; the commands are catalog, demo"),
        (["sise", "x.yaml"], "sise: unknown command; did you mean size?"),
        (["kvar", "--kw", "250kW"], "--kw: must be a number (got '250kW': write 250; the unit is in the option name)"),
        (["kvar", "--pf-present", "78%"], "--pf-present: must be a number (got '78%': write 0.78; a power factor is a "
                                          "fraction of one)"),
        (["rerate", SPECS / "line3_300kvar.yaml", "--voltage-v", "0.4kV"], "write 400 (volts)"),
        (["size", "--jsn"], "--jsn: unknown option; did you mean --json?"),
        (["schema", "nothing"], "WHAT: must be spec, results or rerate"),
        (["catalog", "check", tmp_path / "nowhere"], "nowhere"),
    ]


def test_bad_input_in_process(capsys, tmp_path):
    for argv, fragment in bad_input_cases(tmp_path):
        code, out, err = cli(capsys, *argv)
        assert code == 2, (argv, err)
        assert out == "", argv
        assert err.startswith("bankbuild: error: "), argv
        assert err.count("\n") == 1 and err.endswith("\n"), (argv, err)
        assert fragment in err, (argv, err)
        assert "Traceback" not in err
        assert not (tmp_path / "out").exists(), argv  # nothing written, not even the folder


@pytest.mark.skipif(SCRIPT is None, reason="the bankbuild console script is not installed")
def test_bad_input_through_the_console_script(tmp_path):
    for argv, fragment in bad_input_cases(tmp_path)[:3]:
        proc = subprocess.run([SCRIPT, *map(str, argv)], capture_output=True, text=True, timeout=120)
        assert proc.returncode == 2, proc.stderr
        assert proc.stdout == ""
        assert proc.stderr.count("\n") == 1 and fragment in proc.stderr
        assert "Traceback" not in proc.stderr
    assert not (tmp_path / "out").exists()


@pytest.mark.skipif(SCRIPT is None, reason="the bankbuild console script is not installed")
def test_size_json_through_the_console_script(tmp_path):
    proc = subprocess.run([SCRIPT, "size", str(SPECS / "line3_300kvar.yaml"), "--json", "--out", str(tmp_path)],
                          capture_output=True, text=True, timeout=120)
    assert (proc.returncode, proc.stderr) == (0, "")
    assert json.loads(proc.stdout)["banks"][0]["main"]["device_rating_a"] == 600


# --- help --------------------------------------------------------------------------------------------------------


def command_paths(group=None, prefix=()):
    group = group or typer.main.get_command(app)
    for name, command in sorted(group.commands.items()):
        yield (*prefix, name)
        if hasattr(command, "commands"):
            yield from command_paths(command, (*prefix, name))


@pytest.mark.parametrize("path", [(), *command_paths()], ids=lambda p: " ".join(p) or "bankbuild")
def test_help_of_every_command(capsys, path):
    code, out, err = cli(capsys, *path, "--help")
    assert (code, err) == (0, "")
    assert out.startswith(f"Usage: {' '.join(('bankbuild', *path))} ")


def test_no_arguments_shows_help(capsys):
    code, out, _ = cli(capsys)
    assert code == 0
    assert out.startswith("Usage: bankbuild ")
    for name in ("size", "demo", "init", "kvar", "catalog"):
        assert f"  {name} " in out


@pytest.mark.skipif(SCRIPT is None, reason="the bankbuild console script is not installed")
def test_help_through_the_console_script():
    proc = subprocess.run([SCRIPT, "--help"], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0
    assert proc.stdout.startswith("Usage: bankbuild ")
