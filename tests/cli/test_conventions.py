"""Command-line conventions: --version, python -m, shell completion, --strict, schema, rerate's documents."""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

import bankbuild
from bankbuild.cli.app import run

SPECS = Path(__file__).parents[1] / "data" / "specs"
SCRIPT = shutil.which("bankbuild", path=str(Path(sys.executable).parent))


def cli(capsys, *argv):
    code = run([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_version(capsys):
    assert cli(capsys, "--version") == (0, f"bankbuild {bankbuild.__version__}\n", "")


def test_python_m_bankbuild():
    proc = subprocess.run([sys.executable, "-m", "bankbuild", "--version"], capture_output=True, text=True,
                          timeout=120)
    assert (proc.returncode, proc.stdout) == (0, f"bankbuild {bankbuild.__version__}\n")
    proc = subprocess.run([sys.executable, "-m", "bankbuild", "size"], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2 and proc.stderr.startswith("bankbuild: error: SPEC: required argument is missing")


@pytest.mark.skipif(SCRIPT is None, reason="the bankbuild console script is not installed")
@pytest.mark.parametrize(("words", "expected"), [("bankbuild ca", "catalog"), ("bankbuild size --js", "--json"),
                                                 ("bankbuild catalog co", "copy")])
def test_shell_completion(words, expected):
    env = {**os.environ, "_BANKBUILD_COMPLETE": "complete_bash", "COMP_WORDS": words,
           "COMP_CWORD": str(len(words.split()) - 1)}
    proc = subprocess.run([SCRIPT], capture_output=True, text=True, env=env, timeout=120)
    assert proc.returncode == 0
    assert expected in proc.stdout.split()


def test_completion_script_is_offered(capsys):
    code, out, _ = cli(capsys, "--help")
    assert code == 0 and "--install-completion" in out and "--show-completion" in out


@pytest.mark.parametrize(("spec", "code"), [("line3_300kvar.yaml", 0), ("two_banks.yaml", 1)])
def test_strict_exits_1_on_a_flagged_check(capsys, tmp_path, spec, code):
    got, out, err = cli(capsys, "size", SPECS / spec, "--json", "--strict")
    doc = json.loads(out)  # the output is complete either way
    flagged = [c for b in doc["banks"] for c in b["checks"] if not c["ok"]]
    assert got == code == (1 if flagged else 0)
    if flagged:
        assert err.startswith(f"bankbuild: {len(flagged)} checks flagged (--strict): ")
    assert cli(capsys, "size", SPECS / spec, "--json")[0] == 0  # without --strict a flag is not a failure


def test_strict_leaves_bad_input_at_2(capsys, tmp_path):
    assert cli(capsys, "size", tmp_path / "missing.yaml", "--strict")[0] == 2


def test_results_json_starts_with_the_version(capsys):
    code, out, _ = cli(capsys, "size", SPECS / "line3_300kvar.yaml", "--json")
    assert code == 0
    assert next(iter(json.loads(out))) == "version"
    assert json.loads(out)["version"] == bankbuild.__version__
    code, out, _ = cli(capsys, "rerate", SPECS / "line3_300kvar.yaml", "--voltage-v", 415, "--json")
    assert json.loads(out)["version"] == bankbuild.__version__


@pytest.mark.parametrize(("what", "title", "top"), [("spec", "bankbuild spec", {"banks", "rules", "catalogs"}),
                                                     ("results", "bankbuild size results", {"version", "banks"}),
                                                     ("rerate", "bankbuild rerate results", {"version", "banks"})])
def test_schema_command(capsys, what, title, top):
    code, out, err = cli(capsys, "schema", what)
    assert (code, err) == (0, "")
    schema = json.loads(out)
    assert schema["title"] == title
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    assert top <= set(schema["properties"])


def test_spec_schema_covers_every_key_of_every_model():
    """Each model of the spec is in the schema with exactly its keys, and closed to others (typos underline)."""
    from pydantic import BaseModel

    import bankbuild.spec.model as model

    defs = bankbuild.spec_schema()["$defs"]
    models = [m for m in vars(model).values() if isinstance(m, type) and issubclass(m, BaseModel)
              and m.__module__ == model.__name__ and not m.__name__.startswith("_") and m.__name__ != "Spec"]
    for m in models:
        assert set(defs[m.__name__]["properties"]) == set(m.model_fields), m.__name__
        assert defs[m.__name__]["additionalProperties"] is False


def test_results_schema_matches_the_stable_keys():
    bank = bankbuild.results_schema()["$defs"]["BankResult"]
    stable = {"name", "required_kvar", "delivered_kvar", "supply_voltage_v", "frequency_hz", "capacitor_voltage_v",
              "rated_kvar", "rated_current_a", "line_current_a", "capacitance_uf_per_phase", "steps", "main",
              "discharge", "resonance", "checks"}
    assert stable <= set(bank["properties"]) and stable <= set(bank["required"])


def test_rerate_writes_its_documents_by_default(capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, _ = cli(capsys, "rerate", SPECS / "line3_300kvar.yaml", "--voltage-v", 415)
    assert code == 0
    assert sorted(p.name for p in (tmp_path / "bankbuild-out").iterdir()) == [
        "rerate-bom-difference.csv", "rerate.json", "rerate.pdf", "rerate.txt"]
    assert out.rstrip().endswith("assumed: each bank keeps its own supply frequency (no --frequency-hz given)")
    (tmp_path / "bankbuild-out" / "rerate.json").unlink()
    assert cli(capsys, "rerate", SPECS / "line3_300kvar.yaml", "--voltage-v", 415, "--json")[0] == 0
    assert not (tmp_path / "bankbuild-out" / "rerate.json").exists()  # --json alone writes nothing, as size
