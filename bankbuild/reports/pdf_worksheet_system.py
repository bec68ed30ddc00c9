"""Worksheet sections after the protection rows: discharge and reconnection, resonance, voltage rise, and the
further system figures (voltage on the units, light load, motor) when the results carry them.

Each figure is shown with its formula and the numbers substituted, taken from the results; nothing here sizes
anything.
"""

from __future__ import annotations

import re

from bankbuild.reports.pdf_blocks import C, grid, heading, key_values, verdict
from bankbuild.reports.pdf_common import P, gnum, num
from bankbuild.reports.pdf_figures import model_pairs
from bankbuild.reports.pdf_pictures import discharge_block
from bankbuild.results.sizing import BankResult
from bankbuild.results.text import step_span

NEAR_BAND_PCT = 10  # the pipeline flags an order within ±10% of a characteristic harmonic
MAX_RESONANCE_ROWS = 48  # a 16-step bank has 65,535 combinations: the table shows the flagged ones first


def _check(bank: BankResult, name: str):
    """The bank's check of that name, or None."""
    return next((c for c in bank.checks if c.name == name), None)


def discharge_table(bank: BankResult, width: float):
    """The discharge rule, the largest resistance per leg that meets it, its wattage, and the built-in time."""
    dis = bank.discharge
    leg_v = dis.leg_voltage_v
    if dis.start_voltage_v > dis.limit_v:
        r_text = (f"R ≤ t / (C·ln(V₀/V_lim)) = {gnum(dis.time_s)} s / ({num(dis.capacitance_uf_per_leg, 1, 'µF')}"
                  f" × ln({num(dis.start_voltage_v, 1)} / {gnum(dis.limit_v)})) = "
                  f"{num(dis.max_resistance_ohm, 0, 'Ω')} per leg")
        w_text = (f"P = V_leg² / R = ({num(leg_v, 1, 'V')})² / {num(dis.max_resistance_ohm, 0, 'Ω')} = "
                  f"{num(dis.resistor_power_w, 2, 'W')} per resistor, continuous")
    else:
        r_text = "the start voltage is already at or below the limit: no resistance needed"
        w_text = "—"
    builtin = (f"{num(dis.builtin_time_s, 0, 's')} from {num(dis.start_voltage_v, 1, 'V')} to "
               f"{gnum(dis.limit_v)} V (limit {gnum(dis.time_s)} s)")
    pairs = [
        ("Rule", dis.rule),
        ("Step checked", f"step {dis.step_index}, the one with the most capacitance: "
                         f"{num(dis.capacitance_uf_per_leg, 1, 'µF')} per leg "
                         f"({bank.unit_connection}, inside the units)"),
        ("Start voltage", f"V₀ = √2 × {num(leg_v, 1, 'V')} (rated voltage across one leg) = "
                          f"{num(dis.start_voltage_v, 1, 'V')}"),
        ("Largest resistance", r_text),
        ("Resistor wattage", w_text),
        ("Units' own resistors", builtin),
    ]
    pairs += reconnection_pairs(bank)
    table = key_values(pairs, width, key_share=0.2)
    verdict_row = grid([[C("Discharge with the units' own resistors", "cell_bold"),
                         C("meets the rule" if dis.builtin_ok else "does NOT meet the rule: add discharge resistors "
                           "of at most the resistance above, rated for the wattage above"),
                         verdict(dis.builtin_ok)]], [width * 0.3, width * 0.61, width * 0.09], header_rows=0)
    return [table, verdict_row]


def reconnection_pairs(bank: BankResult) -> list[tuple[str, str]]:
    """The reconnection delay of automatic steps, when the results carry it."""
    rec = bank.reconnection
    if rec is None:
        return []
    return [
        ("Reconnection delay", f"{num(rec.delay_s, 0, 's')} before a step is switched on again — {rec.rule}"),
        ("Time to 10% of rated", f"{num(rec.time_to_10pct_s, 1, 's')} from {num(rec.start_voltage_v, 1, 'V')} "
                                 f"to {num(rec.limit_10pct_v, 1, 'V')} with the units' own resistors"),
        ("Time to 50 V", num(rec.time_to_50v_s, 1, "s")),
    ]


def short_circuit_text(bank: BankResult) -> str:
    """The transformer's short-circuit power written out, and the source's in series when given [kVA]."""
    s_tx = bank.system.transformer_short_circuit_mva * 1000
    text = f"S_sc = {gnum(bank.transformer_kva)} kVA × 100 / {gnum(bank.transformer_z_pct)}% = {num(s_tx, 0, 'kVA')}"
    used = bank.system.short_circuit_mva * 1000
    if abs(used - s_tx) > 1e-3 * s_tx:
        text += f"; with the source in series S_sc = {num(used, 0, 'kVA')}"
    return text


def steps_label(steps: list[int]) -> str:
    """Steps of a combination: a run as ``1–4``, otherwise ``1+3+4``.

    >>> steps_label([1, 2, 3]), steps_label([2, 4]), steps_label([5])
    ('1–3', '2+4', '5')
    """
    return step_span(steps, sep="+", word=False, min_run=3)


def resonance_points(bank: BankResult) -> tuple[list, int, bool, bool]:
    """The combinations to show, how many were checked, whether every combination was, and whether the orders
    include the detuning reactors.

    Every combination when the pipeline gives them (``system.resonance_combinations``, orders with the
    reactors), else the cumulative ones (``resonance``). Past :data:`MAX_RESONANCE_ROWS` the flagged
    combinations come first, then the cumulative ones.
    """
    system = bank.system
    combos = list(system.resonance_combinations) if system is not None else []
    complete = system.combinations_complete if combos else False
    points = combos or list(bank.resonance)
    if len(points) > MAX_RESONANCE_ROWS:
        flagged = [p for p in points if p.near_harmonic]
        cumulative = [p for p in points if p.steps == list(range(1, len(p.steps) + 1)) and not p.near_harmonic]
        points_shown = sorted((flagged + cumulative)[:MAX_RESONANCE_ROWS], key=lambda p: (p.kvar, p.steps))
    else:
        points_shown = points
    return points_shown, len(points), complete, bool(combos)


def order_formula(point, s_sc_kva: float, p: float) -> str:
    """The resonance order written out with the pipeline's numbers: √(S_sc/Q) for plain steps, 1/√(Q_C/S_sc + p)
    with reactors, Q_C the capacitors' kvar at the supply voltage behind them."""
    if p:
        return f"1/√({num(point.capacitor_kvar, 1)} kvar / {num(s_sc_kva, 0)} kVA + {gnum(p)})"
    return f"√({num(s_sc_kva, 0)} kVA / {num(point.capacitor_kvar, 1)} kvar)"


def resonance_table(bank: BankResult, points: list, with_reactors: bool, width: float):
    """The resonance order for each step combination, flagged near the 5th, 7th, 11th and 13th."""
    p = (bank.detuning_pct or 0.0) / 100 if with_reactors else 0.0
    formula = "h = 1/√(Q_C/S_sc + p)" if p else "h = √(S_sc / Q)"
    head = [C(h, "head") for h in ("Steps on", "kvar on", formula, "Order h", "Nearest of 5/7/11/13", "Result")]
    rows = [head]
    legacy_detuned = bool(bank.detuning_pct) and not with_reactors
    s_sc = bank.system.short_circuit_mva * 1000
    for pt in points:
        if legacy_detuned:
            result = verdict(True, passed="detuned")
        else:
            result = verdict(pt.near_harmonic is None, failed=f"FLAG {pt.near_harmonic}th")
        rows.append([C(steps_label(pt.steps)), C(num(pt.kvar, 1)),
                     C(order_formula(pt, s_sc, p)),
                     C(f"{pt.harmonic_order:.2f}", "cell_bold"), C(pt.position), result])
    shares = (0.12, 0.1, 0.3, 0.1, 0.22, 0.16)
    return grid(rows, [width * s for s in shares])


def resonance_note(bank: BankResult, shown: int, checked: int, complete: bool, with_reactors: bool) -> str:
    """What the resonance table covers."""
    band = (f"A combination is flagged when h lies within ±{NEAR_BAND_PCT}% of the 5th, 7th, 11th or 13th "
            "harmonic")
    if bank.detuning_pct and with_reactors:
        text = (f"The steps are detuned: with the reactors in series the order is 1/√(Q_C/S_sc + p), Q_C = Q·(1 − p) "
                f"the capacitor kvar behind them, always below the tuning order. {band}.")
    elif bank.detuning_pct:
        text = ("The steps are detuned: each step is inductive above its tuning frequency, so the "
                "parallel-resonance flags near the 5th/7th/11th/13th do not apply.")
    else:
        text = f"{band}; consider detuning reactors or other step sizes there."
    what = ("every combination of steps with a distinct kvar" if complete else
            "the steps switched on in order" if not with_reactors else "a selection of the combinations")
    if checked > shown:
        return f"{text} {checked} combinations checked ({what}); the {shown} shown are the flagged ones first."
    return f"{text} Combinations shown: {what}."


def voltage_rise_table(bank: BankResult, width: float):
    """ΔV% ≈ Q·Z%/kVA with all steps on, against the pipeline's check."""
    total = sum(s.kvar for s in bank.steps)
    check = _check(bank, "Voltage rise at light load")
    text = (f"∆V ≈ Q·Z% / kVA = {num(total, 1)} kvar × {gnum(bank.transformer_z_pct)}% / "
            f"{gnum(bank.transformer_kva)} kVA = {bank.voltage_rise_pct:.2f}%")
    threshold = re.search(r"\(([^()]*)\)\s*$", check.detail) if check is not None else None
    if threshold:
        text += f"; {threshold.group(1)}"
    row = [C("Voltage rise, all steps on at light load", "cell_bold"), C(text),
           verdict(check.ok) if check is not None else C("—")]
    return grid([row], [width * 0.3, width * 0.61, width * 0.09], header_rows=0)


def system_sections(bank: BankResult, width: float, number: int) -> list:
    """Discharge (section ``number``) and system checks (``number + 1``) of one bank."""
    story = heading(f"{number}. Discharge", "h2", 160) + discharge_table(bank, width)
    story.append(P("V(t) = V₀·e^(−t/RC): a resistor across each leg brings the leg from the peak of its rated "
                   "voltage to the limit within the time. Never rely on a manual discharge; wait the full time, "
                   "then prove zero voltage before touching.", "note"))
    story += discharge_block(bank, width)
    story += heading(f"{number + 1}. System checks with the supply transformer", "h2", 120)
    if not bank.transformer_kva:
        story.append(P("No transformer was given in the spec: resonance, voltage rise and inrush against the "
                       "supply were not checked. Give transformer_kva and transformer_z_pct to check them.", "note"))
    else:
        points, checked, complete, with_reactors = resonance_points(bank)
        story += [P(short_circuit_text(bank), "body"), resonance_table(bank, points, with_reactors, width),
                  P(resonance_note(bank, len(points), checked, complete, with_reactors), "note")]
        if bank.voltage_rise_pct is not None:
            story.append(voltage_rise_table(bank, width))
    story += system_figures(bank, width)
    return story


SYSTEM_PARTS = (("voltage", "Voltage and current on the units (IEEE 18, IEC 60831-1)"),
                ("detuning_advice", "Detuned alternative, should resonance be a concern"),
                ("light_load", "Light load: fixed steps and leading power factor"),
                ("motor", "Bank at a motor's terminals"))


def system_figures(bank: BankResult, width: float) -> list:
    """The further system figures of ``BankResult.system`` when the pipeline gives them, one table each."""
    system = bank.system
    story: list = []
    if system is None:
        return story
    for attr, title in SYSTEM_PARTS:
        part = getattr(system, attr, None)
        if part is None:
            continue
        pairs = model_pairs(part.model_dump())
        if pairs:
            story += heading(title, "h2", 80) + [key_values(pairs, width, key_share=0.3)]
    return story
