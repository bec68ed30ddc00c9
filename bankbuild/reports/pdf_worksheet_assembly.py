"""Worksheet sections for the assembly figures, shown when the results carry them: the contactor and inrush of
each step, the detuning reactor picked for each step, reconnection delay, controller and control circuit, and
enclosure heat and ventilation.

Each section is drawn when the results carry its part (``Step.switching``, ``Step.reactor``, ``BankResult.inrush``,
``control``, ``enclosure`` are optional); the figures and verdicts are the pipeline's, printed as they are.
"""

from __future__ import annotations

from bankbuild.reports.pdf_blocks import C, grid, heading, key_values, verdict
from bankbuild.reports.pdf_common import P, gnum, num
from bankbuild.reports.pdf_figures import model_pairs
from bankbuild.results.sizing import BankResult, EnclosureResult


def pick_text(pick) -> str:
    """A picked rating with its table row, or a plain statement that none fits."""
    if pick is None:
        return "none in the table: made to order"
    return f"{pick.designation} ({pick.table}, row {pick.row})"


def _amps(value) -> str:
    return num(value, 0, "A") if value is not None else "—"


def _current_and_kvar(sw) -> str:
    """Needed / rated AC-6b current, then the kvar the frame may switch with its derivation Q = √3·U·I_e."""
    amps, volts, kvar = sw.contactor_current_a, sw.contactor_voltage_v, sw.contactor_kvar
    rated = f"{gnum(amps)} A" if amps else _amps(None)
    text = f"{_amps(sw.required_current_a)} / {rated}"
    if sw.contactor is not None and volts and kvar and amps:
        text += f"; √3 × {gnum(volts)} V × {gnum(amps)} A = {num(kvar, 1, 'kvar')}"
    return text


def switching_table(bank: BankResult, width: float):
    """The contactor and switching inrush of each step, or None when the results carry none."""
    steps = [s for s in bank.steps if s.switching is not None]
    if not steps:
        return None
    head = [C(h, "head") for h in ("Step", "Capacitor-duty contactor", "Needed / AC-6b current, kvar",
                                   "Energising peak", "Back-to-back peak", "Limit (capacitor, contactor)",
                                   "Damping", "Result")]
    rows = [head]
    for step in steps:
        sw = step.switching
        # the pipeline's verdicts: a contactor was found, and its peak needs no damping or damping is fitted
        ok = sw.contactor is not None and (not sw.damping_needed or sw.damping != "none")
        damping = sw.damping
        if sw.damping_reactor_uh:
            damping += f"; add {num(sw.damping_reactor_uh, 1, 'µH')} per phase"
        rows.append([
            C(str(step.index)), C(pick_text(sw.contactor)), C(_current_and_kvar(sw)),
            C(_amps(sw.energising_peak_a)), C(_amps(sw.back_to_back_peak_a)),
            C(f"{_amps(sw.capacitor_limit_a)}, {_amps(sw.contactor_limit_a)}"),
            C(damping), verdict(ok)])
    shares = (0.05, 0.18, 0.22, 0.1, 0.115, 0.14, 0.115, 0.08)
    return grid(rows, [width * s for s in shares])


def reactor_table(bank: BankResult, width: float):
    """The detuning reactor picked for each step, or None when the results carry none."""
    steps = [s for s in bank.steps if s.reactor is not None]
    if not steps:
        return None
    head = [C(h, "head") for h in ("Step", "Reactor", "L needed / used", "Current needed / rated",
                                   "Tuned to", "Capacitor voltage (fund., rms)", "Unit rated", "Result")]
    rows = [head]
    for step in steps:
        r = step.reactor
        rows.append([
            C(str(step.index)), C(pick_text(r.reactor)),
            C(f"{num(r.required_inductance_mh, 3)} / {num(r.inductance_mh, 3)} mH"),
            C(f"{_amps(r.required_current_a)} / {_amps(r.current_rating_a)}"),
            C(num(r.actual_tuning_frequency_hz, 1, "Hz")),
            C(f"{num(r.capacitor_voltage_v, 0)} V, {num(r.capacitor_voltage_rms_v, 0)} V"),
            C(num(r.unit_voltage_v, 0, "V")), verdict(r.voltage_ok)])
    shares = (0.06, 0.25, 0.13, 0.13, 0.1, 0.15, 0.1, 0.08)
    return grid(rows, [width * s for s in shares])


def _pairs(model, skip: tuple[str, ...] = ()) -> list[tuple[str, str]]:
    data = {k: v for k, v in model.model_dump().items() if k not in skip}
    return model_pairs(data)


def assembly_sections(bank: BankResult, width: float) -> list:
    """Every assembly section the results carry, each under its own heading; empty when there are none."""
    story: list = []
    table = switching_table(bank, width)
    if table is not None:
        story += heading("Contactors and switching inrush, per step") + [
            table, P("A frame's kvar is derived from its AC-6b current I_e at the table voltage U that covers the "
                     "supply: Q = √3·U·I_e (IEC 60947-4-1, category AC-6b). "
                     "Peaks are estimates (energising: √2·√(I_sc·I₁); back-to-back from the loop inductance). "
                     "A step is flagged when its peak exceeds the lower limit and no damping is fitted.", "note")]
    inrush = bank.inrush
    if inrush is not None:
        story += heading("Inrush of the bank", "h2", 80) + [key_values(_pairs(inrush), width, key_share=0.35)]
    table = reactor_table(bank, width)
    if table is not None:
        story += heading("Detuning reactors picked, per step") + [table]
    control = bank.control
    if control is not None:
        story += heading("Controller and control circuit", "h2", 80) + [
            key_values(_pairs(control), width, key_share=0.35)]
    enclosure = bank.enclosure
    if enclosure is not None:
        story += heading("Enclosure heat and ventilation", "h2", 140) + enclosure_blocks(enclosure, width)
    return story


def enclosure_blocks(enclosure: EnclosureResult, width: float) -> list:
    """The heat sources as a table, then the ventilation and busbar figures."""
    blocks: list = []
    if enclosure.losses:
        rows = [[C(h, "head") for h in ("Heat source", "Qty", "Each", "Total", "Source of the figure")]]
        for line in enclosure.losses:
            rows.append([C(line.item), C(str(line.qty)), C(num(line.each_w, 1, "W"), "cell_right"),
                         C(num(line.total_w, 0, "W"), "cell_right"), C(line.source, "small")])
        rows.append([C("All heat sources", "cell_bold"), C(""), C(""),
                     C(num(enclosure.total_losses_w, 0, "W"), "cell_right"), C("")])
        blocks += [grid(rows, [width * s for s in (0.3, 0.07, 0.11, 0.11, 0.41)])]
    blocks.append(key_values(_pairs(enclosure, skip=("losses", "total_losses_w")), width, key_share=0.35))
    return blocks
