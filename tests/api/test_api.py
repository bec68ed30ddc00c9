"""The Python API: ``import bankbuild``, then size, re-rate and quick figures from paths, YAML text and dicts.

The API and the command line share their code, so the tests check that both give the same numbers and the same
errors; the README's example is run as written.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest
import yaml

import bankbuild
from bankbuild.cli.app import run

ROOT = Path(__file__).resolve().parents[2]
SPECS = ROOT / "tests" / "data" / "specs"
LINE3 = SPECS / "line3_300kvar.yaml"


def readme_example() -> str:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    block = text.split("<!-- api-example:start -->")[1].split("<!-- api-example:end -->")[0]
    return block.split("```python")[1].split("```")[0]


def cli_json(capsys, *argv) -> dict:
    code = run([str(a) for a in argv])
    out, err = capsys.readouterr()
    assert (code, err) == (0, "")
    return json.loads(out)


def test_readme_example_runs(capsys):
    exec(compile(readme_example(), "README.md", "exec"), {})  # noqa: S102 - our own README's code
    out = capsys.readouterr().out
    assert "Line 3: 378.9 kvar needed" in out  # 800 kW × (tan(acos 0.78) − tan(acos 0.95)) = 378.9 (regression value)
    assert "write 480; the unit is in the key name" in out


@pytest.mark.parametrize("form", ["path", "str path", "yaml text", "dict"])
def test_size_from_every_form_matches_the_cli(capsys, tmp_path, form):
    text = LINE3.read_text(encoding="utf-8")
    spec = {"path": LINE3, "str path": str(LINE3), "yaml text": text, "dict": yaml.safe_load(text)}[form]
    result = bankbuild.size(spec)
    doc = cli_json(capsys, "size", LINE3, "--json", "--out", tmp_path / "out")
    api_doc = json.loads(result.model_dump_json())
    for key in ("banks", "bom", "cautions", "version"):
        assert api_doc[key] == doc[key], key
    bank = result.banks[0]
    # Worked in tests/design/test_published_bank.py: 300 kvar at 480 V -> 360.84 A, 600 A fuse (NEC 240.6(A)).
    assert (bank.delivered_kvar, bank.main.device_rating_a) == (300.0, 600.0)
    assert bank.rated_current_a == pytest.approx(360.84, abs=0.005)


def test_spec_text_and_dict_are_named_in_errors():
    with pytest.raises(bankbuild.SpecError) as info:
        bankbuild.size("banks:\n  - name: L\n    supply: {voltage_v: 48, frequency_hz: 60}\n    need: {kvar: 50}\n")
    assert (info.value.where, info.value.field) == ("<spec text>", "banks[0] (L).supply.voltage_v")
    assert "greater than or equal to 100" in info.value.problem
    with pytest.raises(bankbuild.SpecError) as info:
        bankbuild.size({"banks": [{"name": "L", "supply": {"voltage_v": 480}, "need": {"kvar": 50}}]})
    assert (info.value.where, info.value.field) == ("<spec dict>", "banks[0] (L).supply.frequency_hz")
    assert isinstance(info.value, bankbuild.BankbuildError)
    with pytest.raises(bankbuild.SpecError, match="no such file"):
        bankbuild.size(str(SPECS / "nothing-here.yaml"))
    with pytest.raises(bankbuild.SpecError, match="not int"):
        bankbuild.size(42)


def test_catalog_errors_and_option_errors_are_the_clis():
    with pytest.raises(bankbuild.CatalogError, match="catalog folder not found"):
        bankbuild.size(LINE3, catalogs_dir=ROOT / "no-such-tables")
    with pytest.raises(bankbuild.OptionError) as info:
        bankbuild.rerate(LINE3, voltage_v=50)
    assert (info.value.field, info.value.problem) == ("voltage_v", "must be between 100 and 1000 V (got 50)")
    with pytest.raises(bankbuild.OptionError) as info:
        bankbuild.rerate(LINE3, voltage_v=480, transformer_kva=1000)
    assert info.value.field == "transformer_z_pct"


def test_frames_of_a_bank_and_of_the_project():
    project = bankbuild.size(SPECS / "two_banks.yaml")
    bank = project.banks[0]
    steps = bank.to_frame("steps")
    assert list(steps["step"]) == [s.index for s in bank.steps]
    assert list(steps["kvar"]) == [s.kvar for s in bank.steps]
    checks = bank.to_frame("checks")
    assert list(checks["ok"]) == [c.ok for c in bank.checks]
    protection = bank.to_frame("protection")
    assert len(protection) == sum(len(s.sizing) for s in bank.steps) + len(bank.main.sizing)
    assert set(protection["circuit"]) == {f"Step {s.index}" for s in bank.steps} | {"Main"}
    assert list(bank.to_frame("bom")["description"]) == [line.description for line in bank.bom]
    every = project.to_frame("checks")
    assert list(every["bank"].unique()) == [b.name for b in project.banks]
    assert len(every) == sum(len(b.checks) for b in project.banks)
    assert len(project.to_frame("bom")) == len(project.bom)
    with pytest.raises(bankbuild.OptionError, match="must be one of steps, checks, protection, bom"):
        bank.to_frame("step")


def test_rerate_matches_the_cli(capsys, tmp_path):
    result = bankbuild.rerate(LINE3, voltage_v=415, frequency_hz=50)
    doc = cli_json(capsys, "rerate", LINE3, "--voltage-v", 415, "--frequency-hz", 50, "--json")
    assert json.loads(result.model_dump_json())["banks"] == doc["banks"]
    # 300 kvar of 480 V 60 Hz units at 415 V 50 Hz: 300 × (415/480)² × 50/60 = 186.87 kvar (kvar ∝ V²·f).
    assert result.banks[0].delivered_kvar == pytest.approx(300 * (415 / 480) ** 2 * 50 / 60, rel=1e-9)


def test_kvar_names_the_defaults_it_used():
    figures = bankbuild.kvar(250, 0.72, 0.96)
    assert figures["assumed"] == ["voltage_v", "frequency_hz"]
    assert (figures["voltage_v"], figures["frequency_hz"]) == (480.0, 60.0)
    # electricpy.pfcorrection(250e3/0.72, 0.72, 0.96, VLL=480) -> Qc 168,046.5 var (oracles.md).
    assert figures["required_kvar"] == pytest.approx(168.0465, abs=1e-3)
    assert bankbuild.kvar(250, 0.72, 0.96, voltage_v=415, frequency_hz=50)["assumed"] == []


def test_tables_and_demo():
    assert [t.file_name for t in bankbuild.check_tables()][0] == "capacitor_units.csv"
    assert [b.name for b in bankbuild.demo().banks] == [b.name for b in bankbuild.size(
        bankbuild.api.demo_spec_path()).banks]


def test_copy_tables_force(tmp_path, capsys):
    written = bankbuild.copy_tables(tmp_path / "t")
    written[0].write_text("edited", encoding="utf-8")
    with pytest.raises(bankbuild.CatalogError, match="use --force"):
        bankbuild.copy_tables(tmp_path / "t")
    assert written[0].read_text(encoding="utf-8") == "edited"
    assert run(["catalog", "copy", str(tmp_path / "t"), "--force"]) == 0
    assert written[0].read_bytes() == (bankbuild.api.Path(bankbuild.check_tables()[0].path)).read_bytes()


def test_import_is_light_and_pandas_comes_with_the_first_frame():
    code = ("import sys, bankbuild\n"
            "heavy = lambda: sorted(m for m in ('pandas', 'reportlab', 'openpyxl', 'pydantic') if m in sys.modules)\n"
            "print(heavy())\n"
            "p = bankbuild.size({'banks': [{'name': 'L', 'supply': {'voltage_v': 480, 'frequency_hz': 60},"
            " 'need': {'kvar': 50}}]})\n"
            "print(heavy())\n"
            "p.banks[0].to_frame()\n"
            "print(heavy())\n")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120, check=True)
    assert proc.stdout.splitlines() == ["[]", "['pydantic']", "['pandas', 'pydantic']"]
