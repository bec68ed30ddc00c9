"""The charts of a sized bank, described from its results: the reachable kvar staircase, the power triangle
before and after correction, and the discharge curve. Each comes with the rows of its source-data table.

Nothing is computed here: the points are the results' (``step_plan.reachable_kvar``, ``power_triangle``,
``discharge_curve``, worked out in :mod:`bankbuild.design`); this module only chooses how to show them.
"""

from __future__ import annotations

from bankbuild.reports.chart import Axis, Chart, Mark, Series
from bankbuild.reports.pdf_common import gnum, num
from bankbuild.results.sizing import BankResult, DischargeCurve, PowerTriangle

TABLE_MAX_VALUES = 64  # reachable values listed beside the staircase; more are in results.json


def staircase_chart(bank: BankResult, width: float) -> Chart | None:
    """Every kvar value the controller can reach, lowest to highest, against the need and the light-load
    level, with the largest gap marked; None for a fixed bank or when there are too many values to list."""
    plan = bank.step_plan
    if plan is None or len(bank.steps) < 2 or not plan.reachable_kvar:
        return None
    values = plan.reachable_kvar
    points = tuple((float(i), v) for i, v in enumerate(values))
    marks = [Mark("hline", y=bank.required_kvar, label=f"need {num(bank.required_kvar, 1)} kvar", style="dashed")]
    light = bank.system.light_load if bank.system is not None else None
    if light is not None:
        marks.append(Mark("hline", y=light.kvar, label=f"light load {num(light.kvar, 1)} kvar", style="dotted"))
    if plan.largest_gap_from_kvar is not None and plan.largest_gap_kvar > 0:
        low = plan.largest_gap_from_kvar
        at = next((i for i, v in enumerate(values) if v > low + 1e-9), len(values) - 1)
        marks.append(Mark("gap", x=float(at), y=low, y2=low + plan.largest_gap_kvar,
                          label=f"largest gap {num(plan.largest_gap_kvar, 1)} kvar"))
    return Chart(f"Reachable kvar: {plan.reachable_count} values from {len(bank.steps)} steps",
                 Axis("Controller setting, lowest to highest", "no."), Axis("Reactive power at the supply", "kvar"),
                 (Series("reachable kvar", points, draw="step", weight=1.4),), tuple(marks), width=width,
                 height=200)


def staircase_rows(bank: BankResult) -> tuple[list[str], list[list[str]]] | None:
    """The reachable values as a table (setting number, kvar), in columns of sixteen; None past
    :data:`TABLE_MAX_VALUES`."""
    plan = bank.step_plan
    if plan is None or not plan.reachable_kvar or len(plan.reachable_kvar) > TABLE_MAX_VALUES:
        return None
    values = plan.reachable_kvar
    groups = (len(values) + 15) // 16
    head = ["Setting", "kvar"] * groups
    rows = []
    for r in range(min(16, len(values))):
        row = []
        for g in range(groups):
            i = g * 16 + r
            row += [str(i), num(values[i], 1)] if i < len(values) else ["", ""]
        rows.append(row)
    return head, rows


def triangle_chart(t: PowerTriangle, width: float) -> Chart:
    """The power triangle before (solid) and after (dashed) correction, both axes to one scale."""
    before = ((0.0, 0.0), (t.active_kw, 0.0), (t.active_kw, t.kvar_before), (0.0, 0.0))
    after = ((0.0, 0.0), (t.active_kw, 0.0), (t.active_kw, t.kvar_after), (0.0, 0.0))
    marks = (Mark("text", x=t.active_kw * 0.3, y=t.kvar_before * 0.3 + 0.12 * t.active_kw,
                  label=f"{num(t.kva_before, 0)} kVA, PF {t.pf_before:.3f}"),
             Mark("text", x=t.active_kw * 0.62, y=t.kvar_after * 0.62 + 0.04 * t.active_kw,
                  label=f"{num(t.kva_after, 0)} kVA, PF {t.pf_after:.3f}"),
             Mark("gap", x=t.active_kw, y=t.kvar_after, y2=t.kvar_before,
                  label=f"bank {num(t.bank_kvar, 1)} kvar"))
    return Chart("Power triangle before and after the bank (to scale)", Axis("Active power", "kW"),
                 Axis("Reactive power, lagging positive", "kvar"),
                 (Series(f"before: line current {num(t.current_before_a, 0)} A", before, weight=1.4, marker="circle"),
                  Series(f"after: line current {num(t.current_after_a, 0)} A", after, style="dashed", weight=1.4,
                         marker="square")),
                 marks, width=width, height=230, equal_scale=True)


def triangle_rows(t: PowerTriangle) -> tuple[list[str], list[list[str]]]:
    """The triangle's figures: before and after, each with its unit."""
    head = ["Quantity", "Before the bank", "After the bank"]
    rows = [["Active power P [kW]", num(t.active_kw, 1), num(t.active_kw, 1)],
            ["Reactive power Q [kvar]", num(t.kvar_before, 1), num(t.kvar_after, 1) + (" (leading)" if
                                                                                         t.leading_after else "")],
            ["Apparent power S [kVA]", num(t.kva_before, 1), num(t.kva_after, 1)],
            ["Power factor P/S", f"{t.pf_before:.3f}", f"{t.pf_after:.3f}"],
            ["Angle φ [°]", num(t.angle_before_deg, 1), num(t.angle_after_deg, 1)],
            ["Line current I = S/(√3·V) [A]", num(t.current_before_a, 1), num(t.current_after_a, 1)]]
    return head, rows


def discharge_chart(curve: DischargeCurve, width: float) -> Chart:
    """The leg voltage of the largest step after switch-off, with the rule's limit and the reconnection delay."""
    series = [Series(f"largest R meeting the rule, {num(curve.rule_resistance_ohm / 1000, 1)} kΩ per leg",
                     tuple((p.time_s, p.voltage_v) for p in curve.rule_curve), style="dashed", weight=1.3)]
    if curve.builtin_curve:
        series.insert(0, Series(f"units' own resistors, {num(curve.builtin_resistance_ohm / 1000, 1)} kΩ",
                                tuple((p.time_s, p.voltage_v) for p in curve.builtin_curve), weight=1.4))
    marks = [Mark("hline", y=curve.limit_v, label=f"{gnum(curve.limit_v)} V", style="dotted"),
             Mark("point", x=curve.time_s, y=curve.limit_v,
                  label=f"rule: ≤ {gnum(curve.limit_v)} V within {gnum(curve.time_s)} s")]
    if curve.reconnection_delay_s:
        marks.append(Mark("vline", x=curve.reconnection_delay_s,
                          label=f"reconnection delay {gnum(curve.reconnection_delay_s)} s", style="dashdot"))
    return Chart("Discharge of the largest step: leg voltage from its peak", Axis("Time after switch-off", "s"),
                 Axis("Leg voltage", "V"), tuple(series), tuple(marks), width=width, height=210)


def discharge_rows(curve: DischargeCurve) -> tuple[list[str], list[list[str]]]:
    """The sampled curve: time and voltage on each curve, in two column groups side by side."""
    own = bool(curve.builtin_curve)
    group = ["Time [s]", "Rule R [V]"] + (["Own resistors [V]"] if own else [])
    half = (len(curve.rule_curve) + 1) // 2
    rows = []
    for r in range(half):
        row: list[str] = []
        for i in (r, r + half):
            if i < len(curve.rule_curve):
                row += [num(curve.rule_curve[i].time_s, 1), num(curve.rule_curve[i].voltage_v, 1)]
                if own:
                    row.append(num(curve.builtin_curve[i].voltage_v, 1))
            else:
                row += [""] * len(group)
        rows.append(row)
    return group * 2, rows
