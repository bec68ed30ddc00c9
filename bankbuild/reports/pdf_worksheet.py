"""The protection worksheet as a PDF: one section per bank that shows every sizing step so it can be checked.

For each bank: the inputs; the units and currents of each step with the formula written out; then for the main
incomer and each step every :class:`~bankbuild.results.sizing.SizingLine` as a row (what is sized, the formula with the
numbers in it, the factor, the rule, the computed value, the standard rating chosen, pass / flag); detuning;
discharge, resonance, voltage rise, inrush and reconnection (:mod:`.pdf_worksheet_system`); every check. The
document ends with the cautions, the provenance and a sign-off block. reportlab is imported inside functions.
"""

from __future__ import annotations

from bankbuild.reports.pdf_blocks import (
    C,
    cautions_box,
    gap,
    grid,
    heading,
    key_values,
    provenance_block,
    section_break,
    title_block,
    verdict,
)
from bankbuild.reports.pdf_bom import detuning_text, need_text, steps_text, supply_text
from bankbuild.reports.pdf_common import (
    CAUTION_EDGE,
    RULE_GREY,
    Deferred,
    Numbering,
    P,
    PdfDocument,
    build_pdf,
    frame_for,
    gnum,
    num,
)
from bankbuild.reports.pdf_pictures import oneline_block, staircase_block, triangle_block
from bankbuild.reports.pdf_worksheet_assembly import assembly_sections
from bankbuild.reports.pdf_worksheet_harmonics import harmonic_sections
from bankbuild.reports.pdf_worksheet_system import system_sections
from bankbuild.results.sizing import BankResult, ProjectResult, SizingLine, Step

DOC_TITLE = "Protection worksheet"
SIZING_SHARES = (0.11, 0.24, 0.07, 0.20, 0.10, 0.20, 0.08)


def need_formula(bank: BankResult) -> str:
    """The need worked out, with the numbers substituted."""
    need = bank.need
    if need.form == "kvar":
        return f"given: Q_c = {num(need.required_kvar, 1, 'kvar')}"
    if need.form == "power":
        return (f"Q_c = P·(tan φ1 − tan φ2) = {num(need.active_kw, 1, 'kW')} × (tan(arccos {need.pf_present:.3f})"
                f" − tan(arccos {need.pf_target:.3f})) = {num(need.required_kvar, 1, 'kvar')}")
    return (f"loads summed: P = {num(need.active_kw, 1, 'kW')}, Q = {num(need.reactive_kvar, 1, 'kvar')} "
            f"(PF {need.pf_present:.3f}); Q_c = Q − P·tan(arccos {need.pf_target:.3f}) = "
            f"{num(need.required_kvar, 1, 'kvar')}")


def inputs_table(bank: BankResult, prov, width: float):
    """What the bank was sized from."""
    main = bank.main
    factors = "; ".join(f"{line.item.lower()} × {gnum(line.factor)}" for line in main.sizing if line.factor != 1.0)
    pairs = [
        ("Rule basis", prov.rule_basis_text or prov.edition),  # the basis's own sentence names it once
        ("Supply", supply_text(bank)),
        ("Connection", bank.connection),
        ("Need", need_text(bank)),
        ("Need worked out", need_formula(bank)),
        ("Steps", steps_text(bank) + "; target per step " + ", ".join(num(s.target_kvar, 1) for s in bank.steps)
         + " kvar"),
        ("Detuning", detuning_text(bank)),
        ("Capacitor units", f"rated {gnum(bank.capacitor_voltage_v)} V (the unit table's ratings)"),
        ("Protective device", f"{main.device}; multipliers on the design current: {factors or '—'}"),
    ]
    return key_values(pairs, width, key_share=0.2)


def assumptions_table(bank: BankResult, width: float):
    """Every assumption the bank's figures rest on, numbered, so a reviewer can strike any that does not hold."""
    rows = [[C(f"A{i}", "cell_bold"), C(text)] for i, text in enumerate(bank.assumptions, start=1)]
    return grid(rows, [width * 0.06, width * 0.94], header_rows=0, zebra=False)


def delivered_formula(step: Step, bank: BankResult) -> str:
    """Q at the supply = Σ Q_r·(V_s/V_r)²·(f_s/f_r)/(1 − p), written out for one step."""
    if not step.units:
        return "no units"
    unit = step.units[0]
    terms = f"({gnum(bank.supply_voltage_v)}/{gnum(unit.rated_voltage_v)})²"
    if unit.rated_frequency_hz != bank.frequency_hz:
        terms += f" × ({gnum(bank.frequency_hz)}/{gnum(unit.rated_frequency_hz)})"
    if bank.detuning_pct:
        terms += f" ÷ (1 − {gnum(bank.detuning_pct / 100)})"
    return f"{gnum(step.rated_kvar)} × {terms} = {num(step.kvar, 1, 'kvar')}"


def capacitance_formula(step: Step, bank: BankResult) -> str:
    """C per leg from the nameplate: delta Q/(3ωV²), wye Q/(ωV²), ω = 2πf."""
    if not step.units:
        return "—"
    unit = step.units[0]
    three = "3 × " if bank.unit_connection == "delta" else ""
    return (f"{gnum(step.rated_kvar)} kvar / ({three}2π·{gnum(unit.rated_frequency_hz)} × "
            f"({gnum(unit.rated_voltage_v)} V)²) = {num(step.capacitance_uf_per_leg, 1, 'µF')}")


def units_table(bank: BankResult, width: float):
    """Units, delivered kvar and currents of each step, each figure with its formula."""
    head = [C(h, "head") for h in ("Step", "Units (qty × table id)", "Delivered at the supply",
                                   "Rated current I = Q_r / (√3·V_r)", "Operating current", "Capacitance per leg")]
    rows = [head]
    for step in bank.steps:
        units = " + ".join(f"{u.qty} × {u.id}" for u in step.units)
        rated = (f"{gnum(step.rated_kvar)} kvar / (√3 × {gnum(bank.capacitor_voltage_v)} V) = "
                 f"{num(step.rated_current_a, 1, 'A')}")
        operating = (f"{num(step.kvar, 1)} kvar / (√3 × {gnum(bank.supply_voltage_v)} V) = "
                     f"{num(step.line_current_a, 1, 'A')}")
        rows.append([C(str(step.index)), C(units), C(delivered_formula(step, bank)), C(rated), C(operating),
                     C(capacitance_formula(step, bank))])
    total = (f"{num(bank.rated_kvar, 1)} kvar / (√3 × {gnum(bank.capacitor_voltage_v)} V) = "
             f"{num(bank.rated_current_a, 1, 'A')}")
    rows.append([C("All", "cell_bold"), C(f"nameplate {num(bank.rated_kvar, 1, 'kvar')}"),
                 C(f"{num(bank.delivered_kvar, 1, 'kvar')} (need {num(bank.required_kvar, 1, 'kvar')})",
                   "cell_bold"),
                 C(total), C(f"{num(bank.delivered_kvar, 1)} kvar / (√3 × {gnum(bank.supply_voltage_v)} V) = "
                             f"{num(bank.line_current_a, 1, 'A')}"),
                 C(f"{num(bank.capacitance_uf_per_phase, 1, 'µF')}")])
    shares = (0.06, 0.2, 0.19, 0.19, 0.18, 0.18)
    return grid(rows, [width * s for s in shares])


def units_note(bank: BankResult) -> str:
    """Ratings shared by every unit of the bank, and what the symbols stand for."""
    first = next((u for s in bank.steps for u in s.units), None)
    if first is None:
        return "No units were selected."
    return (f"Units from {first.table}, rated {gnum(first.rated_voltage_v)} V, {gnum(first.rated_frequency_hz)} Hz; "
            f"Q_r is the nameplate kvar of the step; C per leg = Q_r / (3·2πf·V_r²) in delta, Q_r / (2πf·V_r²) in "
            "wye. Currents are "
            "three-phase line currents, I = Q / (√3·V_LL). Protection is sized on the design current: the nameplate "
            "(rated) current, or the operating current where that is higher.")


def detuning_table(bank: BankResult, width: float):
    """Reactor figures of each detuned step, or None when the bank is not detuned."""
    detuned = [s for s in bank.steps if s.detuning is not None]
    if not detuned:
        return None
    head = [C(h, "head") for h in ("Step", "p", "Tuning f_r = f₁/√p", "Capacitor voltage U/(1 − p)",
                                   "Capacitor kvar at U_C", "Reactor L", "Reactor current")]
    rows = [head]
    for step in detuned:
        d = step.detuning
        p = d.tuning_pct / 100
        rows.append([C(str(step.index)), C(f"{gnum(d.tuning_pct)}%"),
                     C(f"{gnum(bank.frequency_hz)} Hz / √{gnum(p)} = {num(d.tuning_frequency_hz, 1, 'Hz')} "
                       f"(order {d.tuning_order:.2f})"),
                     C(f"{gnum(bank.supply_voltage_v)} V / (1 − {gnum(p)}) = {num(d.capacitor_voltage_v, 1, 'V')}"),
                     C(num(d.capacitor_kvar_at_capacitor_voltage, 1, "kvar")),
                     C(num(d.reactor_inductance_mh, 3, "mH")),
                     C(num(d.reactor_current_a, 1, "A"))])
    shares = (0.06, 0.07, 0.22, 0.22, 0.14, 0.14, 0.15)
    return grid(rows, [width * s for s in shares])


def sizing_row(line: SizingLine) -> list:
    """One worksheet row from one sizing line."""
    text = chosen_text(line)
    chosen = C(text, note=line.note)
    return [C(line.item, "cell_bold"), C(line.formula), C(f"× {gnum(line.factor)}"), C(line.rule, "small"),
            C(num(line.required_a, 1, "A"), "cell_right"), chosen, verdict(line.ok)]


def chosen_text(line: SizingLine) -> str:
    """The chosen rating, with its ampere value where the designation does not show it (a conductor's ampacity).

    >>> row = dict(item="Conductor ampacity", formula="", basis_a=50.5, factor=1.35, required_a=68.2, rule="",
    ...            ok=True)
    >>> chosen_text(SizingLine(chosen="4 AWG (Cu 75 °C)", chosen_a=85.0, **row))
    '4 AWG (Cu 75 °C): 85 A'
    >>> chosen_text(SizingLine(chosen="90 A", chosen_a=90.0, **row))
    '90 A'
    """
    if line.chosen_a <= 0 or f"{line.chosen_a:g} A" in line.chosen:
        return line.chosen
    return f"{line.chosen}: {num(line.chosen_a, 0, 'A')}"


def design_current_text(rated_a: float, operating_a: float, design_a: float) -> str:
    """Which current the circuit is sized on, and why."""
    which = "rated current" if rated_a >= operating_a else "operating current (above rated)"
    return (f"design current {num(design_a, 1, 'A')} = the larger of rated {num(rated_a, 1, 'A')} and operating "
            f"{num(operating_a, 1, 'A')}: the {which}")


def sizing_table(bank: BankResult, width: float):
    """Every sizing line of the main incomer and of each step; band rows name the circuit and its current."""
    head = [C(h, "head") for h in ("What is sized", "Formula, numbers substituted", "Factor", "Rule it follows",
                                   "Computed", "Standard rating chosen", "Result")]
    rows = [head]
    bands = []
    main = bank.main
    bands.append(len(rows))
    rows.append([C(f" — {design_current_text(main.rated_current_a, bank.line_current_a, main.design_current_a)}",
                   lead="Main incomer"), "", "", "", "", "", ""])
    rows += [sizing_row(line) for line in main.sizing]
    for step in bank.steps:
        bands.append(len(rows))
        design = max(step.rated_current_a, step.line_current_a)
        rows.append([C(f" ({num(step.kvar, 1, 'kvar')}) — "
                       f"{design_current_text(step.rated_current_a, step.line_current_a, design)}",
                       lead=f"Step {step.index}"), "", "", "", "", "", ""])
        rows += [sizing_row(line) for line in step.sizing]
    return grid(rows, [width * s for s in SIZING_SHARES], spans=bands)


def check_verdict(check):
    """pass / FLAG; a met caution in amber, a note in grey."""
    if not check.ok:
        return verdict(False)
    if check.level == "caution":
        return C("caution", "cell_bold", CAUTION_EDGE)
    if check.level == "info":
        return C("note", "cell", RULE_GREY)
    return verdict(True)


def checks_table(bank: BankResult, width: float):
    """Every check and flag of the bank."""
    head = [C(h, "head") for h in ("Check", "What was found", "Rule", "Result")]
    rows = [head]
    for check in bank.checks:
        rows.append([C(check.name, "cell_bold"), C(check.detail), C(check.rule or "—", "small"),
                     check_verdict(check)])
    shares = (0.22, 0.44, 0.25, 0.09)
    return grid(rows, [width * s for s in shares])


def bank_section(index: int, total: int, bank: BankResult, result: ProjectResult, width: float) -> list:
    """All of one bank's worksheet."""
    diagram, first_height = oneline_block(bank, width)
    story = heading(f"Bank {index} of {total}: {bank.name}", "h1", first_height + 40)
    story += diagram
    story += heading("1. Inputs", "h2") + [inputs_table(bank, result.provenance, width)]
    if bank.assumptions:
        story += [P("Assumptions the figures rest on", "h2"), assumptions_table(bank, width)]
    story += triangle_block(bank, width)
    story += heading("2. Capacitor units and currents") + [units_table(bank, width), P(units_note(bank), "note")]
    story += staircase_block(bank, width)
    detuned = detuning_table(bank, width)
    if detuned is not None:
        story += heading("3. Detuning reactors") + [detuned,
                  P("A step tuned below the 5th harmonic is inductive at the 5th and above, so it cannot form a "
                    "parallel resonance there with the supply. Reactor data are for ordering; take the maker's "
                    "linearity and thermal current figures.", "note")]
    story += heading(f"{4 if detuned is not None else 3}. Protection sizing, main incomer and each step", "h2",
                     140)
    story += [sizing_table(bank, width),
              P("Each multiplier is typical practice applied to the design current; the rule column names the "
                "clause it follows. The computed value is the least rating allowed; the chosen rating is the next "
                "standard one in the rating table.", "note")]
    number = 5 if detuned is not None else 4
    story += system_sections(bank, width, number)
    story += assembly_sections(bank, width)
    harmonics = harmonic_sections(bank, width, number + 2)
    story += harmonics
    story += heading(f"{number + (3 if harmonics else 2)}. All checks of this bank") + [checks_table(bank, width)]
    return story


def sign_off(result: ProjectResult, width: float):
    """Prepared / checked / approved, each with a name, a signature line and a date line."""
    from reportlab.platypus import KeepTogether

    project = result.project
    rows = [[C(h, "head") for h in ("Role", "Name", "Signature", "Date")]]
    for role, key in (("Prepared by", "prepared_by"), ("Checked by", "checked_by"), ("Approved by", "")):
        rows.append([C(role, "cell_bold"), C(project.get(key, "") if key else ""), "", ""])
    table = grid(rows, [width * s for s in (0.16, 0.34, 0.32, 0.18)], zebra=False,
                 row_heights=[None] + [34.0] * 3, middle_from=1, underlines=[(2, 1, 3, -1, 0.6)])
    return KeepTogether([P("Sign-off", "h2"),
                         P("Signatures confirm that the figures were checked against the local code and the "
                           "equipment makers' data; they are not made by this program.", "note"), table])


def worksheet_story(result: ProjectResult, width: float, first: int = 0, stop: int | None = None) -> list:
    """The flowables of the protection worksheet, in order: the opening blocks (with bank ``first`` = 0), each
    bank's section from ``first`` to ``stop - 1`` (made as layout reaches it), the closing blocks (with the last)."""
    total = len(result.banks)
    stop = total if stop is None else stop
    story = []
    if first == 0:
        story += title_block(result, DOC_TITLE, "Inputs, every sizing step with its formula, factor, rule and chosen "
                                                "rating, discharge and system checks — for review by the authority "
                                                "having jurisdiction.", width)
        story += [cautions_box(result.cautions[:3], width, "Before you rely on these figures"), gap(4)]
    for i in range(first, stop):
        story.append(Deferred(lambda i=i: bank_section(i + 1, total, result.banks[i], result, width)))
    if stop == total:
        story += [section_break(200), gap(6), cautions_box(result.cautions, width), gap(8)]
        story += provenance_block(result, width)
        story += [gap(10), sign_off(result, width)]
    return story


def _worksheet_range(result: ProjectResult, first: int, stop: int, numbering: Numbering) -> bytes:
    author = result.project.get("prepared_by", "") or "bankbuild"
    return build_pdf(lambda width: worksheet_story(result, width, first, stop), frame_for(result, DOC_TITLE),
                     result.provenance.rules, "Protection worksheet for capacitor banks", author, numbering)


# ~50 ms of layout per bank: a piece of fewer banks costs more to start and join than it saves
worksheet_pdf = PdfDocument(_worksheet_range, banks_per_piece=60)
"""The protection worksheet of a result as PDF bytes (US Letter for NEC, A4 for IEC): ``worksheet_pdf(result)``."""
