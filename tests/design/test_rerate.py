"""Re-rating (design.rerate and ``bankbuild rerate``): an existing bank at another supply voltage and frequency.

Check values come from the re-rating examples of trade-facts, pandapower (a shunt solved at the new bus voltage)
as an outside engine for the V² effect, electricpy for the capacitance behind the frequency effect, the detuned
step formula, and IEEE 18 / IEC 60831-1 limits. A property test moves banks to a new supply and back."""

from __future__ import annotations

import csv
import io
import json
import math
import subprocess
import sys

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bankbuild.cli.app import run
from bankbuild.design.rerate import bom_counter, parts, rerate_bank, rerate_project
from bankbuild.design.sizing import size_bank as pipeline_size_bank
from bankbuild.spec.model import Spec

RATED_60 = [("CU-480-60-50.0", 50.0), ("CU-480-60-30.0", 30.0), ("CU-480-60-12.5", 12.5), ("CU-600-60-25.0", 25.0)]


def units(*steps):
    return [[{"id": i, "qty": q} for i, q in step] for step in steps]


def bank(**changes) -> dict:
    data = {"name": "Press shop bank", "supply": {"voltage_v": 480, "frequency_hz": 60}, "need": {"kvar": 30}}
    return data | changes


def spec(*banks, **top) -> Spec:
    return Spec.model_validate({**top, "banks": list(banks) or [bank()]})


@pytest.fixture(scope="module")
def rerate(catalogs):
    def go(data: Spec, voltage_v: float, frequency_hz: float | None = None, transformer=None):
        return rerate_project(data, catalogs, voltage_v, frequency_hz, transformer)

    return go


def cli(capsys, *argv):
    code = run([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


# --- published re-rating examples -----------------------------------------------------------------------------


@pytest.mark.parametrize(("voltage_v", "kvar"), [(440.0, 25.2), (415.0, 22.4), (500.0, 32.5)])
def test_30_kvar_480_v_unit_at_other_voltages(rerate, voltage_v, kvar):
    # Source: trade-facts, "a 30 kvar, 480 V unit delivers 25.2 kvar at 440 V, 22.4 at 415 V, 32.5 at 500 V".
    result = rerate(spec(bank(units=units([("CU-480-60-30.0", 1)]))), voltage_v).banks[0]
    assert result.delivered_kvar == pytest.approx(kvar, abs=0.06)  # published to 0.1 kvar (32.55 -> 32.5)
    assert result.original_kvar == pytest.approx(30.0)
    # the linear habit (trade-facts: "practitioners often scale linearly with voltage; that is wrong")
    assert result.linear_scaling_kvar == pytest.approx(30.0 * voltage_v / 480.0)
    assert abs(result.linear_scaling_kvar - result.delivered_kvar) > 1.0


def test_440_v_100_kvar_on_380_v(rerate):
    # Source: trade-facts, "a 440 V, 100 kvar unit on 380 V delivers 74.6 kvar" (two 50 kvar 440 V units).
    data = spec(bank(supply={"voltage_v": 440, "frequency_hz": 50}, need={"kvar": 100},
                     units=units([("CU-440-50-50.0", 2)])))
    assert round(rerate(data, 380.0).banks[0].delivered_kvar, 1) == 74.6


def test_600_v_unit_moved_to_a_480_v_bus(rerate):
    # Source: re-rating formula (trade-facts): (480/600)² = 0.64 of nameplate; current (480/600) of rated.
    result = rerate(spec(bank(supply={"voltage_v": 600, "frequency_hz": 60}, need={"kvar": 50},
                              units=units([("CU-600-60-50.0", 1)]))), 480.0).banks[0]
    assert result.delivered_kvar == pytest.approx(32.0)
    assert result.line_current_a == pytest.approx(32.0 * 1000 / (math.sqrt(3) * 480))
    assert result.rated_current_a == pytest.approx(50.0 * 1000 / (math.sqrt(3) * 600))
    assert result.capacitor_voltage_ok
    assert result.at_new_supply.system.voltage.utilisation_pu == pytest.approx(0.64)


@pytest.mark.parametrize("voltage_v", [380.0, 415.0, 440.0, 500.0, 525.0])
def test_v_squared_against_pandapower(rerate, voltage_v):
    # Source: pandapower 3.5.6 as an outside engine: a 0.15 Mvar shunt rated 0.48 kV on a bus held at
    # voltage_v; res_shunt.q_mvar is the delivered reactive power there.
    import pandapower as pp

    net = pp.create_empty_network(f_hz=60)
    bus = pp.create_bus(net, vn_kv=0.48)
    pp.create_ext_grid(net, bus, vm_pu=voltage_v / 480.0)
    pp.create_shunt(net, bus, q_mvar=-0.15, p_mw=0.0, vn_kv=0.48)
    pp.runpp(net, numba=False)
    data = spec(bank(need={"kvar": 150}, units=units([("CU-480-60-50.0", 2)], [("CU-480-60-50.0", 1)])))
    result = rerate(data, voltage_v).banks[0]
    assert result.delivered_kvar == pytest.approx(-net.res_shunt.q_mvar.iloc[0] * 1000.0, rel=1e-9)


def test_frequency_effect_from_the_capacitance(rerate):
    # Source: electricpy 0.3.0 passive.farads(VAR, V, freq) = VAR/(2πfV²): the capacitance behind 30 kvar at
    # 480 V 60 Hz; at 415 V 50 Hz it gives 2π·50·C·415² (pandapower shunts have no frequency dependence).
    from electricpy import passive

    c = passive.farads(30e3, 480.0, 60)
    expected = 2 * math.pi * 50 * c * 415.0**2 / 1000.0
    result = rerate(spec(bank(units=units([("CU-480-60-30.0", 1)]))), 415.0, 50.0).banks[0]
    assert result.delivered_kvar == pytest.approx(expected, rel=1e-9)
    assert result.frequency_hz == 50.0 and result.original_frequency_hz == 60.0


# --- detuned banks --------------------------------------------------------------------------------------------


def test_detuned_bank_moved_from_60_to_50_hz(rerate, catalogs):
    # Source: trade-facts, detuned step: f_r = f1/√p (7 % -> 227 Hz at 60 Hz); U_C = U/(1 − p); Q = U²/(X_C − X_L).
    # The reactor (L) and the capacitor (C) stay: X_L scales with f, X_C with 1/f, so p' = p·(50/60)².
    data = spec(bank(need={"kvar": 100}, detuning_pct=7, units=units([("CU-600-60-50.0", 2)])))
    result = rerate(data, 415.0, 50.0).banks[0]
    p_new = 0.07 * (50 / 60) ** 2
    assert result.tuning_pct == pytest.approx(100 * p_new)
    assert result.tuning_frequency_hz == pytest.approx(60 / math.sqrt(0.07))  # 226.8 Hz, unchanged in hertz
    assert result.capacitor_voltage_seen_v == pytest.approx(415 / (1 - p_new))
    # Q = U²/(X_C − X_L) with the circuit's own reactances (three-phase, per-unit of kvar at 600 V 60 Hz)
    x_c60 = 600.0**2 / 100.0
    x_l60 = 0.07 * x_c60
    expected = 415.0**2 / (x_c60 * 60 / 50 - x_l60 * 50 / 60)
    assert result.delivered_kvar == pytest.approx(expected, rel=1e-9)
    detuning = [c for c in result.checks if c.name == "Detuning"][0]
    assert not detuning.ok and "4.54" in detuning.detail  # 226.8 Hz / 50 Hz
    reactors = [i for i in result.items if i.item.endswith("reactor")]
    assert reactors and all(i.action == "change" for i in reactors)
    assert result.resized.steps[0].detuning.tuning_frequency_hz == pytest.approx(50 / math.sqrt(0.07))  # 189 Hz


# --- what still fits ------------------------------------------------------------------------------------------


def test_moving_down_in_voltage_keeps_the_protection(rerate):
    # Source: NEC 460.8 — protection is sized on the capacitor's rated (nameplate) current, which a lower supply
    # voltage does not change; the operating current falls with V.
    data = spec(bank(need={"kvar": 150}, units=units([("CU-480-60-50.0", 1)], [("CU-480-60-50.0", 2)])))
    result = rerate(data, 415.0).banks[0]
    assert result.capacitor_voltage_ok
    assert all(item.fits and item.action == "keep" for item in result.items), result.items
    assert result.line_current_a == pytest.approx(result.original_line_current_a * (415 / 480) ** 2 * 480 / 415)


def test_moving_up_in_voltage_and_frequency_changes_units_and_protection(rerate):
    # Source: IEEE 18 / IEC 60831-1, 110 % of rated voltage: 415 V units on 480 V see 115.7 %; IEC 60831-1
    # current 1.3 I_N: (480/415)·(60/50) = 1.39 I_N.
    data = spec(bank(supply={"voltage_v": 400, "frequency_hz": 50}, need={"kvar": 80},
                     units=units([("CU-415-50-40.0", 1)], [("CU-415-50-40.0", 1)])), rules="iec")
    result = rerate(data, 480.0, 60.0).banks[0]
    assert not result.capacitor_voltage_ok
    assert result.at_new_supply.system.voltage.current_pu == pytest.approx(480 / 415 * 1.2)
    by_item = {i.item: i for i in result.items}
    assert by_item["Step 1 capacitor units"].action == "change"
    assert by_item["Step 1 fuse"].action == "change"
    assert by_item["Step 1 fuse"].required == f"{result.at_new_supply.steps[0].device_rating_a:g} A"
    assert by_item["Main conductor"].action == "change"
    for step in result.resized.steps:  # re-sized: units rated for the new supply
        assert all(u.rated_voltage_v >= 480 and u.rated_frequency_hz == 60 for u in step.units)


def test_contactors_checked_at_the_new_voltage(rerate, catalogs):
    from bankbuild.results.sizing import Step

    if "switching" not in Step.model_fields:
        pytest.skip("the assembly (step contactors) is not part of the results yet")
    # Source: the contactor table's frame ratings (one row per frame and voltage): a frame's capacitor-duty
    # current at 600 V is its AC-6b current in the 600 V row; the step's current rises with V (re-rating formula).
    data = spec(bank(need={"kvar": 150}, steps=[25, 25, 50, 50]))
    result = rerate(data, 600.0).banks[0]
    fits = {i.item: i for i in result.items}
    for step in result.at_new_supply.steps:
        item = fits[f"Step {step.index} contactor"]
        frame = item.installed.split(" ")[0]
        row = min((r for r in catalogs.contactors if r.contactor_id == frame and r.voltage_v >= 600),
                  key=lambda r: r.voltage_v)
        capacity = row.ac6b_current_a
        assert item.fits is (capacity >= step.switching.required_current_a and
                             not (step.switching.damping_needed and "(none)" in item.installed))
    lower = {i.item: i for i in rerate(data, 440.0).banks[0].items}
    assert all(lower[f"Step {k} contactor"].fits for k in range(1, 5))  # a lower voltage draws less current


def test_resized_bank_restores_each_step(rerate):
    data = spec(bank(need={"kvar": 150}, steps=[25, 25, 50, 50]))
    result = rerate(data, 415.0, 50.0).banks[0]
    for old, new in zip(result.steps, result.resized.steps, strict=True):
        assert new.kvar >= old.original_kvar - 1e-6
    assert result.resized.delivered_kvar >= result.original_kvar - 1e-6
    assert result.resized.supply_voltage_v == 415.0 and result.resized.frequency_hz == 50.0


def test_bom_difference_accounts_for_every_part(rerate, catalogs):
    data = spec(bank(need={"kvar": 150}, steps=[25, 25, 50, 50]))
    result = rerate(data, 415.0, 50.0).banks[0]
    original = pipeline_size_bank(data.banks[0], 0, data, catalogs)
    if result.bom_basis == "bill of materials":
        before, after = bom_counter(original), bom_counter(result.resized)
    else:
        assert result.bom_basis == "units and protection"
        before, after = parts(original, catalogs.capacitor_units), parts(result.resized, catalogs.capacitor_units)
    for category, unit in {(k[0], k[2]) for k in set(before) | set(after)}:
        changes = [c for c in result.bom_difference if (c.category, c.unit) == (category, unit)]
        qty = {a: sum(c.qty for c in changes if c.action == a) for a in ("keep", "remove", "add")}
        assert qty["keep"] + qty["remove"] == pytest.approx(sum(q for k, q in before.items() if (k[0], k[2]) ==
                                                                (category, unit)))
        assert qty["keep"] + qty["add"] == pytest.approx(sum(q for k, q in after.items() if (k[0], k[2]) ==
                                                             (category, unit)))
    units_before = {u.id for s in original.steps for u in s.units}
    assert {c.id for c in result.bom_difference if c.category == "capacitor unit" and c.action == "remove"} or \
        not units_before or result.bom_basis == "bill of materials"


def test_bom_difference_on_full_bills_of_materials(rerate, catalogs):
    # A part rated for a higher voltage serves a lower one; a contactor frame is the same part whatever it switches
    # at the supply; a control transformer for another primary voltage is another part.
    from bankbuild.design.rerate import bom_difference
    from bankbuild.results.sizing import BomLine

    data = spec(bank(need={"kvar": 50}))
    result = rerate(data, 415.0).banks[0]

    def lines(volts, amps, *extra):
        return [BomLine(item=1, qty=3, unit="pcs", category="Step protection",
                        description=f"Fuse-link 100 A, time-delay fuse-link, rated ≥ {volts} V"),
                BomLine(item=2, qty=1, unit="pcs", category="Step switching",
                        description=f"SWD-63A-DAMPED: contactor frame 63 A at 400 V; AC-6b {amps} A at {volts} V: "
                                    f"Q = √3 × {volts} V × {amps} A = {math.sqrt(3) * volts * amps / 1000:.1f} kvar"),
                BomLine(item=3, qty=1, unit="pcs", category="Control",
                        description=f"CPT-150: Control power transformer 150 VA single-phase, {volts} V / 120 V"),
                *extra]

    old = result.at_new_supply.model_copy(update={"bom": lines(480, 63)})
    new = result.resized.model_copy(update={"bom": lines(415, 63, BomLine(
        item=4, qty=12, unit="pcs", category="Discharge", description="Discharge resistor"))})
    basis, diff = bom_difference(old, new, catalogs.capacitor_units)
    got = {(c.action, c.qty, c.description.split(",")[0].split(":")[0]) for c in diff}
    assert basis == "bill of materials"
    assert got == {("keep", 3, "Fuse-link 100 A"), ("keep", 1, "SWD-63A-DAMPED"), ("remove", 1, "CPT-150"),
                   ("add", 1, "CPT-150"), ("add", 12, "Discharge resistor")}
    _, back = bom_difference(new, old, catalogs.capacitor_units)  # 415 V parts do not serve 480 V
    assert {(c.action, c.description.split(",")[0]) for c in back if "Fuse" in c.description} == {
        ("remove", "Fuse-link 100 A"), ("add", "Fuse-link 100 A")}


def test_light_load_fixed_steps_follow_the_bank(rerate):
    # Source: power triangle (trade-facts): the fixed bank's 30 kvar at 480 V gives 36.0 kvar at 525 V, more
    # than the light load's 33 kvar -> leading at the new supply.
    data = spec(bank(units=units([("CU-480-60-30.0", 1)]), light_load={"kw": 100, "kvar": 33}))
    result = rerate(data, 525.0).banks[0]
    light = result.at_new_supply.system.light_load
    assert light.fixed_kvar == pytest.approx(30 * (525 / 480) ** 2)
    assert light.leading


# --- there and back (property) --------------------------------------------------------------------------------

step_units = st.lists(st.tuples(st.sampled_from([u for u, _ in RATED_60[:3]]), st.integers(1, 3)), min_size=1,
                      max_size=2, unique_by=lambda t: t[0])


@settings(max_examples=20, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(step_units, min_size=1, max_size=3), st.floats(380.0, 600.0), st.sampled_from([50.0, 60.0]),
       st.sampled_from([None, 7.0]))
def test_rerate_there_and_back_returns_the_original(catalogs, steps, voltage_v, frequency_hz, detuning_pct):
    data = spec(bank(need={"kvar": 50}, units=units(*steps), detuning_pct=detuning_pct,
                     supply={"voltage_v": 480, "frequency_hz": 60, "transformer_kva": 1500,
                             "transformer_z_pct": 5.75}))
    there = rerate_bank(data.banks[0], 0, data, catalogs, voltage_v, frequency_hz)
    # the bank as it now stands: the same units at the new supply, its reactors at p' = p·(f2/f1)²
    moved = data.banks[0].model_copy(update={
        "supply": data.banks[0].supply.model_copy(update={"voltage_v": voltage_v, "frequency_hz": frequency_hz}),
        "detuning_pct": there.tuning_pct})
    back_spec = data.model_copy(update={"banks": [moved]})
    back = rerate_bank(moved, 0, back_spec, catalogs, 480.0, 60.0)
    original = pipeline_size_bank(data.banks[0], 0, data, catalogs)
    assert back.delivered_kvar == pytest.approx(there.original_kvar, rel=1e-9)
    assert back.original_kvar == pytest.approx(there.delivered_kvar, rel=1e-9)
    assert back.line_current_a == pytest.approx(original.line_current_a, rel=1e-9)
    assert back.rated_current_a == pytest.approx(original.rated_current_a, rel=1e-9)
    assert back.capacitor_voltage_seen_v == pytest.approx(480.0 / (1 - (detuning_pct or 0) / 100), rel=1e-9)
    assert (back.tuning_pct or 0) == pytest.approx(detuning_pct or 0, rel=1e-9)
    for a, b in zip(back.at_new_supply.steps, original.steps, strict=True):
        assert (a.kvar, a.device_rating_a, a.conductor) == pytest.approx((b.kvar, b.device_rating_a, b.conductor))
    assert back.at_new_supply.main == original.main
    assert [c.ok for c in back.at_new_supply.checks] == [c.ok for c in original.checks]


# --- the command ----------------------------------------------------------------------------------------------

SIZE_KEYS = {"name", "required_kvar", "delivered_kvar", "supply_voltage_v", "frequency_hz", "capacitor_voltage_v",
             "rated_kvar", "rated_current_a", "line_current_a", "capacitance_uf_per_phase", "steps", "main",
             "discharge", "resonance", "checks"}


@pytest.fixture
def spec_file(write_yaml):
    return write_yaml({
        "project": {"name": "Skelvory Joinery (invented site)"}, "rules": "nec",
        "banks": [
            {"name": "Saw line bank", "supply": {"voltage_v": 480, "frequency_hz": 60, "transformer_kva": 1000,
                                                 "transformer_z_pct": 5.75},
             "need": {"kvar": 100}, "units": units([("CU-480-60-50.0", 1)], [("CU-480-60-50.0", 1)])},
            {"name": "Dust fan bank", "supply": {"voltage_v": 480, "frequency_hz": 60}, "need": {"kvar": 40}},
        ]})


def test_cli_json_has_the_stable_keys(capsys, spec_file):
    code, out, err = cli(capsys, "rerate", spec_file, "--voltage-v", 415, "--frequency-hz", 50, "--json")
    assert (code, err) == (0, "")
    doc = json.loads(out)
    assert doc["voltage_v"] == 415 and doc["frequency_hz"] == 50
    assert [b["name"] for b in doc["banks"]] == ["Saw line bank", "Dust fan bank"]
    for b in doc["banks"]:
        for key in ("name", "delivered_kvar", "original_kvar", "voltage_v", "frequency_hz", "capacitor_voltage_ok"):
            assert key in b
        assert SIZE_KEYS <= set(b["resized"])
        assert isinstance(b["checks"], list) and b["bom_difference"]
    # Source: re-rating formula (trade-facts): 100 kvar · (415/480)² · (50/60)
    assert doc["banks"][0]["delivered_kvar"] == pytest.approx(100 * (415 / 480) ** 2 * 50 / 60)


def test_cli_text_and_files(capsys, spec_file, tmp_path):
    out_dir = tmp_path / "moved"
    code, out, err = cli(capsys, "rerate", spec_file, "--voltage-v", 415, "--out", out_dir)
    assert (code, err) == (0, "")
    assert "== Saw line bank: 480 V 60 Hz → 415 V 60 Hz ==" in out
    assert "CAUTION:" in out and "wrongly claim" in out
    assert sorted(p.name for p in out_dir.iterdir()) == ["rerate-bom-difference.csv", "rerate.json", "rerate.pdf",
                                                         "rerate.txt"]
    doc = json.loads((out_dir / "rerate.json").read_text(encoding="utf-8"))
    assert doc["banks"][0]["original_kvar"] == pytest.approx(100.0)
    rows = list(csv.DictReader(io.StringIO((out_dir / "rerate-bom-difference.csv").read_text(encoding="utf-8"))))
    assert {r["action"] for r in rows} <= {"keep", "remove", "add"} and rows
    assert {r["bank"] for r in rows} == {"Saw line bank", "Dust fan bank"}


def test_cli_new_transformer_option(capsys, spec_file):
    # Source: trade-facts h_r = √(kVA·100/(Z%·kvar)) with the new site's 500 kVA, 5 % transformer.
    code, out, err = cli(capsys, "rerate", spec_file, "--voltage-v", 480, "--json", "--transformer-kva", 500,
                         "--transformer-z-pct", 5)
    assert code == 0
    points = json.loads(out)["banks"][0]["at_new_supply"]["system"]["resonance_combinations"]
    assert points[-1]["harmonic_order"] == pytest.approx(math.sqrt(500 * 100 / (5 * 100)))


@pytest.mark.parametrize(("argv", "words"), [
    (["--voltage-v", "50"], "--voltage-v: must be between 100 and 1000 V (got 50)"),
    (["--voltage-v", "480", "--frequency-hz", "70"], "--frequency-hz: must be between 45 and 65 Hz (got 70)"),
    (["--voltage-v", "480", "--transformer-kva", "1000"], "--transformer-z-pct: give --transformer-kva and"),
    (["--voltage-v", "480", "--source-sc-mva", "100"], "--source-sc-mva: needs --transformer-kva"),
    (["--voltage-v", "nan"], "--voltage-v: must be between"),
    (["--frequency-hz", "50"], "--voltage-v: required option is missing"),
])
def test_cli_bad_options(capsys, spec_file, tmp_path, argv, words):
    out_dir = tmp_path / "never"
    code, out, err = cli(capsys, "rerate", spec_file, "--out", out_dir, *argv)
    assert code == 2 and out == ""
    assert words in err and err.count("\n") == 1
    assert not out_dir.exists()


@pytest.mark.parametrize(("bank_changes", "words"), [
    ({"units": units([("CU-480-60-33.0", 1)])},
     "banks[0] (Press shop bank).units[0][0].id: no unit 'CU-480-60-33.0' in the unit table capacitor_units.csv"),
    ({"units": units([("CU-480-60-30.0", 1)], [("CU-415-50-30.0", 1)])}, "units of different ratings in one bank"),
    ({"units": units([("CU-480-60-30.0", 1)]), "steps": [30]}, "give steps (to size a new bank) or units"),
    ({"units": [[{"id": "CU-480-60-30.0", "qty": 0}]]}, "units[0][0].qty"),
    ({"units": units([("CU-480-60-30.0", 1)]), "capacitor_voltage_v": 600}, "differs from the listed units"),
    ({"light_load": {"kw": 10, "kvar": 5, "fixed_steps": 3}}, "fixed_steps 3 is more than the bank's 1 steps"),
    ({"motor": {"full_load_current_a": 50, "full_load_pf": 0.8, "conductor_ampacity_a": 65}},
     "give no_load_current_a or magnetising_kvar"),
])
def test_cli_bad_spec(capsys, write_yaml, tmp_path, bank_changes, words):
    path = write_yaml({"banks": [bank(**bank_changes)]})
    code, out, err = cli(capsys, "rerate", path, "--voltage-v", 415, "--out", tmp_path / "never")
    assert code == 2 and out == ""
    assert words in err and err.startswith(f"bankbuild: error: {path}") and err.count("\n") == 1
    assert not (tmp_path / "never").exists()


def test_size_accepts_an_existing_bank(capsys, write_yaml, tmp_path):
    path = write_yaml({"banks": [bank(units=units([("CU-480-60-30.0", 1), ("CU-480-60-12.5", 2)]))]})
    code, out, err = cli(capsys, "size", path, "--json", "--out", tmp_path / "out")
    assert code == 0, err
    step = json.loads(out)["banks"][0]["steps"][0]
    assert step["kvar"] == pytest.approx(55.0)
    assert {(u["id"], u["qty"]) for u in step["units"]} == {("CU-480-60-30.0", 1), ("CU-480-60-12.5", 2)}


def test_rerate_help_stays_light():
    code = ("import sys; from bankbuild.cli.app import run; run(['rerate', '--help']); "
            "sys.exit(1 if {'pandas', 'reportlab', 'openpyxl'} & set(sys.modules) else 0)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert done.returncode == 0 and "Example: bankbuild rerate" in done.stdout
