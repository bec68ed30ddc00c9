"""The network of a bank's harmonic study: the bank and its source as a per-phase case, and every step
combination evaluated at each tolerance corner (scan peaks, bus voltages, capacitor duty, current per kvar).
Used by :mod:`bankbuild.design.harmonics`; the arithmetic is in :mod:`bankbuild.calc.harmonics`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from bankbuild.calc import harmonic_duty as hd
from bankbuild.calc import harmonics as hm
from bankbuild.calc import system as sysc
from bankbuild.design.checks import step_combinations

SQRT3 = math.sqrt(3.0)
CAPACITANCE_TOLERANCE_PCT = {"nec": (0.0, 10.0), "iec": (5.0, 10.0)}
"""Capacitance tolerance (minus, plus) [%]: IEEE 18 kvar 100-110 % (2002 and later, from memory); IEC 60831-1
−5/+10 % (from memory)."""


@dataclass(frozen=True)
class Case:
    """One bank to study: its source, its steps as capacitor kvar at the supply, tuning and what drives it."""

    voltage_v: float
    frequency_hz: float
    rated_frequency_hz: float
    source_r_ohm: float
    source_x_ohm: float
    damping_r_ohm: float | None
    p: float
    reactor_q: float | None
    cap_kvar: tuple[float, ...]  # per step, the capacitors' own kvar at the supply voltage
    delivered_kvar: tuple[float, ...]
    currents_a: dict[int, float]
    background_v: dict[int, float]  # phase volts at the bus without the bank
    corners: tuple[tuple[str, float, float], ...]  # (name, inductance factor, capacitance factor)

    @property
    def phase_v(self) -> float:
        return self.voltage_v / SQRT3

    def branch(self, kvar: float, kl: float = 1.0, kc: float = 1.0) -> hm.Branch:
        """The branch of ``kvar`` capacitor kvar at a tolerance corner."""
        x_c = hm.capacitor_reactance_ohm(kvar, self.voltage_v)
        x_l = self.p * x_c
        r = x_l / self.reactor_q if (self.reactor_q and x_l) else 0.0
        return hm.Branch(x_c / kc, x_l * kl, r)

    def network(self, branches: tuple[hm.Branch, ...] = ()) -> hm.Network:
        return hm.Network(self.source_r_ohm, self.source_x_ohm, branches, self.damping_r_ohm)


@dataclass(frozen=True)
class Combo:
    steps: list[int]
    cap_kvar: float
    kvar: float
    peaks: list[tuple[float, float]]  # nominal corner
    peak_range: list[float] | None
    bus_v: dict[int, float]  # worst corner per order, phase volts
    thd_pct: float
    amplification: dict[int, float]
    duty: dict[str, hd.CapacitorDuty]  # per corner
    current_per_kvar_a: float
    current_corner: str


def evaluate(case: Case, combos: list[tuple[float, list[int]]], orders: list[float] | None) -> list[Combo]:
    """Every combination at every corner: scan peaks (over ``orders``; None: no scan), bus voltages, capacitor
    duty, current per kvar."""
    with_scan = orders is not None
    bare = case.network()
    shunt_y = hm.shunt_admittances(bare, orders) if with_scan else []
    unit_y = {name: hm.branch_admittances(case.branch(1.0, kl, kc), orders)
              for name, kl, kc in case.corners} if with_scan else {}
    out = []
    for q_c, members in combos:
        kvar = sum(case.delivered_kvar[i - 1] for i in members)
        peaks_by_corner = {}
        if with_scan:
            for name, kl, kc in case.corners:
                peaks_by_corner[name] = hm.scaled_peaks(shunt_y, unit_y[name], q_c, orders,
                                                        series_order=case.branch(1.0, kl, kc).series_resonance_order)
        bus_v: dict[int, float] = {}
        amp: dict[int, float] = {}
        duty = {}
        per_kvar, per_kvar_corner = 0.0, "nominal"
        for name, kl, kc in case.corners:
            net = case.network((case.branch(q_c, kl, kc),))
            v = hd.bus_voltages(net, case.currents_a, case.background_v)
            for h, value in v.items():
                bus_v[h] = max(bus_v.get(h, 0.0), value)
                amp[h] = max(amp.get(h, 0.0), hm.amplification(net, h))
            full = {1: case.phase_v, **v}
            branch = net.branches[0]
            duty[name] = hd.capacitor_duty(branch, full, 1.0, case.frequency_hz / case.rated_frequency_hz, kc)
            current = hd.branch_current_rms_a(branch, full) / kvar
            if current > per_kvar:
                per_kvar, per_kvar_corner = current, name
        all_peaks = [h for ps in peaks_by_corner.values() for h, _ in ps]
        out.append(Combo(
            steps=members, cap_kvar=q_c, kvar=kvar, peaks=peaks_by_corner.get("nominal", []),
            peak_range=[min(all_peaks), max(all_peaks)] if (all_peaks and len(case.corners) > 1) else None,
            bus_v=bus_v, thd_pct=hd.thd_pct(bus_v, case.phase_v), amplification=amp, duty=duty,
            current_per_kvar_a=per_kvar, current_corner=per_kvar_corner))
    return out


def build_case(bank, result, cap_kvar, delivered, p: float, rules, f_r: float) -> Case:
    spec = bank.harmonics
    supply = bank.supply
    v_s = supply.voltage_v
    r_t, x_t = hm.source_impedance_ohm(v_s, sysc.transformer_sc_mva(supply.transformer_kva,
                                                                  supply.transformer_z_pct), spec.transformer_x_r)
    r_u = x_u = 0.0
    if supply.source_sc_mva is not None:
        r_u, x_u = hm.source_impedance_ohm(v_s, supply.source_sc_mva, spec.source_x_r)
    i_1 = spec.load_fundamental_a(v_s)
    phase_v = v_s / SQRT3
    t_l = bank.assembly.reactor_tolerance_pct / 100.0
    minus, plus = (t / 100.0 for t in CAPACITANCE_TOLERANCE_PCT[rules.family])
    corners = (("nominal", 1.0, 1.0),)
    if p:
        pct_l = bank.assembly.reactor_tolerance_pct
        low = f"low tuning (reactor +{pct_l:g} %, capacitance +{100 * plus:g} %)"
        high = f"high tuning (reactor −{pct_l:g} %, capacitance −{100 * minus:g} %)"
        corners += ((low, 1.0 + t_l, 1.0 + plus), (high, 1.0 - t_l, 1.0 - minus))
    return Case(voltage_v=v_s, frequency_hz=supply.frequency_hz, rated_frequency_hz=f_r, source_r_ohm=r_t + r_u,
                 source_x_ohm=x_t + x_u,
                 damping_r_ohm=hm.damping_resistance_ohm(spec.damping_kw, v_s) if spec.damping_kw else None,
                 p=p, reactor_q=spec.reactor_q, cap_kvar=tuple(cap_kvar), delivered_kvar=tuple(delivered),
                 currents_a={h: pct / 100.0 * i_1 for h, pct in spec.current_orders_pct().items() if i_1},
                 background_v={h: pct / 100.0 * phase_v for h, pct in spec.background_orders_pct().items()},
                 corners=corners)


def combinations(cap_kvar) -> tuple[list[tuple[float, list[int]]], bool]:
    """Every distinct total the controller can switch in: the resonance check's own list."""
    return step_combinations(list(cap_kvar))


def lowest_harmonic(case: Case) -> int | None:
    stated = [h for h, v in {**case.currents_a, **case.background_v}.items() if v > 0]
    return min(stated) if stated else None


def tuning_order_high(p: float, case: Case) -> float:
    """The highest tuning order over the tolerances: reactor and capacitance both at their minus end."""
    kl = min(c[1] for c in case.corners)
    kc = min(c[2] for c in case.corners)
    return 1.0 / math.sqrt(p * kl * kc)


