"""The harmonic study of a sized bank in its network, for every distinct step combination the controller can
switch: frequency scan and resonances, bus distortion with and without the bank against IEEE 519 and
IEC 61000-2-4, capacitor duty against IEEE 18 or IEC 60831-1, step and main currents with harmonics against the
fuses, conductors and reactors, and what to do when it fails. No I/O; the arithmetic is in
:mod:`bankbuild.calc.harmonics`.

Detuned steps are studied at three corners of the tolerances: nominal, the lowest tuning (reactor
+tolerance, capacitance +tolerance) and the highest (reactor −tolerance, capacitance −tolerance); each figure
reported is the worst corner's. Nothing here states compliance.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from bankbuild.calc import capacitor as cap
from bankbuild.calc import detuning as det
from bankbuild.calc import harmonics as hm
from bankbuild.calc import system as sysc
from bankbuild.design.checks import step_combinations
from bankbuild.results.harmonics import (
    DistortionLimit,
    HarmonicCombination,
    HarmonicDuty,
    HarmonicRecommendation,
    HarmonicScan,
    HarmonicStepCurrent,
    HarmonicStudy,
    ScanCurve,
    TuningCandidate,
)
from bankbuild.results.sizing import Check
from bankbuild.spec.spectra import SPECTRA

SQRT3 = math.sqrt(3.0)
IEEE519_INDIVIDUAL_PCT = 5.0  # IEEE 519-2014 Table 1, bus ≤ 1.0 kV (kept in 519-2022; from memory)
IEEE519_THD_PCT = 8.0
IEEE519_RULE = ("IEEE 519-2014 Table 1, bus ≤ 1.0 kV: each harmonic ≤ 5.0 %, THD ≤ 8.0 % (from memory; kept in "
                "519-2022); applied at the bank's bus as if it were the point of common coupling")
IEC_61000_2_4_CLASS2_PCT = {5: 6.0, 7: 5.0, 11: 3.5, 13: 3.0, 17: 2.0, 19: 1.5, 23: 1.5, 25: 1.5}
IEC_61000_2_4_THD_PCT = 8.0
IEC_61000_2_4_RULE = ("IEC 61000-2-4 class 2 compatibility levels (from memory): THD 8 %; h5 6, h7 5, h11 3.5, "
                      "h13 3, h17 2, h19-h25 1.5 %")
LIMITS_BY_RULES = {  # capacitor duty: (rms voltage, peak voltage, rms current, kvar) per unit of rating, rule
    "nec": (1.10, 1.20, 1.35, 1.35, "IEEE 18 (2002 and later): ≤ 110 % rms voltage, ≤ 120 % peak voltage (sum of "
                                    "the harmonic peaks), ≤ 135 % rms current, ≤ 135 % kvar"),
    "iec": (1.10, None, 1.30, None, "IEC 60831-1: ≤ 1.10 U_N rms (8 h in every 24 h), ≤ 1.30 I_N rms current "
                                    "(from memory); no peak or kvar limit of its own"),
}
CAPACITANCE_TOLERANCE_PCT = {"nec": (0.0, 10.0), "iec": (5.0, 10.0)}
"""Capacitance tolerance (minus, plus) [%]: IEEE 18 kvar 100-110 % (2002 and later, from memory); IEC 60831-1
−5/+10 % (from memory)."""
CANDIDATE_TUNING_PCT = (5.67, 7.0, 14.0)
"""Tunings tried for a failing plain bank, the usual reactor series (trade-facts: 5.67 %, 7 %, 14 %)."""
BAND = 0.10  # a tuning within 10 % below a harmonic is too close (the resonance check's ±10 % band)
CHART_THIN = 5  # the chart draws every 5th point of the 0.01 scan (0.05), plus each curve's peak
CHART_CURVES = 5  # combinations drawn besides the bus without the bank


def _key(h: int) -> str:
    return f"h{h}"


@dataclass(frozen=True)
class _Case:
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
class _Combo:
    steps: list[int]
    cap_kvar: float
    kvar: float
    peaks: list[tuple[float, float]]  # nominal corner
    peak_range: list[float] | None
    bus_v: dict[int, float]  # worst corner per order, phase volts
    thd_pct: float
    amplification: dict[int, float]
    duty: dict[str, hm.CapacitorDuty]  # per corner
    current_per_kvar_a: float
    current_corner: str


def _evaluate(case: _Case, combos: list[tuple[float, list[int]]], orders: list[float] | None) -> list[_Combo]:
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
            v = hm.bus_voltages(net, case.currents_a, case.background_v)
            for h, value in v.items():
                bus_v[h] = max(bus_v.get(h, 0.0), value)
                amp[h] = max(amp.get(h, 0.0), hm.amplification(net, h))
            full = {1: case.phase_v, **v}
            branch = net.branches[0]
            duty[name] = hm.capacitor_duty(branch, full, 1.0, case.frequency_hz / case.rated_frequency_hz, kc)
            current = hm.branch_current_rms_a(branch, full) / kvar
            if current > per_kvar:
                per_kvar, per_kvar_corner = current, name
        all_peaks = [h for ps in peaks_by_corner.values() for h, _ in ps]
        out.append(_Combo(
            steps=members, cap_kvar=q_c, kvar=kvar, peaks=peaks_by_corner.get("nominal", []),
            peak_range=[min(all_peaks), max(all_peaks)] if (all_peaks and len(case.corners) > 1) else None,
            bus_v=bus_v, thd_pct=hm.thd_pct(bus_v, case.phase_v), amplification=amp, duty=duty,
            current_per_kvar_a=per_kvar, current_corner=per_kvar_corner))
    return out


def _duty_pu(duty: hm.CapacitorDuty, scale: float) -> hm.CapacitorDuty:
    """Duty computed on a 1 V (phase) rating, expressed on a rating of ``scale`` volts (phase)."""
    return hm.CapacitorDuty(duty.voltage_rms_pu / scale, duty.voltage_peak_pu / scale, duty.current_rms_pu / scale,
                            duty.kvar_pu / scale**2)


def _duty_ratio(duty: hm.CapacitorDuty, rules: str) -> float:
    """The largest share of a limit the duty uses (> 1: over a limit)."""
    v, peak, i, q, _ = LIMITS_BY_RULES[rules]
    ratios = [duty.voltage_rms_pu / v, duty.current_rms_pu / i]
    if peak is not None:
        ratios.append(duty.voltage_peak_pu / peak)
    if q is not None:
        ratios.append(duty.kvar_pu / q)
    return max(ratios)


def _distortion(combos: list[_Combo], bare_v: dict[int, float], phase_v: float) -> list[DistortionLimit]:
    """The bus distortion of every combination against IEEE 519 and IEC 61000-2-4 class 2."""
    bare_thd = hm.thd_pct(bare_v, phase_v)
    out = []
    for rule, thd_limit, individual in (
            (IEEE519_RULE, IEEE519_THD_PCT, dict.fromkeys(bare_v, IEEE519_INDIVIDUAL_PCT)),
            (IEC_61000_2_4_RULE, IEC_61000_2_4_THD_PCT, {h: v for h, v in IEC_61000_2_4_CLASS2_PCT.items()})):
        worst = max(combos, key=lambda c: c.thd_pct)
        over = []
        for c in combos:
            for h, v in c.bus_v.items():
                pct = 100.0 * v / phase_v
                if h in individual and pct > individual[h] + 1e-9:
                    over.append((pct - individual[h], c, h, pct))
        ok = worst.thd_pct <= thd_limit + 1e-9 and not over
        detail = (f"THD {worst.thd_pct:.2f} % with {worst.kvar:.0f} kvar in (worst of {len(combos)} "
                  f"combinations), {bare_thd:.2f} % without the bank; limit {thd_limit:g} %")
        if over:
            _, c, h, pct = max(over, key=lambda t: t[0])
            detail += f"; h{h} reaches {pct:.2f} % with {c.kvar:.0f} kvar in (limit {individual[h]:g} %)"
        if bare_thd > thd_limit + 1e-9:
            detail += "; already over the limit without the bank"
        out.append(DistortionLimit(rule=rule, thd_pct=thd_limit, individual_pct={_key(h): v for h, v in
                                                                                  sorted(individual.items())},
                                   ok=ok, worst_thd_pct=worst.thd_pct, worst_kvar=worst.kvar, detail=detail))
    return out


def _case(bank, result, cap_kvar, delivered, p: float, rules: str, f_r: float) -> _Case:
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
    minus, plus = (t / 100.0 for t in CAPACITANCE_TOLERANCE_PCT[rules])
    corners = (("nominal", 1.0, 1.0),)
    if p:
        pct_l = bank.assembly.reactor_tolerance_pct
        low = f"low tuning (reactor +{pct_l:g} %, capacitance +{100 * plus:g} %)"
        high = f"high tuning (reactor −{pct_l:g} %, capacitance −{100 * minus:g} %)"
        corners += ((low, 1.0 + t_l, 1.0 + plus), (high, 1.0 - t_l, 1.0 - minus))
    return _Case(voltage_v=v_s, frequency_hz=supply.frequency_hz, rated_frequency_hz=f_r, source_r_ohm=r_t + r_u,
                 source_x_ohm=x_t + x_u,
                 damping_r_ohm=hm.damping_resistance_ohm(spec.damping_kw, v_s) if spec.damping_kw else None,
                 p=p, reactor_q=spec.reactor_q, cap_kvar=tuple(cap_kvar), delivered_kvar=tuple(delivered),
                 currents_a={h: pct / 100.0 * i_1 for h, pct in spec.current_orders_pct().items() if i_1},
                 background_v={h: pct / 100.0 * phase_v for h, pct in spec.background_orders_pct().items()},
                 corners=corners)


def _combinations(cap_kvar) -> tuple[list[tuple[float, list[int]]], bool]:
    """Every distinct total the controller can switch in: the resonance check's own list."""
    return step_combinations(list(cap_kvar))


def _lowest_harmonic(case: _Case) -> int | None:
    stated = [h for h, v in {**case.currents_a, **case.background_v}.items() if v > 0]
    return min(stated) if stated else None


def _tuning_high(p: float, case: _Case) -> float:
    """The highest tuning order over the tolerances: reactor and capacitance both at their minus end."""
    kl = min(c[1] for c in case.corners)
    kc = min(c[2] for c in case.corners)
    return 1.0 / math.sqrt(p * kl * kc)


def _candidates(bank, result, rules: str, f_r: float, available_v: list[float]) -> list[TuningCandidate]:
    """Each usual tuning applied to every step (same delivered kvar), the lowest unit voltage that passes."""
    out = []
    delivered = [s.kvar for s in result.steps]
    for pct in CANDIDATE_TUNING_PCT:
        p = pct / 100.0
        cap_kvar = [q * (1.0 - p) for q in delivered]
        case = _case(bank, result, cap_kvar, delivered, p, rules, f_r)
        combos, _ = _combinations(cap_kvar)
        evaluated = _evaluate(case, combos, None)
        bare_v = hm.bus_voltages(case.network(), case.currents_a, case.background_v, with_bank=False)
        limits = _distortion(evaluated, bare_v, case.phase_v)
        worst_thd = max(c.thd_pct for c in evaluated)
        lowest = _lowest_harmonic(case)
        n_high = _tuning_high(p, case)
        margin_ok = lowest is None or n_high <= (1.0 - BAND) * lowest + 1e-9
        v_c = det.capacitor_voltage_v(case.voltage_v, p)
        unit_v = None
        for v_r in sorted(v for v in available_v if v >= v_c - 1e-9):
            scale = v_r / SQRT3
            if all(_duty_ratio(_duty_pu(d, scale), rules) <= 1.0 + 1e-9 for c in evaluated for d in c.duty.values()):
                unit_v = v_r
                break
        reasons = []
        if not margin_ok:
            reasons.append(f"tuning up to order {n_high:.2f} with tolerances is within 10 % of h{lowest}")
        reasons += [f"fails {lim.rule.split(',')[0].split(' Table')[0]}" for lim in limits if not lim.ok]
        if unit_v is None:
            reasons.append(f"no unit in the table rated ≥ {v_c:.0f} V carries the duty")
        out.append(TuningCandidate(
            tuning_pct=pct, tuning_order=det.tuning_order(p), unit_voltage_v=unit_v,
            overrating_pu=unit_v / case.voltage_v if unit_v else None, worst_thd_pct=worst_thd,
            passes=not reasons, reason="; ".join(reasons) or "passes"))
    return out


def _recommend(bank, result, case: _Case, failing: bool, rules: str, f_r: float,
               available_v: list[float]) -> HarmonicRecommendation:
    lowest = _lowest_harmonic(case)
    if case.p:
        n_high = _tuning_high(case.p, case)
        margin = (lowest - n_high) / lowest * 100.0 if lowest else None
        text = (f"tuned to order {det.tuning_order(case.p):.2f} ({bank.detuning_pct:g} %); with the reactor "
                f"(±{bank.assembly.reactor_tolerance_pct:g} %) and capacitance tolerances up to {n_high:.2f}")
        if lowest:
            text += f": {margin:.1f} % below h{lowest}, the lowest stated harmonic"
        return HarmonicRecommendation(kind="margin", tuning_pct=bank.detuning_pct, unit_voltage_v=None,
                                      lowest_harmonic=lowest, tuning_order_high=n_high, margin_pct=margin,
                                      candidates=[], text=text)
    if not failing:
        return HarmonicRecommendation(kind="keep", tuning_pct=None, unit_voltage_v=None, lowest_harmonic=lowest,
                                      tuning_order_high=None, margin_pct=None, candidates=[],
                                      text="the plain bank passes with the stated harmonics: no detuning needed")
    candidates = _candidates(bank, result, rules, f_r, available_v)
    passing = [c for c in candidates if c.passes]
    if not passing:
        return HarmonicRecommendation(
            kind="detune", tuning_pct=None, unit_voltage_v=None, lowest_harmonic=lowest, tuning_order_high=None,
            margin_pct=None, candidates=candidates,
            text="none of the usual tunings (5.67, 7, 14 %) passes: a harmonic filter study is needed")
    best = min(passing, key=lambda c: (c.overrating_pu, -(lowest or 0) + c.tuning_order, -c.tuning_pct))
    p = best.tuning_pct / 100.0
    v_s, f_s = case.voltage_v, case.frequency_hz
    rated_now = sum(s.rated_kvar for s in result.steps)
    rated_new = sum(cap.rerate_kvar(q * (1.0 - p), v_s, f_s, best.unit_voltage_v, f_r) for q in case.delivered_kvar)
    inductances = ", ".join(f"{det.reactor_inductance_mh(q * (1.0 - p), v_s, f_s, p):.3g}"
                            for q in case.delivered_kvar)
    text = (f"detune every step at p = {best.tuning_pct:g} % (order {best.tuning_order:.2f}) with units rated "
            f"{best.unit_voltage_v:g} V ({best.overrating_pu:.2f} × the supply): worst THD "
            f"{best.worst_thd_pct:.2f} %. Bill of materials: add {len(result.steps)} three-phase reactors "
            f"({inductances} mH per phase), units of {best.unit_voltage_v:g} V instead of "
            f"{result.capacitor_voltage_v:g} V, nameplate about {rated_new:.0f} kvar instead of {rated_now:.0f} kvar "
            "for the same delivered kvar")
    return HarmonicRecommendation(kind="detune", tuning_pct=best.tuning_pct, unit_voltage_v=best.unit_voltage_v,
                                  lowest_harmonic=lowest, tuning_order_high=None, margin_pct=None,
                                  candidates=candidates, text=text)


def _chart(case: _Case, orders: list[float], combos: list[_Combo], marked: list[int]) -> HarmonicScan:
    """A few curves for the chart: the bus without the bank, then combinations spread over the kvar range."""
    if len(combos) <= CHART_CURVES:
        chosen = combos
    else:
        picks = {round(i * (len(combos) - 1) / (CHART_CURVES - 1)) for i in range(CHART_CURVES)}
        chosen = [combos[i] for i in sorted(picks)]
    shunt_y = hm.shunt_admittances(case.network(), orders)
    unit_y = hm.branch_admittances(case.branch(1.0), orders)
    bare_scan = hm.scaled_scan(shunt_y, unit_y, 0.0)
    keep = set(range(0, len(orders), CHART_THIN))
    for c in chosen:
        for h, _ in c.peaks:
            keep.add(round((h - 1.0) / hm.SCAN_STEP))
    index = sorted(i for i in keep if i < len(orders))
    curves = [ScanCurve(label="without the bank", kvar=None, impedance_ohm=[bare_scan[i] for i in index])]
    for c in chosen:
        z = hm.scaled_scan(shunt_y, unit_y, c.cap_kvar)
        curves.append(ScanCurve(label=f"{c.kvar:.0f} kvar", kvar=c.kvar, impedance_ohm=[min(z[i], 1e6) for i in index]))
    return HarmonicScan(orders=[orders[i] for i in index], curves=curves, marked_orders=marked,
                        resolution=hm.SCAN_STEP)


def study(bank, result, rules: str, available_v: list[float]) -> tuple[HarmonicStudy, list[Check]]:
    """The harmonic study of a sized (and assembled) bank.

    Parameters
    ----------
    bank : Bank
        The bank's spec, with its ``harmonics`` block and a transformer.
    result : BankResult
        The sized bank: steps with their protection and (detuned) reactors.
    rules : str
        The rule basis, ``nec`` or ``iec``: which capacitor duty limits apply.
    available_v : list of float
        Rated voltages in the unit table at the units' frequency (for the recommendation).

    Returns
    -------
    tuple
        (HarmonicStudy, the checks it adds to the bank)
    """
    spec = bank.harmonics
    p = bank.tuning_factor
    f_r = result.steps[0].units[0].rated_frequency_hz
    cap_kvar = [s.detuning.capacitor_kvar_at_supply if (p and s.detuning) else s.kvar for s in result.steps]
    delivered = [s.kvar for s in result.steps]
    case = _case(bank, result, cap_kvar, delivered, p, rules, f_r)
    combos_in, complete = _combinations(cap_kvar)
    orders = hm.scan_orders()
    combos = _evaluate(case, combos_in, orders)
    bare = case.network()
    bare_v = hm.bus_voltages(bare, case.currents_a, case.background_v, with_bank=False)
    bare_thd = hm.thd_pct(bare_v, case.phase_v)
    phase_v = case.phase_v
    rated_phase_v = result.capacitor_voltage_v / SQRT3

    lim_v, lim_peak, lim_i, lim_q, duty_rule = LIMITS_BY_RULES[rules]
    worst_combo, worst_corner, worst_duty = None, "nominal", None
    for c in combos:
        for corner, d in c.duty.items():
            scaled = _duty_pu(d, rated_phase_v)
            if worst_duty is None or _duty_ratio(scaled, rules) > _duty_ratio(worst_duty, rules):
                worst_combo, worst_corner, worst_duty = c, corner, scaled
    duty_ok = _duty_ratio(worst_duty, rules) <= 1.0 + 1e-9
    worst = HarmonicDuty(
        steps=[result.steps[i - 1].index for i in worst_combo.steps], kvar=worst_combo.kvar, corner=worst_corner,
        capacitor_voltage_rms_pu=worst_duty.voltage_rms_pu, capacitor_voltage_peak_pu=worst_duty.voltage_peak_pu,
        capacitor_current_rms_pu=worst_duty.current_rms_pu, capacitor_kvar_pu=worst_duty.kvar_pu,
        limit_voltage_rms_pu=lim_v, limit_voltage_peak_pu=lim_peak, limit_current_rms_pu=lim_i, limit_kvar_pu=lim_q,
        rule=duty_rule, ok=duty_ok)

    top = max(combos, key=lambda c: c.current_per_kvar_a)
    per_kvar = top.current_per_kvar_a
    steps = []
    for s in result.steps:
        rms = per_kvar * s.kvar
        reactor = s.reactor.current_rating_a if s.reactor else None
        ok = (rms <= s.device_rating_a + 1e-9 and rms <= s.conductor_ampacity_a + 1e-9
              and (reactor is None or rms <= reactor + 1e-9))
        steps.append(HarmonicStepCurrent(index=s.index, fundamental_a=s.line_current_a, current_rms_a=rms,
                                         device_rating_a=s.device_rating_a,
                                         conductor_ampacity_a=s.conductor_ampacity_a, reactor_rating_a=reactor,
                                         ok=ok))
    main_rms = max(c.current_per_kvar_a * c.kvar for c in combos)
    limits = _distortion(combos, bare_v, phase_v)
    failing = not duty_ok or not all(lim.ok for lim in limits)
    recommendation = _recommend(bank, result, case, failing, rules, f_r, available_v)

    marked = sorted({h for h in (*case.currents_a, *case.background_v)} | set(sysc.CHARACTERISTIC_HARMONICS))
    combinations = []
    for c in combos:
        peak = max(c.peaks, key=lambda t: t[1]) if c.peaks else None
        d = _duty_pu(c.duty["nominal"], rated_phase_v)
        combinations.append(HarmonicCombination(
            steps=[result.steps[i - 1].index for i in c.steps], kvar=c.kvar,
            resonance_order=peak[0] if peak else None, resonance_orders=[h for h, _ in c.peaks],
            peak_impedance_ohm=min(peak[1], 1e6) if peak else None, resonance_order_range=c.peak_range,
            series_resonance_order=det.tuning_order(p) if p else None,
            bus_voltage_pct={_key(h): 100.0 * v / phase_v for h, v in c.bus_v.items()},
            bus_voltage_without_bank_pct={_key(h): 100.0 * v / phase_v for h, v in bare_v.items()},
            amplification={_key(h): a for h, a in c.amplification.items()}, bus_thd_pct=c.thd_pct,
            bus_thd_without_bank_pct=bare_thd, capacitor_voltage_rms_pu=d.voltage_rms_pu,
            capacitor_voltage_peak_pu=d.voltage_peak_pu, capacitor_current_rms_pu=d.current_rms_pu,
            capacitor_kvar_pu=d.kvar_pu, current_per_kvar_a=c.current_per_kvar_a))

    name = spec.spectrum or "stated"
    basis = SPECTRA[spec.spectrum].basis if spec.spectrum else "as stated in the spec"
    supply = bank.supply
    assumptions = [
        "per phase, balanced, wye equivalent; triplen orders left out (a three-wire bank does not carry them)",
        f"source: transformer X/R {spec.transformer_x_r:g}"
        + (f", utility source {supply.source_sc_mva:g} MVA with X/R {spec.source_x_r:g}" if supply.source_sc_mva
           else ", infinite bus behind it") + "; resistance constant with frequency, reactance ∝ h",
        "harmonic currents injected at the bus; background voltage as a source behind the source impedance; "
        "the two add in magnitude (phase angles unknown: the worst case)",
        "damping: " + (f"{spec.damping_kw:g} kW resistive load at the bus" if spec.damping_kw
                       else "none (no resistive load stated)"),
        "percentages of the nominal phase voltage; capacitor duty per unit of the units' rating",
    ]
    if p:
        minus, plus = CAPACITANCE_TOLERANCE_PCT[rules]
        assumptions.append(
            f"detuned steps at three corners: nominal; reactor +{bank.assembly.reactor_tolerance_pct:g} % with "
            f"capacitance +{plus:g} %; reactor −{bank.assembly.reactor_tolerance_pct:g} % with capacitance "
            f"−{minus:g} %; the worst corner's figures are reported"
            + ("; reactor losses from X_L/R = " + f"{spec.reactor_q:g}" if spec.reactor_q else
               "; reactor losses neglected"))
    study_result = HarmonicStudy(
        spectrum=name, spectrum_basis=basis, load_current_a=spec.load_fundamental_a(supply.voltage_v),
        current_pct={_key(h): v for h, v in spec.current_orders_pct().items()},
        background_voltage_pct=dict(spec.background_voltage_pct), transformer_x_r=spec.transformer_x_r,
        source_x_r=spec.source_x_r if supply.source_sc_mva else None, source_r_ohm=case.source_r_ohm,
        source_x_ohm=case.source_x_ohm, damping_kw=spec.damping_kw, reactor_q=spec.reactor_q,
        reactor_tolerance_pct=bank.assembly.reactor_tolerance_pct,
        capacitance_tolerance_pct=list(CAPACITANCE_TOLERANCE_PCT[rules]), combinations=combinations,
        combinations_complete=complete, worst=worst, steps=steps, current_corner=top.current_corner,
        main_current_rms_a=main_rms,
        main_device_rating_a=result.main.device_rating_a,
        main_conductor_ampacity_a=result.main.conductor_ampacity_a, limits=limits,
        scan=_chart(case, orders, combos, marked), recommendation=recommendation, assumptions=assumptions)
    return study_result, _checks(study_result, result, p)


def _checks(study_result: HarmonicStudy, result, p: float) -> list[Check]:
    """The study's verdicts for the bank's checks list."""
    checks = [Check(name="Harmonic distortion, " + ("IEEE 519" if i == 0 else "IEC 61000-2-4 class 2"),
                    ok=lim.ok, rule=lim.rule, detail=lim.detail) for i, lim in enumerate(study_result.limits)]
    w = study_result.worst
    parts = [f"rms voltage {w.capacitor_voltage_rms_pu:.3f} pu (≤ {w.limit_voltage_rms_pu:g})"]
    if w.limit_voltage_peak_pu is not None:
        parts.append(f"peak {w.capacitor_voltage_peak_pu:.3f} pu (≤ {w.limit_voltage_peak_pu:g})")
    parts.append(f"rms current {w.capacitor_current_rms_pu:.3f} pu (≤ {w.limit_current_rms_pu:g})")
    if w.limit_kvar_pu is not None:
        parts.append(f"kvar {w.capacitor_kvar_pu:.3f} pu (≤ {w.limit_kvar_pu:g})")
    checks.append(Check(
        name="Capacitor duty with harmonics", ok=w.ok, rule=w.rule,
        detail=f"worst combination {w.kvar:.0f} kvar ({w.corner}): " + ", ".join(parts)
               + f"; units rated {result.capacitor_voltage_v:g} V"))
    over = [s for s in study_result.steps if not s.ok]
    shown = over or [max(study_result.steps, key=lambda s: s.current_rms_a / max(s.fundamental_a, 1e-9))]
    texts = []
    for s in shown[:4]:
        text = (f"step {s.index}: {s.current_rms_a:.1f} A rms ({s.fundamental_a:.1f} A fundamental) against device "
                f"{s.device_rating_a:g} A, conductor {s.conductor_ampacity_a:g} A")
        if s.reactor_rating_a is not None:
            text += f", reactor {s.reactor_rating_a:g} A thermal"
        texts.append(text)
    main_ok = (study_result.main_current_rms_a <= study_result.main_device_rating_a + 1e-9
               and study_result.main_current_rms_a <= study_result.main_conductor_ampacity_a + 1e-9)
    texts.append(f"main: {study_result.main_current_rms_a:.1f} A rms against device "
                 f"{study_result.main_device_rating_a:g} A, conductor {study_result.main_conductor_ampacity_a:g} A")
    rule = "rms current with harmonics ≤ the device rating and the conductor ampacity"
    if p:
        rule += " and the reactor's thermal current (its linearity current is not in the reactor table: ask the " \
                "maker for it above the peak of this current)"
    corner = study_result.current_corner
    checks.append(Check(name="Currents with harmonics", ok=not over and main_ok, rule=rule,
                        detail=f"worst combination, {corner} corner of the tolerances: " + "; ".join(texts)))
    rec = study_result.recommendation
    if rec.kind == "margin":
        ok = rec.lowest_harmonic is None or rec.tuning_order_high <= (1.0 - BAND) * rec.lowest_harmonic + 1e-9
        checks.append(Check(name="Detuning margin with tolerances", ok=ok,
                            rule="highest tuning order with tolerances ≥ 10 % below the lowest stated harmonic",
                            detail=rec.text))
    elif rec.kind == "detune":
        checks.append(Check(name="Harmonic remedy", ok=True, level="info",
                            rule="usual tunings 5.67, 7, 14 %: the one that passes with the least overrating",
                            detail=rec.text))
    return checks
