"""The spec models (bankbuild.spec.model): every need and load form, and how strictly a spec is refused.

Each refusal is checked through :func:`bankbuild.spec.read.validate_spec`, so the assertion is on the one
line the user reads (file, field, problem), not on pydantic's internals.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pydantic import ValidationError

from bankbuild.errors import SpecError
from bankbuild.spec.model import Bank, Load, Need, Protection, Spec, StepPlan
from bankbuild.spec.read import validate_spec


def refusal(data: dict) -> str:
    """The one-line message a spec mapping is refused with."""
    with pytest.raises(SpecError) as info:
        validate_spec(data, "spec.yaml")
    line = info.value.line()
    assert "\n" not in line
    return line


# --- the need: three forms ------------------------------------------------------------------------------------


def test_need_kvar_form(make_bank):
    need = Bank.model_validate(make_bank()).need
    assert need.form == "kvar"
    assert need.kvar == 300


def test_need_power_form(make_bank):
    need = Bank.model_validate(make_bank(need={"kw": 800, "pf_present": 0.78, "pf_target": 0.95})).need
    assert need.form == "power"
    assert (need.kw, need.pf_present, need.pf_target) == (800, 0.78, 0.95)


def test_need_loads_form(make_bank):
    need = Bank.model_validate(make_bank(need={"pf_target": 0.95, "loads": [{"kva": 60, "pf": 0.9}]})).need
    assert need.form == "loads"
    assert need.loads[0].form == "kva"


def test_need_target_equal_to_present_is_accepted_by_the_model():
    # Equal factors are a valid statement of a load (the pipeline then says there is nothing to correct).
    assert Need.model_validate({"kw": 100, "pf_present": 0.9, "pf_target": 0.9}).form == "power"


# --- loads: five forms and a quantity ---------------------------------------------------------------------------

LOAD_FORMS = [
    ({"output_kw": 15, "efficiency": 0.92, "pf": 0.8}, "motor_kw"),
    ({"output_hp": 100, "efficiency": 0.94, "pf": 0.85}, "motor_hp"),
    ({"input_kw": 40, "pf": 0.9}, "input_kw"),
    ({"kva": 60, "pf": 0.95}, "kva"),
    ({"line_current_a": 52, "pf": 0.84}, "current"),
]


@pytest.mark.parametrize(("keys", "form"), LOAD_FORMS, ids=[f for _, f in LOAD_FORMS])
def test_each_load_form(keys, form):
    load = Load.model_validate({"name": "Pumps", "quantity": 3, **keys})
    assert load.form == form
    assert load.quantity == 3


def test_load_quantity_defaults_to_one():
    assert Load.model_validate({"kva": 10, "pf": 0.8}).quantity == 1


@pytest.mark.parametrize(("load", "field", "problem"), [
    ({"output_kw": 15, "pf": 0.8}, "need.loads[0]", "is missing efficiency"),
    ({"output_kw": 15, "efficiency": 0.9, "pf": 0.8, "kva": 20}, "need.loads[0]",
     "gives two forms at once (output_kw, kva)"),
    ({"kva": 10, "pf": 0.8, "efficiency": 0.9}, "need.loads[0]", "does not take efficiency"),
    ({"pf": 0.8}, "need.loads[0]", "needs one of these forms"),
    ({"kva": 10, "pf": 0.8, "quantity": 0}, "need.loads[0].quantity", "greater than or equal to 1"),
    ({"kva": 10, "pf": 0.8, "quantity": 2.5}, "need.loads[0].quantity", "valid integer"),
    ({"kva": 10, "pf": 1.1}, "need.loads[0].pf", "less than or equal to 1"),
    ({"kva": 10, "pf": 0}, "need.loads[0].pf", "greater than 0"),
    ({"output_hp": 10, "efficiency": 1.2, "pf": 0.8}, "need.loads[0].efficiency", "less than or equal to 1"),
    ({"kva": 10, "pf": 0.8, "colour": "red"}, "need.loads[0].colour", "unknown key"),
    ({"line_current_a": -52, "pf": 0.84}, "need.loads[0].line_current_a", "greater than 0"),
])
def test_bad_load_names_the_load(make_bank, make_spec, load, field, problem):
    line = refusal(make_spec(make_bank(need={"pf_target": 0.95, "loads": [load]})))
    assert line.startswith(f"spec.yaml: banks[0] (Line 3).{field}: ")
    assert problem in line


def test_empty_load_list_is_refused(make_bank, make_spec):
    line = refusal(make_spec(make_bank(need={"pf_target": 0.95, "loads": []})))
    assert line.startswith("spec.yaml: banks[0] (Line 3).need.loads: ")
    assert "at least 1 item" in line


# --- the need: refusals -----------------------------------------------------------------------------------------


@pytest.mark.parametrize(("need", "field", "problem"), [
    ({"kvar": 100, "kw": 100, "pf_present": 0.8, "pf_target": 0.95}, "need",
     "gives two forms at once (kvar, kw)"),
    ({"kvar": 100, "pf_target": 0.95, "loads": [{"kva": 5, "pf": 0.8}]}, "need", "two forms at once (kvar, loads)"),
    ({}, "need", "needs one of these forms: {kvar}; {kw, pf_present, pf_target}; {loads, pf_target}"),
    ({"kw": 100, "pf_target": 0.95}, "need", "is missing pf_present"),
    ({"kvar": 100, "pf_target": 0.95}, "need", "does not take pf_target"),
    ({"kw": 100, "pf_present": 0.9, "pf_target": 0.85}, "need",
     "pf_target 0.85 is below pf_present 0.9: a capacitor bank raises the power factor"),
    ({"kvar": 0}, "need.kvar", "greater than 0 (got 0)"),
    ({"kvar": -5}, "need.kvar", "greater than 0 (got -5)"),
    ({"kw": 0, "pf_present": 0.8, "pf_target": 0.9}, "need.kw", "greater than 0"),
    ({"kw": 100, "pf_present": 1.2, "pf_target": 0.95}, "need.pf_present", "less than or equal to 1 (got 1.2)"),
    ({"kw": 100, "pf_present": 0, "pf_target": 0.95}, "need.pf_present", "greater than 0 (got 0)"),
    ({"kw": 100, "pf_present": -0.8, "pf_target": 0.95}, "need.pf_present", "greater than 0"),
    ({"kw": 100, "pf_present": 0.8, "pf_target": 1.01}, "need.pf_target", "less than or equal to 1"),
    ({"kvar": "300"}, "need.kvar", "valid number (got '300': a number in quotes is text; write it without quotes)"),
    ({"kvar": float("nan")}, "need.kvar", "must be a finite number (not NaN or infinity)"),
    ({"kvar": float("inf")}, "need.kvar", "must be a finite number (not NaN or infinity)"),
    ({"kw": float("-inf"), "pf_present": 0.8, "pf_target": 0.9}, "need.kw", "finite number"),
    ({"kvar": 300, "kvars": 1}, "need.kvars", "unknown key"),
])
def test_bad_need(make_bank, make_spec, need, field, problem):
    line = refusal(make_spec(make_bank(need=need)))
    assert line.startswith(f"spec.yaml: banks[0] (Line 3).{field}: ")
    assert problem in line


@settings(max_examples=150, deadline=None)
@given(st.floats(0.01, 1.0), st.floats(0.01, 1.0))
def test_target_below_present_is_always_refused(a, b):
    low, high = sorted((a, b))
    if low == high:
        return
    with pytest.raises(ValidationError, match="below pf_present"):
        Need.model_validate({"kw": 10, "pf_present": high, "pf_target": low})
    assert Need.model_validate({"kw": 10, "pf_present": low, "pf_target": high}).form == "power"


# --- supply, connection, steps, protection ----------------------------------------------------------------------


@pytest.mark.parametrize(("value", "expected"), [
    ("star", "wye"), ("Star", "wye"), ("wye", "wye"), ("Y", "wye"), ("delta", "delta"), ("Delta", "delta"),
])
def test_star_is_wye(make_bank, value, expected):
    assert Bank.model_validate(make_bank(connection=value)).connection == expected


def test_connection_defaults_to_delta(make_bank):
    assert Bank.model_validate(make_bank()).connection == "delta"


@pytest.mark.parametrize(("supply", "field", "problem"), [
    ({"voltage_v": "480", "frequency_hz": 60}, "supply.voltage_v",
     "valid number (got '480': a number in quotes is text"),
    ({"voltage_v": True, "frequency_hz": 60}, "supply.voltage_v", "valid number (got True)"),
    ({"voltage_v": float("nan"), "frequency_hz": 60}, "supply.voltage_v", "finite number"),
    ({"voltage_v": 0, "frequency_hz": 60}, "supply.voltage_v", "greater than or equal to 100"),
    ({"voltage_v": -480, "frequency_hz": 60}, "supply.voltage_v", "greater than or equal to 100"),
    ({"voltage_v": 13800, "frequency_hz": 60}, "supply.voltage_v", "less than or equal to 1000"),
    ({"voltage_v": 480, "frequency_hz": 400}, "supply.frequency_hz", "less than or equal to 65"),
    ({"voltage_v": 480}, "supply.frequency_hz", "required key is missing"),
    ({"voltage_v": 480, "frequency_hz": 60, "voltag_v": 480}, "supply.voltag_v", "unknown key"),
    ({"voltage_v": 480, "frequency_hz": 60, "transformer_kva": 1500}, "supply",
     "give transformer_kva and transformer_z_pct together, or neither"),
    ({"voltage_v": 480, "frequency_hz": 60, "transformer_z_pct": 5.75}, "supply", "together, or neither"),
    ({"voltage_v": 480, "frequency_hz": 60, "source_sc_mva": 50}, "supply", "source_sc_mva needs transformer_kva"),
    ({"voltage_v": 480, "frequency_hz": 60, "transformer_kva": 1500, "transformer_z_pct": 0},
     "supply.transformer_z_pct", "greater than 0"),
])
def test_bad_supply(make_bank, make_spec, supply, field, problem):
    line = refusal(make_spec(make_bank(supply=supply)))
    assert line.startswith(f"spec.yaml: banks[0] (Line 3).{field}: ")
    assert problem in line


def test_supply_with_transformer(make_bank):
    supply = Bank.model_validate(make_bank(supply={"voltage_v": 480, "frequency_hz": 60, "transformer_kva": 1500,
                                                   "transformer_z_pct": 5.75})).supply
    assert supply.has_transformer
    assert not Bank.model_validate(make_bank()).supply.has_transformer


@pytest.mark.parametrize(("changes", "field", "problem"), [
    ({"connection": "zigzag"}, "connection", "'delta' or 'wye' (got 'zigzag')"),
    ({"steps": [50, -5]}, "steps[1]", "greater than 0 (got -5)"),
    ({"steps": [50, 0]}, "steps[1]", "greater than 0 (got 0)"),
    ({"steps": [50, "50"]}, "steps[1]", "valid number (got '50': a number in quotes"),
    ({"steps": []}, "steps", "at least 1 item"),
    ({"steps": [10] * 33}, "steps", "at most 32 items"),
    ({"steps": {"count": 3, "pattern": "1:x"}}, "steps.pattern", "must be 'equal' or weights like 1:2:2"),
    ({"steps": {"count": 3, "pattern": "1:0"}}, "steps.pattern", "two or more positive whole weights"),
    ({"steps": {"count": 3, "pattern": "2"}}, "steps.pattern", "two or more positive whole weights"),
    ({"steps": {"count": 0}}, "steps.count", "greater than or equal to 1"),
    ({"steps": {"count": 3, "patern": "1:2"}}, "steps.patern", "unknown key"),
    ({"steps": {"pattern": "1:2"}}, "steps.count", "required key is missing"),
    ({"steps": "four"}, "steps", "a list of kvar per step"),
    ({"detuning_pct": 0}, "detuning_pct", "greater than 0"),
    ({"detuning_pct": 25}, "detuning_pct", "less than 20"),
    ({"detuning_pct": "7%"}, "detuning_pct", "must be a number (got '7%': write 7; the unit is in the key name)"),
    ({"capacitor_voltage_v": "525"}, "capacitor_voltage_v", "valid number"),
    ({"voltage_margin_pct": -5}, "voltage_margin_pct", "greater than or equal to 0"),
    ({"protection": {"device": "relay"}}, "protection.device", "'fuse' or 'breaker' (got 'relay')"),
    ({"protection": {"conductor_temp_c": 80}}, "protection.conductor_temp_c", "60, 75 or 90 (got 80)"),
    ({"protection": {"conductor_factor": 0.9}}, "protection.conductor_factor", "greater than or equal to 1"),
    ({"protection": {"device_factor": "1.65"}}, "protection.device_factor", "valid number"),
    ({"protection": {"max_parallel_sets": 0}}, "protection.max_parallel_sets", "greater than or equal to 1"),
    ({"discharge": {"limit_v": 50}}, "discharge.time_s", "required key is missing"),
    ({"discharge": {"limit_v": 50, "time_s": 0}}, "discharge.time_s", "greater than 0"),
    ({"supply": None}, "supply", "required key is missing"),
    ({"need": None}, "need", "required key is missing"),
    ({"colour": "grey"}, "colour", "unknown key (check the spelling"),
])
def test_bad_bank_field(make_bank, make_spec, changes, field, problem):
    line = refusal(make_spec(make_bank(**changes)))
    assert line.startswith(f"spec.yaml: banks[0] (Line 3).{field}: ")
    assert problem in line


def test_step_list_and_plan(make_bank):
    assert Bank.model_validate(make_bank(steps=[50, 50, 100])).steps == [50, 50, 100]
    plan = Bank.model_validate(make_bank(steps={"count": 5, "pattern": "1:2:2"})).steps
    assert isinstance(plan, StepPlan)
    assert Bank.model_validate(make_bank()).steps is None


@pytest.mark.parametrize(("count", "pattern", "weights"), [
    (4, "equal", [1, 1, 1, 1]),
    (5, "1:2:2", [1, 2, 2, 2, 2]),  # the last weight repeats to fill the count
    (4, "1:2:4", [1, 2, 4, 4]),
    (2, "1:2:4", [1, 2]),  # a longer pattern is cut to the count
    (1, "1:2", [1]),
])
def test_step_plan_weights(count, pattern, weights):
    assert StepPlan(count=count, pattern=pattern).weights() == weights


@pytest.mark.parametrize(("device", "given", "expected"), [
    ("fuse", None, 1.65),  # common practice (no single source): 165% for time-delay fuses
    ("breaker", None, 1.35),  # common practice (no single source)
    ("fuse", 1.5, 1.5),
    ("breaker", 2.0, 2.0),
])
def test_device_factor_defaults(catalogs, device, given, expected):
    from bankbuild.design.sizing import circuit_context

    spec = Spec.model_validate({"banks": [{"name": "B", "supply": {"voltage_v": 480, "frequency_hz": 60},
                                           "need": {"kvar": 1}, "protection": {
                                               "device": device, **({"device_factor": given} if given else {})}}]})
    assert circuit_context(spec, spec.banks[0], catalogs, "", "").device_factor == expected


def test_protection_defaults(catalogs):
    from bankbuild.design.sizing import circuit_context

    prot = Protection()
    assert (prot.conductor_factor, prot.disconnect_factor) == (None, None)  # left to the rule basis
    assert prot.conductor_temp_c == 75
    spec = Spec.model_validate({"banks": [{"name": "B", "supply": {"voltage_v": 480, "frequency_hz": 60},
                                           "need": {"kvar": 1}}]})
    ctx = circuit_context(spec, spec.banks[0], catalogs, "", "")
    # Source: NEC 460.8(A) (conductor 135%) and NEC 460.8(C) (disconnect 135%), the NEC 2023 rule basis.
    assert (ctx.conductor_factor, ctx.disconnect_factor) == (1.35, 1.35)
    # The enclosure air the conductors sit in by default: 35 °C ambient + 10 K rise (assembly defaults).
    assert ctx.ambient_c == 45.0


@pytest.mark.parametrize(("pct", "p"), [(None, 0.0), (7, 0.07), (5.67, 0.0567), (14, 0.14)])
def test_tuning_factor_is_a_fraction(make_bank, pct, p):
    bank = Bank.model_validate(make_bank(**({"detuning_pct": pct} if pct else {})))
    assert math.isclose(bank.tuning_factor, p)


# --- the whole spec --------------------------------------------------------------------------------------------


def test_duplicate_bank_names_name_the_second_bank(make_bank, make_spec):
    line = refusal(make_spec(make_bank(), make_bank(need={"kvar": 50})))
    assert line == ("spec.yaml: banks[1] (Line 3).name: banks[0] has the same name 'Line 3': "
                    "give each bank its own name")


@pytest.mark.parametrize("name", ["", "   "])
def test_bank_name_must_have_text(make_bank, make_spec, name):
    line = refusal(make_spec(make_bank(name=name)))
    assert line.startswith("spec.yaml: banks[0].name: ")
    assert "needs a name" in line


@pytest.mark.parametrize(("top", "field", "problem"), [
    ({"rules": "cec"}, "rules", "must be nec, iec, csa or a rule-basis file ending in .yaml (got 'cec')"),
    ({"nec_edition": 2017}, "nec_edition", "2023 or 2020"),
    ({"bnaks": []}, "bnaks", "unknown key"),
    ({"project": {"nme": "x"}}, "project.nme", "unknown key"),
    ({"banks": []}, "banks", "at least 1 item"),
    ({"banks": ["Line 3"]}, "banks[0]", "valid dictionary"),
])
def test_bad_top_level(make_spec, top, field, problem):
    line = refusal(make_spec(**top) if "banks" not in top else {**top})
    assert line.startswith(f"spec.yaml: {field}: ")
    assert problem in line


def test_missing_banks():
    assert refusal({"rules": "nec"}) == "spec.yaml: banks: required key is missing"


def test_several_problems_are_listed_at_once(make_bank, make_spec):
    with pytest.raises(SpecError) as info:
        validate_spec(make_spec(make_bank(supply={"voltage_v": "480", "frequency_hz": "60"})), "spec.yaml")
    lines = [e.line() for e in (info.value, *info.value.also)]
    assert [line.split(": ")[1] for line in lines] == ["banks[0] (Line 3).supply.voltage_v",
                                                       "banks[0] (Line 3).supply.frequency_hz"]
    assert str(info.value).endswith("(and 1 more problem: see .also)")


def test_text_fields_take_numbers_and_dates_as_written(make_spec):
    import datetime

    spec = Spec.model_validate(make_spec(project={"name": "Mill", "revision": 2,
                                                  "date": datetime.date(2026, 12, 1)}))
    assert spec.project.revision == "2"
    assert spec.project.date == "2026-12-01"


def test_spec_defaults(make_spec):
    spec = Spec.model_validate(make_spec())
    assert (spec.rules, spec.nec_edition, spec.catalogs) == ("nec", 2023, None)


def test_spec_is_frozen(make_spec):
    spec = Spec.model_validate(make_spec())
    with pytest.raises(ValidationError):
        spec.rules = "iec"
