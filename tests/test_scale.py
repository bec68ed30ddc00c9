"""Plant scale: a project of 500 banks sizes completely; ``size --json`` alone writes no documents.

Timing is not tested here (a loaded machine would make it flaky): ``make bench`` measures it side by side.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

from bankbuild.cli.app import run

sys.path.insert(0, str(Path(__file__).parents[1] / "benchmarks"))
from plant import plant_spec_text, write_plant_spec  # noqa: E402


def test_json_without_out_writes_nothing(tmp_path: Path, monkeypatch, capsys) -> None:
    monkeypatch.chdir(tmp_path)
    spec = write_plant_spec(tmp_path, 3)
    assert run(["size", str(spec), "--json"]) == 0
    assert len(json.loads(capsys.readouterr().out)["banks"]) == 3
    assert sorted(p.name for p in tmp_path.iterdir()) == [spec.name]  # no bankbuild-out/


def test_json_with_out_writes_the_documents(tmp_path: Path, capsys) -> None:
    spec = write_plant_spec(tmp_path, 2)
    assert run(["size", str(spec), "--json", "--out", str(tmp_path / "docs")]) == 0
    assert json.loads(capsys.readouterr().out)["banks"]
    assert (tmp_path / "docs" / "results.json").exists()


def test_size_without_json_writes_to_the_default_folder(tmp_path: Path, monkeypatch, capsys) -> None:
    monkeypatch.chdir(tmp_path)
    spec = write_plant_spec(tmp_path, 1)
    assert run(["size", str(spec)]) == 0
    assert (tmp_path / "bankbuild-out" / "results.json").exists()
    assert "bankbuild-out" in capsys.readouterr().out


def test_five_hundred_banks_in_one_project(tmp_path: Path, capsys) -> None:
    spec = write_plant_spec(tmp_path, 500)
    assert run(["size", str(spec), "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert [b["name"] for b in doc["banks"]] == [f"Bank {i:04d} line {i % 40 + 1}" for i in range(500)]
    for bank in doc["banks"]:
        short = bank["delivered_kvar"] < bank["required_kvar"] - 1e-6  # explicit steps may fall short: flagged
        assert not short or any(not c["ok"] and "need" in c["name"].lower() for c in bank["checks"])
        assert bank["steps"] and bank["main"]["device_rating_a"] > 0


def test_plant_generator_covers_the_spec_forms() -> None:
    text = plant_spec_text(12)
    for key in ("need: {kvar:", "pf_present", "loads:", "steps: {count:", "steps: [", "detuning_pct: 7",
                "transformer_kva", "device: fuse", "device: breaker"):
        assert key in text, key


def test_long_lists_are_cut_to_fit_a_pdf_page(tmp_path: Path, capsys) -> None:
    """A plant's bank list and a part used in every bank must not make one table row taller than a page
    (reportlab cannot split a row): the title block counts the banks past a dozen, and the notes of a merged
    line are cut with a pointer to the CSV, which keeps them whole."""
    from pypdf import PdfReader

    from bankbuild.reports.pdf_bom import NOTES_MAX, cell_notes

    notes = "; ".join(f"Bank {i:04d}: {i % 7 + 1}" for i in range(300))
    cut = cell_notes(notes)
    assert len(cut) <= NOTES_MAX + 60 and cut.endswith("… (in full in bill-of-materials.csv)")
    assert notes.startswith(cut.rsplit("; …", 1)[0])

    spec = write_plant_spec(tmp_path, 30)
    assert run(["size", str(spec), "--out", str(tmp_path / "docs")]) == 0
    text = " ".join((PdfReader(tmp_path / "docs" / "bill-of-materials.pdf").pages[0].extract_text() or "").split())
    assert "and 18 more (30 banks" in text
    csv_text = (tmp_path / "docs" / "bill-of-materials.csv").read_text(encoding="utf-8")
    assert "Bank 0029" in csv_text
