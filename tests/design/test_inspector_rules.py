"""The figures a plan reviewer checks with a red pen: each test names the rule or formula its value comes from."""

from __future__ import annotations

import json
import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bankbuild.cli.app import run
from bankbuild.design.protection import derated_rows, size_circuit
from bankbuild.design.sizing import circuit_context
from bankbuild.spec.model import Spec
from bankbuild.spec.rulebasis import BUILTIN, builtin_rules_dir

# NEC 240.6(A) standard ampere ratings (fuses also 1, 3, 6, 10, 601)
NEC_FUSES = {1, 3, 6, 10, 15, 20, 25, 30, 35, 40, 45, 50, 60, 70, 80, 90, 100, 110, 125, 150, 175, 200, 225, 250, 300,
             350, 400, 450, 500, 600, 601, 700, 800, 1000, 1200, 1600, 2000, 2500, 3000, 4000, 5000, 6000}


def context(catalogs, rules="nec", **protection):
    spec = Spec.model_validate({"rules": rules, "banks": [
        {"name": "B", "supply": {"voltage_v": 480, "frequency_hz": 60}, "need": {"kvar": 1},
         "protection": protection}]})
    return circuit_context(spec, spec.banks[0], catalogs, "", "")


def line(circuit, item):
    (found,) = [x for x in circuit.lines if x.item == item]
    return found


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(current=st.floats(min_value=2, max_value=900), temp=st.sampled_from([60, 75, 90]),
       term=st.sampled_from([None, 60, 75]), ambient=st.floats(min_value=10, max_value=55),
       grouped=st.integers(min_value=1, max_value=8), device=st.sampled_from(["fuse", "breaker"]))
def test_every_circuit_device_within_ampacity_or_the_240_4_b_allowance_or_flagged(
        catalogs, current, temp, term, ambient, grouped, device):
    # Property (NEC 240.4(B)(1)–(3), 240.4(C)): device ≤ conductor ampacity after correction, or the ampacity is
    # not a standard rating, the device is the next standard rating above it and ≤ 800 A — or a check is flagged.
    ctx = context(catalogs, conductor_temp_c=temp, termination_temp_c=term, conductor_ambient_c=ambient,
                  grouped_circuits=grouped, device=device)
    ratings = sorted(float(r.rating_a) for r in ctx.device_rows)
    c = size_circuit(ctx, "Step 1", current, "rated current", False)
    flagged = any(not ch.ok for ch in c.checks)
    if c.device is None or c.conductor is None or flagged:
        assert flagged
        return
    d, a = c.device.value, c.conductor.ampacity_a
    standard = any(abs(a - r) <= 1e-6 for r in ratings)
    above = [r for r in ratings if r > a + 1e-6]
    allowance = not standard and d <= 800 and bool(above) and d == min(above)
    assert d <= a + 1e-6 or allowance, (d, a)
    # and the ampacity never exceeds the termination column's value (NEC 110.14(C)(1))
    row = next(r for r in catalogs.conductors_nec if r.edition == 2023 and r.size == c.conductor.size)
    limit_c = min(term or 75, temp)
    assert a <= c.conductor.sets * getattr(row, f"ampacity_{limit_c}c_a") + 1e-6


def test_90_c_conductor_is_limited_by_75_c_terminations(catalogs):
    # 100 kvar at 480 V: 120.3 A; conductor ≥ 1.35 × 120.3 = 162.4 A. At 30 °C the 90 °C column would take 1/0 AWG
    # (170 A), but NEC 110.14(C)(1)(b) limits it to the 75 °C column (150 A): 2/0 AWG at 175 A (NEC Table 310.16,
    # 2023), and then 200 A fuse needs 3/0 AWG as 175 A is itself a standard rating (NEC 240.4(B)(2)).
    ctx = context(catalogs, conductor_temp_c=90, conductor_ambient_c=30)
    c = size_circuit(ctx, "Main", 100_000 / (math.sqrt(3) * 480), "rated current", True)
    assert line(c, "Conductor ampacity").chosen.startswith("2/0 AWG")
    assert c.conductor.designation == "3/0 AWG" and c.conductor.ampacity_a == 200
    derated = line(c, "Conductor ampacity after correction")
    assert "termination 75 °C column 200 A" in derated.formula
    assert "the 90 °C column serves only as the starting point" in derated.rule


def test_90_c_column_serves_for_correction_at_45_c(catalogs):
    # 3/0 AWG: 90 °C 225 A × 0.87 (41–45 °C, NEC Table 310.15(B)(1), from memory) = 195.75 A, below the 75 °C
    # column's 200 A: the corrected figure governs.
    ctx = context(catalogs, conductor_temp_c=90, conductor_ambient_c=45)
    rows = {r.size: r for r in derated_rows(ctx, 200, 1)}
    assert rows["3/0 AWG"].ampacity_a == pytest.approx(195.75, abs=1e-9)


def test_grouping_factor_applies_from_the_spec(catalogs):
    # Three step circuits in one duct: 9 current-carrying conductors, 70 % (NEC Table 310.15(C)(1), from memory);
    # at 45 °C, 75 °C column × 0.82: 4/0 AWG = 230 × 0.82 × 0.70 = 132.02 A.
    ctx = context(catalogs, grouped_circuits=3)
    rows = {r.size: r for r in derated_rows(ctx, 200, 3)}
    assert rows["4/0 AWG"].ampacity_a == pytest.approx(230 * 0.82 * 0.70, abs=1e-6)


def test_iec_fuse_that_fails_i2_after_correction_is_caught(catalogs):
    # IEC 60364-4-43 433.1: I_2 ≤ 1.45 I_z with I_z after IEC 60364-5-52 Table B.52.14 (PVC 45 °C: 0.79, from
    # memory). Every pick satisfies it with the corrected I_z, or the circuit is flagged.
    ctx = context(catalogs, "iec", conductor_ambient_c=45, installation_method="C", device="fuse")
    for current in (20.0, 55.0, 140.0, 300.0):
        c = size_circuit(ctx, "Step 1", current, "rated current", False)
        if c.conductor is None or any(not ch.ok for ch in c.checks):
            continue
        i2 = (1.6 if c.device.value >= 16 else 1.9) * c.device.value
        assert i2 <= 1.45 * c.conductor.ampacity_a + 1e-6
        assert "0.79 (45 °C, PVC)" in line(c, "Conductor ampacity after correction").formula


def test_iec_units_above_their_rating_get_one_verdict(size_bank):
    # IEC 60831-1 (from memory): 1.00 U_N continuously. 415 V units on a 440 V supply see 106 %: flagged as
    # "Capacitor voltage", and the stress verdict every output uses agrees.
    bank = size_bank(rules="iec", supply={"voltage_v": 440, "frequency_hz": 50}, capacitor_voltage_v=415)
    check = next(c for c in bank.checks if c.name == "Capacitor voltage")
    assert not check.ok and "limit 100%" in check.detail
    assert bank.system.voltage.ok is False and bank.system.voltage.continuous_ok is False


def test_nec_units_within_110_pct_pass(size_bank):
    # IEEE Std 18: 110 % of rated rms voltage continuous; 480 V units on 500 V see 104 %.
    bank = size_bank(supply={"voltage_v": 500, "frequency_hz": 60}, capacitor_voltage_v=480)
    assert next(c for c in bank.checks if c.name == "Capacitor voltage").ok
    assert bank.system.voltage.continuous_ok


def test_inrush_summary_reports_the_worst_step_by_name(size_bank):
    bank = size_bank(need={"kvar": 150}, steps=[25, 50, 75],
                     supply={"voltage_v": 480, "frequency_hz": 60, "transformer_kva": 1000, "transformer_z_pct": 5.75})
    inrush = bank.inrush
    energising = {s.index: s.switching.energising_peak_a for s in bank.steps}
    b2b = {s.index: s.switching.back_to_back_peak_a for s in bank.steps}
    # the summary is the maximum over the steps (not step 1's and the last step's), and names it
    assert inrush.energising_peak_a == max(energising.values())
    assert energising[inrush.energising_step] == inrush.energising_peak_a
    assert inrush.back_to_back_peak_a == max(b2b.values())
    assert b2b[inrush.back_to_back_step] == inrush.back_to_back_peak_a


def test_voltage_rise_counts_the_utility_source(size_bank):
    # ΔV% ≈ 100·Q/S_sc with S_sc of the transformer and the source in series (textbook; IEEE 1036, from memory):
    # 1000 kVA, 5.75 %: 17.391 MVA; with 100 MVA in series 1/(1/17.391 + 1/100) = 14.815 MVA; 300 kvar → 2.025 %.
    bank = size_bank(need={"kvar": 300}, supply={"voltage_v": 480, "frequency_hz": 60, "transformer_kva": 1000,
                                                  "transformer_z_pct": 5.75, "source_sc_mva": 100})
    s_sc = 1 / (1 / (1000 * 100 / 5.75 / 1000) + 1 / 100)
    assert bank.voltage_rise_pct == pytest.approx(100 * bank.delivered_kvar / (1000 * s_sc), rel=1e-9)


def test_csa_basis_carries_its_own_rules(size_bank):
    bank = size_bank(rules="csa")
    # CSA C22.1 26-210: the device ≤ 250 % of rated current, checked; 26-222: 50 V within 1 min
    ceiling = [c for c in bank.checks if c.name.endswith("device ceiling")]
    assert ceiling and all(c.ok and "26-210" in c.rule for c in ceiling)
    assert (bank.discharge.limit_v, bank.discharge.time_s) == (50, 60)
    assert "26-222" in bank.discharge.rule
    assert any("CSA C22.1" in a for a in bank.assumptions)


def test_assumptions_are_stated(size_bank):
    text = " ".join(size_bank().assumptions)
    for fragment in ("45 °C, the enclosure air", "Terminals taken as listed and marked for 75 °C",
                     "multi-outlet branch circuits", "rules-nec-2023.yaml"):
        assert fragment in text


def test_rule_basis_file_named_in_the_spec(tmp_path, capsys):
    # A user's basis: the NEC 2023 file with a 240.4(B) limit of 600 A instead of 800 A, named by `rules:`
    text = (builtin_rules_dir() / BUILTIN["nec-2023"]).read_text(encoding="utf-8")
    (tmp_path / "site-rules.yaml").write_text(
        text.replace("id: nec-2023", "id: site").replace("next_size_up_max_a: 800", "next_size_up_max_a: 600"),
        encoding="utf-8")
    spec = tmp_path / "spec.yaml"
    spec.write_text("rules: site-rules.yaml\nbanks:\n  - name: A\n    supply: {voltage_v: 480, frequency_hz: 60}\n"
                    "    need: {kvar: 100}\n", encoding="utf-8")
    assert run(["size", str(spec), "--json", "--out", str(tmp_path / "out")]) == 0
    prov = json.loads(capsys.readouterr().out)["provenance"]
    assert prov["rule_basis_id"] == "site" and prov["rule_basis_file"].startswith("site-rules.yaml")
    assert len(prov["rule_basis_sha256"]) == 64
    # a broken file: exit 2, one line naming the file, the field and the problem
    (tmp_path / "site-rules.yaml").write_text(text.replace("  limit_v: 50", "  limit_v: -5"), encoding="utf-8")
    assert run(["size", str(spec), "--json", "--out", str(tmp_path / "out2")]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    assert "site-rules.yaml" in err and "discharge.limit_v" in err and "greater than 0" in err
    assert not (tmp_path / "out2").exists()


def test_catalog_copy_takes_the_rule_bases(tmp_path, capsys):
    assert run(["catalog", "copy", str(tmp_path / "mine")]) == 0
    assert (tmp_path / "mine" / "rules-csa.yaml").exists()
    assert run(["catalog", "check", str(tmp_path / "mine")]) == 0
    assert "rule basis CSA C22.1" in capsys.readouterr().out


def test_reactor_table_gives_capacitor_kvar_at_the_voltage_it_carries(size_bank):
    # Detuned 7 %, 400 V 50 Hz: the capacitors carry U_C = 400 / (1 − 0.07) = 430.1 V (trade-facts: U_C = U/(1−p));
    # their kvar there is Q_r·(U_C/U_r)² (re-rating formula), not their kvar at the 400 V supply.
    bank = size_bank(rules="iec", supply={"voltage_v": 400, "frequency_hz": 50}, need={"kvar": 100}, detuning_pct=7)
    for step in bank.steps:
        d = step.detuning
        u_c = 400 / 0.93
        rated_v = step.units[0].rated_voltage_v
        assert d.capacitor_kvar_at_capacitor_voltage == pytest.approx(step.rated_kvar * (u_c / rated_v) ** 2)
        assert d.capacitor_kvar_at_supply == pytest.approx(step.rated_kvar * (400 / rated_v) ** 2)


def test_step_plan_text_matches_the_steps(size_bank):
    bank = size_bank(need={"kvar": 300}, steps={"count": 4, "pattern": "1:2"})
    plan = bank.step_plan
    # the rule text ends with the resolution step as built, the figures the step list shows (here 45 kvar
    # nameplate is reached by one 50 kvar unit: the text must say 50, not leave 45 as the step)
    first = bank.steps[0]
    assert plan.rule.endswith(f"is 1 × 50 kvar = {first.rated_kvar:g} kvar nameplate, delivering {first.kvar:,.1f} "
                              "kvar")
    assert plan.resolution_kvar == first.kvar == 50.0
