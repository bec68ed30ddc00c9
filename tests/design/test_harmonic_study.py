"""design.harmonics: the harmonic study of a sized bank, through the real pipeline.

Check values: the resonance check's own √(S_sc/Q) and 1/√(p + Q_C/S_sc) per combination (design.md), IEEE 519
and IEC 61000-2-4 limit values (trade-facts, from memory), IEEE 18 duty limits (trade-facts), and the calc
module's functions (themselves checked against a separate nodal solution in tests/calc/test_harmonics.py).
"""

from __future__ import annotations

import json
import math

import pytest

from bankbuild.calc import harmonics as hm
from bankbuild.calc import system as sysc
from bankbuild.design.rerate import rerate_project
from bankbuild.design.sizing import size_project
from bankbuild.reports.jsonout import project_json
from bankbuild.spec.model import Spec

SUPPLY = {"voltage_v": 480, "frequency_hz": 60, "transformer_kva": 1500, "transformer_z_pct": 5.75}
DRIVES = {"load_current_a": 800, "current_pct": {"h5": 30, "h7": 12, "h11": 6, "h13": 4},
          "background_voltage_pct": {"h5": 1.5}, "transformer_x_r": 8}


def sized(catalogs, **bank):
    data = {"name": "Bank", "supply": SUPPLY, "need": {"kvar": 300}, "steps": [50, 50, 100, 100]} | bank
    return size_project(Spec.model_validate({"banks": [data]}), catalogs).banks[0]


def test_no_block_no_study_no_key(catalogs):
    result = sized(catalogs)
    assert result.harmonics is None
    assert "harmonics" not in json.loads(project_json(
        size_project(Spec.model_validate({"banks": [{"name": "B", "supply": SUPPLY, "need": {"kvar": 100}}]}),
                     catalogs)))["banks"][0]
    assert not [c for c in result.checks if c.name.startswith("Harmonic")]


def test_json_keys_as_design_fixes_them(catalogs):
    result = sized(catalogs, harmonics=DRIVES)
    bank = json.loads(project_json(size_project(Spec.model_validate(
        {"banks": [{"name": "B", "supply": SUPPLY, "need": {"kvar": 300}, "steps": [50, 50, 100, 100],
                    "harmonics": DRIVES}]}), catalogs)))["banks"][0]
    study = bank["harmonics"]
    for combo in study["combinations"]:
        assert {"kvar", "resonance_order", "bus_voltage_pct", "bus_thd_pct", "bus_thd_without_bank_pct"} <= set(combo)
        assert set(combo["bus_voltage_pct"]) == {"h5", "h7", "h11", "h13"}
    assert {"kvar", "capacitor_voltage_rms_pu", "capacitor_voltage_peak_pu", "capacitor_current_rms_pu",
            "capacitor_kvar_pu"} <= set(study["worst"])
    # distinct totals of [50, 50, 100, 100]: 50, 100, 150, 200, 250, 300
    assert [c.kvar for c in result.harmonics.combinations] == [50, 100, 150, 200, 250, 300]


def test_resonance_orders_match_the_resonance_check(catalogs):
    """Plain steps, X/R 100: the scan's peak for each combination is √(S_sc/Q) of the resonance check within the
    scan's resolution (design.md: h = √(S_sc/Q) for plain steps)."""
    result = sized(catalogs, harmonics=DRIVES | {"transformer_x_r": 100})
    expected = {round(p.kvar, 6): p.harmonic_order for p in result.system.resonance_combinations}
    for combo in result.harmonics.combinations:
        assert combo.resonance_order == pytest.approx(expected[round(combo.kvar, 6)], abs=0.011)


def test_detuned_orders_and_tolerance_range(catalogs):
    """Detuned at 7 %: each parallel resonance lies below the series resonance 1/√0.07 = 3.78 and equals
    1/√(p + Q_C/S_sc) (design.md) at the nominal values; the tolerance range brackets it."""
    result = sized(catalogs, detuning_pct=7, harmonics=DRIVES | {"transformer_x_r": 100})
    s_sc = sysc.short_circuit_mva(1500, 5.75)
    caps = {round(s.kvar, 6): s.detuning.capacitor_kvar_at_supply for s in result.steps}
    for combo, point in zip(result.harmonics.combinations, result.system.resonance_combinations, strict=True):
        q_c = sum(caps[round(result.steps[i - 1].kvar, 6)] for i in combo.steps)
        assert combo.resonance_order == pytest.approx(1 / math.sqrt(0.07 + q_c / (1000 * s_sc)), abs=0.011)
        assert combo.resonance_order == pytest.approx(point.harmonic_order, abs=0.011)
        low, high = combo.resonance_order_range
        assert low <= combo.resonance_order <= high
        assert combo.series_resonance_order == pytest.approx(1 / math.sqrt(0.07))
        assert combo.resonance_order < combo.series_resonance_order
        # the highest tuning over the tolerances: reactor −5 %, capacitance −0 % (IEEE 18 kvar 100-110 %)
        assert high < 1 / math.sqrt(0.07 * 0.95) == pytest.approx(result.harmonics.recommendation.tuning_order_high)


def test_thd_is_the_root_sum_of_the_stated_orders(catalogs):
    result = sized(catalogs, harmonics=DRIVES)
    for combo in result.harmonics.combinations:
        assert combo.bus_thd_pct == pytest.approx(math.sqrt(sum(v * v for v in combo.bus_voltage_pct.values())))
        assert combo.bus_thd_without_bank_pct == pytest.approx(
            math.sqrt(sum(v * v for v in combo.bus_voltage_without_bank_pct.values())))


def test_bus_voltages_from_the_network(catalogs):
    """One combination recomputed by hand from calc: background divided by the bank plus current × |Z_bus|."""
    result = sized(catalogs, harmonics=DRIVES)
    study = result.harmonics
    combo = study.combinations[-1]  # every step on: 300 kvar
    x_c = hm.capacitor_reactance_ohm(300.0, 480.0)
    net = hm.Network(study.source_r_ohm, study.source_x_ohm, (hm.Branch(x_c),))
    phase = 480 / math.sqrt(3)
    v5 = 0.015 * phase * abs(hm.bus_impedance(net, 5)) / abs(hm.bus_impedance(net.without_bank(), 5)) \
        + 0.30 * 800 * abs(hm.bus_impedance(net, 5))
    assert combo.bus_voltage_pct["h5"] == pytest.approx(100 * v5 / phase)
    # the source: 1500 kVA, 5.75 %: X = 0.48² / 26.09 MVA, R = X / 8
    assert study.source_x_ohm == pytest.approx(0.48**2 / (1.5 / 0.0575))
    assert study.source_r_ohm == pytest.approx(study.source_x_ohm / 8)


def test_limits_are_the_published_values(catalogs):
    limits = sized(catalogs, harmonics=DRIVES).harmonics.limits
    ieee, iec = limits
    assert ieee.thd_pct == 8.0 and set(ieee.individual_pct.values()) == {5.0}  # IEEE 519 ≤ 1 kV (from memory)
    assert iec.thd_pct == 8.0  # IEC 61000-2-4 class 2 (from memory)
    assert iec.individual_pct == {"h5": 6.0, "h7": 5.0, "h11": 3.5, "h13": 3.0, "h17": 2.0, "h19": 1.5, "h23": 1.5,
                                  "h25": 1.5}


def test_plain_bank_near_the_13th_fails_and_gets_a_remedy(catalogs):
    """150 kvar puts the resonance at √(26.09 MVA/150 kvar) = 13.2, on the 13th: distortion and duty fail, and a
    usual tuning is offered with the unit voltage it needs."""
    result = sized(catalogs, harmonics=DRIVES)
    checks = {c.name: c for c in result.checks}
    assert not checks["Harmonic distortion, IEEE 519"].ok
    assert not checks["Capacitor duty with harmonics"].ok
    worst = result.harmonics.worst
    assert worst.kvar == 150.0
    assert worst.limit_voltage_peak_pu == 1.20 and worst.limit_current_rms_pu == 1.35  # IEEE 18
    rec = result.harmonics.recommendation
    assert rec.kind == "detune" and rec.tuning_pct in (5.67, 7.0, 14.0)
    assert rec.unit_voltage_v >= 480 / (1 - rec.tuning_pct / 100)
    assert checks["Harmonic remedy"].detail == rec.text
    # at the 13th resonance the steps carry several times their fundamental: past their fuses
    currents = checks["Currents with harmonics"]
    assert not currents.ok and "device rating exceeded" in currents.detail
    step = result.harmonics.steps[0]
    assert step.current_rms_a > step.device_rating_a > step.fundamental_a


def test_the_remedy_passes_when_built(catalogs):
    """Size the recommended detuned bank: its distortion and duty checks pass."""
    rec = sized(catalogs, harmonics=DRIVES).harmonics.recommendation
    built = sized(catalogs, detuning_pct=rec.tuning_pct, capacitor_voltage_v=rec.unit_voltage_v, harmonics=DRIVES)
    checks = {c.name: c for c in built.checks}
    assert checks["Harmonic distortion, IEEE 519"].ok
    assert checks["Capacitor duty with harmonics"].ok


def test_iec_basis_uses_iec_60831_limits(catalogs):
    data = {"rules": "iec", "banks": [{"name": "B", "need": {"kvar": 200}, "steps": [100, 100], "detuning_pct": 7,
                                       "supply": {"voltage_v": 400, "frequency_hz": 50, "transformer_kva": 1000,
                                                  "transformer_z_pct": 6},
                                       "harmonics": {"load_kw": 300, "spectrum": "six_pulse_choke"}}]}
    study = size_project(Spec.model_validate(data), catalogs).banks[0].harmonics
    assert study.worst.limit_current_rms_pu == 1.30 and study.worst.limit_voltage_peak_pu is None
    assert study.capacitance_tolerance_pct == [5.0, 10.0]
    assert study.spectrum == "six_pulse_choke" and "common practice" in study.spectrum_basis
    assert study.load_current_a == pytest.approx(300_000 / (math.sqrt(3) * 400 * 0.95))
    assert study.recommendation.kind == "margin"
    assert 0 < study.recommendation.margin_pct < 30


def test_damping_load_lowers_the_worst_distortion(catalogs):
    bare = sized(catalogs, harmonics=DRIVES).harmonics
    damped = sized(catalogs, harmonics=DRIVES | {"damping_kw": 400}).harmonics
    assert max(c.bus_thd_pct for c in damped.combinations) < max(c.bus_thd_pct for c in bare.combinations)


def test_scan_for_the_chart(catalogs):
    scan = sized(catalogs, harmonics=DRIVES).harmonics.scan
    assert scan.curves[0].kvar is None  # the bus without the bank first
    assert len(scan.curves) <= 6
    assert all(len(c.impedance_ohm) == len(scan.orders) for c in scan.curves)
    assert scan.orders == sorted(scan.orders) and scan.orders[0] == 1.0 and scan.orders[-1] == 50.0
    assert {5, 7, 11, 13} <= set(scan.marked_orders)


def test_rerate_reruns_the_study_at_the_new_supply(catalogs):
    data = Spec.model_validate({"banks": [{"name": "B", "supply": SUPPLY, "need": {"kvar": 300},
                                           "steps": [100, 100, 100], "harmonics": DRIVES}]})
    moved = rerate_project(data, catalogs, 415.0).banks[0]
    study = moved.at_new_supply.harmonics
    assert study is not None
    assert study.source_x_ohm == pytest.approx(0.415**2 / (1.5 / 0.0575))


def test_every_combination_against_a_bus_solution_with_separate_steps(catalogs):
    """Plain steps of unequal size, a utility source of its own X/R behind the transformer, and a damping load:
    each combination's bus voltages rebuilt here from the supply data (the bus node's admittance with each
    step its own capacitor, the background as an EMF behind the source), without calc.harmonics."""
    supply = SUPPLY | {"source_sc_mva": 60}
    spec = DRIVES | {"transformer_x_r": 6, "source_x_r": 12, "damping_kw": 150,
                     "background_voltage_pct": {"h5": 1.5, "h7": 0.8, "h11": 0.4}}
    result = size_project(Spec.model_validate({"banks": [
        {"name": "B", "supply": supply, "need": {"kvar": 300}, "steps": [25, 50, 75, 150], "harmonics": spec}]}),
        catalogs).banks[0]
    v = 480.0
    phase = v / math.sqrt(3)
    x_t, x_u = v**2 / (1.5e6 / 0.0575), v**2 / 60e6
    r_src, x_src = x_t / 6 + x_u / 12, x_t + x_u  # R constant with h, X at the fundamental
    g_d = 150e3 / v**2
    kvar = {s.index: s.kvar for s in result.steps}

    def bus(h, members, inject, emf):
        z_src = complex(r_src, h * x_src)
        y = 1 / z_src + g_d + sum(1j * h * kvar[m] * 1000 / v**2 for m in members)  # each capacitor: j·h·B
        return abs((emf / z_src + inject) / y)

    for combo in result.harmonics.combinations:
        for key, pct in combo.bus_voltage_pct.items():
            h = int(key[1:])
            bg = spec["background_voltage_pct"].get(key, 0.0) / 100 * phase
            emf = bg / bus(h, [], 0.0, 1.0)  # the stated background is what the bus shows without the bank
            expected = bus(h, combo.steps, 0.0, emf) + bus(h, combo.steps, spec["current_pct"][key] / 100 * 800, 0.0)
            assert pct == pytest.approx(100 * expected / phase, rel=1e-9)
