"""Reading a spec file (bankbuild.spec.read): YAML safety, and one-line errors that name the file and the field."""

from __future__ import annotations

import hashlib
from pathlib import Path

import pytest

from bankbuild.errors import SpecError
from bankbuild.spec.read import field_path, read_spec

SPECS = Path(__file__).parents[1] / "data" / "specs"

GOOD = """\
banks:
  - name: Line 3
    supply: {voltage_v: 480, frequency_hz: 60}
    need: {kvar: 300}
"""


@pytest.fixture
def in_tmp(tmp_path, monkeypatch):
    """Work in tmp_path so that a relative file name shows in messages exactly as given."""
    monkeypatch.chdir(tmp_path)
    return tmp_path


def refused(text: str | bytes, name: str = "spec.yaml") -> str:
    path = Path(name)
    if isinstance(text, bytes):
        path.write_bytes(text)
    else:
        path.write_text(text, encoding="utf-8")
    with pytest.raises(SpecError) as info:
        read_spec(name)
    line = info.value.line()
    assert "\n" not in line and "Traceback" not in line
    return line


def test_read_good_spec(in_tmp):
    Path("spec.yaml").write_text(GOOD, encoding="utf-8")
    spec_file = read_spec("spec.yaml")
    assert spec_file.path == "spec.yaml"
    assert spec_file.sha256 == hashlib.sha256(GOOD.encode()).hexdigest()
    assert spec_file.base_dir == in_tmp.resolve()
    assert spec_file.spec.banks[0].name == "Line 3"


@pytest.mark.parametrize("path", sorted(SPECS.glob("*.yaml")), ids=lambda p: p.name)
def test_example_specs_validate(path):
    assert read_spec(path).spec.banks


def test_the_documented_error_line(in_tmp):
    # The form of the line is the one the product design promises: file, field (with the bank's name), problem.
    line = refused(GOOD.replace("voltage_v: 480", "voltage_v: '480'"))
    assert line.startswith("spec.yaml: banks[0] (Line 3).supply.voltage_v: input should be a valid number (got '480'")


def test_misspelt_key_is_named(in_tmp):
    line = refused(GOOD.replace("frequency_hz", "frequncy_hz"))
    assert line.startswith("spec.yaml: banks[0] (Line 3).supply.frequncy_hz: unknown key")


def test_yaml_nan_and_inf_are_refused(in_tmp):
    assert refused(GOOD.replace("kvar: 300", "kvar: .nan")) == \
        "spec.yaml: banks[0] (Line 3).need.kvar: must be a finite number (not NaN or infinity) (line 4)"
    assert refused(GOOD.replace("kvar: 300", "kvar: .inf")) == \
        "spec.yaml: banks[0] (Line 3).need.kvar: must be a finite number (not NaN or infinity) (line 4)"


def test_exponent_without_point_is_text_in_yaml(in_tmp):
    # YAML 1.1 (PyYAML) reads 1e3 as text; the message says how to write it.
    line = refused(GOOD.replace("kvar: 300", "kvar: 3e2"))
    assert line.startswith("spec.yaml: banks[0] (Line 3).need.kvar: input should be a valid number (got '3e2'")
    assert "1.0e+3" in line


def test_exponent_with_point_is_a_number(in_tmp):
    Path("spec.yaml").write_text(GOOD.replace("kvar: 300", "kvar: 3.0e+2"), encoding="utf-8")
    assert read_spec("spec.yaml").spec.banks[0].need.kvar == 300.0


def test_star_in_a_file(in_tmp):
    Path("spec.yaml").write_text(GOOD + "    connection: star\n", encoding="utf-8")
    assert read_spec("spec.yaml").spec.banks[0].connection == "wye"


def test_date_stays_text(in_tmp):
    Path("spec.yaml").write_text("project: {date: 2026-12-01, revision: 3}\n" + GOOD, encoding="utf-8")
    project = read_spec("spec.yaml").spec.project
    assert (project.date, project.revision) == ("2026-12-01", "3")


def test_duplicate_bank_names_in_a_file(in_tmp):
    text = GOOD + "  - name: Line 3\n    supply: {voltage_v: 480, frequency_hz: 60}\n    need: {kvar: 50}\n"
    assert refused(text) == ("spec.yaml: banks[1] (Line 3).name: banks[0] has the same name 'Line 3': "
                             "give each bank its own name (line 5)")


@pytest.mark.parametrize(("text", "expected"), [
    (b"", "spec.yaml: the file is empty: a spec needs at least 'banks'"),
    (b"# only a comment\n", "spec.yaml: the file is empty: a spec needs at least 'banks'"),
    (b"- 1\n- 2\n", "spec.yaml: the top level must be a mapping of keys, not list"),
    (b"just text\n", "spec.yaml: the top level must be a mapping of keys, not str"),
    (b"\x00\x01binary", "spec.yaml: is a binary file, not YAML text"),
])
def test_unreadable_content(in_tmp, text, expected):
    assert refused(text) == expected


def test_not_utf8(in_tmp):
    line = refused(GOOD.encode() + b"# caf\xe9\n")
    assert line.startswith("spec.yaml: ")
    assert "not UTF-8" in line


def test_yaml_syntax_error_names_line_and_column(in_tmp):
    line = refused("banks:\n  - name: [Line 3\n")
    assert line.startswith("spec.yaml: line ")
    assert "column" in line and "not valid YAML" in line


def test_aliases_are_refused(in_tmp):
    line = refused("x: &a {kvar: 1}\n" + GOOD.replace("need: {kvar: 300}", "need: *a"))
    assert line.startswith("spec.yaml: line 5: ")
    assert "aliases" in line


def test_key_given_twice_is_refused(in_tmp):
    # YAML keeps the last of two equal keys silently; a spec refuses them so a typo cannot hide a value.
    line = refused(GOOD.replace("need: {kvar: 300}", "need: {kvar: 300, kvar: 30}"))
    assert line.startswith("spec.yaml: line 4")
    assert "twice" in line


def test_missing_file_and_folder(in_tmp):
    with pytest.raises(SpecError, match=r"^nothere\.yaml: no such file$"):
        read_spec("nothere.yaml")
    Path("folder.yaml").mkdir()
    with pytest.raises(SpecError, match=r"^folder\.yaml: is a folder, not a spec file$"):
        read_spec("folder.yaml")


def test_field_path_labels_banks_by_name():
    data = {"banks": [{"name": "A"}, {"name": "Press shop", "need": {"loads": [{}, {}]}}]}
    assert field_path(("banks", 1, "need", "loads", 1, "pf"), data) == "banks[1] (Press shop).need.loads[1].pf"
    assert field_path(("banks", 0, "steps", "List", 2), data) == "banks[0] (A).steps[2]"
    assert field_path((), data) == "(top level)"
    assert field_path(("banks", 5, "name"), data) == "banks[5].name"


def test_misspelt_required_key_suggests_the_right_one(in_tmp):
    line = refused(GOOD.replace("frequency_hz", "frequncy_hz"))
    # the key's 'missing' twin is not listed: the misspelling is the one mistake
    assert line == "spec.yaml: banks[0] (Line 3).supply.frequncy_hz: unknown key; did you mean 'frequency_hz'? (line 3)"
