"""Messages for the usual mistakes: each one line that says what to write, and every problem of a file at once."""

from __future__ import annotations

from pathlib import Path

import pytest

import bankbuild
from bankbuild.cli.app import run
from bankbuild.spec.read import MAX_PROBLEMS, read_spec

BANK = """\
banks:
  - name: Line 3
    supply: {{voltage_v: {v}, frequency_hz: 60}}
    need: {{{need}}}
"""


def refused(tmp_path: Path, text: str) -> bankbuild.SpecError:
    path = tmp_path / "spec.yaml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(bankbuild.SpecError) as info:
        read_spec(path)
    return info.value


def problems(error: bankbuild.SpecError) -> list[str]:
    return [e.line().split(": ", 1)[1] for e in (error, *error.also)]


def test_unit_written_in_a_number_field(tmp_path):
    error = refused(tmp_path, BANK.format(v="480V", need="kvar: 300"))
    assert problems(error) == ["banks[0] (Line 3).supply.voltage_v: must be a number (got '480V': write 480; the "
                               "unit is in the key name) (line 3)"]


@pytest.mark.parametrize(("need", "field", "hint"), [
    ("kw: 800, pf_present: 78, pf_target: 0.95", "need.pf_present", "a power factor is a fraction of one; 0.78?"),
    ("loads: [{output_kw: 30, efficiency: 93, pf: 0.85}], pf_target: 0.95", "need.loads[0].efficiency",
     "an efficiency is a fraction of one; 0.93?"),
])
def test_fraction_written_in_percent(tmp_path, need, field, hint):
    (line,) = problems(refused(tmp_path, BANK.format(v=480, need=need)))
    assert line.startswith(f"banks[0] (Line 3).{field}: input should be less than or equal to 1 (got ")
    assert hint in line


def test_percent_written_as_a_fraction_is_flagged_and_still_sized():
    spec = {"banks": [{"name": "L", "supply": {"voltage_v": 480, "frequency_hz": 60, "transformer_kva": 1500,
                                               "transformer_z_pct": 0.0575},
                       "need": {"kvar": 300}, "detuning_pct": 0.07}]}
    bank = bankbuild.size(spec).banks[0]
    flags = [c.detail for c in bank.checks if c.name == "Percentage written as a fraction?"]
    assert [f.split(":")[0] for f in flags] == [
        "supply.transformer_z_pct is 0.0575 %; a distribution transformer's impedance is usually 4–8 %",
        "detuning_pct is 0.07 %; a detuning tuning factor is usually 5.67–14 %"]
    assert "did you mean 5.75?" in flags[0] and "did you mean 7?" in flags[1]
    assert bank.delivered_kvar >= 300  # sized as written
    assert bank.transformer_z_pct == 0.0575
    spec["banks"][0]["supply"]["transformer_z_pct"] = 5.75
    spec["banks"][0]["detuning_pct"] = 7
    assert not [c for c in bankbuild.size(spec).banks[0].checks if c.name == "Percentage written as a fraction?"]


def test_unquoted_step_pattern_is_not_a_base_60_number(tmp_path):
    # YAML 1.1 reads 1:2:2 as 1·3600 + 2·60 + 2 = 3722; the spec reader keeps it as written.
    quoted = BANK.format(v=480, need="kvar: 300") + "    steps: {count: 5, pattern: '1:2:2'}\n"
    bare = quoted.replace("'1:2:2'", "1:2:2")
    sized = [bankbuild.size(text).banks[0] for text in (quoted, bare)]
    assert sized[0].step_plan.pattern == sized[1].step_plan.pattern == "1:2:2:2:2"
    assert [s.kvar for s in sized[0].steps] == [s.kvar for s in sized[1].steps]


def test_tab_indentation(tmp_path):
    error = refused(tmp_path, "banks:\n  - name: A\n\tsupply: {voltage_v: 480, frequency_hz: 60}\n")
    assert error.line() == (f"{tmp_path / 'spec.yaml'}: line 3: not valid YAML: a tab character indents this line; "
                            "YAML indents with spaces only (set the editor to insert spaces)")


def test_banks_given_as_a_mapping(tmp_path):
    error = refused(tmp_path, "banks:\n  name: A\n  supply: {voltage_v: 480, frequency_hz: 60}\n")
    assert problems(error) == ["banks: input should be a valid list (got a mapping): start each entry with '- ' "
                               "(as in '- name: Line 3'), even when there is only one (line 1)"]


@pytest.mark.parametrize(("text", "field", "suggestion"), [
    ("bank: []\n", "bank", "banks"),
    ("rule: nec\nbanks: []\n", "rule", "rules"),
    (BANK.format(v=480, need="kvar: 300") + "    conection: delta\n", "banks[0] (Line 3).conection", "connection"),
    (BANK.format(v=480, need="kvar: 300") + "    protection: {devise: fuse}\n", "banks[0] (Line 3).protection.devise",
     "device"),
    (BANK.format(v=480, need="kvar: 300") + "    assembly: {ambient: 40}\n", "banks[0] (Line 3).assembly.ambient",
     "ambient_c"),
    (BANK.format(v=480, need="loads: [{output_kw: 30, efficency: 0.9, pf: 0.85}], pf_target: 0.95"),
     "banks[0] (Line 3).need.loads[0].efficency", "efficiency"),
    (BANK.format(v=480, need="kvar: 300") + "    light_load: {kw: 100, kvars: 20}\n",
     "banks[0] (Line 3).light_load.kvars", "kvar"),
    ("project: {nmae: X}\n" + BANK.format(v=480, need="kvar: 300"), "project.nmae", "name"),
])
def test_did_you_mean_for_every_model(tmp_path, text, field, suggestion):
    first = problems(refused(tmp_path, text))[0]
    assert first.startswith(f"{field}: unknown key; did you mean '{suggestion}'? (line ")


@pytest.mark.parametrize("rules", ["NEC", "Nec", "IEC"])
def test_choices_in_any_case(rules):
    spec = {"rules": rules, "banks": [{"name": "L", "supply": {"voltage_v": 400, "frequency_hz": 50},
                                       "need": {"kvar": 100}, "protection": {"device": "Fuse", "insulation": "pvc"}}]}
    assert bankbuild.size(spec).provenance.rules == rules.lower()


def test_every_problem_listed_with_its_line(tmp_path, capsys):
    text = ("banks:\n"
            "  - name: Line 3\n"
            "    supply: {voltage_v: 480V, frequncy_hz: 60}\n"
            "    need: {kw: 800, pf_present: 78, pf_target: 0.95}\n"
            "    conection: delta\n")
    path = tmp_path / "spec.yaml"
    path.write_text(text, encoding="utf-8")
    assert run(["size", str(path), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err.splitlines()
    assert [line.rsplit("(line ", 1)[1] for line in err] == ["3)", "3)", "4)", "5)"]
    assert all(line.startswith(f"bankbuild: error: {path}: banks[0] (Line 3).") for line in err)
    assert not (tmp_path / "out").exists()


def test_problems_are_bounded(tmp_path):
    banks = "".join(f"  - name: B{i}\n    supply: {{voltage_v: 1, frequency_hz: 60}}\n    need: {{kvar: 5}}\n"
                    for i in range(MAX_PROBLEMS + 4))
    error = refused(tmp_path, "banks:\n" + banks)
    lines = problems(error)
    assert len(lines) == MAX_PROBLEMS + 1
    assert lines[-1] == "and 4 more problems"
