"""The assembly inside the pipeline: what a sized bank carries, the spec's assembly options, and bad input.

Values are checked against the formulas of trade-facts.md where they are named; the rest are properties
(a result must always hold) or regression values, labelled as such.
"""

from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bankbuild.api import demo_spec_path
from bankbuild.cli.app import run
from bankbuild.design.select import best_combination


@pytest.fixture(scope="module")
def demo():
    from bankbuild.api import run_spec

    return run_spec(demo_spec_path())


def bank_named(result, words: str):
    return next(b for b in result.banks if words in b.name)


def test_demo_has_a_detuned_automatic_bank_and_a_fixed_bank(demo):
    detuned = next(b for b in demo.banks if b.detuning_pct and b.step_plan.form == "plan")
    fixed = next(b for b in demo.banks if b.step_plan.form == "fixed")
    assert all(s.reactor is not None and s.switching is not None for s in detuned.steps)
    assert detuned.control.controller is not None and detuned.control.ct is not None
    assert all(s.reactor is None and s.switching is None for s in fixed.steps)
    assert fixed.control.controller is None and fixed.reconnection is None
    assert fixed.inrush.back_to_back_peak_a is None


def test_detuned_bank_figures(demo):
    bank = next(b for b in demo.banks if b.detuning_pct and b.step_plan.form == "plan")
    p = bank.detuning_pct / 100
    for step in bank.steps:
        r = step.reactor
        # Source: trade-facts.md - f_r = f1/√p and U_C = U/(1 − p)
        assert r.tuning_frequency_hz == pytest.approx(bank.frequency_hz / math.sqrt(p))
        assert r.capacitor_voltage_v == pytest.approx(bank.supply_voltage_v / (1 - p))
        assert r.unit_voltage_v == bank.capacitor_voltage_v
        assert r.current_rating_a >= r.required_current_a >= r.fundamental_current_a
        assert abs(r.inductance_mh / r.required_inductance_mh - 1) <= 0.05 + 1e-9
        # the reactor in the loop keeps back-to-back inrush far below an undamped plain bank
        assert step.switching.loop_inductance_uh > 1000 * r.inductance_mh
        assert step.switching.damping == "none"


def test_step_plan_reaches_evenly_spaced_values(demo):
    bank = next(b for b in demo.banks if b.step_plan.form == "plan")
    plan = bank.step_plan
    resolution = plan.resolution_kvar
    # a 1:2:2… plan reaches every multiple of the resolution step up to the total
    assert plan.reachable_kvar == pytest.approx([k * resolution for k in range(plan.reachable_count)])
    assert plan.largest_gap_kvar == pytest.approx(resolution)
    assert sum(plan.step_kvar) == pytest.approx(bank.delivered_kvar)
    assert bank.delivered_kvar >= bank.required_kvar


def test_every_step_is_built_from_the_fewest_units(demo, catalogs):
    for bank in demo.banks:
        if bank.step_plan.form not in ("plan", "list"):
            continue
        sizes = sorted({u.rated_kvar for u in catalogs.capacitor_units
                        if u.rated_voltage_v == bank.capacitor_voltage_v and u.rated_frequency_hz == bank.frequency_hz})
        factor = bank.delivered_kvar / bank.rated_kvar
        for step in bank.steps:
            counts = best_combination([s * factor for s in sizes], step.target_kvar)
            assert sum(u.qty for u in step.units) == sum(counts)
            assert step.rated_kvar == pytest.approx(sum(c * s for c, s in zip(counts, sizes, strict=True)))


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(count=st.integers(min_value=1, max_value=12), pattern=st.sampled_from(["equal", "1:2", "1:2:2", "1:2:4"]),
       need=st.floats(min_value=20, max_value=1500), detune=st.sampled_from([None, 7, 14]))
def test_any_plan_covers_the_need_and_assembles(size_bank, count, pattern, need, detune):
    changes = {"need": {"kvar": need}, "steps": {"count": count, "pattern": pattern}}
    if detune:
        changes["detuning_pct"] = detune
    bank = size_bank(**changes)
    assert bank.delivered_kvar >= need - 1e-6
    assert len(bank.steps) == count
    assert bank.step_plan.reachable_count >= count + 1 or pattern == "equal"
    assert all(s.switching is not None for s in bank.steps)
    outputs = bank.control.controller.value if bank.control.controller else None
    assert outputs is None or outputs >= count
    assert bank.bom and [line.item for line in bank.bom] == list(range(1, len(bank.bom) + 1))


def test_inter_step_inductance_is_an_overridable_assumption(size_bank):
    # Source: trade-facts.md - I_pk ∝ 1/√L for back-to-back switching: 4 × the inductance halves the peak.
    base = size_bank(steps=[50, 50, 100])
    more = size_bank(steps=[50, 50, 100], assembly={"inter_step_inductance_uh": 20.0})
    assert base.inrush.inter_step_inductance_uh == 5.0
    assert more.inrush.back_to_back_peak_a == pytest.approx(base.inrush.back_to_back_peak_a / 2)


def test_plain_automatic_bank_needs_damping(size_bank):
    # 50 kvar steps switched against 150 kvar at 480 V with 5 µH: about 3.6 kA peak (trade-facts.md back-to-back
    # formula), above the 30 × I_e a plain 50 kvar-frame contactor makes (contactors.csv, from memory).
    bank = size_bank(steps=[50, 50, 100])
    first = bank.steps[0].switching
    assert first.back_to_back_peak_a == pytest.approx(1747 * math.sqrt(0.48 * 60.14 * 180.4 / (5 * 240.6)),
                                                      rel=3e-3)
    assert first.damping == "resistors" and first.damping_needed
    for step in bank.steps:
        sw = step.switching
        peak = max(sw.back_to_back_peak_a, sw.energising_peak_a or 0.0)
        if sw.damping == "none":
            assert peak <= min(sw.contactor_limit_a, sw.capacitor_limit_a)
        else:
            assert peak <= sw.contactor_limit_a
    assert bank.inrush.damping_needed
    assert any(c.name == "Inrush damping" and c.level == "caution" for c in bank.checks)


def test_a_step_no_contactor_can_switch_is_a_failed_check(size_bank):
    bank = size_bank(need={"kvar": 600}, steps=[300, 300])
    failed = {c.name: c.detail for c in bank.checks if not c.ok}
    assert "Step contactors" in failed and "split the step" in failed["Step contactors"]
    assert bank.bom  # the rest of the assembly is still listed


def test_losses_add_up(demo):
    for bank in demo.banks:
        e = bank.enclosure
        assert e.total_losses_w == pytest.approx(sum(line.total_w for line in e.losses))
        # Source: common practice - heat balance of air, V̇ = P/(ρ·c_p·ΔT)
        assert e.airflow_m3_per_h == pytest.approx(3600 * e.total_losses_w / (e.air_density_kg_m3 * 1005.0 * 10.0))
        assert e.fan_qty * e.fan.value >= e.airflow_m3_per_h
        assert e.busbar_rating_a >= e.busbar_required_a


def test_reconnection_delay_covers_both_limits(demo):
    for bank in demo.banks:
        r = bank.reconnection
        if r is None:
            continue
        assert r.delay_s >= max(r.time_to_10pct_s, r.time_to_50v_s)
        assert r.delay_s % 5 == 0


def test_json_output_carries_the_assembly(tmp_path, capsys):
    import json

    assert run(["demo", "--out", str(tmp_path), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    bank = data["banks"][0]
    for key in ("step_plan", "inrush", "reconnection", "control", "enclosure", "bom"):
        assert key in bank, key
    assert set(bank["step_plan"]) >= {"reachable_kvar", "largest_gap_kvar", "step_kvar", "rule"}
    assert {"reactor", "switching"} <= set(bank["steps"][0])
    assert data["bom"]


@pytest.mark.parametrize(("assembly", "field"), [
    ({"harmonic_voltage_pct": {"h1": 5}}, "harmonic_voltage_pct.h1"),
    ({"ambient_c": 90}, "assembly.ambient_c"),
    ({"inter_step_uh": 5}, "assembly.inter_step_uh"),
    ({"ct_secondary_a": 2}, "assembly.ct_secondary_a"),
])
def test_bad_assembly_option_is_one_line_and_exit_2(write_yaml, tmp_path, capsys, assembly, field):
    spec = write_yaml({"banks": [{"name": "A", "supply": {"voltage_v": 480, "frequency_hz": 60},
                                  "need": {"kvar": 100}, "steps": [50, 50], "assembly": assembly}]})
    out = tmp_path / "out"
    assert run(["size", str(spec), "--out", str(out)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and str(spec) in err and field in err
    assert not out.exists()


def test_help_does_not_import_heavy_libraries():
    code = ("import sys; from bankbuild.cli.app import run; run(['--help']); "
            "sys.exit(any(m in sys.modules for m in ('openpyxl', 'pandas', 'reportlab')))")
    done = subprocess.run([sys.executable, "-c", code], cwd=Path(__file__).parents[2], capture_output=True,
                          check=False)
    assert done.returncode == 0, done.stderr


def test_existing_bank_steps_are_switched(size_bank):
    bank = size_bank(units=[[{"id": "CU-480-60-50.0"}], [{"id": "CU-480-60-50.0"}],
                            [{"id": "CU-480-60-25.0", "qty": 2}]])
    assert bank.step_plan.form == "existing"
    assert all(s.switching is not None and s.switching.contactor is not None for s in bank.steps)
    assert bank.control.controller.value >= 3
    assert bank.step_plan.reachable_kvar == pytest.approx([0, 50, 100, 150])


def test_iec_detuned_bank_with_a_made_to_order_reactor(size_bank):
    # 400 V 50 Hz, 7 %: 440 V units give (400/440)² / 0.93 = 0.8886 of nameplate, so a 45 kvar step is built
    # from 52.5 kvar nameplate to 46.65 kvar; the table's 40 and 50 kvar reactors are 17 % and 7 % off its
    # inductance (L ∝ 1/Q), outside the 5 % tolerance: the BOM orders one to the stated figures.
    bank = size_bank(rules="iec", supply={"voltage_v": 400, "frequency_hz": 50}, need={"kvar": 90},
                     steps=[45, 45], detuning_pct=7)
    assert bank.capacitor_voltage_v == 440
    assert bank.steps[0].kvar == pytest.approx(52.5 * (400 / 440) ** 2 / 0.93)
    assert all(s.reactor.made_to_order for s in bank.steps)
    flagged = {c.name: c for c in bank.checks if not c.ok}
    assert flagged["Detuning reactors"].level == "caution"
    made = [line for line in bank.bom if line.category == "Detuning reactors"]
    assert len(made) == 1 and made[0].qty == 2 and "made to order" in made[0].description and not made[0].table
    assert bank.control.control_voltage_v == 230  # Source: common practice (no single source) - 230 V under iec


def test_tuning_onto_a_stated_harmonic_is_flagged_not_a_crash(size_bank):
    # p = 4 % tunes to 1/√0.04 = order 5 exactly (trade-facts.md f_r = f1/√p): the stated 5th-harmonic voltage
    # would drive unbounded current; the result says so and still lists every part.
    import json

    bank = size_bank(steps=[50, 50], detuning_pct=4)
    failed = {c.name for c in bank.checks if not c.ok}
    assert {"Detuning against the stated harmonics", "Unit voltage with detuning and harmonics"} <= failed
    assert all(s.switching.contactor is not None for s in bank.steps)  # sized on the fundamental current
    reactor = next(line for line in bank.bom if line.category == "Detuning reactors")
    assert "current to suit" in reactor.description
    text = bank.model_dump_json()
    assert "Infinity" not in text and json.loads(text)["steps"][0]["reactor"]["required_current_a"] is None
