"""Rule bases as data: the shipped files load, carry the published values, and a bad file is one clear line."""

from __future__ import annotations

import hashlib
from pathlib import Path

import pytest

from bankbuild.errors import CatalogError
from bankbuild.spec.rulebasis import BUILTIN, builtin_rule_basis, builtin_rules_dir, read_rule_basis


@pytest.mark.parametrize("key", sorted(BUILTIN))
def test_every_builtin_rule_basis_loads_and_is_hashed(key):
    path = builtin_rules_dir() / BUILTIN[key]
    basis = read_rule_basis(path, builtin=True)
    assert basis.rules.id == key
    assert basis.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert basis.label.count(basis.rules.code) == 1  # "NEC 2023", never "NEC: NEC 2023"


def test_nec_2023_next_size_up_and_small_conductors():
    coord = builtin_rule_basis("nec", 2023).rules.coordination
    assert coord.method == "next_size_up"
    assert coord.next_size_up_max_a == 800  # NEC 240.4(B)(3)
    assert coord.small_conductor_max_a == {"14 AWG": 15, "12 AWG": 20, "10 AWG": 30}  # NEC 240.4(D), copper


def test_nec_correction_tables():
    corr = builtin_rule_basis("nec", 2023).rules.corrections
    col75 = dict(corr.ambient["75"])
    # NEC Table 310.15(B)(1), 75 °C column, 30 °C base (from memory)
    assert (col75[35], col75[40], col75[45], col75[50], col75[55]) == (0.94, 0.88, 0.82, 0.75, 0.67)
    group = dict(corr.grouping["any"])
    # NEC Table 310.15(C)(1): 4–6 conductors 80 %, 7–9 70 %, 10–20 50 % (from memory)
    assert (group[3], group[6], group[9], group[20]) == (1.0, 0.80, 0.70, 0.50)
    assert corr.grouping_counts == "conductors"


def test_nec_terminations():
    term = builtin_rule_basis("nec", 2023).rules.terminations
    # NEC 110.14(C)(1)(a)/(b) (from memory: verify the exact wording)
    assert (term.default_c, term.small_circuit_max_a, term.small_circuit_c, term.large_circuit_c) == (75, 100, 60, 75)
    assert term.small_circuit_largest_size == "1 AWG"


def test_nec_2020_uses_its_own_table_edition():
    assert builtin_rule_basis("nec", 2020).rules.tables.conductor_edition == 2020
    assert builtin_rule_basis("nec", 2023).rules.tables.conductor_edition == 2023


def test_iec_voltage_limits():
    limits = builtin_rule_basis("iec").rules.voltage_limits
    # IEC 60831-1 maximum permissible voltages (from memory): 1.00 U_N continuous, 1.10 U_N 8 h in 24 h,
    # 1.15 U_N 30 min in 24 h, 1.20 U_N 5 min, 1.30 U_N 1 min
    assert limits.continuous_pu == 1.00
    assert [(s.pu, s.duration) for s in limits.short_time][:2] == [(1.10, "8 h in every 24 h"),
                                                                   (1.15, "30 min in every 24 h")]
    assert limits.current_pu == 1.30  # IEC 60831-1: 1.3 I_N


def test_iec_corrections_and_conventional_current():
    rules = builtin_rule_basis("iec").rules
    # IEC 60364-5-52 Table B.52.14 (from memory): PVC 45 °C 0.79; XLPE 45 °C 0.87
    assert dict(rules.corrections.ambient["PVC"])[45] == 0.79
    assert dict(rules.corrections.ambient["XLPE"])[45] == 0.87
    # IEC 60364-5-52 Table B.52.17 (from memory): single layer on a wall (method C) 3 circuits 0.79;
    # bunched (B1) 3 circuits 0.70
    assert dict(rules.corrections.grouping["C"])[3] == 0.79
    assert dict(rules.corrections.grouping["B1"])[3] == 0.70
    # IEC 60364-4-43 433.1: I_2 ≤ 1.45 I_z; IEC 60269-1 gG I_2 = 1.6 I_n from 16 A (from memory)
    assert rules.coordination.i2_ratio == 1.45
    assert rules.coordination.fuse_i2_factor(125) == 1.6
    assert rules.coordination.fuse_i2_factor(10) == 1.9
    assert rules.terminations is None


def test_iec_conductor_rule_text_names_the_factor_it_uses():
    mult = builtin_rule_basis("iec").rules.multipliers.conductor
    # IEC 60831-1: 1.3 I_N maximum current, × 1.1 capacitance tolerance = 1.43 I_N
    assert mult.factor == 1.43
    assert "1.43" in mult.clause


def test_csa_section_26_values():
    rules = builtin_rule_basis("csa").rules
    assert rules.multipliers.device_max.factor == 2.5  # CSA C22.1 26-210: ≤ 250 % of rated current
    assert (rules.discharge.limit_v, rules.discharge.time_s) == (50, 60)  # CSA C22.1 26-222
    text = (builtin_rules_dir() / BUILTIN["csa"]).read_text(encoding="utf-8")
    assert text.count("from memory") >= 10  # every recalled value is marked


def _write(tmp_path: Path, text: str) -> Path:
    path = tmp_path / "rules-site.yaml"
    path.write_text(text, encoding="utf-8")
    return path


def _nec_text() -> str:
    return (builtin_rules_dir() / BUILTIN["nec-2023"]).read_text(encoding="utf-8")


@pytest.mark.parametrize(("old", "new", "field", "problem"), [
    ("  next_size_up_max_a: 800", "  next_size_up_max_a: 800\n  next_size_up_max: 800", "coordination.next_size_up_max",
     "unknown key"),
    ("conductor: {factor: 1.35,", "conductor: {factor: 0.5,", "multipliers.conductor.factor", "greater than or equal"),
    ("[40, 0.88], [45, 0.82]", "[40, 0.80], [45, 0.82]", "corrections.ambient", "must not rise"),
    ("  limit_v: 50", "  limit_v: fifty", "discharge.limit_v", "valid number"),
    ("  method: next_size_up", "  method: next_size_up_always", "coordination.method", "next_size_up"),
    ("  next_size_up_max_a: 800\n", "", "coordination", "needs next_size_up_max_a"),
    ("  continuous_pu: 1.10", "  continuous_pu: 1.30", "voltage_limits", "must exceed the continuous limit"),
])
def test_a_bad_rule_basis_is_one_line_naming_file_field_problem(tmp_path, old, new, field, problem):
    text = _nec_text()
    assert old in text
    path = _write(tmp_path, text.replace(old, new, 1))
    with pytest.raises(CatalogError) as err:
        read_rule_basis(path)
    line = str(err.value)
    assert "\n" not in line
    assert err.value.where == str(path)
    assert err.value.field.startswith(field)
    assert problem in err.value.problem


def test_a_rule_basis_that_is_not_yaml_names_its_line(tmp_path):
    path = _write(tmp_path, "format: 1\nid: [site\n")
    with pytest.raises(CatalogError) as err:
        read_rule_basis(path)
    assert "line" in err.value.field and "YAML" in err.value.problem


def test_a_missing_rule_basis_file(tmp_path):
    with pytest.raises(CatalogError, match="not found"):
        read_rule_basis(tmp_path / "rules-none.yaml")
