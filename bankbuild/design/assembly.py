"""Turn a sized bank into an orderable assembly: step plan, reactors, switching, control, enclosure and BOM.

:func:`step_targets` gives the pipeline the kvar each step must deliver; :func:`assemble_bank` takes the sized
:class:`~bankbuild.results.sizing.BankResult` and returns a copy with the assembly attached. Pure: no file access.
"""

from __future__ import annotations

import math

from bankbuild.calc import capacitor as cap
from bankbuild.calc import power as pw
from bankbuild.calc import system as sysc
from bankbuild.calc.discharge import discharge_tau_s
from bankbuild.calc.switching import (
    capacitance_uf,
    delay_setting_s,
    inrush_peak_a,
    reconnection_times_s,
    source_inductance_uh,
)
from bankbuild.design import stepplan
from bankbuild.design.bom import bank_bom
from bankbuild.design.control import ControlInputs, control_circuit, ct_basis
from bankbuild.design.enclosure import device_loss_w, enclosure, fan_va
from bankbuild.design.pricing import bom_total, price_lines
from bankbuild.design.reactors import step_reactor
from bankbuild.design.switching import step_switching
from bankbuild.results.sizing import BankResult, Check, InrushSummary, LossLine, Reconnection, StepPlanResult
from bankbuild.results.text import step_span
from bankbuild.spec.model import Bank, StepPlan

STEP_DEVICE_POLES = 3


def step_targets(bank: Bank, required_kvar: float, units=(), factor: float = 1.0) -> list[float]:
    """kvar each step must deliver at the supply: as listed, one fixed step, or the proposed plan.

    Parameters
    ----------
    bank : Bank
        The bank's spec.
    required_kvar : float
        The need at the supply [kvar].
    units : sequence of CapacitorUnit
        Units of the chosen rated voltage and frequency.
    factor : float
        What one nameplate kvar delivers at the supply [-].
    """
    if isinstance(bank.steps, list):
        return list(bank.steps)
    if bank.steps is None:
        return [required_kvar]
    weights = bank.steps.weights()
    plan = stepplan.propose_steps(required_kvar, weights, [u.rated_kvar for u in units], factor)
    if plan is None:
        unit = required_kvar / sum(weights)
        return [w * unit for w in weights]
    return [q * factor for q in plan.rated_kvar]


def plan_result(bank: Bank, result: BankResult, units) -> StepPlanResult:
    """The step plan as built: sizes, how they were chosen, reachable values and the largest gap."""
    factor = result.delivered_kvar / result.rated_kvar if result.rated_kvar else 1.0
    reach = stepplan.reachable([s.rated_kvar for s in result.steps], factor)
    steps = [s.kvar for s in result.steps]
    note = "" if reach.values_kvar else f"{reach.count:,} reachable values: too many to list"
    if isinstance(bank.steps, StepPlan):
        weights = bank.steps.weights()
        plan = stepplan.propose_steps(result.required_kvar, weights, [u.rated_kvar for u in units], factor)
        rule = plan.rule if plan else "no units at the chosen voltage: the need split by the weights"
        smallest = min(result.steps, key=lambda s: s.kvar)
        built = " + ".join(f"{u.qty} × {u.rated_kvar:g} kvar" for u in smallest.units)
        rule += (f"; as built, the resolution step (step {smallest.index}) is {built} = {smallest.rated_kvar:g} kvar "
                 f"nameplate, delivering {smallest.kvar:,.1f} kvar")
        return StepPlanResult(form="plan", pattern=":".join(map(str, weights)), rule=rule, step_kvar=steps,
                              resolution_kvar=min(steps), reachable_kvar=list(reach.values_kvar),
                              reachable_count=reach.count, largest_gap_kvar=reach.largest_gap_kvar,
                              largest_gap_from_kvar=reach.gap_from_kvar, note=note)
    if isinstance(bank.steps, list):
        form, rule = "list", ("steps as listed in the spec (kvar at the supply), each built from the fewest units, "
                              "then the least overshoot")
    elif getattr(bank, "units", None):
        form, rule = "existing", "the units the spec lists per step, as built"
    else:
        form, rule = "fixed", ("fixed bank: one step of at least the need, built from the fewest units, then the "
                               "least overshoot")
    return StepPlanResult(form=form, pattern="", rule=rule, step_kvar=steps, resolution_kvar=min(steps),
                          reachable_kvar=list(reach.values_kvar), reachable_count=reach.count,
                          largest_gap_kvar=reach.largest_gap_kvar, largest_gap_from_kvar=reach.gap_from_kvar,
                          note=note)


def assemble_bank(result: BankResult, bank: Bank, catalogs, ctx, units) -> BankResult:
    """Attach the orderable assembly to a sized bank.

    Parameters
    ----------
    result : BankResult
        The sized bank (steps, protection, discharge).
    bank : Bank
        Its spec (steps form, assembly assumptions, protection factors).
    catalogs : Catalogs
        All rating tables.
    ctx : CircuitContext
        The protection context (conductor rows and names) the bank was sized with.
    units : sequence of CapacitorUnit
        Units of the chosen rated voltage and frequency.

    Returns
    -------
    BankResult
        A copy with ``step_plan``, per-step ``reactor`` and ``switching``, ``inrush``, ``reconnection``,
        ``control``, ``enclosure``, ``bom`` and the assembly's checks.
    """
    opts = bank.assembly
    checks: list[Check] = []
    v_s, f_s = result.supply_voltage_v, result.frequency_hz
    automatic = bank.steps is not None or len(result.steps) > 1  # an existing bank's several steps switch too
    steps = list(result.steps)
    plan = plan_result(bank, result, units)

    if result.detuning_pct:
        steps = [s.model_copy(update={"reactor": step_reactor(
            s, v_s, f_s, result.detuning_pct, result.capacitor_voltage_v, opts.harmonic_orders_pct(),
            catalogs.reactors, opts.reactor_tolerance_pct)}) for s in steps]
        checks += _reactor_checks(steps, opts.reactor_tolerance_pct)

    source_uh = isc = None
    if result.transformer_kva:
        supply = bank.supply
        s_sc = sysc.short_circuit_mva(supply.transformer_kva, supply.transformer_z_pct, supply.source_sc_mva)
        isc = sysc.short_circuit_current_a(s_sc, v_s)
        source_uh = source_inductance_uh(isc, v_s, f_s)
    caps = [capacitance_uf(s.rated_kvar, result.capacitor_voltage_v, s.units[0].rated_frequency_hz) for s in steps]
    reactors_uh = [s.reactor.inductance_mh * 1000.0 if s.reactor else 0.0 for s in steps]
    reconnection = None
    if automatic:
        switched = []
        for k, s in enumerate(steps):
            rms = s.reactor.required_current_a if s.reactor else s.line_current_a
            basis = max(s.rated_current_a, rms if math.isfinite(rms) else s.line_current_a)
            sw = step_switching(k, caps, reactors_uh, s.rated_current_a, opts.contactor_factor * basis, v_s,
                                opts.inter_step_inductance_uh, source_uh, catalogs.contactors)
            switched.append(s.model_copy(update={"switching": sw}))
        steps = switched
        checks += _switching_checks(steps, v_s, opts.contactor_factor)
        reconnection = _reconnection(steps, result, bank, catalogs)
    inrush = _inrush_summary(steps, caps, reactors_uh, v_s, opts.inter_step_inductance_uh, source_uh, isc,
                             automatic)

    need = result.need
    load_kva = pw.apparent_kva(need.active_kw, need.reactive_kvar) if need.active_kw is not None else None
    basis_a, basis_text = ct_basis(opts.ct_load_current_a, result.transformer_kva, load_kva, v_s)
    coils = tuple(s.switching.coil_sealed_va for s in steps if s.switching)
    base_lines = _part_losses(steps, result, catalogs)
    busbar_required = ctx.conductor_factor * result.main.design_current_a
    fans_va = 0.0
    for _ in range(6):  # the fans feed from the control circuit, whose losses the fans carry away
        control, control_checks = control_circuit(ControlInputs(
            rules=result.rules, steps=len(steps) if automatic else 0,
            smallest_step_a=min(s.line_current_a for s in steps), supply_voltage_v=v_s, ct_basis_a=basis_a,
            ct_basis_text=basis_text, ct_secondary_a=float(opts.ct_secondary_a),
            ct_lead_length_m=opts.ct_lead_length_m, control_voltage_v=opts.control_voltage_v, coil_sealed_va=coils,
            fan_va=fans_va), catalogs)
        lines = base_lines + ([LossLine(item="Controller and control circuit", qty=1, each_w=control.losses_w,
                                        total_w=control.losses_w, source="controllers.csv, control_transformers.csv, "
                                                                         "control_fuses.csv")]
                              if control.losses_w else [])
        encl, encl_checks = enclosure(lines, opts.wiring_loss_pct, opts.ambient_c, opts.temperature_rise_k,
                                      busbar_required, opts.busbar_derating, catalogs)
        new_va = fan_va(encl, catalogs)
        if abs(new_va - fans_va) < 1e-9:
            break
        fans_va = new_va
    checks += control_checks + encl_checks
    if reconnection is not None and control.controller is not None:
        row = next(r for r in catalogs.controllers if r.row == control.controller.row)
        ok = reconnection.delay_s <= row.max_reconnect_delay_s
        checks.append(Check(name="Reconnection delay", ok=ok, rule=reconnection.rule,
                            detail=f"set the controller to ≥ {reconnection.delay_s:g} s (its range goes to "
                                   f"{row.max_reconnect_delay_s:g} s)" + ("" if ok else
                                                                         ": add quick-discharge devices")))
    assembled = result.model_copy(update={
        "steps": steps, "step_plan": plan, "inrush": inrush, "reconnection": reconnection, "control": control,
        "enclosure": encl, "checks": [*result.checks, *checks]})
    lines = price_lines(bank_bom(assembled, catalogs, ctx), catalogs)
    return assembled.model_copy(update={"bom": lines, "bom_total": bom_total(lines, catalogs)})


def _reactor_checks(steps, tolerance_pct: float) -> list[Check]:
    checks = []
    tuned = [s for s in steps if not math.isfinite(s.reactor.required_current_a)]
    if tuned:
        orders = sorted(h for h, v in tuned[0].reactor.harmonic_current_pct.items() if not math.isfinite(v))
        checks.append(Check(
            name="Detuning against the stated harmonics", ok=False, rule="I_h/I_1 = (U_h/U_1)·(1 − p)/|p·h − 1/h|",
            detail=f"{step_span([s.index for s in tuned])}: p = {tuned[0].reactor.tuning_pct:g}% tunes onto order "
                   f"{', '.join(map(str, orders))} of the stated spectrum: unbounded current; choose another p"))
    made = [s.index for s in steps if s.reactor.made_to_order]
    checks.append(Check(
        name="Detuning reactors", ok=not made, level="caution" if made else "check",
        rule=f"table reactor: same tuning, inductance within ±{tolerance_pct:g}%, current ≥ required",
        detail=("every step has a table reactor" if not made else
                f"{step_span(made)}: no table reactor fits; order one to the stated inductance and current")))
    low = [s for s in steps if not s.reactor.voltage_ok]
    r = (low or steps)[0].reactor
    checks.append(Check(
        name="Unit voltage with detuning and harmonics", ok=not low,
        rule="U/(1−p) ≤ rated; with harmonics ≤ 110% rms and ≤ 120% peak (IEEE 18)",
        detail=(f"units {r.unit_voltage_v:g} V see {r.capacitor_voltage_v:.0f} V fundamental (margin "
                f"{r.voltage_margin_pct:.1f}%), {_volts(r.capacitor_voltage_rms_v)} rms and "
                f"{_volts(r.capacitor_voltage_sum_v)} peak-equivalent with the stated harmonics"
                + (f" on {step_span([s.index for s in low])}: choose units of a higher rated voltage" if low else ""))))
    return checks


def _volts(value: float) -> str:
    return f"{value:.0f} V" if math.isfinite(value) else "unbounded voltage"


def _switching_checks(steps, voltage_v: float, factor: float) -> list[Check]:
    checks = []
    none = [s.index for s in steps if s.switching.contactor is None]
    if none:
        checks.append(Check(name="Step contactors", ok=False, rule="capacitor-duty rating ≥ step current",
                            detail=f"{step_span(none)}: no contactor in the table carries the step at {voltage_v:g} V; "
                                   "split the step"))
    resistors = [s.index for s in steps if s.switching.damping == "resistors"]
    reactors = [s for s in steps if s.switching.damping_reactor_uh]
    detail = []
    if resistors:
        detail.append(f"{step_span(resistors)}: contactors with pre-insertion damping resistors")
    for s in reactors:
        detail.append(f"step {s.index}: add inrush damping reactors of ≥ {s.switching.damping_reactor_uh:,.1f} µH "
                      "per phase")
    worst = max(steps, key=lambda s: max(s.switching.back_to_back_peak_a or 0.0, s.switching.energising_peak_a or 0.0))
    peak = max(worst.switching.back_to_back_peak_a or 0.0, worst.switching.energising_peak_a or 0.0)
    checks.append(Check(
        name="Inrush damping", ok=not reactors, level="caution" if (resistors or reactors) else "check",
        rule="peak ≤ contactor making limit and ≤ 100 × I_N of the units (IEC 60831-1, from memory)",
        detail=(f"highest prospective peak {peak:,.0f} A on step {worst.index}; "
                + ("; ".join(detail) if detail else "no damping needed") + f"; contactor factor {factor:g}")))
    return checks


def _inrush_summary(steps, caps, reactors_uh, voltage_v, inter_uh, source_uh, isc, automatic) -> InrushSummary:
    if automatic:
        # the worst step of each kind, named: a later or larger step can be far above step 1's or the last's
        energised = [s for s in steps if s.switching.energising_peak_a is not None]
        first = max(energised, key=lambda s: s.switching.energising_peak_a) if energised else steps[0]
        others = [s for s in steps if s.switching.back_to_back_peak_a is not None]
        last = max(others, key=lambda s: s.switching.back_to_back_peak_a) if others else steps[-1]
        needed = [s.index for s in steps if s.switching.damping_needed]
        damping = "none"
        if needed:
            kinds = sorted({s.switching.damping for s in steps if s.switching.damping_needed})
            damping = f"{step_span(needed)}: " + " and ".join(
                "pre-insertion resistors" if k == "resistors" else "damping reactors" for k in kinds)
            if any(s.switching.damping_reactor_uh for s in steps):
                damping += " plus damping reactors"
        return InrushSummary(inter_step_inductance_uh=inter_uh, source_inductance_uh=source_uh,
                             short_circuit_current_a=isc, energising_peak_a=first.switching.energising_peak_a,
                             back_to_back_peak_a=last.switching.back_to_back_peak_a,
                             back_to_back_frequency_hz=(last.switching.inrush_frequency_hz
                                                        if last.switching.back_to_back_peak_a else None),
                             energising_step=first.index if energised else None,
                             back_to_back_step=last.index if others else None,
                             damping_needed=bool(needed), damping=damping)
    energising = inrush_peak_a(voltage_v, sum(caps), source_uh + sum(reactors_uh)) if source_uh else None
    return InrushSummary(inter_step_inductance_uh=inter_uh, source_inductance_uh=source_uh,
                         short_circuit_current_a=isc, energising_peak_a=energising, back_to_back_peak_a=None,
                         back_to_back_frequency_hz=None, damping_needed=False,
                         damping="fixed bank: switched with its disconnect, no back-to-back switching")


def _reconnection(steps, result: BankResult, bank: Bank, catalogs) -> Reconnection:
    rows = {u.unit_id: u for u in catalogs.capacitor_units}
    leg_v = cap.leg_voltage_v(result.capacitor_voltage_v, result.unit_connection)
    worst = (0.0, 0.0, 0.0, 0.0)
    for s in steps:
        for u in s.units:
            row = rows[u.id]
            tau = discharge_tau_s(row.rated_voltage_v, row.discharge_voltage_v, row.discharge_time_s)
            times = reconnection_times_s(tau, leg_v)
            if max(times[2:]) > max(worst[2:]):
                worst = times
    v0, limit, t10, t50 = worst
    return Reconnection(start_voltage_v=v0, limit_10pct_v=limit, time_to_10pct_s=t10, time_to_50v_s=t50,
                        delay_s=delay_setting_s(max(t10, t50)),
                        rule="re-energise only at ≤ 10% of rated voltage (IEC 60831-1, from memory) and ≤ 50 V, "
                             "with the units' own discharge resistors")


def _part_losses(steps, result: BankResult, catalogs) -> list[LossLine]:
    rows = {u.unit_id: u for u in catalogs.capacitor_units}
    lines = []
    count = sum(u.qty for s in steps for u in s.units)
    cap_w = sum(u.qty * u.rated_kvar * rows[u.id].losses_w_per_kvar for s in steps for u in s.units)
    lines.append(LossLine(item="Capacitor units", qty=count, each_w=cap_w / count, total_w=cap_w,
                          source="capacitor_units.csv losses_w_per_kvar × nameplate kvar"))
    reactors = [s.reactor for s in steps if s.reactor]
    if reactors:
        w = sum(r.losses_w for r in reactors)
        lines.append(LossLine(item="Detuning reactors", qty=len(reactors), each_w=w / len(reactors), total_w=w,
                              source="reactors.csv losses_w (made to order: 5 W/kvar, from memory)"))
    switches = [s.switching for s in steps if s.switching and s.switching.contactor]
    if switches:
        w = sum(x.losses_w + x.coil_sealed_va for x in switches)
        lines.append(LossLine(item="Step contactors (poles and held coil)", qty=len(switches),
                              each_w=w / len(switches), total_w=w,
                              source="contactors.csv losses_w + coil_sealed_va (coil VA counted as W)"))
    device = result.main.device
    per_step = [device_loss_w(catalogs.device_losses, device, s.device_rating_a) for s in steps
                if s.device_rating_a and len(steps) > 1]  # one step: the main device is its device
    if per_step:
        w = STEP_DEVICE_POLES * sum(per_step)
        lines.append(LossLine(item=f"Step {device}s ({STEP_DEVICE_POLES} per step)",
                              qty=STEP_DEVICE_POLES * len(per_step), each_w=w / (STEP_DEVICE_POLES * len(per_step)),
                              total_w=w, source="device_losses.csv"))
    if result.main.device_rating_a:
        each = device_loss_w(catalogs.device_losses, device, result.main.device_rating_a)
        lines.append(LossLine(item=f"Main {device} ({STEP_DEVICE_POLES} poles)", qty=STEP_DEVICE_POLES, each_w=each,
                              total_w=STEP_DEVICE_POLES * each, source="device_losses.csv"))
    return lines
