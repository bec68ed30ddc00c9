"""Re-rating: an existing bank moved to another supply voltage or frequency. No I/O here.

For each bank of a spec (its units as listed under ``units``, or as ``size`` selects them) the pipeline sizes the
bank three times with :func:`bankbuild.design.sizing.size_bank`:

1. at its own supply: what it delivers today and the protection it was built with;
2. the same units at the new supply: kvar ∝ V²·f, currents, capacitor voltage stress (with the detuning rise:
   the same reactors at a new frequency have p' = p·(f2/f1)², their tuning frequency in hertz stays), every
   system check, and the protection that supply needs — compared item by item with what is installed;
3. a re-sized alternative: units suited to the new supply that restore each step's original kvar, and the
   bill-of-materials difference (keep, remove, add) between the existing bank and it.
"""

from __future__ import annotations

import re
from collections import Counter

from bankbuild.calc import EPS
from bankbuild.design.provenance import provenance
from bankbuild.design.rules import CAUTIONS, rule_basis_for
from bankbuild.design.sizing import size_bank
from bankbuild.errors import OptionError
from bankbuild.results.rerate import BomChange, ItemFit, RerateBank, RerateResult, RerateStep
from bankbuild.results.sizing import BankResult
from bankbuild.spec.model import Bank, LightLoad, Spec, Supply, UnitCount

RERATE_CAUTION = (
    "A bank moved to another supply is a new installation: check the units' nameplates, the reactors' "
    "ratings and the site's harmonics before it is energised there, and have the protection reviewed against "
    "the local code.")


def rerate_project(spec: Spec, catalogs, voltage_v: float, frequency_hz: float | None = None,
                   transformer: dict | None = None, spec_path: str = "", spec_sha256: str = "",
                   basis=None) -> RerateResult:
    """Re-rate every bank of ``spec`` to ``voltage_v`` (and ``frequency_hz``; None keeps each bank's own).

    ``transformer`` optionally replaces each bank's transformer at the new supply:
    ``{"transformer_kva": …, "transformer_z_pct": …, "source_sc_mva": …}``. ``basis`` is the rule basis when the
    caller read one (see :func:`bankbuild.bank.size_project`).
    """
    basis = rule_basis_for(spec, basis)
    banks = [rerate_bank(bank, i, spec, catalogs, voltage_v, frequency_hz, transformer, spec_path, basis)
             for i, bank in enumerate(spec.banks)]
    prov = provenance(basis, catalogs, spec_path, spec_sha256)
    return RerateResult(project=spec.project.model_dump(), provenance=prov, voltage_v=voltage_v,
                        frequency_hz=frequency_hz, banks=banks, cautions=[*CAUTIONS, RERATE_CAUTION])


def new_supply(supply: Supply, voltage_v: float, frequency_hz: float, transformer: dict | None) -> Supply:
    """The supply at the new site: new voltage and frequency; the transformer replaced when one is given."""
    from pydantic import ValidationError

    update = {"voltage_v": float(voltage_v), "frequency_hz": float(frequency_hz)}
    if transformer:
        update.update({key: None if transformer.get(key) is None else float(transformer[key])
                       for key in ("transformer_kva", "transformer_z_pct", "source_sc_mva")})
    try:
        return Supply.model_validate({**supply.model_dump(), **update})
    except ValidationError as exc:
        first = exc.errors(include_url=False)[0]
        name = str(first["loc"][0]) if first["loc"] else "supply"
        raise OptionError("", name, first["msg"].removeprefix("Value error, ")) from None


def existing_units(result: BankResult) -> list[list[UnitCount]]:
    """The units of a sized bank as a spec's ``units`` list (ids and quantities per step)."""
    return [[UnitCount(id=u.id, qty=u.qty) for u in step.units] for step in result.steps]


def moved_bank(bank: Bank, result: BankResult, supply: Supply) -> Bank:
    """The same bank (same units, same reactors) at ``supply``.

    The reactors keep their inductance and the capacitors their capacitance, so the tuning factor at the new
    frequency is p' = X_L'/X_C' = p · (f2/f1)², and the tuning frequency f1/√p stays the same in hertz.
    """
    ratio = supply.frequency_hz / bank.supply.frequency_hz
    detuning = bank.detuning_pct * ratio**2 if bank.detuning_pct else None
    # An automatic bank stays automatic (its contactors are checked too): its step list rides along with the
    # units, which decide the steps; the model's "steps or units" rule is for what a user writes.
    steps = [s.kvar for s in result.steps] if bank.steps is not None else None
    return bank.model_copy(update={
        "supply": supply, "units": existing_units(result), "steps": steps, "capacitor_voltage_v": None,
        "detuning_pct": detuning, "light_load": _light_load(bank)})


def resized_bank(bank: Bank, result: BankResult, supply: Supply) -> Bank:
    """A new bank for ``supply`` whose steps restore the original bank's delivered kvar, step by step."""
    return bank.model_copy(update={
        "supply": supply, "units": None, "steps": [s.kvar for s in result.steps], "capacitor_voltage_v": None,
        "light_load": _light_load(bank)})


def _light_load(bank: Bank) -> LightLoad | None:
    """The light load with its fixed steps made explicit, so the moved and re-sized banks keep them."""
    if bank.light_load is None:
        return None
    return bank.light_load.model_copy(update={"fixed_steps": bank.fixed_step_count})


def rerate_bank(bank: Bank, index: int, spec: Spec, catalogs, voltage_v: float, frequency_hz: float | None = None,
                transformer: dict | None = None, where: str = "", basis=None) -> RerateBank:
    """One bank at the new supply: as it stands, what must change, and a re-sized alternative."""
    basis = rule_basis_for(spec, basis)
    original = size_bank(bank, index, spec, catalogs, where, basis=basis)
    f_new = frequency_hz if frequency_hz is not None else bank.supply.frequency_hz
    supply = new_supply(bank.supply, voltage_v, f_new, transformer)
    moved = moved_bank(bank, original, supply)
    at_new = size_bank(moved, index, spec, catalogs, where, basis=basis)
    resized = size_bank(resized_bank(bank, original, supply), index, spec, catalogs, where, basis=basis)

    steps = [RerateStep(index=new.index, units=new.units, rated_kvar=new.rated_kvar, original_kvar=old.kvar,
                        delivered_kvar=new.kvar, rated_current_a=new.rated_current_a,
                        original_line_current_a=old.line_current_a, line_current_a=new.line_current_a)
             for old, new in zip(original.steps, at_new.steps, strict=True)]
    stress = at_new.system.voltage
    tuning = at_new.system.tuning
    basis, diff = bom_difference(original, resized, catalogs.capacitor_units)
    return RerateBank(
        name=bank.name, original_voltage_v=bank.supply.voltage_v, original_frequency_hz=bank.supply.frequency_hz,
        voltage_v=voltage_v, frequency_hz=f_new, original_kvar=original.delivered_kvar,
        delivered_kvar=at_new.delivered_kvar, kvar_ratio=at_new.delivered_kvar / original.delivered_kvar,
        linear_scaling_kvar=original.delivered_kvar * voltage_v / bank.supply.voltage_v,
        capacitor_voltage_v=original.capacitor_voltage_v, rated_frequency_hz=stress.rated_frequency_hz,
        capacitor_voltage_seen_v=stress.capacitor_voltage_v, capacitor_voltage_ok=stress.ok,
        rated_current_a=at_new.rated_current_a, original_line_current_a=original.line_current_a,
        line_current_a=at_new.line_current_a, original_tuning_pct=bank.detuning_pct, tuning_pct=moved.detuning_pct,
        tuning_frequency_hz=tuning.tuning_frequency_hz if tuning else None, steps=steps,
        items=item_fits(original, at_new, resized, getattr(catalogs, "contactors", ())), checks=at_new.checks,
        at_new_supply=at_new, resized=resized, bom_basis=basis, bom_difference=diff,
        original_capacitor_voltage_seen_v=original.system.voltage.capacitor_voltage_v,
        original_light_load_voltage_v=original.system.voltage.light_load_voltage_v,
        light_load_voltage_v=stress.light_load_voltage_v,
        capacitor_voltage_limit_v=stress.continuous_limit_pu * stress.rated_voltage_v)


# -- what still fits ------------------------------------------------------------------------------------------


def _fit(item: str, installed: float, required: float, unit: str, installed_text: str, required_text: str,
         lowered: bool = True) -> ItemFit:
    """An item fits when its rating reaches what the new supply needs."""
    if required <= 0:
        return ItemFit(item=item, installed=installed_text, required="none large enough in the table", fits=False,
                       action="change", detail="no standard rating in the table is large enough")
    fits = installed >= required - EPS
    detail = ""
    if fits and lowered and installed > required + EPS:
        detail = f"larger than needed: {required_text} would do"
    elif not fits:
        detail = f"below the {required:.1f} {unit} needed".replace(".0 ", " ")
    return ItemFit(item=item, installed=installed_text, required=required_text, fits=fits,
                   action="keep" if fits else "change", detail=detail)


def _contactor_fit(k: int, old, new, rows, voltage_v: float) -> ItemFit | None:
    """The installed step contactor (its frame, from the contactor table) against the step at the new supply."""
    old_sw, new_sw = getattr(old, "switching", None), getattr(new, "switching", None)
    if old_sw is None or new_sw is None or old_sw.contactor is None:
        return None
    name = old_sw.contactor.designation
    frames = [r for r in rows if r.contactor_id == name and r.voltage_v >= voltage_v - EPS]
    row = min(frames, key=lambda r: r.voltage_v) if frames else None
    capacity = row.ac6b_current_a if row is not None else 0.0
    wanted = new_sw.contactor.designation if new_sw.contactor is not None else "none in the table"
    # The installed frame is judged on its own limits (its making peak, and with no damping resistors the units'
    # 100 × I_N), against the prospective peaks at the new supply — not on what a newly picked frame would need.
    peaks = [x for x in (new_sw.energising_peak_a, new_sw.back_to_back_peak_a) if x is not None]
    peak = max(peaks) if peaks else 0.0
    limit = 0.0 if row is None else (row.max_peak_a if row.damping == "resistors"
                                     else min(row.max_peak_a, new_sw.capacitor_limit_a))
    needs_damping = row is not None and peak > limit + EPS
    fits = row is not None and capacity >= new_sw.required_current_a - EPS and not needs_damping
    if row is None:
        detail = f"the contactor table has no {name} row for {voltage_v:g} V"
    elif capacity < new_sw.required_current_a - EPS:
        detail = f"carries {capacity:.1f} A at {row.voltage_v:g} V; the step needs {new_sw.required_current_a:.1f} A"
    elif needs_damping:
        detail = (f"prospective peak {peak:,.0f} A here is above its {limit:,.0f} A limit: needs damping resistors "
                  "or reactors")
    else:
        detail = ""
    return ItemFit(item=f"Step {k} contactor", installed=f"{name} ({old_sw.damping})", required=wanted,
                   fits=fits, action="keep" if fits else "change", detail=detail)


def item_fits(original: BankResult, at_new: BankResult, resized: BankResult,
              contactor_rows=()) -> list[ItemFit]:
    """Each installed part (from the original sizing) against what the same units need at the new supply."""
    items: list[ItemFit] = []
    device = "fuse" if original.main.device == "fuse" else "breaker"
    stress = at_new.system.voltage
    volt_ok = stress.ok and all(c.ok for c in at_new.checks if c.name == "Capacitor current and kvar")
    for old, new, alt in zip(original.steps, at_new.steps, resized.steps, strict=True):
        k = old.index
        units = " + ".join(f"{u.qty} × {u.id}" for u in old.units)
        alt_units = " + ".join(f"{u.qty} × {u.id}" for u in alt.units)
        items.append(ItemFit(
            item=f"Step {k} capacitor units", installed=units,
            required=(f"rated ≥ {stress.light_load_voltage_v / 1.1:.0f} V "
                      f"(they see {stress.light_load_voltage_v:.0f} V)"),
            fits=volt_ok, action="keep" if volt_ok else "change",
            detail=(f"{new.kvar:.1f} kvar here, was {old.kvar:.1f}" if volt_ok else
                    f"over the units' voltage/current limits here: re-sized step uses {alt_units}")))
        items.append(_fit(f"Step {k} {device}", old.device_rating_a, new.device_rating_a, "A",
                          f"{old.device_rating_a:g} A", f"{new.device_rating_a:g} A"))
        items.append(_fit(f"Step {k} conductor", old.conductor_ampacity_a, new.conductor_ampacity_a, "A",
                          f"{old.conductor} ({old.conductor_ampacity_a:g} A)",
                          f"{new.conductor} ({new.conductor_ampacity_a:g} A)", lowered=False))
        if old.detuning is not None and new.detuning is not None:
            tuning_ok = at_new.system.tuning is None or at_new.system.tuning.ok
            installed, needed = getattr(old, "reactor", None), getattr(new, "reactor", None)
            if installed is not None and needed is not None:  # the reactor picked, rated with harmonics
                have_a, need_a, mh = installed.current_rating_a, needed.required_current_a, installed.inductance_mh
            else:
                have_a, need_a = old.detuning.reactor_current_a, new.detuning.reactor_current_a
                mh = old.detuning.reactor_inductance_mh
            fit = _fit(f"Step {k} reactor", have_a, need_a, "A", f"{mh:.3f} mH, {have_a:.1f} A",
                       f"{mh:.3f} mH, ≥ {need_a:.1f} A", lowered=False)
            if not tuning_ok:
                r = alt.detuning
                # the replacement's current on the same basis as `size`: fundamental and the stated harmonics
                alt_a = alt.reactor.required_current_a if alt.reactor is not None else (r.reactor_current_a if r
                                                                                         else 0.0)
                want = (f"{r.reactor_inductance_mh:.3f} mH, ≥ {alt_a:.1f} A with the harmonic allowance "
                        f"(p = {r.tuning_pct:g}%)" if r else "re-tuned reactors")
                fit = fit.model_copy(update={
                    "fits": False, "action": "change", "required": want,
                    "detail": f"tuned to {new.detuning.tuning_frequency_hz:.0f} Hz = order "
                              f"{new.detuning.tuning_order:.2f} here: too near the 5th"})
            items.append(fit)
        contactor = _contactor_fit(k, old, new, contactor_rows, at_new.supply_voltage_v)
        if contactor is not None:
            items.append(contactor)
    main_old, main_new = original.main, at_new.main
    items.append(_fit(f"Main {device}", main_old.device_rating_a, main_new.device_rating_a, "A",
                      f"{main_old.device_rating_a:g} A", f"{main_new.device_rating_a:g} A"))
    items.append(_fit("Main conductor", main_old.conductor_ampacity_a, main_new.conductor_ampacity_a, "A",
                      f"{main_old.conductor} ({main_old.conductor_ampacity_a:g} A)",
                      f"{main_new.conductor} ({main_new.conductor_ampacity_a:g} A)", lowered=False))
    items.append(_fit("Disconnect", main_old.disconnect_rating_a, main_new.disconnect_rating_a, "A",
                      f"{main_old.disconnect_rating_a:g} A", f"{main_new.disconnect_rating_a:g} A", lowered=False))
    return items


# -- bill-of-materials difference -----------------------------------------------------------------------------


def parts(result: BankResult, unit_rows) -> Counter:
    """The bank's parts from its results: units, fuses or breakers, conductors, reactors, disconnect.

    Keys are (category, description, unit, id); values are quantities. Conductor lengths are unknown here, so
    conductors count as sets (three phases of one circuit).
    """
    described = {u.unit_id: u.description for u in unit_rows}
    out: Counter = Counter()
    fuse = result.main.device == "fuse"

    def device(rating: float, where: str) -> None:
        if rating <= 0:
            return
        if fuse:
            out[("fuse", f"Fuse {rating:g} A ({where})", "pcs", "")] += 3
        else:
            out[("breaker", f"Circuit breaker, 3-pole, {rating:g} A ({where})", "pcs", "")] += 1

    for step in result.steps:
        for u in step.units:
            text = described.get(u.id, f"Capacitor unit {u.rated_kvar:g} kvar at {u.rated_voltage_v:g} V "
                                       f"{u.rated_frequency_hz:g} Hz")
            out[("capacitor unit", text, "pcs", u.id)] += u.qty
        device(step.device_rating_a, "step")
        out[("conductor", f"Conductor {step.conductor}, 3 phases (step circuit)", "set", "")] += 1
        if step.detuning is not None:
            d = step.detuning
            out[("reactor", f"Detuning reactor {d.reactor_inductance_mh:.3f} mH, {d.reactor_current_a:.0f} A, "
                            f"tuned to {d.tuning_frequency_hz:.0f} Hz", "pcs", "")] += 1
    device(result.main.device_rating_a, "main")
    out[("conductor", f"Conductor {result.main.conductor}, 3 phases (main)", "set", "")] += 1
    if result.main.disconnect_rating_a > 0:
        out[("disconnect", f"Disconnect, 3-pole, {result.main.disconnect_rating_a:g} A", "pcs", "")] += 1
    return out


RATED_V = re.compile(r"rated ≥ (\d+(?:\.\d+)?) V")
# a contactor frame's rating at the supply voltage, derived from its AC-6b current
AT_SUPPLY = re.compile(r"; AC-6b \d+(?:\.\d+)? A at \d+(?:\.\d+)? V: Q = [^;]* kvar$")


def bom_counter(result: BankResult) -> Counter:
    """The lines of a result's bill of materials as (category, description, unit, "") -> quantity."""
    out: Counter = Counter()
    for line in result.bom:
        out[(line.category, line.description, line.unit, "")] += line.qty
    return out


def _voltage_free(key: tuple) -> tuple[tuple, float | None]:
    """A part's identity: its key without the "rated ≥ N V" (a part rated higher serves a lower voltage) and
    without a trailing "; AC-6b I A at V V: Q = … kvar" (what the same contactor frame switches at the supply), and N.

    >>> _voltage_free(("fuse", "Fuse-link 50 A, rated ≥ 480 V", "pcs", ""))
    (('fuse', 'Fuse-link 50 A, rated ≥ … V', 'pcs', ''), 480.0)
    >>> text = "SWD-25A-DAMPED: frame 25 A at 400 V; AC-6b 20 A at 600 V: Q = √3 × 600 V × 20 A = 20.8 kvar"
    >>> _voltage_free(("contactor", text, "pcs", ""))[0][1]
    'SWD-25A-DAMPED: frame 25 A at 400 V'
    """
    category, description, unit, unit_id = key
    description = AT_SUPPLY.sub("", description)
    found = RATED_V.search(description)
    if not found:
        return (category, description, unit, unit_id), None
    return (category, RATED_V.sub("rated ≥ … V", description), unit, unit_id), float(found.group(1))


def _grouped(counter: Counter) -> dict[tuple, list[tuple[tuple, float, float | None]]]:
    """Parts grouped by identity (see :func:`_voltage_free`), each with its own key, quantity and voltage."""
    groups: dict[tuple, list] = {}
    for key, qty in counter.items():
        free, volts = _voltage_free(key)
        groups.setdefault(free, []).append((key, qty, volts))
    return groups


def bom_difference(original: BankResult, resized: BankResult, unit_rows) -> tuple[str, list[BomChange]]:
    """What to keep, remove and add to turn the existing bank into the re-sized one.

    Uses the full bills of materials when both results carry one, else the units and protection parts. A part
    that differs only in its "rated ≥ N V" is kept when the installed one is rated for at least the new voltage;
    a contactor frame that differs only in what it switches at the supply is the same part.
    """
    if original.bom and resized.bom:
        basis, old, new = "bill of materials", bom_counter(original), bom_counter(resized)
    else:
        basis, old, new = "units and protection", parts(original, unit_rows), parts(resized, unit_rows)
    old_groups, new_groups = _grouped(old), _grouped(new)
    changes: list[BomChange] = []

    def add(action: str, key: tuple, qty: float) -> None:
        if qty > EPS:
            category, description, unit, unit_id = key
            changes.append(BomChange(action=action, qty=qty, unit=unit, category=category,
                                     description=description, id=unit_id))

    for free in sorted(set(old_groups) | set(new_groups), key=lambda k: (str(k[0]), str(k[1]), str(k[2]))):
        was, now = old_groups.get(free, []), new_groups.get(free, [])
        have = sum(q for _, q, _ in was)
        need = sum(q for _, q, _ in now)
        fits = all(v_old is None or v_new is None or v_old >= v_new - EPS for _, _, v_old in was for _, _, v_new in now)
        keep = min(have, need) if fits else 0.0
        for key, qty, _ in was:  # keep what is installed first, then remove the rest
            kept = min(qty, keep)
            keep -= kept
            add("keep", key, kept)
            add("remove", key, qty - kept)
        surplus = need - (min(have, need) if fits else 0.0)
        for key, qty, _ in now:
            take = min(qty, surplus)
            surplus -= take
            add("add", key, take)
    order = {"keep": 0, "remove": 1, "add": 2}
    return basis, sorted(changes, key=lambda c: order[c.action])
