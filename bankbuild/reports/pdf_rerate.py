"""The ``rerate`` PDF: for each bank moved to another supply, its figures before and after, two charts (kvar per
step before and after; the capacitor voltage against its limit) each with its source data, the installed parts
that still fit or must change, the checks at the new supply and the bill-of-materials difference.

It prints what :class:`~bankbuild.results.rerate.RerateResult` holds; reportlab is imported inside functions.
"""

from __future__ import annotations

from bankbuild.reports.chart import Axis, Chart, Mark, Series
from bankbuild.reports.pdf_blocks import (
    C,
    cautions_box,
    gap,
    grid,
    heading,
    key_values,
    provenance_block,
    title_block,
    verdict,
)
from bankbuild.reports.pdf_common import build_pdf, frame_for, gnum, num
from bankbuild.reports.pdf_pictures import chart_block
from bankbuild.results.rerate import RerateBank, RerateResult

DOC_TITLE = "Re-rating report"


def _supply(v: float, f: float) -> str:
    return f"{gnum(v)} V, {gnum(f)} Hz"


def figures_table(bank: RerateBank, width: float):
    """The bank's key figures before and after the move."""
    pairs = [
        ("Supply", f"{_supply(bank.original_voltage_v, bank.original_frequency_hz)} → "
                   f"{_supply(bank.voltage_v, bank.frequency_hz)}"),
        ("Delivered kvar", f"{num(bank.original_kvar, 1)} → {num(bank.delivered_kvar, 1)} kvar "
                           f"({bank.kvar_ratio:.1%}): kvar goes with V²·f; scaling with voltage alone would wrongly "
                           f"claim {num(bank.linear_scaling_kvar, 1)} kvar"),
        ("Units", f"rated {_supply(bank.capacitor_voltage_v, bank.rated_frequency_hz)}"),
        ("Capacitor voltage", f"{num(bank.capacitor_voltage_seen_v, 0, 'V')} at the new supply: "
                              + ("within its limits" if bank.capacitor_voltage_ok else "OVER its limits")),
        ("Currents", f"rated {num(bank.rated_current_a, 1, 'A')} (nameplate); operating "
                     f"{num(bank.original_line_current_a, 1)} → {num(bank.line_current_a, 1, 'A')}"),
    ]
    if bank.original_tuning_pct:
        pairs.append(("Detuning", f"reactors tuned to {num(bank.tuning_frequency_hz, 0, 'Hz')}: p "
                                  f"{gnum(bank.original_tuning_pct)}% at {gnum(bank.original_frequency_hz)} Hz becomes "
                                  f"{bank.tuning_pct:.2f}% at {gnum(bank.frequency_hz)} Hz"))
    return key_values(pairs, width, key_share=0.2)


def step_kvar_chart(bank: RerateBank, width: float) -> Chart:
    """kvar of each step before and after the move, as bars side by side."""
    before = tuple((float(s.index), s.original_kvar) for s in bank.steps)
    after = tuple((float(s.index), s.delivered_kvar) for s in bank.steps)
    ticks = tuple(float(s.index) for s in bank.steps)
    return Chart("kvar of each step before and after the move", Axis("Step", "no.", ticks=ticks,
                                                                    labels=tuple(str(s.index) for s in bank.steps)),
                 Axis("Delivered at the supply", "kvar"),
                 (Series(f"before, at {_supply(bank.original_voltage_v, bank.original_frequency_hz)}", before,
                         draw="bars"),
                  Series(f"after, at {_supply(bank.voltage_v, bank.frequency_hz)}", after, draw="bars")),
                 width=width, height=190)


def step_kvar_rows(bank: RerateBank) -> tuple[list[str], list[list[str]]]:
    head = ["Step", "Before [kvar]", "After [kvar]", "Operating current before → after [A]"]
    rows = [[str(s.index), num(s.original_kvar, 1), num(s.delivered_kvar, 1),
             f"{num(s.original_line_current_a, 1)} → {num(s.line_current_a, 1)}"] for s in bank.steps]
    rows.append(["All", num(bank.original_kvar, 1), num(bank.delivered_kvar, 1),
                 f"{num(bank.original_line_current_a, 1)} → {num(bank.line_current_a, 1)}"])
    return head, rows


def voltage_chart(bank: RerateBank, width: float) -> Chart | None:
    """The voltage the units see, at the supply and at light load, before and after, against the limit."""
    if bank.capacitor_voltage_limit_v is None or bank.original_capacitor_voltage_seen_v is None:
        return None
    before = ((1.0, bank.original_capacitor_voltage_seen_v), (2.0, bank.original_light_load_voltage_v))
    after = ((1.0, bank.capacitor_voltage_seen_v), (2.0, bank.light_load_voltage_v))
    limit = bank.capacitor_voltage_limit_v
    return Chart("Voltage on the capacitor units against their limit", Axis(
        "Operating point", "", ticks=(1.0, 2.0), labels=("at the supply", "light load, all steps on")),
        Axis("Capacitor voltage, rms", "V"),
        (Series("before the move", before, draw="bars"), Series("after the move", after, draw="bars")),
        (Mark("hline", y=limit, label=f"continuous limit {num(limit, 0)} V", style="dashed"),
         Mark("hline", y=bank.capacitor_voltage_v, label=f"rated {gnum(bank.capacitor_voltage_v)} V",
              style="dotted")),
        width=width, height=190)


def voltage_rows(bank: RerateBank) -> tuple[list[str], list[list[str]]]:
    head = ["Operating point", "Before [V]", "After [V]", "Limit [V]"]
    limit = num(bank.capacitor_voltage_limit_v, 1)
    return head, [["at the supply", num(bank.original_capacitor_voltage_seen_v, 1),
                   num(bank.capacitor_voltage_seen_v, 1), limit],
                  ["light load, all steps on", num(bank.original_light_load_voltage_v, 1),
                   num(bank.light_load_voltage_v, 1), limit]]


def items_table(bank: RerateBank, width: float):
    rows = [[C(h, "head") for h in ("Installed part", "Installed", "Needed at the new supply", "Action", "Note")]]
    for item in bank.items:
        rows.append([C(item.item, "cell_bold"), C(item.installed), C(item.required),
                     verdict(item.fits, passed="keep", failed="CHANGE"), C(item.detail, "small")])
    return grid(rows, [width * s for s in (0.2, 0.2, 0.2, 0.1, 0.3)])


def checks_table(bank: RerateBank, width: float):
    rows = [[C(h, "head") for h in ("Check at the new supply", "What was found", "Result")]]
    for check in bank.checks:
        rows.append([C(check.name, "cell_bold"), C(check.detail), verdict(check.ok)])
    return grid(rows, [width * s for s in (0.25, 0.65, 0.1)])


def difference_table(bank: RerateBank, width: float):
    rows = [[C(h, "head") for h in ("Action", "Qty", "Category", "Description")]]
    for line in bank.bom_difference:
        qty = f"{line.qty:g} {line.unit}"
        rows.append([C(line.action, "cell_bold"), C(qty), C(line.category), C(line.description)])
    return grid(rows, [width * s for s in (0.1, 0.1, 0.18, 0.62)])


def bank_section(index: int, total: int, bank: RerateBank, width: float) -> list:
    story = heading(f"Bank {index} of {total}: {bank.name}", "h1", 260)
    story += [figures_table(bank, width), gap(6)]
    head, rows = step_kvar_rows(bank)
    story += chart_block(step_kvar_chart(bank, width), head, rows, width,
                         "The same units at the new supply: kvar ∝ (V/V_r)²·(f/f_r), detuned steps with the reactors' "
                         "new tuning factor.")
    chart = voltage_chart(bank, width)
    if chart is not None:
        head, rows = voltage_rows(bank)
        story += [gap(6)] + chart_block(chart, head, rows, width,
                                        "The continuous limit of the rule basis (IEEE Std 18 for NEC, IEC 60831-1 "
                                        "for IEC); the light-load point may use a short-time allowance, as the "
                                        "checks below state.")
    story += heading("Installed parts at the new supply") + [items_table(bank, width)]
    story += heading("Checks of the existing bank at the new supply") + [checks_table(bank, width)]
    if bank.bom_difference:
        story += heading(f"Difference to the re-sized bank ({bank.bom_basis})") + [difference_table(bank, width)]
    return story


def rerate_story(result: RerateResult, width: float) -> list:
    new = f"{gnum(result.voltage_v)} V" + (f", {gnum(result.frequency_hz)} Hz" if result.frequency_hz else "")
    story = title_block(result, DOC_TITLE, f"Existing banks moved to a {new} supply: what they deliver there, "
                                           "what still fits, what must change.", width)
    story += [cautions_box(result.cautions[:3], width, "Before you rely on these figures"), gap(4)]
    for i, bank in enumerate(result.banks, start=1):
        story += bank_section(i, len(result.banks), bank, width)
    story += [gap(10), cautions_box(result.cautions, width), gap(8)]
    story += provenance_block(result, width)
    return story


def rerate_pdf(result: RerateResult) -> bytes:
    """The re-rating report of ``result`` as PDF bytes (US Letter for NEC, A4 for IEC)."""
    author = result.project.get("prepared_by", "") or "bankbuild"
    return build_pdf(lambda width: rerate_story(result, width), frame_for(result, DOC_TITLE),
                     result.provenance.rules, "Re-rating of capacitor banks", author)

