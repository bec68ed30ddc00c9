"""Worked examples of the whole pipeline, checked against published figures and outside libraries.

Outside engines: electricpy 0.3.0 (power-factor correction, capacitance, RC discharge) and pandapower 3.5.6
(a power flow: corrected power factor and the (V/V_r)² output of a shunt capacitor). Both are imported once
here (they are slow to import); see the oracle notes in the shared design folder for their quirks.
"""

from __future__ import annotations

import dataclasses
import math
from pathlib import Path

import electricpy
import pandapower as pp
import pytest
from electricpy import passive

from bankbuild.api import run_spec
from bankbuild.design.sizing import size_project
from bankbuild.spec.read import read_spec
from bankbuild.tables.load import load_catalogs

SPECS = Path(__file__).parents[1] / "data" / "specs"


def tan_phi(pf: float) -> float:
    return math.tan(math.acos(pf))


def power_flow(bus_kv: float, loads: list[tuple[float, float]], shunts: list[tuple[float, float]]):
    """Solve one bus fed by an external grid at 1.0 pu.

    loads: (P kW, Q kvar) each; shunts: (rated kvar, rated kV) each, as capacitors (negative q_mvar).
    Returns the net (pandapower) after the power flow.
    """
    net = pp.create_empty_network()
    bus = pp.create_bus(net, vn_kv=bus_kv)
    pp.create_ext_grid(net, bus, vm_pu=1.0)
    for p_kw, q_kvar in loads:
        pp.create_load(net, bus, p_mw=p_kw / 1000, q_mvar=q_kvar / 1000)
    for kvar, kv in shunts:
        pp.create_shunt(net, bus, q_mvar=-kvar / 1000, p_mw=0.0, vn_kv=kv)
    pp.runpp(net, numba=False)
    return net


# --- 300 kvar, 480 V, 60 Hz: the hand-worked bank ------------------------------------------------------------


@pytest.fixture(scope="module")
def line3():
    return run_spec(SPECS / "line3_300kvar.yaml").banks[0]


def test_line3_rated_current(line3):
    # I = Q / (√3 · V) = 300,000 / (1.73205 × 480) = 360.84 A (textbook three-phase formula).
    assert line3.rated_current_a == pytest.approx(360.84, abs=0.005)
    assert line3.line_current_a == pytest.approx(360.84, abs=0.005)
    # Cross-check: electricpy's three-phase line current for S = 300 kVA at 480 V.
    assert line3.rated_current_a == pytest.approx(electricpy.acpiv(S=300e3, VLL=480), rel=1e-9)


def test_line3_units(line3):
    # 300 kvar from 50 kvar units (the largest of the table): 6 units, exactly 300 kvar.
    assert [(u.id, u.qty) for u in line3.steps[0].units] == [("CU-480-60-50.0", 6)]
    assert (line3.rated_kvar, line3.delivered_kvar, line3.capacitor_voltage_v) == (300, 300, 480)


def test_line3_fuse(line3):
    # 1.65 × 360.84 = 595.4 A -> 600 A. Source: NEC 240.6(A) (ratings); 165% common practice (no single source).
    assert line3.main.device_rating_a == 600
    assert line3.steps[0].device_rating_a == 600


def test_line3_conductor(line3):
    # ≥ 1.35 × 360.84 = 487.1 A (NEC 460.8(A)) at 75 °C, in the enclosure air 35 °C + 10 K = 45 °C: factor 0.82
    # (NEC Table 310.15(B)(1), 75 °C column, 41–45 °C; from memory). 2 × 250 kcmil = 2 × 255 × 0.82 = 418.2 A and
    # 2 × 300 kcmil = 467.4 A fall short; 2 × 350 kcmil = 2 × 310 × 0.82 = 508.4 A.
    # Source: NEC Table 310.16 (2023), copper 75 °C column. The 600 A fuse is the next standard rating above
    # 508.4 A, which is not itself one (NEC 240.4(B)).
    assert line3.main.conductor == "2 × 350 kcmil"
    assert line3.main.conductor_ampacity_a == pytest.approx(508.4, abs=1e-9)
    assert line3.main.conductor_ampacity_a >= 1.35 * 360.84


def test_line3_disconnect(line3):
    # ≥ 1.35 × 360.84 = 487.1 A (NEC 460.8(C)); a fusible switch must also hold the 600 A fuse: 600 A.
    assert line3.main.disconnect_rating_a == 600


def test_line3_capacitance(line3):
    # Delta per leg: C = Q / (3 · ω · V²) = 300,000 / (3 × 376.99 × 480²) = 1151.29 µF (trade-facts formula).
    assert line3.capacitance_uf_per_phase == pytest.approx(1151.29, abs=0.005)
    # electricpy: passive.farads(VAR, V) = VAR / (2πfV²) for one element; each delta leg carries Q/3 at V_LL.
    assert line3.capacitance_uf_per_phase == pytest.approx(passive.farads(100e3, 480, freq=60) * 1e6, rel=1e-9)


def test_line3_discharge_against_electricpy(line3):
    dis = line3.discharge
    # R ≤ t / (C · ln(V0 / 50)), V0 = √2 × 480 = 678.82 V: 60 / (1151.29e-6 × ln 13.576) = 60 / 0.0030029
    # = 19,980 Ω per leg (trade-facts formula; NEC 460.6(A): 50 V within 1 min).
    assert dis.max_resistance_ohm == pytest.approx(19980, abs=1)
    # electricpy's RC discharge through that R, from √2 × 480 V, leaves exactly 50 V after 60 s.
    left = passive.vcapdischarge(dis.time_s, dis.start_voltage_v, dis.max_resistance_ohm,
                                 dis.capacitance_uf_per_leg * 1e-6)
    assert left == pytest.approx(50.0, rel=1e-9)
    # Dissipation V² / R = 480² / 19,980 = 11.53 W (trade-facts formula).
    assert dis.resistor_power_w == pytest.approx(480**2 / dis.max_resistance_ohm)
    assert dis.resistor_power_w == pytest.approx(11.53, abs=0.005)


# --- 250 kW, PF 0.72 -> 0.96, 480 V, 60 Hz (electricpy example) ------------------------------------------------


@pytest.fixture(scope="module")
def pf_bank(catalogs_module):
    return size_project(_spec({"supply": {"voltage_v": 480, "frequency_hz": 60},
                               "need": {"kw": 250, "pf_present": 0.72, "pf_target": 0.96}}), catalogs_module).banks[0]


@pytest.fixture(scope="module")
def catalogs_module():
    return load_catalogs()


def _spec(bank: dict, rules: str = "nec"):
    from bankbuild.spec.model import Spec

    return Spec.model_validate({"rules": rules, "banks": [{"name": "Mixer hall", **bank}]})


def test_required_kvar_against_electricpy(pf_bank):
    # electricpy takes apparent power in VA (S = P / PF_old), and returns (C wye per phase [F], Qc [var]).
    c_wye, qc = electricpy.pfcorrection(250e3 / 0.72, 0.72, 0.96, VLL=480)
    assert qc == pytest.approx(168046.5, abs=0.1)  # the oracle's figure as recorded in the oracle notes
    assert pf_bank.required_kvar * 1000 == pytest.approx(qc, rel=1e-9)
    assert c_wye * 1e6 == pytest.approx(1934.71, abs=0.005)


def test_pf_bank_units_and_corrected_pf_against_pandapower(pf_bank):
    # 168.05 kvar from 50 kvar units: four units at least; the least over 168.05 is 3 × 50 + 20 = 170 kvar.
    assert [(u.id, u.qty) for u in pf_bank.steps[0].units] == [("CU-480-60-50.0", 3), ("CU-480-60-20.0", 1)]
    assert pf_bank.delivered_kvar == pytest.approx(170)
    # The load (250 kW, 250 × tan(acos 0.72) = 240.97 kvar) with the bank's delivered kvar as a shunt at 0.48 kV.
    net = power_flow(0.48, [(250.0, 250 * tan_phi(0.72))], [(pf_bank.delivered_kvar, 0.48)])
    p, q = net.res_ext_grid.p_mw.iloc[0], net.res_ext_grid.q_mvar.iloc[0]
    pf_engine = p / math.hypot(p, q)
    # By hand: 250 / √(250² + (240.97 − 170)²) = 250 / 259.88 = 0.9620.
    assert pf_bank.need.pf_corrected == pytest.approx(pf_engine, abs=1e-9)
    assert pf_bank.need.pf_corrected == pytest.approx(0.9620, abs=5e-5)
    assert pf_bank.need.pf_corrected >= 0.96


def test_pf_bank_capacitance_against_electricpy(pf_bank):
    # The bank's capacitance comes from its nameplate kvar (170), not from the need: each delta leg carries
    # 170/3 kvar at 480 V; electricpy's passive.farads(VAR, V) = VAR / (2πfV²) for one element.
    # By hand: 56,667 / (376.99 × 480²) = 652.40 µF.
    assert pf_bank.capacitance_uf_per_phase == pytest.approx(passive.farads(170e3 / 3, 480, freq=60) * 1e6, rel=1e-9)
    assert pf_bank.capacitance_uf_per_phase == pytest.approx(652.40, abs=0.005)


# --- re-rating: (V/V_r)² checked by a power-flow engine ------------------------------------------------------------


def test_600_v_units_on_a_480_v_bus_against_pandapower(catalogs_module):
    bank = size_project(_spec({"supply": {"voltage_v": 480, "frequency_hz": 60}, "need": {"kvar": 100},
                               "capacitor_voltage_v": 600}), catalogs_module).banks[0]
    assert bank.capacitor_voltage_v == 600
    # The units' nameplate (at 600 V) as a shunt rated 0.6 kV on a 0.48 kV bus: the engine's delivered Q.
    net = power_flow(0.48, [], [(bank.rated_kvar, 0.6)])
    delivered_engine = -net.res_shunt.q_mvar.iloc[0] * 1000
    assert bank.delivered_kvar == pytest.approx(delivered_engine, rel=1e-9)
    # By hand: 157.5 × (480 / 600)² = 157.5 × 0.64 = 100.8 kvar (re-rating formula, trade-facts).
    assert bank.delivered_kvar == pytest.approx(100.8)
    # Protection stays on the nameplate current: 157,500 / (√3 × 600) = 151.55 A.
    assert bank.rated_current_a == pytest.approx(151.55, abs=0.005)


@pytest.fixture(scope="module")
def thirty_kvar_480v(catalogs_module):
    """Tables whose only unit is the 30 kvar, 480 V, 60 Hz one (the trade-facts re-rating example)."""
    (unit,) = [u for u in catalogs_module.capacitor_units if u.unit_id == "CU-480-60-30.0"]
    return dataclasses.replace(catalogs_module, capacitor_units=(unit,))


@pytest.mark.parametrize(("volts", "delivered"), [(440, 25.2), (415, 22.4), (500, 32.5)])
def test_30_kvar_480_v_unit_at_other_voltages(thirty_kvar_480v, volts, delivered):
    # Source: trade-facts, checkable example: "A 30 kvar, 480 V unit delivers 25.2 kvar at 440 V, 22.4 at 415 V,
    # 32.5 at 500 V" (re-rating formula). The list cuts to 0.1 kvar rather than rounding: 30 × (500/480)² = 32.55.
    bank = size_project(_spec({"supply": {"voltage_v": volts, "frequency_hz": 60}, "need": {"kvar": 20}}),
                        thirty_kvar_480v).banks[0]
    assert [(u.id, u.qty) for u in bank.steps[0].units] == [("CU-480-60-30.0", 1)]
    assert math.floor(bank.delivered_kvar * 10) / 10 == pytest.approx(delivered)
    assert bank.delivered_kvar == pytest.approx(30 * (volts / 480) ** 2)
    # 500 V is above the unit's 480 V rating: the pipeline uses it (the table has nothing else) and flags it.
    flagged = {c.name for c in bank.checks if not c.ok}
    assert ("Unit voltage covers the supply" in flagged) == (volts > 480)


def test_440_v_100_kvar_unit_on_380_v(catalogs_module):
    # Source: trade-facts, checkable example: "A 440 V, 100 kvar unit on 380 V delivers 74.6 kvar".
    (template,) = [u for u in catalogs_module.capacitor_units if u.unit_id == "CU-440-50-50.0"]
    unit = template._replace(unit_id="CU-440-50-100.0", rated_kvar=100.0)
    tables = dataclasses.replace(catalogs_module, capacitor_units=(unit,))
    bank = size_project(_spec({"supply": {"voltage_v": 380, "frequency_hz": 50}, "need": {"kvar": 70}}, "iec"),
                        tables).banks[0]
    assert bank.delivered_kvar == pytest.approx(74.6, abs=0.05)
    # The same unit as a pandapower shunt rated 0.44 kV on a 0.38 kV bus.
    net = power_flow(0.38, [], [(100.0, 0.44)])
    assert bank.delivered_kvar == pytest.approx(-net.res_shunt.q_mvar.iloc[0] * 1000, rel=1e-9)


# --- a load list against a power flow ---------------------------------------------------------------------------


def test_load_list_against_pandapower():
    result = run_spec(SPECS / "loads_all_forms.yaml")
    bank = result.banks[0]
    spec = read_spec(SPECS / "loads_all_forms.yaml").spec
    from bankbuild.design.sizing import load_pq

    loads = []
    for load in spec.banks[0].need.loads:
        p, q = load_pq(load, 480.0)
        loads.extend([(p, q)] * load.quantity)
    net = power_flow(0.48, loads, [(bank.delivered_kvar, 0.48)])
    p, q = net.res_ext_grid.p_mw.iloc[0] * 1000, net.res_ext_grid.q_mvar.iloc[0] * 1000
    # The engine sums every load; the bank's P and Q are the same sums (308.279 kW, 172.122 kvar by hand).
    assert p == pytest.approx(bank.need.active_kw, rel=1e-9)
    assert q == pytest.approx(bank.need.reactive_kvar - bank.delivered_kvar, abs=1e-6)
    assert bank.need.pf_corrected == pytest.approx(p / math.hypot(p, q), abs=1e-9)


# --- detuned steps ----------------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def detuned(catalogs_module):
    return size_project(_spec({"supply": {"voltage_v": 400, "frequency_hz": 50}, "need": {"kvar": 200},
                               "steps": [50, 50, 100], "detuning_pct": 7}, "iec"), catalogs_module).banks[0]


def test_detuned_capacitor_voltage_and_unit_rating(detuned):
    # U_C = U / (1 − p) = 400 / 0.93 = 430.1 V (trade-facts formula): the next 50 Hz unit voltage is 440 V.
    assert detuned.capacitor_voltage_v == 440
    for step in detuned.steps:
        assert step.detuning.capacitor_voltage_v == pytest.approx(430.11, abs=0.005)


def test_detuned_tuning_frequency(detuned):
    # f_r = f1 / √p = 50 / √0.07 = 189.0 Hz. Source: trade-facts ("7% -> 189 Hz at 50 Hz").
    assert detuned.steps[0].detuning.tuning_frequency_hz == pytest.approx(189.0, abs=0.05)


def test_detuned_output(detuned):
    # Step 1: 50 + 7.5 = 57.5 kvar at 440 V; at 400 V: 57.5 × (400/440)² = 47.52 kvar; detuned output
    # Q = Q_C / (1 − p) = 47.52 / 0.93 = 51.10 kvar (trade-facts formula).
    step = detuned.steps[0]
    assert step.rated_kvar == pytest.approx(57.5)
    assert step.detuning.capacitor_kvar_at_supply == pytest.approx(47.52, abs=0.005)
    assert step.kvar == pytest.approx(47.52 / 0.93, abs=0.005)
    for s in detuned.steps:
        assert s.kvar == pytest.approx(s.rated_kvar * (400 / 440) ** 2 / (1 - 0.07))
    assert detuned.delivered_kvar == pytest.approx(sum(s.kvar for s in detuned.steps))


def test_detuned_reactor(detuned):
    step = detuned.steps[0]
    # X_C at 400 V = 400² / 47,520.7 = 3.3670 Ω; X_L = 0.07 × 3.3670 = 0.23569 Ω; L = X_L / (2π × 50) = 0.7502 mH.
    assert step.detuning.reactor_inductance_mh == pytest.approx(0.7502, abs=5e-5)
    # Reactor current = step line current = 51,097 / (√3 × 400) = 73.75 A.
    assert step.detuning.reactor_current_a == pytest.approx(73.75, abs=0.005)


def test_detuned_60_hz_tuning(catalogs_module):
    bank = size_project(_spec({"supply": {"voltage_v": 480, "frequency_hz": 60}, "need": {"kvar": 100},
                               "detuning_pct": 7}), catalogs_module).banks[0]
    # f_r = 60 / √0.07 = 226.8 Hz. Source: trade-facts ("7% -> 227 Hz at 60 Hz").
    assert bank.steps[0].detuning.tuning_frequency_hz == pytest.approx(227, abs=0.5)
    assert bank.capacitor_voltage_v == 600  # 480 / 0.93 = 516.1 V -> 600 V units


# --- resonance ----------------------------------------------------------------------------------------------------


def test_resonance_against_a_hand_calculation():
    bank = run_spec(SPECS / "iec_detuned_400v.yaml").banks[0]
    # Every step has a 7 % reactor: h = 1/√(p + Q_C/S_sc) (trade-facts, harmonics: parallel resonance with series
    # reactors; Q_C the capacitors' kvar at the supply voltage), S_sc = 1000 × 100 / 6 = 16,667 kVA.
    total = q_c = 0.0
    for point, step in zip(bank.resonance, bank.steps, strict=True):
        total += step.kvar
        q_c += step.kvar * (1 - 0.07)  # detuned output Q = Q_C/(1 − p) (trade-facts formulas)
        assert point.kvar == pytest.approx(total)
        assert point.harmonic_order == pytest.approx(1 / math.sqrt(0.07 + q_c / (1000 * 100 / 6)))
    # Step 1 alone: Q_C = 30 × (400/440)² = 24.79 kvar (re-rating formula); h = 1/√(0.07 + 24.79/16,667) = 3.740,
    # below the tuning order 1/√0.07 = 3.78 — not "25", which √(S_sc/Q) would give without the reactor.
    assert bank.resonance[0].harmonic_order == pytest.approx(3.740, abs=0.0005)
