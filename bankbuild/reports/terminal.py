"""The terminal summary: one block per bank, plain text, fits 100 columns."""

from __future__ import annotations

from ..results import BankResult, ProjectResult


def _fmt_a(value: float) -> str:
    return f"{value:,.1f} A"


def bank_summary(bank: BankResult) -> list[str]:
    """Lines of text that summarise one bank."""
    out = [f"== {bank.name} ==",
           f"  supply        {bank.supply_voltage_v:g} V, {bank.frequency_hz:g} Hz, {bank.connection}"
           + (f"; transformer {bank.transformer_kva:g} kVA, {bank.transformer_z_pct:g}% Z"
              if bank.transformer_kva else "")]
    need = bank.need
    if need.form == "kvar":
        out.append(f"  need          {need.required_kvar:,.1f} kvar (given)")
    else:
        out.append(f"  need          {need.required_kvar:,.1f} kvar: {need.active_kw:,.1f} kW from PF "
                   f"{need.pf_present:.3f} to {need.pf_target:.3f}"
                   + (f" (corrected PF {need.pf_corrected:.3f})" if need.pf_corrected is not None else ""))
    detune = f", detuned {bank.detuning_pct:g}%" if bank.detuning_pct else ""
    out.append(f"  delivered     {bank.delivered_kvar:,.1f} kvar at the supply{detune}; units rated "
               f"{bank.capacitor_voltage_v:g} V, nameplate {bank.rated_kvar:,.1f} kvar")
    out.append(f"  currents      rated {_fmt_a(bank.rated_current_a)}, operating {_fmt_a(bank.line_current_a)};"
               f" {bank.capacitance_uf_per_phase:,.1f} µF per leg ({bank.connection})")
    out.append("  steps")
    for step in bank.steps:
        units = " + ".join(f"{u.qty} × {u.rated_kvar:g} kvar" for u in step.units)
        out.append(f"    {step.index:>2}  {step.kvar:7.1f} kvar  {units:<28} {step.device} "
                   f"{step.device_rating_a:g} A, {step.conductor} ({step.conductor_ampacity_a:g} A)")
    main = bank.main
    out.append(f"  main          {main.device} {main.device_rating_a:g} A, disconnect {main.disconnect_rating_a:g} A,"
               f" conductor {main.conductor} ({main.conductor_ampacity_a:g} A) on {_fmt_a(main.design_current_a)}")
    dis = bank.discharge
    out.append(f"  discharge     step {dis.step_index}: R ≤ {dis.max_resistance_ohm:,.0f} Ω per leg "
               f"({dis.resistor_power_w:,.1f} W) for ≤ {dis.limit_v:g} V in {dis.time_s:g} s; built-in "
               f"{dis.builtin_time_s:,.0f} s: {'meets' if dis.builtin_ok else 'DOES NOT MEET'} the rule")
    if bank.resonance:
        orders = ", ".join(f"{pt.harmonic_order:.2f}" for pt in bank.resonance)
        out.append(f"  resonance h   {orders}")
    flagged = [c for c in bank.checks if not c.ok]
    out.append(f"  checks        {len(bank.checks) - len(flagged)} met, {len(flagged)} flagged")
    for check in flagged:
        out.append(f"    FLAG  {check.name}: {check.detail}")
    for check in bank.checks:
        if check.ok and check.level == "info":  # figures to act on, e.g. a motor's overload relay setting
            out.append(f"    NOTE  {check.name}: {check.detail}")
    return out


def project_summary(result: ProjectResult, written: list[str] | None = None) -> str:
    """The whole terminal summary, with the files written and the cautions."""
    lines = [f"bankbuild {result.provenance.version} — {result.project.get('name', '')}",
             f"rule basis: {result.provenance.edition}", ""]
    for bank in result.banks:
        lines.extend(bank_summary(bank))
        lines.append("")
    if written:
        lines.append("written:")
        lines.extend(f"  {path}" for path in written)
        lines.append("")
    lines.append("CAUTION: " + result.cautions[0])
    lines.append("CAUTION: " + result.cautions[2])
    return "\n".join(lines)
