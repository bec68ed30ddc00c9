"""The terminal summary: one block per bank, plain text, fits 100 columns."""

from __future__ import annotations

from pathlib import Path

from bankbuild.results.sizing import BankResult, ProjectResult
from bankbuild.results.text import step_span


def _fmt_a(value: float) -> str:
    return f"{value:,.1f} A"


WIDTH = 100


def _clip(text: str, width: int = WIDTH) -> str:
    """Cut a line to the terminal width, marking the cut."""
    return text if len(text) <= width else text[: width - 1] + "…"


def _groups(steps, key) -> list[tuple[str, list[int]]]:
    """Consecutive-or-not steps sharing the same text, in first-seen order: [(text, [indices])]."""
    seen: dict[str, list[int]] = {}
    for step in steps:
        text = key(step)
        if text:
            seen.setdefault(text, []).append(step.index)
    return list(seen.items())


def _amps(value: float) -> str:
    return f"{value:.0f} A" if value < float("inf") else "unbounded"


def _which(indices: list[int]) -> str:
    return step_span(indices, sep=",")


def assembly_lines(bank: BankResult) -> list[str]:
    """The orderable assembly in a few lines: step plan, reactors, switching, control, enclosure."""
    out: list[str] = []
    plan = bank.step_plan
    if plan is not None:
        form = f"pattern {plan.pattern}" if plan.form == "plan" else plan.form
        out.append(f"  step plan     {form}: resolution {plan.resolution_kvar:,.1f} kvar; {plan.reachable_count} "
                   f"values from 0 to {sum(plan.step_kvar):,.1f} kvar; largest gap {plan.largest_gap_kvar:,.1f} kvar")
    reactors = _groups(bank.steps, lambda s: (
        "" if s.reactor is None else
        f"{s.reactor.reactor.designation if s.reactor.reactor else 'made to order'}, "
        f"{s.reactor.inductance_mh:.3g} mH, {_amps(s.reactor.current_rating_a)} "
        f"(needs {_amps(s.reactor.required_current_a)})"))
    if reactors:
        first = next(s.reactor for s in bank.steps if s.reactor)
        out.append(f"  reactors      p = {first.tuning_pct:g}% ({first.tuning_frequency_hz:.0f} Hz); units see "
                   f"{first.capacitor_voltage_v:.0f} V, margin {first.voltage_margin_pct:.1f}% to their rating")
        out += [_clip(f"                {_which(ix)}: {text}") for text, ix in reactors]
    contactors = _groups(bank.steps, lambda s: (
        "" if s.switching is None else
        (s.switching.contactor.designation if s.switching.contactor else "NONE FITS")
        + (" with damping resistors" if s.switching.damping == "resistors" else "")))
    if contactors:
        out.append(_clip("  contactors    " + "; ".join(f"{_which(ix)} {text}" for text, ix in contactors)))
    inrush = bank.inrush
    if inrush is not None and (inrush.energising_peak_a or inrush.back_to_back_peak_a):
        parts = []
        if inrush.energising_peak_a:
            at = f" (worst: step {inrush.energising_step})" if inrush.energising_step else ""
            parts.append(f"energising {inrush.energising_peak_a:,.0f} A peak{at}")
        if inrush.back_to_back_peak_a:
            at = f" (worst: step {inrush.back_to_back_step})" if inrush.back_to_back_step else ""
            parts.append(f"back-to-back {inrush.back_to_back_peak_a:,.0f} A peak{at} "
                         f"(L {inrush.inter_step_inductance_uh:g} µH assumed between steps)")
        out.append(_clip("  inrush        " + ", ".join(parts)))
        out.append(_clip(f"                damping: {inrush.damping}"))
    if bank.reconnection is not None:
        out.append(f"  reconnect     wait ≥ {bank.reconnection.delay_s:g} s before a step switches on again "
                   "(≤ 10% and ≤ 50 V)")
    control = bank.control
    if control is not None and control.controller is not None:
        ct = f"CT {control.ct.value:g}/{_ct_secondary(control)} A" if control.ct else "CT to suit (load unknown)"
        cpt = (f", {control.control_transformer.designation} {bank.supply_voltage_v:g}/{control.control_voltage_v:g} V"
               if control.control_transformer else "")
        out.append(_clip(f"  control       {control.controller.designation} ({control.outputs_needed} outputs), "
                         f"{ct}{cpt}"))
    encl = bank.enclosure
    if encl is not None:
        fans = f"{encl.fan_qty} × {encl.fan.designation}" if encl.fan else "no fan"
        bars = f"busbar {encl.busbar.designation}" if encl.busbar else "NO BUSBAR FITS"
        out.append(_clip(f"  enclosure     {encl.total_losses_w:,.0f} W inside; {encl.airflow_m3_per_h:,.0f} m³/h for "
                         f"{encl.temperature_rise_k:g} K at {encl.ambient_c:g} °C: {fans}; {bars}"))
    return out


def _ct_secondary(control) -> str:
    return control.ct.designation.rsplit("-", 1)[-1] if control.ct else ""


def bom_lines(bank: BankResult) -> list[str]:
    """The bank's bill of materials, one clipped line per item."""
    if not bank.bom:
        return []
    out = [f"  bill of materials ({len(bank.bom)} lines; full text in bill-of-materials.csv / .xlsx / .json)"]
    for line in bank.bom:
        qty = f"{line.qty:g}"
        out.append(_clip(f"    {line.item:>2}  {qty:>4} {line.unit:<3}  {line.description}"))
    return out


def _none_fits(sizing, item: str) -> str:
    """``none in the table is large enough (≥ 612.3 A needed)``, with the figure from the sizing line."""
    need = next((line.required_a for line in sizing if line.item == item), None)
    return "none in the table is large enough" + (f" (≥ {need:,.1f} A needed)" if need is not None else "")


def _device(kind: str, rating_a: float, sizing) -> str:
    if rating_a:
        return f"{kind} {rating_a:g} A"
    return f"{kind}: " + _none_fits(sizing, "Fuse" if kind == "fuse" else "Breaker trip")


def _conductor(name: str, ampacity_a: float, sizing) -> str:
    if ampacity_a and name != "none":
        return f"{name} ({ampacity_a:g} A)"
    return "conductor: " + _none_fits(sizing, "Conductor ampacity")


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
        out.append(f"    {step.index:>2}  {step.kvar:7.1f} kvar  {units:<28} "
                   f"{_device(step.device, step.device_rating_a, step.sizing)}, "
                   f"{_conductor(step.conductor, step.conductor_ampacity_a, step.sizing)}")
    main = bank.main
    disconnect = (f"disconnect {main.disconnect_rating_a:g} A" if main.disconnect_rating_a else
                  f"disconnect: {_none_fits(main.sizing, 'Disconnect')}")
    out.append(f"  main          {_device(main.device, main.device_rating_a, main.sizing)}, {disconnect}, "
               f"conductor {_conductor(main.conductor, main.conductor_ampacity_a, main.sizing)} on "
               f"{_fmt_a(main.design_current_a)}")
    dis = bank.discharge
    out.append(f"  discharge     step {dis.step_index}: R ≤ {dis.max_resistance_ohm:,.0f} Ω per leg "
               f"({dis.resistor_power_w:,.1f} W) for ≤ {dis.limit_v:g} V in {dis.time_s:g} s; built-in "
               f"{dis.builtin_time_s:,.0f} s: {'meets' if dis.builtin_ok else 'DOES NOT MEET'} the rule")
    if bank.resonance:
        orders = ", ".join(f"{pt.harmonic_order:.2f}" for pt in bank.resonance)
        out.append(f"  resonance h   {orders}")
    out.extend(assembly_lines(bank))
    flagged = [c for c in bank.checks if not c.ok]
    out.append(f"  checks        {len(bank.checks) - len(flagged)} met, {len(flagged)} flagged")
    for check in flagged:
        out.append(f"    FLAG  {check.name}: {check.detail}")
    for check in bank.checks:
        if check.ok and check.level == "info":  # figures to act on, e.g. a motor's overload relay setting
            out.append(f"    NOTE  {check.name}: {check.detail}")
    out.extend(bom_lines(bank))
    return out


def project_summary(result: ProjectResult, written: list[str] | None = None) -> str:
    """The whole terminal summary, with the files written and the cautions."""
    lines = [f"bankbuild {result.provenance.version} — {result.project.get('name', '')}",
             f"rule basis: {_basis_line(result.provenance)}", ""]
    for bank in result.banks:
        lines.extend(bank_summary(bank))
        lines.append("")
    if result.bom and len(result.banks) > 1:
        lines.append(f"project bill of materials: {len(result.bom)} lines, the banks' parts merged (in the files)")
        lines.append("")
    total = result.bom_total
    if total is not None:
        unpriced = f"; {total.unpriced_lines} line(s) without a price, not in it" if total.unpriced_lines else ""
        demo = " — INVENTED DEMO PRICES, not a quotation" if total.invented else ""
        lines += [f"priced bill of materials: {total.total:,.2f} {total.currency} from {total.source}{unpriced}"
                  f"{demo}", ""]
    lines.extend(closing_lines(written, [result.cautions[0], result.cautions[2]]))
    return "\n".join(lines)


def _basis_line(prov) -> str:
    """``NEC 2023 (rules-nec-2023.yaml, SHA-256 2cccb8e2…)``: the basis named once, with its file."""
    if not prov.rule_basis_file:
        return prov.edition
    return f"{prov.edition} ({prov.rule_basis_file}, SHA-256 {prov.rule_basis_sha256[:12]}…)"


def closing_lines(written: list[str] | None, cautions: list[str]) -> list[str]:
    """The end of a terminal summary: the files written, then the cautions picked for it."""
    if not written:
        return ["CAUTION: " + caution for caution in cautions]
    diagrams = [path for path in written if Path(path).name.startswith("one-line-") and path.endswith(".svg")]
    drawn = set(diagrams)
    shown = [path for path in written if path not in drawn] if len(diagrams) > 6 else list(written)
    lines = ["written:", *(f"  {path}" for path in shown)]
    if len(diagrams) > 6:  # a plant of many banks: one line for its diagrams
        lines.append(f"  {diagrams[0]} … {Path(diagrams[-1]).name} ({len(diagrams)} one-line diagrams)")
    lines.append("")
    return lines + ["CAUTION: " + caution for caution in cautions]
