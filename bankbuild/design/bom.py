"""The bill of materials: every part of a bank as a line item, identical parts merged, and a project list that
merges the banks. Each line names the table and row it came from; parts made to order or sized without a table
say so in their notes.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

from bankbuild.design.protection import conductor_name
from bankbuild.results.sizing import BankResult, BomLine
from bankbuild.results.text import step_span

CATEGORIES = ("Capacitor units", "Detuning reactors", "Step switching", "Step protection", "Main protection",
              "Conductors", "Discharge", "Control and measurement", "Enclosure")
POLES = 3


@dataclass
class Part:
    """A part before merging: what it is, how many, where it came from, and which steps use it."""

    category: str
    description: str
    qty: float
    unit: str = "pcs"
    table: str = ""
    row: int | None = None
    notes: str = ""
    where: list[int] = field(default_factory=list)
    extra: list[str] = field(default_factory=list)  # distinct notes gathered while merging
    part_id: str = ""  # the table row's id, for the price table and the XLSX


def _row(rows, number: int):
    return next(r for r in rows if r.row == number)


def merge(parts: list[Part]) -> list[BomLine]:
    """Merge identical parts (same category, description, table, row and unit) and number the lines.

    Lines follow :data:`CATEGORIES`, then first appearance. Notes keep the steps that use a part and every
    distinct note.

    Examples
    --------
    >>> lines = merge([Part("Capacitor units", "CU-1", 2, where=[1]), Part("Capacitor units", "CU-1", 3, where=[2])])
    >>> [(x.item, x.qty, x.notes) for x in lines]
    [(1, 5.0, 'steps 1–2')]
    """
    merged: dict[tuple, Part] = {}
    noted: dict[tuple, set[str]] = {}  # a set beside each line's notes: a plant's merge stays linear
    for p in parts:
        key = (p.category, p.description, p.table, p.row, p.unit, p.part_id)
        if key in merged:
            m = merged[key]
            m.qty += p.qty
            m.where += p.where
            if p.notes and p.notes not in noted[key]:
                noted[key].add(p.notes)
                m.extra.append(p.notes)
        else:
            merged[key] = Part(p.category, p.description, p.qty, p.unit, p.table, p.row, "", list(p.where),
                               [p.notes] if p.notes else [], p.part_id)
            noted[key] = {p.notes} if p.notes else set()
    order = {c: i for i, c in enumerate(CATEGORIES)}
    ranked = sorted(enumerate(merged.values()), key=lambda ip: (order.get(ip[1].category, len(order)), ip[0]))
    lines = []
    for item, (_, p) in enumerate(ranked, start=1):
        notes = "; ".join(x for x in (step_span(p.where), *p.extra) if x)
        lines.append(BomLine(item=item, qty=float(p.qty), unit=p.unit, category=p.category,
                             description=p.description, table=p.table, row=p.row, notes=notes, part_id=p.part_id))
    return lines


def project_bom(banks: list[BankResult]) -> list[BomLine]:
    """One list for the whole project: each bank's lines merged, notes naming the banks and their quantities.

    Examples
    --------
    >>> from types import SimpleNamespace as B
    >>> a = B(name="A", bom=[BomLine(item=1, qty=2, unit="pcs", category="Control and measurement",
    ...                              description="CTL-6OUT", table="controllers.csv", row=9)])
    >>> b = B(name="B", bom=[BomLine(item=1, qty=1, unit="pcs", category="Control and measurement",
    ...                              description="CTL-6OUT", table="controllers.csv", row=9)])
    >>> [(x.qty, x.notes) for x in project_bom([a, b])]
    [(3.0, 'A: 2; B: 1')]
    """
    parts: list[Part] = []
    for bank in banks:
        for line in bank.bom:
            parts.append(Part(line.category, line.description, line.qty, line.unit, line.table, line.row,
                              f"{bank.name}: {line.qty:g}", part_id=line.part_id))
    return merge(parts)


def bank_bom(bank: BankResult, catalogs, ctx) -> list[BomLine]:
    """Every part of one bank as merged BOM lines.

    Parameters
    ----------
    bank : BankResult
        The assembled bank (steps with reactors and switching, control, enclosure).
    catalogs : Catalogs
        The tables the parts were picked from (for their descriptions).
    ctx : CircuitContext
        The protection context: the conductor rows and their label.
    """
    parts: list[Part] = []
    v = bank.supply_voltage_v
    single = len(bank.steps) == 1  # one step: the main circuit is the step circuit, ordered once
    for step in bank.steps:
        k = [step.index]
        for u in step.units:
            row = _row(catalogs.capacitor_units, u.row)
            text = row.description or (f"three-phase capacitor unit {u.rated_kvar:g} kvar at {u.rated_voltage_v:g} V "
                                       f"{u.rated_frequency_hz:g} Hz")
            parts.append(Part("Capacitor units", f"{u.id}: {text}", u.qty, table=u.table, row=u.row, where=k,
                              part_id=u.id))
        parts += _reactor_parts(step, v, bank.frequency_hz, catalogs)
        parts += _switching_parts(step, catalogs)
        if not single:
            parts += _device_parts("Step protection", bank.rules, step.device, step.device_rating_a, step.sizing,
                                   v, catalogs, k)
            parts += _conductor_parts(step.conductor, ctx, bank.rules, k, "step circuit")
    main = bank.main
    parts += _device_parts("Main protection", bank.rules, main.device, main.device_rating_a, main.sizing, v,
                           catalogs, [], holder=not main.disconnect_rating_a)  # a fusible switch holds its fuses
    if main.disconnect_rating_a:
        row = next((r for r in catalogs.disconnect_ratings
                    if r.basis == bank.rules and r.rating_a == main.disconnect_rating_a), None)
        kind = "Fusible disconnect switch" if main.device == "fuse" else "Disconnect switch"
        parts.append(Part("Main protection", f"{kind}, 3-pole, {main.disconnect_rating_a:g} A, rated ≥ {v:g} V", 1,
                          table=row.table if row else "", row=row.row if row else None,
                          notes="opens all ungrounded conductors together"))
    parts += _conductor_parts(main.conductor, ctx, bank.rules, [], "main incomer")
    dis = bank.discharge
    if not dis.builtin_ok:
        parts.append(Part("Discharge", f"Discharge resistor ≤ {dis.max_resistance_ohm:,.0f} Ω, ≥ "
                                       f"{dis.resistor_power_w:.1f} W, across each leg", POLES * len(bank.steps),
                          notes="the units' own resistors do not meet the rule; sized on the largest step",
                          where=[s.index for s in bank.steps]))
    parts += _control_parts(bank, catalogs)
    parts += _enclosure_parts(bank, catalogs)
    return merge(parts)


def _reactor_parts(step, v: float, f: float, catalogs) -> list[Part]:
    r = step.reactor
    if r is None:
        return []
    if r.reactor is not None:
        row = _row(catalogs.reactors, r.reactor.row)
        text = f"{row.reactor_id}: {row.description}; {row.inductance_mh:g} mH per phase, {row.current_a:g} A thermal"
        return [Part("Detuning reactors", text, 1, table=row.table, row=row.row, where=[step.index],
                     part_id=row.reactor_id)]
    amps = (f"≥ {r.current_rating_a:.0f} A rms with harmonics" if math.isfinite(r.current_rating_a)
            else "current to suit (p tunes onto a harmonic of the stated spectrum)")
    text = (f"Detuning reactor made to order: three-phase, p = {r.tuning_pct:g}% ({r.tuning_frequency_hz:.0f} Hz), "
            f"{r.inductance_mh:.3f} mH per phase, {amps}, {v:g} V {f:g} Hz")
    return [Part("Detuning reactors", text, 1, notes="no table reactor fits", where=[step.index])]


def _switching_parts(step, catalogs) -> list[Part]:
    sw = step.switching
    if sw is None:
        return []
    parts = []
    if sw.contactor is not None:
        row = _row(catalogs.contactors, sw.contactor.row)
        amps, volts = sw.contactor_current_a, sw.contactor_voltage_v
        parts.append(Part("Step switching", f"{row.contactor_id}: {row.description}; AC-6b {amps:g} A at {volts:g} V: "
                                            f"Q = √3 × {volts:g} V × {amps:g} A = {sw.contactor_kvar:.1f} kvar", 1,
                          table=row.table, row=row.row, where=[step.index], part_id=row.contactor_id))
    if sw.damping_reactor_uh:
        parts.append(Part("Step switching", f"Air-core inrush damping reactor, single-phase, ≥ "
                                            f"{sw.damping_reactor_uh:,.1f} µH, ≥ {sw.required_current_a:.0f} A rms",
                          POLES, notes="one in series with each phase of the step", where=[step.index]))
    return parts


def _device_parts(category: str, rules: str, device: str, rating_a: float, sizing, v: float, catalogs,
                  where: list[int], holder: bool = True) -> list[Part]:
    if not rating_a:
        return []
    row = next((r for r in catalogs.device_ratings
                if (r.basis, r.device, r.rating_a) == (rules, device, rating_a)), None)
    table, number = (row.table, row.row) if row else ("", None)
    if device == "fuse":
        kind = "time-delay fuse-link" if rules == "nec" else "gG fuse-link"
        links = [Part(category, f"Fuse-link {rating_a:g} A, {kind}, rated ≥ {v:g} V", POLES, table=table,
                      row=number, where=where)]
        return links + ([Part(category, f"Fuse holder, 3-pole, for {rating_a:g} A fuse-links, rated ≥ {v:g} V", 1,
                              where=where)] if holder else [])
    frame = next((line.chosen for line in sizing if line.item == "Breaker frame"), "")
    return [Part(category, f"Circuit breaker, 3-pole, trip {rating_a:g} A" + (f", frame {frame}" if frame else "")
                 + f", rated ≥ {v:g} V", 1, table=table, row=number, where=where)]


def _conductor_parts(designation: str, ctx, rules: str, where: list[int], what: str) -> list[Part]:
    if not designation or designation == "none":
        return []
    match = re.fullmatch(r"(?:(\d+) × )?(.+)", designation)
    sets = int(match.group(1) or 1)
    size = match.group(2)
    name = conductor_name(rules)
    row = next((r for r in ctx.conductor_rows if name(r) == size), None)
    return [Part("Conductors", f"Copper conductor {size}, {ctx.conductor_label}", sets, unit="set",
                 table=row.table if row else "", row=row.row if row else None,
                 notes=f"one set = 3 phase conductors; {what}; length to suit; earthing conductor per local code",
                 where=where)]


def _control_parts(bank: BankResult, catalogs) -> list[Part]:
    c = bank.control
    if c is None:
        return []
    cat = "Control and measurement"
    parts = []
    if c.controller is not None:
        row = _row(catalogs.controllers, c.controller.row)
        parts.append(Part(cat, f"{row.controller_id}: {row.description}", 1, table=row.table, row=row.row,
                          notes=f"{c.outputs_needed} outputs used", part_id=row.controller_id))
    if c.ct is not None:
        row = _row(catalogs.current_transformers, c.ct.row)
        parts.append(Part(cat, f"{row.ct_id}: {row.description}", 1, table=row.table, row=row.row,
                          notes="on one phase of the incoming supply, upstream of the load and the bank; "
                                f"ratio for {c.ct_basis_a:,.0f} A: {c.ct_basis}", part_id=row.ct_id))
    elif c.outputs_needed:
        parts.append(Part(cat, "Current transformer, ratio to suit the load current at the CT (not known)", 1,
                          notes="give assembly.ct_load_current_a to size it"))
    if c.control_transformer is not None:
        row = _row(catalogs.control_transformers, c.control_transformer.row)
        parts.append(Part(cat, f"{row.transformer_id}: {row.description}, {bank.supply_voltage_v:g} V / "
                               f"{c.control_voltage_v:g} V", 1, table=row.table, row=row.row,
                          notes=f"control load {c.control_load_va:,.0f} VA sealed", part_id=row.transformer_id))
    for pick, qty, note in ((c.primary_fuse, 2, "control transformer primary"),
                            (c.secondary_fuse, 1 if c.control_transformer else 2, "control circuit"),
                            (c.measuring_fuse, 2, "controller voltage-measuring leads")):
        if pick is not None:
            row = _row(catalogs.control_fuses, pick.row)
            parts.append(Part(cat, f"{row.fuse_id}: {row.description}, rated ≥ {bank.supply_voltage_v:g} V", qty,
                              table=row.table, row=row.row, notes=note, part_id=row.fuse_id))
    return parts


def _enclosure_parts(bank: BankResult, catalogs) -> list[Part]:
    e = bank.enclosure
    if e is None:
        return []
    cat = "Enclosure"
    parts = []
    if e.fan is not None:
        row = _row(catalogs.fans, e.fan.row)
        parts.append(Part(cat, f"{row.fan_id}: {row.description}", e.fan_qty, table=row.table, row=row.row,
                          notes=f"≥ {e.airflow_m3_per_h:,.0f} m³/h in all", part_id=row.fan_id))
    if e.busbar is not None:
        row = _row(catalogs.busbars, e.busbar.row)
        parts.append(Part(cat, f"{row.busbar_id}: {row.description}, {row.rating_a:g} A ({e.busbar_rating_a:,.0f} A "
                               f"inside at {e.busbar_derating:g})", 1, unit="set", table=row.table, row=row.row,
                          notes=f"one set = 3 phases; ≥ {e.busbar_required_a:,.0f} A needed; length to suit",
                          part_id=row.busbar_id))
    parts.append(Part(cat, f"Enclosure, ventilated, to suit the layout: {e.total_losses_w:,.0f} W inside, forced "
                           f"air ≥ {e.airflow_m3_per_h:,.0f} m³/h for {e.temperature_rise_k:g} K rise at "
                           f"{e.ambient_c:g} °C", 1, notes="size and rating from the enclosure maker"))
    wait = bank.reconnection.delay_s if bank.reconnection else bank.discharge.time_s
    wait = max(wait, bank.discharge.time_s)
    parts.append(Part(cat, f"Warning label: capacitors store energy - isolate, wait {wait:g} s, prove dead before "
                           "touching", 1, notes="on the door, beside the disconnect handle"))
    return parts
