"""The ``rerate`` outputs: terminal summary, JSON document, and the bill-of-materials difference as CSV.

They read the rerate results only (:mod:`bankbuild.results.rerate`).
"""

from __future__ import annotations

import io
import json

from bankbuild.reports.jsonout import json_safe
from bankbuild.reports.tables import csv_writer, neutralise, whole_qty
from bankbuild.reports.terminal import _basis_line, closing_lines
from bankbuild.results.rerate import RerateBank, RerateResult


def _supply(v: float, f: float) -> str:
    return f"{v:g} V {f:g} Hz"


def bank_text(bank: RerateBank) -> list[str]:
    """Lines of text for one re-rated bank."""
    old = _supply(bank.original_voltage_v, bank.original_frequency_hz)
    new = _supply(bank.voltage_v, bank.frequency_hz)
    out = [f"== {bank.name}: {old} → {new} ==",
           f"  delivers      {bank.original_kvar:,.1f} kvar → {bank.delivered_kvar:,.1f} kvar "
           f"({bank.kvar_ratio:.1%}); kvar goes with V²·f — scaling with voltage alone would wrongly claim "
           f"{bank.linear_scaling_kvar:,.1f} kvar",
           f"  currents      rated {bank.rated_current_a:,.1f} A (nameplate, unchanged); operating "
           f"{bank.original_line_current_a:,.1f} A → {bank.line_current_a:,.1f} A"]
    stress = bank.at_new_supply.system.voltage
    verdict = "within 110% of rating" if bank.capacitor_voltage_ok else "OVER the 110% limit"
    rise = (f", {stress.light_load_voltage_v:.0f} V at light load" if stress.light_load_voltage_v >
            stress.capacitor_voltage_v + 1e-9 else "")
    out.append(f"  capacitors    rated {_supply(bank.capacitor_voltage_v, bank.rated_frequency_hz)}; see "
               f"{bank.capacitor_voltage_seen_v:.0f} V{rise} = {stress.voltage_pu:.1%}: {verdict}; "
               f"{stress.utilisation_pu:.0%} of nameplate kvar delivered")
    if bank.original_tuning_pct:
        out.append(f"  detuning      reactors tuned to {bank.tuning_frequency_hz:.0f} Hz: p "
                   f"{bank.original_tuning_pct:g}% at {bank.original_frequency_hz:g} Hz becomes "
                   f"{bank.tuning_pct:.2f}% at {bank.frequency_hz:g} Hz")
    out.append("  steps         kvar before → after, operating current before → after")
    for step in bank.steps:
        units = " + ".join(f"{u.qty} × {u.id}" for u in step.units)
        out.append(f"    {step.index:>2}  {step.original_kvar:7.1f} → {step.delivered_kvar:7.1f} kvar  "
                   f"{step.original_line_current_a:6.1f} → {step.line_current_a:6.1f} A  {units}")
    out.append("  installed parts at the new supply")
    for item in bank.items:
        action = "keep" if item.fits else "CHANGE"
        text = f"    {action:<7}{item.item:<26} {item.installed}"
        if not item.fits:
            text += f" → {item.required}"
        if item.detail:
            text += f"  ({item.detail})"
        out.append(text)
    flagged = [c for c in bank.checks if not c.ok]
    out.append(f"  checks here   {len(bank.checks) - len(flagged)} met, {len(flagged)} flagged")
    out.extend(f"    FLAG  {c.name}: {c.detail}" for c in flagged)
    out.extend(f"    NOTE  {c.name}: {c.detail}" for c in bank.checks if c.ok and c.level == "info")
    res = bank.resized
    out.append(f"  re-sized      units rated {res.capacitor_voltage_v:g} V deliver {res.delivered_kvar:,.1f} kvar at "
               f"{new} (restores {bank.original_kvar:,.1f} kvar); main {res.main.device} "
               f"{res.main.device_rating_a:g} A, conductor {res.main.conductor}")
    for step in res.steps:
        units = " + ".join(f"{u.qty} × {u.id}" for u in step.units)
        out.append(f"    {step.index:>2}  {step.kvar:7.1f} kvar  {units:<40} {step.device} {step.device_rating_a:g} A, "
                   f"{step.conductor}")
    res_flags = [c for c in res.checks if not c.ok]
    out.extend(f"    FLAG  {c.name}: {c.detail}" for c in res_flags)
    out.append(f"  bill-of-materials difference ({bank.bom_basis})")
    for change in bank.bom_difference:
        out.append(f"    {change.action:<7}{change.qty:>6g} {change.unit:<4} {change.description}")
    return out


def rerate_text(result: RerateResult, written: list[str] | None = None) -> str:
    """The whole terminal summary of a re-rating run."""
    lines = [f"bankbuild {result.provenance.version} — re-rating {result.project.get('name', '')}",
             f"rule basis: {_basis_line(result.provenance)}", ""]
    for bank in result.banks:
        lines.extend(bank_text(bank))
        lines.append("")
    lines.extend(closing_lines(written, [result.cautions[-1], result.cautions[2]]))
    return "\n".join(lines)


def rerate_json(result: RerateResult) -> str:
    """The re-rating results as one JSON document; each bank's ``resized`` has the keys of ``size --json``."""
    return json.dumps(json_safe(result.model_dump(mode="python")), indent=2, ensure_ascii=False)


def bom_difference_csv(result: RerateResult) -> str:
    """One row per change: bank, action (keep/remove/add), quantity, unit, category, description, unit id."""
    buffer = io.StringIO()
    writer = csv_writer(buffer, lineterminator="\n")
    writer.writerow(["bank", "action", "qty", "unit", "category", "description", "unit_id", "basis"])
    for bank in result.banks:
        for change in bank.bom_difference:
            row = [bank.name, change.action, whole_qty(change.qty), change.unit, change.category, change.description,
                   change.id, bank.bom_basis]
            writer.writerow([neutralise(c) if isinstance(c, str) else c for c in row])
    return buffer.getvalue()
