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

from bankbuild.calc import EPS
from bankbuild.calc import detuning as det
from bankbuild.calc import harmonic_duty as hd
from bankbuild.calc import harmonics as hm
from bankbuild.calc import system as sysc
from bankbuild.design.harmonic_network import (
    CAPACITANCE_TOLERANCE_PCT,
    SQRT3,
    Case,
    Combo,
    build_case,
    combinations,
    evaluate,
)
from bankbuild.design.harmonic_verdicts import (
    distortion_limits,
    duty_limits,
    duty_pu,
    duty_ratio,
    recommend,
    study_checks,
)
from bankbuild.results.harmonics import (
    HarmonicCombination,
    HarmonicDuty,
    HarmonicScan,
    HarmonicStepCurrent,
    HarmonicStudy,
    ScanCurve,
)
from bankbuild.results.sizing import Check
from bankbuild.spec.spectra import SPECTRA

CHART_THIN = 5  # the chart draws every 5th point of the 0.01 scan (0.05), plus each curve's peak
CHART_CURVES = 5  # combinations drawn besides the bus without the bank


def _key(h: int) -> str:
    return f"h{h}"


def _chart(case: Case, orders: list[float], combos: list[Combo], marked: list[int]) -> HarmonicScan:
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


def study(bank, result, rules, available_v: list[float]) -> tuple[HarmonicStudy, list[Check]]:
    """The harmonic study of a sized (and assembled) bank.

    Parameters
    ----------
    bank : Bank
        The bank's spec, with its ``harmonics`` block and a transformer.
    result : BankResult
        The sized bank: steps with their protection and (detuned) reactors.
    rules : RuleBasisFile
        The rule basis (``bankbuild.spec.rulebasis``): its family sets the capacitance tolerance, its
        ``voltage_limits`` the capacitor duty limits.
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
    case = build_case(bank, result, cap_kvar, delivered, p, rules, f_r)
    combos_in, complete = combinations(cap_kvar)
    orders = hm.scan_orders()
    combos = evaluate(case, combos_in, orders)
    bare = case.network()
    bare_v = hd.bus_voltages(bare, case.currents_a, case.background_v, with_bank=False)
    bare_thd = hd.thd_pct(bare_v, case.phase_v)
    phase_v = case.phase_v
    rated_phase_v = result.capacitor_voltage_v / SQRT3

    lim_v, lim_peak, lim_i, lim_q, duty_rule = duty_limits(rules)
    worst_combo, worst_corner, worst_duty = None, "nominal", None
    for c in combos:
        for corner, d in c.duty.items():
            scaled = duty_pu(d, rated_phase_v)
            if worst_duty is None or duty_ratio(scaled, rules) > duty_ratio(worst_duty, rules):
                worst_combo, worst_corner, worst_duty = c, corner, scaled
    duty_ok = duty_ratio(worst_duty, rules) <= 1.0 + EPS
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
        ok = (rms <= s.device_rating_a + EPS and rms <= s.conductor_ampacity_a + EPS
              and (reactor is None or rms <= reactor + EPS))
        steps.append(HarmonicStepCurrent(index=s.index, fundamental_a=s.line_current_a, current_rms_a=rms,
                                         device_rating_a=s.device_rating_a,
                                         conductor_ampacity_a=s.conductor_ampacity_a, reactor_rating_a=reactor,
                                         ok=ok))
    main_rms = max(c.current_per_kvar_a * c.kvar for c in combos)
    limits = distortion_limits(combos, bare_v, phase_v)
    failing = not duty_ok or not all(lim.ok for lim in limits)
    recommendation = recommend(bank, result, case, failing, rules, f_r, available_v)

    marked = sorted({h for h in (*case.currents_a, *case.background_v)} | set(sysc.CHARACTERISTIC_HARMONICS))
    combination_results = []
    for c in combos:
        peak = max(c.peaks, key=lambda t: t[1]) if c.peaks else None
        d = duty_pu(c.duty["nominal"], rated_phase_v)
        combination_results.append(HarmonicCombination(
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
        minus, plus = CAPACITANCE_TOLERANCE_PCT[rules.family]
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
        capacitance_tolerance_pct=list(CAPACITANCE_TOLERANCE_PCT[rules.family]), combinations=combination_results,
        combinations_complete=complete, worst=worst, steps=steps, current_corner=top.current_corner,
        main_current_rms_a=main_rms,
        main_device_rating_a=result.main.device_rating_a,
        main_conductor_ampacity_a=result.main.conductor_ampacity_a, limits=limits,
        scan=_chart(case, orders, combos, marked), recommendation=recommendation, assumptions=assumptions)
    return study_result, study_checks(study_result, result, p)


