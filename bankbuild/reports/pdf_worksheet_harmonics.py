"""Worksheet section of the harmonic study: the model and its formulas, the frequency-scan chart, the table per
combination and per order, capacitor duty, currents with harmonics and the recommendation. It prints what
``BankResult.harmonics`` holds; nothing here computes a figure.
"""

from __future__ import annotations

from bankbuild.reports.pdf_blocks import C, grid, heading, key_values, verdict
from bankbuild.reports.pdf_common import P, gnum, num
from bankbuild.reports.pdf_harmonic_chart import scan_drawing
from bankbuild.results.sizing import BankResult

MAX_COMBINATION_ROWS = 40

FORMULAS = (
    "Per phase, wye equivalent, reactances at the fundamental: source Z_s(h) = R_s + j·h·X_s with X_s = V²/S_sc "
    "and R_s = X_s/(X/R); each step Z_b(h) = R_b + j·(h·X_L − X_C/h), X_C = V²/Q_C, X_L = p·X_C; bus "
    "Z_bus(h) = 1 / (1/Z_s + ∑ 1/Z_b + 1/R_d). Parallel resonance where |Z_bus| peaks: h ≈ √(S_sc/Q) plain, "
    "1/√(p + Q_C/S_sc) detuned; series resonance of a detuned step 1/√p. Harmonic bus voltage "
    "V_h = V_bg,h·|Z_bus|/|Z_bus0| + I_h·|Z_bus| (background divided between source and bank; the two parts "
    "added in magnitude, the worst case); amplification |Z_bus|/|Z_bus0|; THD = √(∑ V_h²)/V_1 with V_1 the "
    "nominal phase voltage. Capacitor duty (IEEE 18 definitions): V_rms = √(∑ V_C,h²), V_peak = ∑ V_C,h, "
    "I_rms = √(∑ I_h²) with I_h = h·V_C,h/X_C, kvar = ∑ V_C,h·I_h, each per unit of the units' rating.")


def _pct(values: dict[str, float]) -> str:
    return ", ".join(f"{k} {num(v, 2, '%')}" for k, v in values.items()) or "none"


def inputs_table(bank: BankResult, width: float):
    h = bank.harmonics
    source = (f"R_s = {num(h.source_r_ohm * 1000, 3, 'mΩ')}, X_s = {num(h.source_x_ohm * 1000, 3, 'mΩ')} per "
              f"phase at the fundamental; transformer X/R {gnum(h.transformer_x_r)}")
    if h.source_x_r is not None:
        source += f", utility source X/R {gnum(h.source_x_r)}"
    pairs = [
        ("Harmonic currents", (f"{num(h.load_current_a, 1, 'A')} fundamental of the harmonic-producing load; "
                               f"{_pct(h.current_pct)} of it") if h.current_pct else "none stated"),
        ("Spectrum", f"{h.spectrum}: {h.spectrum_basis}"),
        ("Background voltage", f"{_pct(h.background_voltage_pct)} of the nominal phase voltage, at the bus "
                               "without the bank"),
        ("Source", source),
        ("Damping load", f"{num(h.damping_kw, 0, 'kW')} resistive at the bus" if h.damping_kw else "none stated"),
        ("Tolerances", f"reactor ±{gnum(h.reactor_tolerance_pct)} %, capacitance "
                       f"−{gnum(h.capacitance_tolerance_pct[0])} / +{gnum(h.capacitance_tolerance_pct[1])} %"),
        ("Assumptions", "; ".join(h.assumptions)),
    ]
    return key_values(pairs, width, key_share=0.2)


def combinations_table(bank: BankResult, width: float):
    h = bank.harmonics
    head = [C(t, "cell_bold") for t in ("kvar in", "steps", "parallel resonance h", "peak |Z| [mΩ]",
                                        "THD with bank", "THD without", "amplification, worst order",
                                        "cap. V rms / peak [pu]", "cap. I rms [pu]")]
    rows = [head]
    shown = sorted(h.combinations, key=lambda c: -c.bus_thd_pct)[:MAX_COMBINATION_ROWS]
    for c in sorted(shown, key=lambda c: c.kvar):
        order = "none in 1–50" if c.resonance_order is None else num(c.resonance_order, 2)
        if c.resonance_order_range:
            order += f" ({num(c.resonance_order_range[0], 2)}–{num(c.resonance_order_range[1], 2)})"
        worst_key = max(c.amplification, key=c.amplification.get) if c.amplification else None
        amp = f"{num(c.amplification[worst_key], 2)} at {worst_key}" if worst_key else "—"
        rows.append([C(num(c.kvar, 1)), C("+".join(map(str, c.steps)), "small"), C(order),
                     C(num(c.peak_impedance_ohm * 1000, 2) if c.peak_impedance_ohm is not None else "—"),
                     C(num(c.bus_thd_pct, 2, "%")), C(num(c.bus_thd_without_bank_pct, 2, "%")), C(amp),
                     C(f"{num(c.capacitor_voltage_rms_pu, 3)} / {num(c.capacitor_voltage_peak_pu, 3)}"),
                     C(num(c.capacitor_current_rms_pu, 3))])
    shares = (0.08, 0.13, 0.15, 0.09, 0.1, 0.1, 0.13, 0.13, 0.09)
    return grid(rows, [width * s for s in shares])


def orders_table(bank: BankResult, width: float):
    """Per order, for the combination with the highest THD: with and without the bank, against both limits."""
    h = bank.harmonics
    worst = max(h.combinations, key=lambda c: c.bus_thd_pct)
    ieee, iec = h.limits
    head = [C(t, "cell_bold") for t in ("order", "current injected", "background", "without bank",
                                        "amplification", "with bank", "IEEE 519 limit", "IEC 61000-2-4 cl. 2")]
    rows = [head]
    for key, value in worst.bus_voltage_pct.items():
        current = h.current_pct.get(key)
        amps = f"{num(current / 100 * h.load_current_a, 1, 'A')} ({num(current, 1, '%')})" if current else "—"
        limit_iec = iec.individual_pct.get(key)
        rows.append([C(key, "cell_bold"), C(amps), C(num(h.background_voltage_pct.get(key, 0.0), 2, "%")),
                     C(num(worst.bus_voltage_without_bank_pct[key], 2, "%")), C(num(worst.amplification[key], 2)),
                     C(num(value, 2, "%")), C(num(ieee.individual_pct.get(key, 0.0), 1, "%")),
                     C(num(limit_iec, 1, "%") if limit_iec is not None else "none listed")])
    rows.append([C("THD", "cell_bold"), C(""), C(""), C(num(worst.bus_thd_without_bank_pct, 2, "%")), C(""),
                 C(num(worst.bus_thd_pct, 2, "%")), C(num(ieee.thd_pct, 1, "%")), C(num(iec.thd_pct, 1, "%"))])
    shares = (0.08, 0.17, 0.11, 0.12, 0.12, 0.11, 0.13, 0.16)
    return P(f"Per order with {num(worst.kvar, 1, 'kvar')} in (steps {'+'.join(map(str, worst.steps))}), the "
             "combination with the highest THD; percentages of the nominal phase voltage.", "body"), \
        grid(rows, [width * s for s in shares])


def duty_table(bank: BankResult, width: float):
    w = bank.harmonics.worst
    rows = [[C(t, "cell_bold") for t in ("capacitor duty", "value [pu]", "limit [pu]", "")]]
    for label, value, limit in (("rms voltage", w.capacitor_voltage_rms_pu, w.limit_voltage_rms_pu),
                                ("peak voltage (sum of peaks)", w.capacitor_voltage_peak_pu, w.limit_voltage_peak_pu),
                                ("rms current", w.capacitor_current_rms_pu, w.limit_current_rms_pu),
                                ("kvar", w.capacitor_kvar_pu, w.limit_kvar_pu)):
        rows.append([C(label), C(num(value, 3)), C(num(limit, 2) if limit is not None else "no limit of its own"),
                     verdict(limit is None or value <= limit + 1e-9)])
    return P(f"Worst combination: {num(w.kvar, 1, 'kvar')} (steps {'+'.join(map(str, w.steps))}), {w.corner} "
             f"corner of the tolerances; units rated {gnum(bank.capacitor_voltage_v)} V. {w.rule}.", "body"), \
        grid(rows, [width * s for s in (0.4, 0.2, 0.3, 0.1)])


def currents_table(bank: BankResult, width: float):
    h = bank.harmonics
    rows = [[C(t, "cell_bold") for t in ("circuit", "fundamental", "rms with harmonics", "device", "conductor",
                                         "reactor thermal", "")]]
    for s in h.steps:
        rows.append([C(f"step {s.index}"), C(num(s.fundamental_a, 1, "A")), C(num(s.current_rms_a, 1, "A")),
                     C(num(s.device_rating_a, 0, "A")), C(num(s.conductor_ampacity_a, 0, "A")),
                     C(num(s.reactor_rating_a, 1, "A") if s.reactor_rating_a is not None else "—"), verdict(s.ok)])
    main_ok = h.main_current_rms_a <= min(h.main_device_rating_a, h.main_conductor_ampacity_a) + 1e-9
    rows.append([C("main", "cell_bold"), C("—"), C(num(h.main_current_rms_a, 1, "A")),
                 C(num(h.main_device_rating_a, 0, "A")), C(num(h.main_conductor_ampacity_a, 0, "A")), C("—"),
                 verdict(main_ok)])
    return grid(rows, [width * s for s in (0.12, 0.15, 0.18, 0.13, 0.14, 0.18, 0.1)])


def recommendation_block(bank: BankResult, width: float) -> list:
    rec = bank.harmonics.recommendation
    story = [P(rec.text[:1].upper() + rec.text[1:] + ".", "body")]
    if rec.candidates:
        rows = [[C(t, "cell_bold") for t in ("tuning", "order", "units rated", "× supply", "worst THD", "")]]
        for c in rec.candidates:
            rows.append([C(num(c.tuning_pct, 2, "%")), C(num(c.tuning_order, 2)),
                         C(num(c.unit_voltage_v, 0, "V") if c.unit_voltage_v else "none fits"),
                         C(num(c.overrating_pu, 2) if c.overrating_pu else "—"), C(num(c.worst_thd_pct, 2, "%")),
                         C(c.reason, "small")])
        story.append(grid(rows, [width * s for s in (0.1, 0.08, 0.12, 0.1, 0.12, 0.48)]))
    return story


def harmonic_sections(bank: BankResult, width: float, number: int) -> list:
    """Section ``number``: the harmonic study, when the bank has one; else nothing."""
    h = getattr(bank, "harmonics", None)
    if h is None:
        return []
    story = heading(f"{number}. Harmonic study of the bank in its network", "h2", 200)
    story += [inputs_table(bank, width), P(FORMULAS, "note")]
    story += heading("Frequency scan", "h2", 260) + [
        scan_drawing(h.scan, width),
        P(f"|Z_bus| per phase against harmonic order at {gnum(h.scan.resolution)} resolution (drawn every "
          f"{gnum(h.scan.orders[1] - h.scan.orders[0])} and at each peak), one curve per combination shown and "
          "the bus without the bank; dotted verticals mark the stated and characteristic orders. A peak near a "
          "marked order amplifies that harmonic.", "note")]
    complete = "" if h.combinations_complete else " (the first distinct totals and the cumulative ones)"
    story += heading(f"Every step combination{complete}", "h2", 120) + [combinations_table(bank, width)]
    story += heading("Per order, the combination with the highest distortion", "h2", 120) + list(
        orders_table(bank, width))
    story += heading("Capacitor duty with harmonics", "h2", 120) + list(duty_table(bank, width))
    corner = f", {h.current_corner} corner" if bank.detuning_pct else ""
    story += heading(f"Currents with harmonics (worst combination{corner})", "h2", 120) + [
        currents_table(bank, width)]
    story += heading("Recommendation", "h2", 80) + recommendation_block(bank, width)
    story.append(P("The study rests on the stated spectrum and source; a measured spectrum and the utility's "
                   "figures decide. Nothing here states compliance with IEEE 519, IEC 61000-2-4, IEEE 18 or "
                   "IEC 60831-1: verify with the utility and the local code.", "note"))
    return story
