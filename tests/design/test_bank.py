"""The pipeline (bankbuild.design.sizing): the need, the steps, the unit voltage, checks, properties over many specs."""

from __future__ import annotations

import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from pydantic import ValidationError

from bankbuild.design.sizing import load_pq, need_summary, size_project, step_targets
from bankbuild.errors import SpecError
from bankbuild.spec.model import Bank, Load, Need, Spec
from bankbuild.spec.read import read_spec
from bankbuild.spec.rulebasis import builtin_rule_basis

HP_KW = 0.7456999  # Source: NIST SP 811 (2008), Appendix B.8: 1 hp = 745.6999 W


def tan_phi(pf: float) -> float:
    return math.tan(math.acos(pf))


def failed(bank) -> dict[str, str]:
    return {c.name: c.detail for c in bank.checks if not c.ok}


# --- the need ----------------------------------------------------------------------------------------------------


@pytest.mark.parametrize(("load", "p_kw", "q_kvar"), [
    # Motor by output: input = 15 / 0.92 = 16.304 kW; Q = 16.304 × tan(acos 0.8) = 16.304 × 0.75 = 12.228 kvar.
    ({"output_kw": 15, "efficiency": 0.92, "pf": 0.8}, 16.304, 12.228),
    # Motor by hp: 100 hp × 0.7457 = 74.570 kW / 0.94 = 79.330 kW; Q = 79.330 × 0.61974 = 49.164 kvar.
    ({"output_hp": 100, "efficiency": 0.94, "pf": 0.85}, 79.330, 49.164),
    # Input kW: 40 kW; Q = 40 × tan(acos 0.9) = 40 × 0.48432 = 19.373 kvar.
    ({"input_kw": 40, "pf": 0.9}, 40.0, 19.373),
    # kVA: P = 60 × 0.95 = 57 kW; Q = 60 × sin(acos 0.95) = 60 × 0.31225 = 18.735 kvar.
    ({"kva": 60, "pf": 0.95}, 57.0, 18.735),
    # Line current at 480 V: S = √3 × 480 × 52 = 43.232 kVA; P = 36.315 kW; Q = 43.232 × 0.54259 = 23.457 kvar.
    ({"line_current_a": 52, "pf": 0.84}, 36.315, 23.457),
])
def test_load_pq_each_form(load, p_kw, q_kvar):
    # Source: textbook power triangle (S = √3·V·I, P = S·PF, Q = P·tan φ; motor input = output / efficiency).
    p, q = load_pq(Load.model_validate(load), 480.0)
    assert p == pytest.approx(p_kw, abs=5e-4)
    assert q == pytest.approx(q_kvar, abs=5e-4)


def test_load_list_sums_p_and_q():
    path = "tests/data/specs/loads_all_forms.yaml"
    bank = read_spec(path).spec.banks[0]
    need = need_summary(bank.need, 480.0)
    # Two 100 hp motors (quantity 2) and one of each other form (table above):
    # P = 2 × 79.330 + 16.304 + 40 + 57 + 36.315 = 308.279 kW
    # Q = 2 × 49.164 + 12.228 + 19.373 + 18.735 + 23.457 = 172.122 kvar
    # need = Q − P · tan(acos 0.95) = 172.122 − 308.279 × 0.32868 = 70.795 kvar
    assert need.form == "loads"
    assert need.active_kw == pytest.approx(308.279, abs=1e-3)
    assert need.reactive_kvar == pytest.approx(172.122, abs=1e-3)
    assert need.pf_present == pytest.approx(308.279 / math.hypot(308.279, 172.122), abs=1e-6)
    assert need.required_kvar == pytest.approx(70.795, abs=1e-3)


def test_need_power_form():
    need = need_summary(Need.model_validate({"kw": 800, "pf_present": 0.78, "pf_target": 0.95}), 480.0)
    # Q_c = 800 × (tan(acos 0.78) − tan(acos 0.95)) = 800 × (0.80229 − 0.32868) = 378.9 kvar (textbook formula).
    assert need.required_kvar == pytest.approx(800 * (tan_phi(0.78) - tan_phi(0.95)))
    assert need.required_kvar == pytest.approx(378.9, abs=0.05)
    assert need.reactive_kvar == pytest.approx(800 * tan_phi(0.78))


def test_need_kvar_form():
    need = need_summary(Need.model_validate({"kvar": 300}), 480.0)
    assert (need.form, need.required_kvar, need.active_kw) == ("kvar", 300, None)


def test_nothing_to_correct_is_a_spec_error(size, make_bank, make_spec):
    with pytest.raises(SpecError) as info:
        size(make_spec(make_bank(need={"kw": 100, "pf_present": 0.95, "pf_target": 0.95})))
    assert info.value.field == "banks[0] (Line 3).need"
    assert "nothing to correct" in info.value.problem


def test_loads_already_above_target_is_a_spec_error(size, make_bank, make_spec):
    with pytest.raises(SpecError, match="already meets the target"):
        size(make_spec(make_bank(need={"pf_target": 0.9, "loads": [{"input_kw": 100, "pf": 0.98}]})))


# --- steps --------------------------------------------------------------------------------------------------------


def bank_model(**changes) -> Bank:
    return Bank.model_validate({"name": "B", "supply": {"voltage_v": 480, "frequency_hz": 60},
                                "need": {"kvar": 300}, **changes})


def test_step_targets():
    assert step_targets(bank_model(), 300) == [300]
    assert step_targets(bank_model(steps=[50, 50, 100]), 300) == [50, 50, 100]
    # 1:2:2 over five steps: weights 1, 2, 2, 2, 2 (sum 9): 300 / 9 = 33.3 kvar for the small step.
    targets = step_targets(bank_model(steps={"count": 5, "pattern": "1:2:2"}), 300)
    assert targets == pytest.approx([300 / 9, 600 / 9, 600 / 9, 600 / 9, 600 / 9])
    assert sum(targets) == pytest.approx(300)
    assert step_targets(bank_model(steps={"count": 4}), 300) == pytest.approx([75] * 4)


def test_each_step_reaches_its_target(size_bank):
    bank = size_bank(steps={"count": 5, "pattern": "1:2:2"})
    for step in bank.steps:
        assert step.kvar >= step.target_kvar - 1e-9
        assert step.kvar == pytest.approx(sum(u.qty * u.delivered_kvar_each for u in step.units))
    assert bank.delivered_kvar == pytest.approx(sum(s.kvar for s in bank.steps))
    assert bank.rated_kvar == pytest.approx(sum(s.rated_kvar for s in bank.steps))


def test_explicit_steps_below_the_need_are_a_failed_check(size_bank):
    bank = size_bank(steps=[50, 50])  # need 300 kvar
    assert bank.delivered_kvar == pytest.approx(100)
    assert "Delivered covers the need" in failed(bank)


# --- unit voltage and frequency ----------------------------------------------------------------------------------


def test_units_at_the_supply_voltage(size_bank):
    bank = size_bank()
    assert bank.capacitor_voltage_v == 480
    assert bank.rated_kvar == bank.delivered_kvar == 300


def test_detuned_units_are_rated_above_the_capacitor_voltage(size_bank):
    bank = size_bank(detuning_pct=7)
    # The capacitor sees 480 / (1 − 0.07) = 516.1 V: the next 60 Hz unit voltage is 600 V (trade-facts formula).
    assert bank.capacitor_voltage_v == 600
    assert bank.steps[0].detuning.capacitor_voltage_v == pytest.approx(516.13, abs=0.005)


def test_voltage_margin_raises_the_unit_voltage(size_bank):
    assert size_bank(voltage_margin_pct=10).capacitor_voltage_v == 600  # 480 × 1.10 = 528 V -> 600 V units


def test_voltage_margin_the_table_cannot_meet_is_flagged(size_bank):
    # 480 V + 30% = 624 V; the highest 60 Hz unit of the table is 600 V: the margin is not met, and said so.
    bank = size_bank(voltage_margin_pct=30)
    assert bank.capacitor_voltage_v == 600
    assert "Unit voltage margin" in failed(bank)
    assert "624 V" in failed(bank)["Unit voltage margin"]
    assert "Unit voltage margin" not in failed(size_bank(voltage_margin_pct=20))  # 576 V -> 600 V units


def test_forced_unit_voltage_not_in_the_table_is_a_spec_error(size_bank):
    with pytest.raises(SpecError) as info:
        size_bank(capacitor_voltage_v=525)
    assert info.value.field == "banks[0] (Line 3).capacitor_voltage_v"
    assert "no 60 Hz unit rated 525 V" in info.value.problem
    assert "240, 480, 600" in info.value.problem


def test_forced_unit_voltage_below_the_supply_is_flagged(size_bank):
    bank = size_bank(supply={"voltage_v": 600, "frequency_hz": 60}, capacitor_voltage_v=480)
    assert bank.capacitor_voltage_v == 480
    assert "Unit voltage covers the supply" in failed(bank)


def test_supply_above_every_unit_is_flagged(size_bank):
    bank = size_bank(supply={"voltage_v": 690, "frequency_hz": 60})
    assert bank.capacitor_voltage_v == 600  # the highest 60 Hz unit; 690 V exceeds it
    assert "Unit voltage covers the supply" in failed(bank)


def test_frequency_without_units_is_flagged_and_rerated(size_bank):
    bank = size_bank(supply={"voltage_v": 480, "frequency_hz": 58})
    assert "Unit frequency" in failed(bank)
    unit = bank.steps[0].units[0]
    assert unit.rated_frequency_hz == 60
    # Re-rating (trade-facts): each unit delivers kvar_r × (58 / 60) at 480 V.
    assert unit.delivered_kvar_each == pytest.approx(unit.rated_kvar * 58 / 60)


# --- checks, discharge and system figures ------------------------------------------------------------------------


def test_over_correction_is_flagged(size_bank):
    # 100 kW at PF 0.9 draws 48.4 kvar; a 100 kvar step leads.
    bank = size_bank(need={"kw": 100, "pf_present": 0.9, "pf_target": 0.95}, steps=[100])
    assert any("Over-correction" in name for name in failed(bank))


def test_corrected_power_factor(size_bank):
    bank = size_bank(need={"kw": 800, "pf_present": 0.78, "pf_target": 0.95})
    # PF = P / √(P² + (Q − Q_c)²) with the delivered kvar (textbook power triangle).
    q_after = 800 * tan_phi(0.78) - bank.delivered_kvar
    assert bank.need.pf_corrected == pytest.approx(800 / math.hypot(800, q_after))
    assert bank.need.pf_corrected >= 0.95


def test_discharge_for_delta_and_wye(size_bank, catalogs, tmp_path):
    delta = size_bank().discharge
    # The built-in units are three-phase units connected delta inside: a "wye" bank of them is built of their
    # delta elements, so its per-leg figures are the parts' (the same as delta), with a note saying so.
    wye_of_delta_units = size_bank(connection="wye")
    assert wye_of_delta_units.discharge == delta
    assert wye_of_delta_units.unit_connection == "delta"
    note = next(c for c in wye_of_delta_units.checks if c.name == "Unit connection")
    assert note.ok and "delta" in note.detail
    # The bank's capacitance per phase stays the stated connection's equivalent (wye = 3 × delta).
    assert wye_of_delta_units.capacitance_uf_per_phase == pytest.approx(
        3 * size_bank().capacitance_uf_per_phase, rel=1e-12)
    # Units connected wye inside (a user's table): each leg sees 480/√3 = 277.1 V, starts at 391.9 V, with
    # three times the capacitance (trade-facts formulas).
    from bankbuild.tables.load import builtin_dir, load_catalogs

    text = (builtin_dir() / "capacitor_units.csv").read_text(encoding="utf-8")
    (tmp_path / "capacitor_units.csv").write_text(text.replace(",delta,", ",wye,"), encoding="utf-8")
    wye = size_bank(connection="wye", tables=load_catalogs(tmp_path)).discharge
    assert delta.start_voltage_v == pytest.approx(math.sqrt(2) * 480)
    assert wye.start_voltage_v == pytest.approx(math.sqrt(2) * 480 / math.sqrt(3))
    assert wye.capacitance_uf_per_leg == pytest.approx(3 * delta.capacitance_uf_per_leg)
    for d in (delta, wye):
        # R ≤ t / (C · ln(V0 / V_lim)) (trade-facts).
        r = d.time_s / (d.capacitance_uf_per_leg * 1e-6 * math.log(d.start_voltage_v / d.limit_v))
        assert d.max_resistance_ohm == pytest.approx(r)
        assert (d.limit_v, d.time_s) == (50, 60)  # Source: NEC 460.6(A): 50 V within 1 min


def test_discharge_rule_of_each_basis(size_bank):
    assert (size_bank().discharge.limit_v, size_bank().discharge.time_s) == (50, 60)  # Source: NEC 460.6(A)
    iec = size_bank(rules="iec", supply={"voltage_v": 400, "frequency_hz": 50})
    assert (iec.discharge.limit_v, iec.discharge.time_s) == (75, 180)  # Source: IEC 60831-1 (75 V in 3 min)


def test_discharge_rule_from_the_spec(size_bank):
    bank = size_bank(discharge={"limit_v": 50, "time_s": 30})
    assert (bank.discharge.limit_v, bank.discharge.time_s) == (50, 30)
    # The built-in resistors of the table take 60 s (to 50 V): they do not meet 30 s, and a check says so.
    assert bank.discharge.builtin_time_s == pytest.approx(60)
    assert not bank.discharge.ok
    assert "Discharge" in failed(bank)


def test_50_hz_units_on_the_nec_basis_fail_the_one_minute_rule(size_bank):
    # 50 Hz units of the table reach 75 V in 180 s: to 50 V takes longer than NEC 460.6(A)'s 1 minute.
    bank = size_bank(supply={"voltage_v": 400, "frequency_hz": 50}, need={"kvar": 10})
    assert not bank.discharge.ok
    assert "Discharge" in failed(bank)


def test_resonance_points_for_every_cumulative_step(size_bank):
    bank = size_bank(supply={"voltage_v": 480, "frequency_hz": 60, "transformer_kva": 1500,
                             "transformer_z_pct": 5.75}, steps=[100, 100, 100])
    # h = √(kVA · 100 / (Z% · kvar)): 100 kvar -> √(150000 / 575) = √260.87 = 16.151; 200 -> √130.43 = 11.421;
    # 300 -> √86.957 = 9.325.
    orders = [pt.harmonic_order for pt in bank.resonance]
    assert orders == pytest.approx([16.151, 11.421, 9.325], abs=5e-4)
    assert [pt.kvar for pt in bank.resonance] == pytest.approx([100, 200, 300])
    # The 200 kvar point is near the 11th.
    assert bank.resonance[1].near_harmonic == 11


def test_no_transformer_no_resonance(size_bank):
    bank = size_bank()
    assert bank.resonance == []
    assert bank.voltage_rise_pct is None


def test_voltage_rise(size_bank):
    bank = size_bank(supply={"voltage_v": 480, "frequency_hz": 60, "transformer_kva": 1500,
                             "transformer_z_pct": 5.75})
    # ΔV% ≈ kvar · Z% / kVA = 300 × 5.75 / 1500 = 1.15% (trade-facts formula).
    assert bank.voltage_rise_pct == pytest.approx(1.15)


def test_results_are_frozen(size_bank):
    bank = size_bank()
    with pytest.raises(ValidationError):
        bank.delivered_kvar = 0


def test_cautions_and_provenance(size, make_spec, catalogs):
    result = size(make_spec())
    assert any("qualified persons" in c for c in result.cautions)
    assert any("no statement of compliance" in c for c in result.cautions)
    assert result.provenance.rules == "nec"
    files = {t.file_name for t in result.provenance.tables}
    assert {"capacitor_units.csv", "device_ratings.csv", "conductors_nec.csv"} <= files
    assert all(len(t.sha256) == 64 for t in result.provenance.tables)


def test_iec_table_mismatch_is_a_spec_error(size_bank):
    with pytest.raises(SpecError) as info:
        size_bank(rules="iec", supply={"voltage_v": 400, "frequency_hz": 50},
                  protection={"insulation": "XLPE", "installation_method": "C"})
    assert info.value.field == "banks[0] (Line 3).protection"
    assert "no IEC conductor rows for XLPE, method C" in info.value.problem


# --- properties over generated specs -----------------------------------------------------------------------------

VOLTAGES = {60: [208.0, 240.0, 440.0, 460.0, 480.0, 575.0, 600.0], 50: [380.0, 400.0, 415.0, 440.0, 525.0, 690.0]}


@st.composite
def specs(draw):
    frequency = draw(st.sampled_from([50, 60]))
    need = draw(st.one_of(
        st.builds(lambda k: {"kvar": k}, st.floats(1, 1500)),
        st.builds(lambda kw, pf, gain: {"kw": kw, "pf_present": pf, "pf_target": min(1.0, pf + gain)},
                  st.floats(5, 2000), st.floats(0.5, 0.95), st.floats(0.02, 0.3)),
        st.builds(lambda loads, target: {"pf_target": target, "loads": loads},
                  st.lists(st.one_of(
                      st.builds(lambda kw, eff, pf: {"output_kw": kw, "efficiency": eff, "pf": pf},
                                st.floats(1, 300), st.floats(0.8, 0.97), st.floats(0.5, 0.85)),
                      st.builds(lambda i, pf, n: {"line_current_a": i, "pf": pf, "quantity": n},
                                st.floats(5, 400), st.floats(0.5, 0.85), st.integers(1, 4))), min_size=1, max_size=4),
                  st.floats(0.9, 1.0)),
    ))
    bank = {
        "name": "Generated",
        "supply": {"voltage_v": draw(st.sampled_from(VOLTAGES[frequency])), "frequency_hz": frequency},
        "need": need,
        "connection": draw(st.sampled_from(["delta", "wye", "star"])),
        "protection": draw(st.fixed_dictionaries({}, optional={
            "device": st.sampled_from(["fuse", "breaker"]), "conductor_factor": st.floats(1.0, 2.0),
            "device_factor": st.floats(1.25, 2.5), "conductor_temp_c": st.sampled_from([60, 75, 90]),
            "installation_method": st.sampled_from(["B1", "C", "E"])})),
    }
    steps = draw(st.one_of(st.none(), st.lists(st.floats(5, 300), min_size=1, max_size=6),
                           st.builds(lambda c, p: {"count": c, "pattern": p}, st.integers(1, 8),
                                     st.sampled_from(["equal", "1:2", "1:2:2", "1:2:4"]))))
    if steps is not None:
        bank["steps"] = steps
    if draw(st.booleans()):
        bank["supply"].update(transformer_kva=draw(st.floats(100, 5000)), transformer_z_pct=draw(st.floats(3, 8)))
    if draw(st.integers(0, 3)) == 0:
        bank["detuning_pct"] = draw(st.sampled_from([5.67, 7, 14]))
    return {"rules": draw(st.sampled_from(["nec", "iec"])), "banks": [bank]}


def device_table(catalogs, rules, device):
    return {r.rating_a for r in catalogs.device_ratings if (r.basis, r.device) == (rules, device)}


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(specs())
def test_pipeline_properties(catalogs, data):
    spec = Spec.model_validate(data)
    try:
        result = size_project(spec, catalogs)
    except SpecError as exc:  # the only refusal left after validation: nothing to correct
        assert "nothing to correct" in exc.problem
        return
    bank = result.banks[0]
    prot = spec.banks[0].protection
    mult = builtin_rule_basis(spec.rules, spec.nec_edition).rules.multipliers  # the rule basis's defaults
    device_factor = prot.device_factor or getattr(mult, prot.device).factor
    conductor_factor = prot.conductor_factor or mult.conductor.factor
    flagged = failed(bank)

    # Delivered covers the need (each step covers its own target when the steps are given).
    for step in bank.steps:
        assert step.kvar >= step.target_kvar - 1e-6
    if not isinstance(spec.banks[0].steps, list):
        assert bank.delivered_kvar >= bank.required_kvar - 1e-6

    # Every device rating is a standard one, at least factor × the current it is sized on; every conductor's
    # ampacity is at least factor × that current — or a failed check says why not.
    table = device_table(catalogs, spec.rules, prot.device)
    circuits = [(f"Step {s.index}", max(s.rated_current_a, s.line_current_a), s.device_rating_a,
                 s.conductor_ampacity_a) for s in bank.steps]
    circuits.append(("Main", bank.main.design_current_a, bank.main.device_rating_a, bank.main.conductor_ampacity_a))
    for label, basis, rating, ampacity in circuits:
        if any(name.startswith(label + ":") for name in flagged):
            continue
        assert rating in table
        assert rating >= device_factor * basis - 1e-6
        assert ampacity >= conductor_factor * basis - 1e-6
    assert bank.main.design_current_a >= bank.rated_current_a - 1e-9

    # The stable currents: rated on nameplate kvar at the unit voltage, operating on delivered kvar at the supply.
    assert bank.rated_current_a == pytest.approx(bank.rated_kvar * 1000 / (math.sqrt(3) * bank.capacitor_voltage_v))
    assert bank.line_current_a == pytest.approx(bank.delivered_kvar * 1000 / (math.sqrt(3) * bank.supply_voltage_v))

    # Discharge meets its rule, or a failed check is present.
    assert bank.discharge.ok or any(not c.ok and c.name == "Discharge" for c in bank.checks)

    # The same bank in the other connection: same units, three times the capacitance per leg in wye.
    other = "delta" if bank.connection == "wye" else "wye"
    twin_data = {**data, "banks": [{**data["banks"][0], "connection": other}]}
    twin = size_project(Spec.model_validate(twin_data), catalogs).banks[0]
    wye, delta = (bank, twin) if bank.connection == "wye" else (twin, bank)
    assert wye.rated_kvar == pytest.approx(delta.rated_kvar)
    assert wye.capacitance_uf_per_phase == pytest.approx(3 * delta.capacitance_uf_per_phase)
