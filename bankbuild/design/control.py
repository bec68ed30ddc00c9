"""Controller and measurement: the power-factor controller, its current transformer, and the control circuit
(control transformer and fuses) that feeds the controller, the contactor coils and the fans.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from bankbuild.results.sizing import Check, ControlResult, Pick

CONTROL_VOLTAGE_V = {"nec": 120.0, "iec": 230.0}  # common practice (no single source)
CPT_SIZING_FACTOR = 1.25  # control transformer VA ≥ 1.25 × the sealed load: common practice (no single source)
CONTROL_FUSE_FACTOR = 1.25  # control fuse ≥ 1.25 × the sealed load current: common practice (no single source)
CPT_PRIMARY_FUSE_MAX = 2.5  # primary fuse ≤ 250 % where the secondary is fused: NEC 450.3(B) (from memory)
MEASURING_FUSE_A = 2.0  # fuses in the leads of the controller's voltage input: common practice (no single source)
COPPER_OHM_MM2_PER_M = 0.0175  # resistivity of copper at 20 °C [Ω·mm²/m] (handbook value)
CT_LEAD_AREA_MM2 = 2.5  # copper leads from the CT to the controller: common practice (no single source)


def lead_burden_va(secondary_a: float, one_way_m: float, area_mm2: float = CT_LEAD_AREA_MM2) -> float:
    """Burden of the leads between a CT and its meter: I² · R of the out-and-back copper run [VA].

    Notes
    -----
    R = ρ · 2 · l / A, ρ = 0.0175 Ω·mm²/m (copper, 20 °C).

    Examples
    --------
    >>> round(lead_burden_va(5.0, 5.0), 2)
    1.75
    """
    return secondary_a**2 * COPPER_OHM_MM2_PER_M * 2.0 * one_way_m / area_mm2


def ct_basis(override_a: float | None, transformer_kva: float | None, load_kva: float | None,
             voltage_v: float) -> tuple[float | None, str]:
    """The load current the CT must carry, and where the figure comes from.

    The CT sits on the incoming supply, upstream of both the load and the bank, so it carries the load current
    before correction. In order: the spec's ``assembly.ct_load_current_a``; the transformer's full-load current;
    the load's apparent current from the need (before correction). A kvar-only need without a transformer
    gives no figure.

    Examples
    --------
    >>> round(ct_basis(None, 1500.0, 1051.3, 480.0)[0], 1)
    1804.2
    """
    if override_a is not None:
        return override_a, "load current stated in the spec (assembly.ct_load_current_a)"
    if transformer_kva:
        amps = transformer_kva * 1000.0 / (math.sqrt(3.0) * voltage_v)
        return amps, f"full-load current of the {transformer_kva:g} kVA supply transformer, whose feed the CT is on"
    if load_kva:
        amps = load_kva * 1000.0 / (math.sqrt(3.0) * voltage_v)
        return amps, f"load of {load_kva:,.1f} kVA before correction, from the need"
    return None, "not known: give assembly.ct_load_current_a (the load current at the CT)"


def next_row(rows: Sequence, attr: str, required: float):
    """The row with the smallest ``attr`` at or above ``required``; ``None`` when none is large enough."""
    fits = [r for r in rows if getattr(r, attr) >= required - 1e-9]
    return min(fits, key=lambda r: getattr(r, attr)) if fits else None


def _pick(row, name: str, value: float) -> Pick | None:
    return None if row is None else Pick(designation=name, value=value, table=row.table, row=row.row)


@dataclass(frozen=True)
class ControlInputs:
    """What the control circuit serves, gathered by the caller."""

    rules: str
    steps: int  # 0 for a fixed bank (no controller)
    smallest_step_a: float
    supply_voltage_v: float
    ct_basis_a: float | None
    ct_basis_text: str
    ct_secondary_a: float
    ct_lead_length_m: float
    control_voltage_v: float | None
    coil_sealed_va: tuple[float, ...]
    fan_va: float


def control_circuit(inp: ControlInputs, catalogs) -> tuple[ControlResult, list[Check]]:
    """Controller, CT, control transformer and fuses for one bank.

    Returns
    -------
    tuple
        (ControlResult, checks).
    """
    checks: list[Check] = []
    controller = ct = None
    burden_needed = 0.0
    secondary_seen = None
    if inp.steps:
        controller = next_row(catalogs.controllers, "outputs", inp.steps)
        if controller is None:
            most = max((r.outputs for r in catalogs.controllers), default=0)
            checks.append(Check(name="Controller outputs", ok=False, rule="outputs ≥ steps",
                                detail=f"{inp.steps} steps; the controller table goes up to {most} outputs"))
        cts = [r for r in catalogs.current_transformers if r.secondary_a == inp.ct_secondary_a]
        input_va = controller.ct_input_va if controller else 0.0
        burden_needed = input_va + lead_burden_va(inp.ct_secondary_a, inp.ct_lead_length_m)
        if inp.ct_basis_a is None:
            checks.append(Check(name="Current transformer", ok=False, rule="CT primary ≥ load current",
                                detail=f"CT ratio {inp.ct_basis_text}", level="caution"))
        else:
            ct = next_row(cts, "primary_a", inp.ct_basis_a)
            if ct is None:
                checks.append(Check(name="Current transformer", ok=False, rule="CT primary ≥ load current",
                                    detail=f"no {inp.ct_secondary_a:g} A CT with primary ≥ {inp.ct_basis_a:,.0f} A"))
            else:
                secondary_seen = inp.smallest_step_a * ct.secondary_a / ct.primary_a
                burden_ok = ct.burden_va >= burden_needed - 1e-9
                sense_ok = controller is None or secondary_seen >= controller.min_current_a
                checks.append(Check(
                    name="Current transformer", ok=burden_ok and sense_ok,
                    rule="CT primary ≥ load current; burden ≥ controller input + leads; smallest step visible",
                    detail=(f"{ct.primary_a:g}/{ct.secondary_a:g} A for {inp.ct_basis_a:,.0f} A, "
                            f"the {inp.ct_basis_text}; "
                            f"burden {ct.burden_va:g} VA vs {burden_needed:.2f} VA needed "
                            f"({inp.ct_lead_length_m:g} m of {CT_LEAD_AREA_MM2:g} mm² Cu each way); smallest step "
                            f"gives {secondary_seen * 1000:.0f} mA on the secondary"
                            + (f" (controller needs ≥ {controller.min_current_a * 1000:g} mA)" if controller else "")
                            + ("" if burden_ok else "; burden too low: use a 1 A secondary or a larger CT")
                            + ("" if sense_ok else "; the controller cannot see the smallest step: smaller CT"))))
    control_v = inp.control_voltage_v or CONTROL_VOLTAGE_V.get(inp.rules, 230.0)
    load_va = (controller.supply_va if controller else 0.0) + sum(inp.coil_sealed_va) + inp.fan_va
    cpt = primary = None
    losses = controller.losses_w if controller else 0.0
    if load_va > 0 and abs(control_v - inp.supply_voltage_v) > 1e-6:
        cpt = next_row(catalogs.control_transformers, "rating_va", CPT_SIZING_FACTOR * load_va)
        if cpt is None:
            checks.append(Check(name="Control transformer", ok=False, rule="VA ≥ 1.25 × sealed load",
                                detail=f"no control transformer ≥ {CPT_SIZING_FACTOR * load_va:.0f} VA in the table"))
        else:
            losses += cpt.losses_w
            i_primary = cpt.rating_va / inp.supply_voltage_v
            window = [r for r in catalogs.control_fuses
                      if i_primary - 1e-9 <= r.rating_a <= CPT_PRIMARY_FUSE_MAX * i_primary + 1e-9]
            primary = max(window, key=lambda r: r.rating_a) if window else next_row(
                catalogs.control_fuses, "rating_a", i_primary)
            if primary is not None:
                losses += 2 * primary.losses_w
            if not window:
                checks.append(Check(name="Control transformer primary fuses", ok=False,
                                    rule="≤ 250% of primary current (NEC 450.3(B), from memory)",
                                    detail=f"no control fuse between {i_primary:.2f} A and "
                                           f"{CPT_PRIMARY_FUSE_MAX * i_primary:.2f} A", level="caution"))
    secondary = None
    if load_va > 0:
        secondary = next_row(catalogs.control_fuses, "rating_a", CONTROL_FUSE_FACTOR * load_va / control_v)
        if secondary is None:
            checks.append(Check(name="Control fuse", ok=False, rule="≥ 1.25 × sealed load current",
                                detail=f"no control fuse ≥ {CONTROL_FUSE_FACTOR * load_va / control_v:.1f} A"))
        else:
            losses += (1 if cpt else 2) * secondary.losses_w
    measuring = next_row(catalogs.control_fuses, "rating_a", MEASURING_FUSE_A) if controller else None
    if measuring is not None:
        losses += 2 * measuring.losses_w
    result = ControlResult(
        controller=_pick(controller, controller.controller_id, controller.outputs) if controller else None,
        outputs_needed=inp.steps, ct=_pick(ct, ct.ct_id, ct.primary_a) if ct else None, ct_basis_a=inp.ct_basis_a,
        ct_basis=inp.ct_basis_text if inp.steps else "", ct_burden_needed_va=burden_needed,
        smallest_step_secondary_a=secondary_seen, control_voltage_v=control_v, control_load_va=load_va,
        control_transformer=_pick(cpt, cpt.transformer_id, cpt.rating_va) if cpt else None,
        primary_fuse=_pick(primary, primary.fuse_id, primary.rating_a) if primary else None,
        secondary_fuse=_pick(secondary, secondary.fuse_id, secondary.rating_a) if secondary else None,
        measuring_fuse=_pick(measuring, measuring.fuse_id, measuring.rating_a) if measuring else None,
        losses_w=losses)
    return result, checks
