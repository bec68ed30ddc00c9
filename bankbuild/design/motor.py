"""A bank at a motor's terminals (``bank.motor``): self-excitation limit, the overload relay setting on the
improved current, the capacitor conductor rule, and the starters and duties that rule terminal capacitors out.

Part of the system checks (:mod:`bankbuild.design.checks`); the arithmetic is in :mod:`bankbuild.calc.motor`.
"""

from __future__ import annotations

from bankbuild.calc import EPS
from bankbuild.calc import motor as mc
from bankbuild.design.protection import (
    IEC_MAX_SINGLE_MM2,
    IEC_MIN_PARALLEL_MM2,
    NEC_MAX_SINGLE_MM2,
    NEC_MIN_PARALLEL_MM2,
    derated_rows,
)
from bankbuild.design.select import pick_conductor
from bankbuild.results.sizing import Check, MotorCheck, UnitLine

PRACTICE = "common practice (no single source)"

STARTING_ADVICE = {
    "wye_delta": "a wye-delta starter's open transition drops the motor with the capacitor across it and "
                 "reconnects it charged and out of phase; switch the capacitor with its own contactor on the "
                 "line side of the starter, closed after the delta contactor",
    "soft_starter": "capacitors must not sit on a soft starter's output; put them on its line side with their "
                    "own contactor, switched in only after the bypass closes",
    "drive": "never connect capacitors to a drive's output (the terminals of a drive-fed motor): the drive's "
             "switching drives large currents into them; a drive's input power factor is near unity already",
    "autotransformer": "reduced-voltage starting reconnects the motor during the start; connect the capacitor "
                       "after the run contactor closes, or switch it separately",
    "part_winding": "reduced-voltage starting reconnects the motor during the start; connect the capacitor "
                    "after the run contactor closes, or switch it separately",
}
DUTY_NAMES = {"jogging": "jogging (inching)", "plugging": "plugging", "reversing": "reversing",
              "multi_speed": "multi-speed operation"}


def largest_within(unit_rows, factor: float, limit_kvar: float) -> tuple[float, list[UnitLine]]:
    """The largest output not above ``limit_kvar`` from units of one rating, using at most two sizes.

    Each unit delivers ``rated_kvar × factor``. Ties prefer fewer units. Returns (total kvar, unit lines).

    >>> from types import SimpleNamespace as U
    >>> rows = [U(unit_id=f"U{k:g}", rated_kvar=k, rated_voltage_v=480.0, rated_frequency_hz=60.0, table="t",
    ...           row=i) for i, k in enumerate([5.0, 10.0, 25.0])]
    >>> total, lines = largest_within(rows, 1.0, 38.0)
    >>> total, [(u.id, u.qty) for u in lines]
    (35.0, [('U25', 1), ('U10', 1)])
    """
    best: tuple[float, int, list[tuple[object, int]]] = (0.0, 0, [])
    if factor <= 0 or limit_kvar <= 0:
        return 0.0, []
    rows = sorted(unit_rows, key=lambda u: -u.rated_kvar)
    for i, a in enumerate(rows):
        size_a = a.rated_kvar * factor
        for n_a in range(min(int(limit_kvar / size_a + EPS), 2000), 0, -1):
            rest = limit_kvar - n_a * size_a
            options = [(0, None)]
            for b in rows[i + 1:]:
                size_b = b.rated_kvar * factor
                n_b = min(int(rest / size_b + EPS), 2000)
                if n_b:
                    options.append((n_b, b))
            for n_b, b in options:
                total = n_a * size_a + (n_b * b.rated_kvar * factor if b is not None else 0.0)
                count = n_a + n_b
                if total > best[0] + 1e-6 or (abs(total - best[0]) <= 1e-6 and count < best[1]):
                    best = (total, count, [(a, n_a)] + ([(b, n_b)] if b is not None else []))
    lines = [UnitLine(id=u.unit_id, qty=n, rated_kvar=u.rated_kvar, rated_voltage_v=u.rated_voltage_v,
                      rated_frequency_hz=u.rated_frequency_hz, delivered_kvar_each=u.rated_kvar * factor,
                      table=u.table, row=u.row) for u, n in best[2]]
    return best[0], lines


def motor_figures(bank, capacitor_kvar: float, rated_current_a: float, conductor_ampacity_a: float,
                  conductor: str, ctx, unit_rows, factor: float) -> tuple[MotorCheck | None, list[Check]]:
    """Checks of a bank at ``bank.motor``'s terminals; ``capacitor_kvar`` is what the bank delivers there."""
    motor = bank.motor
    if motor is None:
        return None, []
    v = bank.supply.voltage_v
    label = f"Motor{' ' + motor.name if motor.name else ''}"
    if motor.magnetising_kvar is not None:
        q0 = motor.magnetising_kvar
        q0_text = f"magnetising {q0:.1f} kvar (given)"
    else:
        q0 = mc.magnetising_kvar(v, motor.no_load_current_a, motor.no_load_pf or 0.0)
        pf0 = f", PF {motor.no_load_pf:g}" if motor.no_load_pf is not None else ", taken as wholly magnetising"
        q0_text = f"magnetising {q0:.1f} kvar (√3 × {v:g} V × {motor.no_load_current_a:g} A no-load{pf0})"
    checks: list[Check] = []
    best_kvar, best_units = largest_within(unit_rows, factor, q0)
    units = " + ".join(f"{u.qty} × {u.id}" for u in best_units) or "no unit small enough"
    over = capacitor_kvar > q0 + EPS
    checks.append(Check(
        name=f"{label}: self-excitation limit", ok=not over,
        rule="CSA C22.1 26-218; NEMA MG 1 (from memory): ≤ the kvar that brings the no-load PF to unity",
        detail=f"capacitor {capacitor_kvar:.1f} kvar; motor {q0_text}"
               + (f": too large, the motor can self-excite when switched off; at most {best_kvar:.1f} kvar "
                  f"({units}) from this unit range" if over else
                  f"; {capacitor_kvar / q0:.0%} of it (many makers advise ≤ 90%, common practice)")))

    reduced = mc.reduced_line_current_a(v, motor.full_load_current_a, motor.full_load_pf, capacitor_kvar)
    improved = mc.improved_power_factor(motor.full_load_pf, motor.full_load_current_a, reduced)
    if motor.capacitor_after_overload:
        basis = reduced
        detail = (f"set the overload relay on {reduced:.1f} A, not the nameplate {motor.full_load_current_a:g} A "
                  f"(PF {motor.full_load_pf:g} → {improved:.3f} with {capacitor_kvar:.1f} kvar); the motor circuit "
                  "conductors stay sized on the motor; no capacitor overcurrent device is needed on the load side "
                  "of the overload relay (NEC 460.8(B))")
    else:
        basis = motor.full_load_current_a
        detail = (f"capacitor on the line side of the overload relay: set it on the motor's "
                  f"{motor.full_load_current_a:g} A as usual (the motor-plus-capacitor current would be "
                  f"{reduced:.1f} A)")
    checks.append(Check(name=f"{label}: overload relay setting", ok=True, level="info",
                        rule="NEC 460.9: overload setting on the improved power factor", detail=detail))

    need = mc.min_capacitor_conductor_ampacity_a(rated_current_a, motor.conductor_ampacity_a, ctx.conductor_factor)
    ok = conductor_ampacity_a >= need - EPS
    detail = (f"capacitor conductor ≥ max({ctx.conductor_factor:g} × {rated_current_a:.1f} A, "
              f"{motor.conductor_ampacity_a:g} A / 3) = {need:.1f} A; {conductor} gives {conductor_ampacity_a:g} A")
    chosen, chosen_a = conductor, conductor_ampacity_a
    if not ok:
        nec = ctx.rules == "nec"
        rows = derated_rows(ctx, need, ctx.grouped_main)
        pick = pick_conductor(rows, need, "ampacity_a", lambda row: row.size, ctx.max_sets,
                              NEC_MIN_PARALLEL_MM2 if nec else IEC_MIN_PARALLEL_MM2,
                              NEC_MAX_SINGLE_MM2 if nec else IEC_MAX_SINGLE_MM2)
        if pick is not None:
            chosen, chosen_a = pick.designation, pick.ampacity_a
            detail += f": use {pick.designation} ({pick.ampacity_a:g} A, {ctx.conductor_label})"
        else:
            detail += ": no conductor in the table is large enough"
    checks.append(Check(name=f"{label}: capacitor conductor", ok=ok,
                        rule="NEC 460.8(A): ≥ 135% of rated current and ≥ 1/3 of the motor conductor ampacity",
                        detail=detail))

    if motor.starting != "direct":
        checks.append(Check(name=f"{label}: starter", ok=False, level="caution", rule=PRACTICE,
                            detail=f"{motor.starting.replace('_', '-')} starting: " + STARTING_ADVICE[motor.starting]))
    if motor.duty:
        named = ", ".join(DUTY_NAMES[d] for d in motor.duty)
        checks.append(Check(name=f"{label}: duty", ok=False, level="caution", rule=PRACTICE,
                            detail=f"{named}: a motor that is jogged, plugged, reversed or changes speed must not "
                                   "have capacitors at its terminals (reconnection while charged, transient torque, "
                                   "self-excitation); correct its reactive power at the bus instead"))
    figures = MotorCheck(
        name=motor.name, magnetising_kvar=q0, capacitor_kvar=capacitor_kvar,
        full_load_current_a=motor.full_load_current_a, reduced_current_a=reduced, improved_pf=improved,
        overload_setting_basis_a=basis, min_conductor_ampacity_a=need, conductor=chosen,
        conductor_ampacity_a=chosen_a, suggested_kvar=best_kvar if over else capacitor_kvar,
        suggested_units=best_units if over else [])
    return figures, checks
