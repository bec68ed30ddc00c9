"""The pipeline: a validated spec and loaded tables in, frozen results out. No I/O here."""

from __future__ import annotations

import math
from dataclasses import dataclass

from bankbuild.calc import capacitor as cap
from bankbuild.calc import detuning as det
from bankbuild.calc import power as pw
from bankbuild.calc import system as sysc
from bankbuild.design.assembly import assemble_bank
from bankbuild.design.assembly import step_targets as planned_targets
from bankbuild.design.bom import project_bom
from bankbuild.design.checks import detuned_resonance_order, percent_as_fraction_checks, system_figures
from bankbuild.design.existing import resolve_units
from bankbuild.design.figures import discharge_curve, power_triangle
from bankbuild.design.harmonics import study as harmonic_study
from bankbuild.design.pricing import bom_total, price_lines
from bankbuild.design.protection import CircuitContext, size_circuit
from bankbuild.design.provenance import provenance
from bankbuild.design.rules import CAUTIONS, discharge_for, rule_basis_for
from bankbuild.design.select import build_step, pick_unit_voltage, unit_voltages
from bankbuild.errors import SpecError
from bankbuild.results.sizing import (
    BankResult,
    Check,
    Detuning,
    Main,
    NeedSummary,
    ProjectResult,
    ResonancePoint,
    Step,
    UnitLine,
)
from bankbuild.spec.model import NEED_KVAR_MAX, UNITS_OF_A_KIND_MAX, Bank, Need, Spec


def size_project(spec: Spec, catalogs, spec_path: str = "", spec_sha256: str = "",
                 on_bank=None, basis=None) -> ProjectResult:
    """Size every bank of ``spec`` against ``catalogs``; raises SpecError only for spec/table mismatches.

    ``on_bank(done, total, name)``, if given, is called after each bank (a progress bar; no I/O here).
    ``basis`` is the rule basis (:class:`bankbuild.spec.rulebasis.RuleBasis`) when the caller read one;
    otherwise the built-in basis the spec names.
    """
    basis = rule_basis_for(spec, basis)
    banks = []
    for i, bank in enumerate(spec.banks):
        banks.append(size_bank(bank, i, spec, catalogs, spec_path, basis=basis))
        if on_bank is not None:
            on_bank(i + 1, len(spec.banks), bank.name)
    prov = provenance(basis, catalogs, spec_path, spec_sha256)
    lines = price_lines(project_bom(banks), catalogs)
    return ProjectResult(project=spec.project.model_dump(), provenance=prov, banks=banks, cautions=list(CAUTIONS),
                         bom=lines, bom_total=bom_total(lines, catalogs))


def need_summary(need: Need, voltage_v: float) -> NeedSummary:
    """Work the need out to kvar at the supply, keeping P and Q where the form gives them."""
    form = need.form
    if form == "kvar":
        return NeedSummary(form="kvar", active_kw=None, reactive_kvar=None, pf_present=None, pf_target=None,
                           pf_corrected=None, required_kvar=need.kvar)
    if form == "power":
        q = pw.reactive_kvar(need.kw, need.pf_present)
        return NeedSummary(form="power", active_kw=need.kw, reactive_kvar=q, pf_present=need.pf_present,
                           pf_target=need.pf_target, pf_corrected=None,
                           required_kvar=pw.required_kvar(need.kw, need.pf_present, need.pf_target))
    p_total = q_total = 0.0
    for load in need.loads:
        p, q = load_pq(load, voltage_v)
        p_total += p * load.quantity
        q_total += q * load.quantity
    return NeedSummary(form="loads", active_kw=p_total, reactive_kvar=q_total,
                       pf_present=pw.power_factor(p_total, q_total), pf_target=need.pf_target, pf_corrected=None,
                       required_kvar=pw.correction_kvar(p_total, q_total, need.pf_target))


def need_too_large(need: NeedSummary) -> str:
    """Why a need worked out from kW or a load list is refused: the derivation, and the limit it passes.

    >>> from bankbuild.results.sizing import NeedSummary
    >>> text = need_too_large(NeedSummary(form="power", active_kw=1000.0, reactive_kvar=1e6, pf_present=0.001,
    ...                                   pf_target=0.95, pf_corrected=None, required_kvar=999671.3))
    >>> print(text.replace(" = ", " =\\n"))
    kw 1,000 at pf_present 0.001 to pf_target 0.95 needs 1,000 kW × (tan φ1 − tan φ2) =
    1,000 × (1,000 − 0.3287) =
    999,671 kvar; at most 100,000 kvar can be sized (as for need.kvar): check kw and pf_present
    """
    p, q, t = need.active_kw, need.reactive_kvar, need.pf_target
    tan2 = pw.tan_phi(t)
    limit = f"at most {NEED_KVAR_MAX:,.0f} kvar can be sized (as for need.kvar)"
    if need.form == "power":
        return (f"kw {_n(p)} at pf_present {need.pf_present:g} to pf_target {t:g} needs {_n(p)} kW × "
                f"(tan φ1 − tan φ2) = {_n(p)} × ({_n(q / p)} − {tan2:.4f}) = {_n(need.required_kvar)} kvar; "
                f"{limit}: check kw and pf_present")
    return (f"the loads draw P = {_n(p)} kW and Q = {_n(q)} kvar (PF {need.pf_present:.4g}); to pf_target "
            f"{t:g} they need Q − P · tan φ2 = {_n(q)} − {_n(p)} × {tan2:.4f} = {_n(need.required_kvar)} kvar; "
            f"{limit}: check each load's size, quantity and pf")


def _n(value: float) -> str:
    """A figure of a derivation: whole above a thousand (``1,000,000``), else six significant digits."""
    if not math.isfinite(value) or abs(value) >= 1e18:
        return f"{value:.6g}"
    return f"{value:,.0f}" if abs(value) >= 1000 else f"{value:.6g}"


def load_pq(load, voltage_v: float) -> tuple[float, float]:
    """Active and reactive power [kW, kvar] drawn by one load of a load list."""
    form = load.form
    if form == "motor_kw":
        p = pw.motor_input_kw(load.output_kw, load.efficiency)
    elif form == "motor_hp":
        p = pw.motor_input_kw(pw.hp_to_kw(load.output_hp), load.efficiency)
    elif form == "input_kw":
        p = load.input_kw
    else:
        kva = load.kva if form == "kva" else pw.three_phase_kva(voltage_v, load.line_current_a)
        p = kva * load.pf
    return p, pw.reactive_kvar(p, load.pf)


def step_targets(bank: Bank, required_kvar: float, units=(), factor: float = 1.0) -> list[float]:
    """kvar each step must deliver at the supply: explicit sizes, one fixed step, or the step plan that
    :func:`bankbuild.design.assembly.step_targets` proposes from ``units`` (each delivering rated × ``factor``)."""
    return planned_targets(bank, required_kvar, units, factor)


@dataclass(frozen=True)
class UnitRating:
    """The units a bank is built of: their rating, the table rows of that rating, and what each gives.

    ``factor`` is the kvar one nameplate kvar delivers at the supply (re-rated for voltage and frequency, and
    raised by 1/(1 − p) behind detuning reactors); ``connection`` is how the units are connected inside.
    """

    voltage_v: float
    frequency_hz: float
    units: tuple
    connection: str
    factor: float
    available_v: tuple[float, ...]
    given: object = None  # the spec's own units per step (an existing bank), when it names them


def size_bank(bank: Bank, index: int, spec: Spec, catalogs, where: str = "", basis=None) -> BankResult:
    """Size one bank, in the order of the job: need, units, steps, protection, discharge, system, assembly."""
    basis = rule_basis_for(spec, basis)
    rules = basis.rules
    field = f"banks[{index}] ({bank.name})"
    checks: list[Check] = percent_as_fraction_checks(bank)
    need = _need(bank, where, field)
    rating = _unit_rating(bank, catalogs, where, field, checks)
    steps = _steps(bank, need.required_kvar, rating)
    _bounded_steps(steps, where, field)
    need = _delivery(bank, need, steps, checks)
    ctx = circuit_context(spec, bank, catalogs, where, field, rules)
    sized, main = _protect(bank, steps, rating, ctx, checks)
    discharge = _discharge(rules, bank, sized, rating, checks)
    resonance, rise = _system(bank, sized, checks, bank.tuning_factor)
    system, system_checks = system_figures(
        bank, sized, rules=rules.family, basis=rules, v_r=rating.voltage_v, f_r=rating.frequency_hz, rise_pct=rise,
        unit_rows=rating.units, factor=rating.factor, available_v=list(rating.available_v),
        rated_current_a=main.rated_current_a, main_conductor_ampacity_a=main.conductor_ampacity_a,
        main_conductor=main.conductor, ctx=ctx)
    checks.extend(system_checks)
    result = _bank_result(bank, rules, rating, need, sized, main, discharge, resonance, rise, checks, system,
                          assumptions(bank, ctx, basis))
    assembled = assemble_bank(result, bank, catalogs, ctx, list(rating.units))
    assembled = assembled.model_copy(update={
        "discharge_curve": discharge_curve(assembled.discharge, assembled.reconnection),
        "power_triangle": power_triangle(assembled.need, assembled.delivered_kvar, bank.supply.voltage_v)})
    if bank.harmonics is None:
        return assembled
    harmonics, harmonic_checks = harmonic_study(bank, assembled, rules, list(rating.available_v))
    return assembled.model_copy(update={"harmonics": harmonics, "checks": [*assembled.checks, *harmonic_checks]})


def _need(bank: Bank, where: str, field: str) -> NeedSummary:
    """The need at the supply; a bank with nothing to correct and no steps of its own is refused."""
    need = need_summary(bank.need, bank.supply.voltage_v)
    if not math.isfinite(need.required_kvar) or need.required_kvar > NEED_KVAR_MAX:
        raise SpecError(where, f"{field}.need", need_too_large(need))
    if need.required_kvar <= 1e-9 and not isinstance(bank.steps, list) and bank.units is None:
        raise SpecError(where, f"{field}.need",
                        f"the present power factor ({need.pf_present:.3f}) already meets the target "
                        f"({need.pf_target}): nothing to correct; give explicit steps to size a bank anyway")
    return need


def _unit_rating(bank: Bank, catalogs, where: str, field: str, checks: list[Check]) -> UnitRating:
    """The unit rating: the frequency nearest the supply's, the voltage the capacitor sees (with the detuning
    rise and the margin asked for), or the spec's own; with the checks of that choice."""
    v_s, f_s, p = bank.supply.voltage_v, bank.supply.frequency_hz, bank.tuning_factor
    units_all = _units_of_connection(catalogs.capacitor_units, bank)
    given = resolve_units(bank, units_all, where, field) if bank.units is not None else None
    freqs = sorted({u.rated_frequency_hz for u in units_all}, key=lambda f: (abs(f - f_s), f))
    f_r = given.rated_frequency_hz if given else freqs[0]
    if f_r != f_s and given is None:
        checks.append(Check(name="Unit frequency", ok=False, rule="unit rating table",
                            detail=f"no units rated for {f_s:g} Hz; {f_r:g} Hz units used and re-rated"))
    available = unit_voltages(units_all, f_r)
    v_cap_needed = det.capacitor_voltage_v(v_s, p) if p else v_s
    v_wanted = v_cap_needed * (1 + bank.voltage_margin_pct / 100)
    if given is not None:
        v_r = given.rated_voltage_v
    elif bank.capacitor_voltage_v is not None:
        if bank.capacitor_voltage_v not in available:
            shown = ", ".join(f"{v:g}" for v in available)
            raise SpecError(where, f"{field}.capacitor_voltage_v",
                            f"no {f_r:g} Hz unit rated {bank.capacitor_voltage_v:g} V in the unit table "
                            f"(available: {shown} V)")
        v_r = bank.capacitor_voltage_v
    else:
        v_r = pick_unit_voltage(available, v_wanted) or max(available)
    voltage_ok = v_r >= v_cap_needed - 1e-9
    checks.append(Check(
        name="Unit voltage covers the supply" + (" and detuning rise" if p else ""), ok=voltage_ok,
        rule="unit rated voltage ≥ the voltage the capacitor sees (the continuous limits are in 'Capacitor "
             "voltage')",
        detail=(f"capacitor sees {v_cap_needed:.0f} V" + (f" (= {v_s:g} V / (1 − {p:g}))" if p else "")
                + f"; units rated {v_r:g} V")))
    if bank.voltage_margin_pct > 0 and v_r < v_wanted - 1e-9:
        checks.append(Check(
            name="Unit voltage margin", ok=False, rule="spec: voltage_margin_pct",
            detail=f"wanted units rated ≥ {v_wanted:.0f} V ({v_cap_needed:.0f} V + {bank.voltage_margin_pct:g}%); "
                   f"units rated {v_r:g} V" + ("" if v_r < max(available) else ", the highest in the unit table")))
    units = tuple(u for u in units_all if u.rated_voltage_v == v_r and u.rated_frequency_hz == f_r)
    connection = units[0].connection if units else bank.connection
    if connection != bank.connection:
        checks.append(Check(
            name="Unit connection", ok=True, level="info", rule="three-phase units: connected inside the unit",
            detail=f"connection: {bank.connection}, but the units are three-phase units connected {connection} "
                   f"inside; the bank is built of their {connection} elements: capacitance per leg, leg voltage "
                   f"and discharge resistors are the parts' ({connection}); capacitance per phase is given as the "
                   f"{bank.connection} equivalent"))
    at_supply = cap.rerate_kvar(1.0, v_r, f_r, v_s, f_s)
    factor = det.detuned_kvar(at_supply, p) if p else at_supply
    return UnitRating(voltage_v=v_r, frequency_hz=f_r, units=units, connection=connection, factor=factor,
                      available_v=tuple(available), given=given)


def _steps(bank: Bank, required_kvar: float, rating: UnitRating) -> list[Step]:
    """The steps built of units: the spec's own units per step, or the step plan's targets."""
    if rating.given is not None:
        choices = [rating.given.choice(k, rating.factor) for k in range(len(rating.given.steps))]
        return [_size_step(k, choice.delivered_kvar, bank, rating, choice) for k, choice in enumerate(choices, 1)]
    targets = step_targets(bank, required_kvar, rating.units, rating.factor)
    return [_size_step(k, target, bank, rating) for k, target in enumerate(targets, start=1)]


def _bounded_steps(steps: list[Step], where: str, field: str) -> None:
    """Refuse steps that would hold more units of one rating than a spec's units list may name."""
    for step in steps:
        for line in step.units:
            if line.qty > UNITS_OF_A_KIND_MAX:
                raise SpecError(where, f"{field}.steps",
                                f"step {step.index} of {step.target_kvar:,.1f} kvar needs {line.qty:,} × {line.id}; "
                                f"a step holds at most {UNITS_OF_A_KIND_MAX:,} units of one rating (as a spec's "
                                "units list them): split the need into more steps")


def _delivery(bank: Bank, need: NeedSummary, steps: list[Step], checks: list[Check]) -> NeedSummary:
    """What the steps deliver against the need: the corrected power factor, over-correction, the need met."""
    delivered = sum(s.kvar for s in steps)
    if need.active_kw is not None:
        q_after = need.reactive_kvar
        need = need.model_copy(update={"pf_corrected": pw.corrected_power_factor(need.active_kw, q_after,
                                                                                 delivered)})
        if pw.is_leading(q_after, delivered):
            checks.append(Check(name="Over-correction", ok=False, rule="leading power factor",
                                detail=f"{delivered:.1f} kvar exceeds the load's {q_after:.1f} kvar: leading PF"))
    v_s, f_s = bank.supply.voltage_v, bank.supply.frequency_hz
    checks.append(Check(name="Delivered covers the need", ok=delivered >= need.required_kvar - 1e-6, rule="design",
                        detail=f"delivered {delivered:.1f} kvar at {v_s:g} V, {f_s:g} Hz; "
                               f"need {need.required_kvar:.1f} kvar"))
    return need


def _protect(bank: Bank, steps: list[Step], rating: UnitRating, ctx: CircuitContext,
             checks: list[Check]) -> tuple[list[Step], Main]:
    """Conductor, device and disconnect of each step and of the main incomer, sized on the larger of the
    rated and the operating current (and, at a motor, on a third of the motor conductor: NEC 460.8(A))."""
    floor_a, floor_text = 0.0, ""
    if bank.motor is not None:  # NEC 460.8(A): also ≥ 1/3 of the motor circuit conductor's ampacity
        floor_a = bank.motor.conductor_ampacity_a / 3
        floor_text = f"motor conductor {bank.motor.conductor_ampacity_a:g} A / 3 (NEC 460.8(A))"
    sized = []
    for step in steps:
        basis_a = max(step.rated_current_a, step.line_current_a)
        circuit = size_circuit(ctx, f"Step {step.index}", basis_a, _basis_text(step.rated_current_a,
                                                                                step.line_current_a), False,
                               floor_a, floor_text)
        checks.extend(circuit.checks)
        sized.append(step.model_copy(update={
            "device": ctx.device, "device_rating_a": circuit.device.value if circuit.device else 0.0,
            "conductor": circuit.conductor.designation if circuit.conductor else "none",
            "conductor_ampacity_a": circuit.conductor.ampacity_a if circuit.conductor else 0.0,
            "sizing": circuit.lines}))
    rated_current = cap.line_current_a(sum(s.rated_kvar for s in steps), rating.voltage_v)
    line_current = cap.line_current_a(sum(s.kvar for s in steps), bank.supply.voltage_v)
    main_basis = max(rated_current, line_current)
    main_c = size_circuit(ctx, "Main", main_basis, _basis_text(rated_current, line_current), True,
                          floor_a, floor_text)
    checks.extend(main_c.checks)
    main = Main(rated_current_a=rated_current, design_current_a=main_basis, device=ctx.device,
                conductor=main_c.conductor.designation if main_c.conductor else "none",
                conductor_ampacity_a=main_c.conductor.ampacity_a if main_c.conductor else 0.0,
                device_rating_a=main_c.device.value if main_c.device else 0.0,
                disconnect_rating_a=main_c.disconnect.value if main_c.disconnect else 0.0, sizing=main_c.lines)
    return sized, main


def _discharge(rules, bank: Bank, sized: list[Step], rating: UnitRating, checks: list[Check]):
    """The discharge rule checked on the step with the most capacitance."""
    largest = max(sized, key=lambda s: s.capacitance_uf_per_leg)
    discharge = discharge_for(rules, bank, largest, list(rating.units), rating.voltage_v, rating.connection)
    checks.append(Check(name="Discharge", ok=discharge.ok, rule=discharge.rule,
                        detail=(f"≤ {discharge.limit_v:g} V within {discharge.time_s:g} s needs R ≤ "
                                f"{discharge.max_resistance_ohm:,.0f} Ω per leg; built-in resistors reach it in "
                                f"{discharge.builtin_time_s:.0f} s")))
    return discharge


def _bank_result(bank: Bank, rules, rating: UnitRating, need: NeedSummary, sized: list[Step], main: Main,
                 discharge, resonance, rise, checks: list[Check], system, stated) -> BankResult:
    """The sized bank's results, before the assembly is added."""
    supply = bank.supply
    rated_kvar = sum(s.rated_kvar for s in sized)
    delivered = sum(s.kvar for s in sized)
    return BankResult(
        name=bank.name, rules=rules.family, connection=bank.connection, unit_connection=rating.connection,
        supply_voltage_v=supply.voltage_v, frequency_hz=supply.frequency_hz,
        transformer_kva=supply.transformer_kva, transformer_z_pct=supply.transformer_z_pct, need=need,
        required_kvar=need.required_kvar, delivered_kvar=delivered, capacitor_voltage_v=rating.voltage_v,
        rated_kvar=rated_kvar, rated_current_a=main.rated_current_a,
        line_current_a=cap.line_current_a(delivered, supply.voltage_v),
        capacitance_uf_per_phase=cap.capacitance_uf_per_leg(rated_kvar, rating.voltage_v, rating.frequency_hz,
                                                            bank.connection),
        detuning_pct=bank.detuning_pct, steps=sized, main=main, discharge=discharge, resonance=resonance,
        voltage_rise_pct=rise, checks=checks, system=system, assumptions=stated)


def _units_of_connection(units, bank: Bank):
    """The unit table's units connected inside as the bank is, when the table has any; else every unit (a bank
    of three-phase units is then built of the units' own connection, and its per-leg figures are the parts')."""
    same = tuple(u for u in units if u.connection == bank.connection)
    return same or tuple(units)


def assumptions(bank: Bank, ctx: CircuitContext, basis) -> list[str]:
    """Every assumption the bank's figures rest on, in words, for the worksheet."""
    rules = basis.rules
    prot = bank.protection
    corr = rules.corrections
    out = [f"Rule basis: {rules.documents.basis_line} (file {basis.file_name}, SHA-256 {basis.sha256[:12]}…)."]
    given = {k for k in prot.model_fields_set}
    for kind, attr in (("conductor", "conductor_factor"), ("disconnect", "disconnect_factor")):
        if attr not in given:
            mult = getattr(rules.multipliers, kind)
            out.append(f"{kind.capitalize()} factor {mult.factor:g} from the rule basis ({mult.clause}).")
    if "device_factor" not in given:
        mult = getattr(rules.multipliers, prot.device)
        out.append(f"{prot.device.capitalize()} factor {mult.factor:g} from the rule basis ({mult.clause}).")
    out.append(f"Conductors: copper, {ctx.conductor_label}; air around them {ctx.ambient_text}; correction "
               f"from the {corr.base_ambient_c:g} °C base by {corr.ambient_clause}.")
    what = "current-carrying conductors" if corr.grouping_counts == "conductors" else "circuits"
    per = 3 if corr.grouping_counts == "conductors" else 1
    stated = "grouped_circuits" in given
    out.append(f"Grouping ({corr.grouping_clause}): each step circuit runs with {ctx.grouped_steps} circuit(s) "
               f"({ctx.grouped_steps * per} {what}; "
               + ("stated" if stated else "default: each circuit's conductors apart from the other circuits' — set "
                  "protection.grouped_circuits when step circuits share a duct or tray")
               + f"); the incomer with {ctx.grouped_main} ({ctx.grouped_main * per} {what}). Parallel sets run in "
               "separate raceways, each grouped the same.")
    if rules.terminations is not None:
        term = rules.terminations
        if prot.termination_temp_c is None:
            out.append(f"Terminals taken as listed and marked for {term.default_c} °C (the rule basis's default; "
                       f"{term.clause}); if they are not, set protection.termination_temp_c: {term.small_circuit_c}. "
                       f"{term.small_circuit_text}.")
        else:
            out.append(f"Terminals marked {prot.termination_temp_c} °C (stated); {term.clause}.")
        out.append("Capacitor circuits are not multi-outlet branch circuits for cord-and-plug portable loads, so "
                   "the first condition of the next-size-up rule always holds.")
    if rules.coordination.capacitor_note:
        out.append(rules.coordination.capacitor_note[0].upper() + rules.coordination.capacitor_note[1:] + ".")
    if bank.supply.has_transformer and bank.supply.source_sc_mva is None:
        out.append("Utility source taken as infinite behind the transformer (no source_sc_mva given): the resonance "
                   "order and the voltage rise are then at their least severe.")
    return out


def _basis_text(rated_a: float, line_a: float) -> str:
    return "rated current" if rated_a >= line_a else "operating current, above rated"


def _size_step(index: int, target_kvar: float, bank: Bank, rating: UnitRating, choice=None) -> Step:
    """One step: its units, currents and the capacitance per leg of the parts (the units' own connection)."""
    v_s, f_s, p = bank.supply.voltage_v, bank.supply.frequency_hz, bank.tuning_factor
    v_r, f_r, factor = rating.voltage_v, rating.frequency_hz, rating.factor
    choice = choice or build_step(rating.units, target_kvar, factor)
    lines = [UnitLine(id=u.unit_id, qty=c, rated_kvar=u.rated_kvar, rated_voltage_v=u.rated_voltage_v,
                      rated_frequency_hz=u.rated_frequency_hz, delivered_kvar_each=u.rated_kvar * factor,
                      table=u.table, row=u.row) for u, c in zip(choice.units, choice.counts, strict=True)]
    detuning = None
    if p:
        at_supply = cap.rerate_kvar(choice.rated_kvar, v_r, f_r, v_s, f_s)
        detuning = Detuning(
            tuning_pct=bank.detuning_pct, tuning_frequency_hz=det.tuning_frequency_hz(f_s, p),
            tuning_order=det.tuning_order(p), capacitor_voltage_v=det.capacitor_voltage_v(v_s, p),
            capacitor_kvar_at_supply=at_supply,
            # re-rating to the voltage the capacitors carry, U_C = U/(1 − p): Q ∝ V²
            capacitor_kvar_at_capacitor_voltage=cap.rerate_kvar(choice.rated_kvar, v_r, f_r,
                                                                det.capacitor_voltage_v(v_s, p), f_s),
            reactor_inductance_mh=det.reactor_inductance_mh(at_supply, v_s, f_s, p),
            reactor_current_a=det.reactor_current_a(choice.delivered_kvar, v_s))
    return Step(index=index, target_kvar=target_kvar, kvar=choice.delivered_kvar, rated_kvar=choice.rated_kvar,
                rated_current_a=cap.line_current_a(choice.rated_kvar, v_r),
                line_current_a=cap.line_current_a(choice.delivered_kvar, v_s),
                capacitance_uf_per_leg=cap.capacitance_uf_per_leg(choice.rated_kvar, v_r, f_r, rating.connection),
                units=lines, device="", device_rating_a=0.0, conductor="", conductor_ampacity_a=0.0, sizing=[],
                detuning=detuning)


def _system(bank: Bank, steps, checks: list[Check], p: float):
    supply = bank.supply
    if not supply.has_transformer:
        return [], None
    s_sc = sysc.short_circuit_mva(supply.transformer_kva, supply.transformer_z_pct, supply.source_sc_mva)
    points = []
    total = q_c = 0.0
    for step in steps:
        total += step.kvar
        # Q_C: the capacitors' kvar at the supply voltage (without the reactor's rise), as h = 1/√(p + Q_C/S_sc)
        q_c += step.detuning.capacitor_kvar_at_supply if (p and step.detuning) else step.kvar
        h = detuned_resonance_order(s_sc, q_c, p)
        points.append(ResonancePoint(steps=list(range(1, step.index + 1)), kvar=total, capacitor_kvar=q_c,
                                     harmonic_order=h, near_harmonic=sysc.near_harmonic(h),
                                     position=sysc.harmonic_position(h)))
    # the resonance check (every step combination, detuned or not) is in system_checks
    rise = sysc.voltage_rise_sc_pct(total, s_sc)
    source = (f"{supply.transformer_kva:g} kVA, {supply.transformer_z_pct:g}% transformer"
              + (f" with a {supply.source_sc_mva:g} MVA source in series" if supply.source_sc_mva else ""))
    checks.append(Check(name="Voltage rise at light load", ok=rise <= 3.0, rule="ΔV% ≈ 100·Q/S_sc (= Q·Z%/kVA "
                        "for the transformer alone)",
                        detail=f"{rise:.2f}% with all {total:.0f} kvar on; S_sc {s_sc:.2f} MVA ({source}); flag above "
                               "3% (common practice)"))
    return points, rise


def circuit_context(spec: Spec, bank: Bank, catalogs, where: str, field: str, rules=None) -> CircuitContext:
    """Gather factors, the correction inputs and the table rows the sizing uses for this bank's rule basis.

    ``rules`` is the rule basis's content; without it the built-in basis the spec names.
    """
    rules = rules if rules is not None else rule_basis_for(spec).rules
    prot = bank.protection
    family = rules.family
    mult = rules.multipliers
    if family == "nec":
        edition = rules.tables.conductor_edition
        rows = tuple(r for r in catalogs.conductors_nec if r.edition == edition)
        attr = f"ampacity_{prot.conductor_temp_c}c_a"
        label = f"Cu {prot.conductor_temp_c} °C insulation, {rules.tables.conductor_table_text}"
        if not rows:
            raise SpecError(where, "nec_edition" if spec.rules == "nec" else "rules",
                            f"no {edition} rows in the NEC conductor table")
    else:
        rows = tuple(r for r in catalogs.conductors_iec
                     if r.insulation == prot.insulation and r.method == prot.installation_method)
        attr = "ampacity_a"
        label = f"Cu {prot.insulation}, method {prot.installation_method}, {rules.tables.conductor_table_text}"
        if not rows:
            have = sorted({f"{r.insulation}/{r.method}" for r in catalogs.conductors_iec})
            raise SpecError(where, f"{field}.protection",
                            f"no IEC conductor rows for {prot.insulation}, method {prot.installation_method} "
                            f"(the table has {', '.join(have)})")
    opts = bank.assembly
    if prot.conductor_ambient_c is not None:
        ambient, ambient_text = prot.conductor_ambient_c, f"{prot.conductor_ambient_c:g} °C (stated)"
    else:
        ambient = opts.ambient_c + opts.temperature_rise_k
        ambient_text = (f"{ambient:g} °C, the enclosure air ({opts.ambient_c:g} °C ambient + "
                        f"{opts.temperature_rise_k:g} K rise, assembly.ambient_c and temperature_rise_k)")
    device_factor = prot.device_factor if prot.device_factor is not None else getattr(mult, prot.device).factor
    return CircuitContext(
        rules=family, device=prot.device,
        conductor_factor=prot.conductor_factor if prot.conductor_factor is not None else mult.conductor.factor,
        device_factor=device_factor,
        disconnect_factor=prot.disconnect_factor if prot.disconnect_factor is not None else mult.disconnect.factor,
        conductor_rows=rows, ampacity_attr=attr, conductor_label=label,
        device_rows=tuple(r for r in catalogs.device_ratings
                          if r.basis == rules.tables.device_basis and r.device == prot.device),
        frame_rows=tuple(r for r in catalogs.breaker_frames if r.basis == rules.tables.device_basis),
        disconnect_rows=tuple(r for r in catalogs.disconnect_ratings if r.basis == rules.tables.device_basis),
        max_sets=prot.max_parallel_sets, basis=rules, ambient_c=ambient, ambient_text=ambient_text,
        termination_c=prot.termination_temp_c,
        grouped_steps=prot.grouped_circuits,
        grouped_main=prot.main_grouped_circuits, insulation=prot.insulation, method=prot.installation_method)
