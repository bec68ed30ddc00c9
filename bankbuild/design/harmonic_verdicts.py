"""The verdicts of a bank's harmonic study: bus distortion against IEEE 519 and IEC 61000-2-4 class 2,
capacitor duty against IEEE 18 or IEC 60831-1 by rule basis, currents against the parts' ratings, the tuning
margin, and the remedy for a plain bank that fails (the usual tuning that passes with the least overrating).
"""

from __future__ import annotations

from bankbuild.calc import EPS
from bankbuild.calc import capacitor as cap
from bankbuild.calc import detuning as det
from bankbuild.calc import harmonic_duty as hd
from bankbuild.design.harmonic_network import (
    SQRT3,
    Case,
    Combo,
    build_case,
    combinations,
    evaluate,
    lowest_harmonic,
    tuning_order_high,
)
from bankbuild.design.reactors import IEEE18_PEAK_VOLTAGE_PU
from bankbuild.results.harmonics import DistortionLimit, HarmonicRecommendation, HarmonicStudy, TuningCandidate
from bankbuild.results.sizing import Check
from bankbuild.spec.harmonics import IEC_61000_2_4_CLASS2_PCT

IEEE519_INDIVIDUAL_PCT = 5.0  # IEEE 519-2014 Table 1, bus ≤ 1.0 kV (kept in 519-2022; from memory)
IEEE519_THD_PCT = 8.0
IEEE519_RULE = ("IEEE 519-2014 Table 1, bus ≤ 1.0 kV: each harmonic ≤ 5.0 %, THD ≤ 8.0 % (from memory; kept in "
                "519-2022); applied at the bank's bus as if it were the point of common coupling")
IEC_61000_2_4_THD_PCT = 8.0
IEC_61000_2_4_RULE = ("IEC 61000-2-4 class 2 compatibility levels (from memory): THD 8 %; h5 6, h7 5, h11 3.5, "
                      "h13 3, h17 2, h19-h25 1.5 %")
IEEE18_PEAK_RULE = "IEEE 18: ≤ 120 % of rated peak voltage (the harmonic peaks added)"


def duty_limits(rules) -> tuple[float, float | None, float, float | None, str]:
    """Capacitor duty limits of a rule basis: (rms voltage, peak voltage, rms current, kvar) per unit of rating,
    and the rule text, all from the basis's ``voltage_limits``; the IEEE 18 peak limit on the nec family.

    The rms voltage limit is the one the basis allows for hours a day (its light-load limit: IEC 60831-1's
    1.10 U_N for 8 h in 24 h; IEEE 18's continuous 110 %), as harmonic distortion lasts while the plant runs.
    """
    lim = rules.voltage_limits
    peak = IEEE18_PEAK_VOLTAGE_PU if rules.family == "nec" else None
    parts = [lim.light_load_text or lim.clause, lim.current_clause]
    if peak is not None:
        parts.append(IEEE18_PEAK_RULE)
    return lim.light_load_limit_pu, peak, lim.current_pu, lim.kvar_pu, "; ".join(parts)


CANDIDATE_TUNING_PCT = (5.67, 7.0, 14.0)
"""Tunings tried for a failing plain bank, the usual reactor series (trade-facts: 5.67 %, 7 %, 14 %)."""
BAND = 0.10  # a tuning within 10 % below a harmonic is too close (the resonance check's ±10 % band)


def duty_pu(duty: hd.CapacitorDuty, scale: float) -> hd.CapacitorDuty:
    """Duty computed on a 1 V (phase) rating, expressed on a rating of ``scale`` volts (phase)."""
    return hd.CapacitorDuty(duty.voltage_rms_pu / scale, duty.voltage_peak_pu / scale, duty.current_rms_pu / scale,
                            duty.kvar_pu / scale**2)


def duty_ratio(duty: hd.CapacitorDuty, rules) -> float:
    """The largest share of a limit the duty uses (> 1: over a limit)."""
    v, peak, i, q, _ = duty_limits(rules)
    ratios = [duty.voltage_rms_pu / v, duty.current_rms_pu / i]
    if peak is not None:
        ratios.append(duty.voltage_peak_pu / peak)
    if q is not None:
        ratios.append(duty.kvar_pu / q)
    return max(ratios)


def distortion_limits(combos: list[Combo], bare_v: dict[int, float], phase_v: float) -> list[DistortionLimit]:
    """The bus distortion of every combination against IEEE 519 and IEC 61000-2-4 class 2."""
    bare_thd = hd.thd_pct(bare_v, phase_v)
    out = []
    for rule, thd_limit, individual in (
            (IEEE519_RULE, IEEE519_THD_PCT, dict.fromkeys(bare_v, IEEE519_INDIVIDUAL_PCT)),
            (IEC_61000_2_4_RULE, IEC_61000_2_4_THD_PCT, {h: v for h, v in IEC_61000_2_4_CLASS2_PCT.items()})):
        worst = max(combos, key=lambda c: c.thd_pct)
        over = []
        for c in combos:
            for h, v in c.bus_v.items():
                pct = 100.0 * v / phase_v
                if h in individual and pct > individual[h] + EPS:
                    over.append((pct - individual[h], c, h, pct))
        ok = worst.thd_pct <= thd_limit + EPS and not over
        detail = (f"THD {worst.thd_pct:.2f} % with {worst.kvar:.0f} kvar in (worst of {len(combos)} "
                  f"combinations), {bare_thd:.2f} % without the bank; limit {thd_limit:g} %")
        if over:
            _, c, h, pct = max(over, key=lambda t: t[0])
            detail += f"; h{h} reaches {pct:.2f} % with {c.kvar:.0f} kvar in (limit {individual[h]:g} %)"
        if bare_thd > thd_limit + EPS:
            detail += "; already over the limit without the bank"
        out.append(DistortionLimit(rule=rule, thd_pct=thd_limit, individual_pct={f"h{h}": v for h, v in
                                                                                  sorted(individual.items())},
                                   ok=ok, worst_thd_pct=worst.thd_pct, worst_kvar=worst.kvar, detail=detail))
    return out


def tuning_candidates(bank, result, rules, f_r: float, available_v: list[float]) -> list[TuningCandidate]:
    """Each usual tuning applied to every step (same delivered kvar), the lowest unit voltage that passes."""
    out = []
    delivered = [s.kvar for s in result.steps]
    for pct in CANDIDATE_TUNING_PCT:
        p = pct / 100.0
        cap_kvar = [q * (1.0 - p) for q in delivered]
        case = build_case(bank, result, cap_kvar, delivered, p, rules, f_r)
        combos, _ = combinations(cap_kvar)
        evaluated = evaluate(case, combos, None)
        bare_v = hd.bus_voltages(case.network(), case.currents_a, case.background_v, with_bank=False)
        limits = distortion_limits(evaluated, bare_v, case.phase_v)
        worst_thd = max(c.thd_pct for c in evaluated)
        lowest = lowest_harmonic(case)
        n_high = tuning_order_high(p, case)
        margin_ok = lowest is None or n_high <= (1.0 - BAND) * lowest + EPS
        v_c = det.capacitor_voltage_v(case.voltage_v, p)
        unit_v = None
        for v_r in sorted(v for v in available_v if v >= v_c - EPS):
            scale = v_r / SQRT3
            if all(duty_ratio(duty_pu(d, scale), rules) <= 1.0 + EPS for c in evaluated for d in c.duty.values()):
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


def recommend(bank, result, case: Case, failing: bool, rules, f_r: float,
               available_v: list[float]) -> HarmonicRecommendation:
    lowest = lowest_harmonic(case)
    if case.p:
        n_high = tuning_order_high(case.p, case)
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
    candidates = tuning_candidates(bank, result, rules, f_r, available_v)
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


def study_checks(study_result: HarmonicStudy, result, p: float) -> list[Check]:
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
    steps = study_result.steps
    over = [s for s in steps if not s.ok]
    ratio = max(s.current_rms_a / s.fundamental_a for s in steps if s.fundamental_a > 0)
    texts = [f"each step carries up to {ratio:.2f} × its fundamental current"]
    for part, rating in (("device", lambda s: s.device_rating_a), ("conductor", lambda s: s.conductor_ampacity_a),
                         ("reactor", lambda s: s.reactor_rating_a)):
        bad = [s for s in steps if rating(s) is not None and s.current_rms_a > rating(s) + EPS]
        if bad:
            shown = ", ".join(f"step {s.index} {s.current_rms_a:.1f} A > {rating(s):g} A" for s in bad[:3])
            more = f" and {len(bad) - 3} more" if len(bad) > 3 else ""
            texts.append(f"{part} rating exceeded: {shown}{more}")
            if part == "reactor":
                texts.append("the reactors were picked for the assembly's assumed supply distortion at nominal "
                             "values; order them for the currents above")
        elif any(rating(s) is not None for s in steps):
            texts.append(f"every step's {part} carries it")
    main_ok = (study_result.main_current_rms_a <= study_result.main_device_rating_a + EPS
               and study_result.main_current_rms_a <= study_result.main_conductor_ampacity_a + EPS)
    texts.append(f"main: {study_result.main_current_rms_a:.1f} A rms against device "
                 f"{study_result.main_device_rating_a:g} A, conductor {study_result.main_conductor_ampacity_a:g} A")
    rule = "rms current with harmonics ≤ the device rating and the conductor ampacity"
    if p:
        rule += " and the reactor's thermal current (its linearity current is not in the reactor table: ask the " \
                "maker for it above the peak of this current)"
    where = f"worst combination, {study_result.current_corner} corner of the tolerances" if p else "worst combination"
    checks.append(Check(name="Currents with harmonics", ok=not over and main_ok, rule=rule,
                        detail=f"{where}: " + "; ".join(texts)))
    rec = study_result.recommendation
    if rec.kind == "margin":
        ok = rec.lowest_harmonic is None or rec.tuning_order_high <= (1.0 - BAND) * rec.lowest_harmonic + EPS
        checks.append(Check(name="Detuning margin with tolerances", ok=ok,
                            rule="highest tuning order with tolerances ≥ 10 % below the lowest stated harmonic",
                            detail=rec.text))
    elif rec.kind == "detune":
        checks.append(Check(name="Harmonic remedy", ok=True, level="info",
                            rule="usual tunings 5.67, 7, 14 %: the one that passes with the least overrating",
                            detail=rec.text))
    return checks
