"""The enclosure: heat from every part, the ventilation airflow for a stated temperature rise, fans, and the
main busbars.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from bankbuild.calc.thermal import (
    air_density_kg_m3,
    airflow_m3_per_h,
)
from bankbuild.results.sizing import Check, EnclosureResult, LossLine, Pick

CAPACITOR_MEAN_AMBIENT_C = 45.0
"""Highest 24-hour mean air temperature around the units, temperature category D of IEC 60831-1 (from memory)."""
FAN_POWER_FACTOR = 0.8  # fan motors' VA from their W for the control circuit: common practice (no single source)


def device_loss_w(rows: Sequence, device: str, rating_a: float) -> float:
    """Loss of one fuse-link or breaker pole rated ``rating_a``: the first row of that device at or above it
    (the last row's figure above the table) [W].

    >>> from types import SimpleNamespace as R
    >>> rows = [R(device="fuse", max_rating_a=a, losses_w=w) for a, w in [(30, 2.5), (60, 4.0), (100, 7.0)]]
    >>> device_loss_w(rows, "fuse", 45), device_loss_w(rows, "fuse", 400)
    (4.0, 7.0)
    """
    own = sorted((r for r in rows if r.device == device), key=lambda r: r.max_rating_a)
    for r in own:
        if r.max_rating_a >= rating_a - 1e-9:
            return r.losses_w
    return own[-1].losses_w if own else 0.0


def pick_fans(rows: Sequence, airflow: float):
    """The smallest fan that moves ``airflow`` on its own, else as many of the largest as needed.

    Returns
    -------
    tuple
        (row or None, quantity).

    Examples
    --------
    >>> from types import SimpleNamespace as R
    >>> rows = [R(airflow_m3_per_h=a) for a in (100.0, 250.0, 600.0)]
    >>> [(r.airflow_m3_per_h, n) for r, n in (pick_fans(rows, 180), pick_fans(rows, 1300))]
    [(250.0, 1), (600.0, 3)]
    """
    if not rows or airflow <= 0:
        return None, 0
    ordered = sorted(rows, key=lambda r: r.airflow_m3_per_h)
    for r in ordered:
        if r.airflow_m3_per_h >= airflow - 1e-9:
            return r, 1
    largest = ordered[-1]
    return largest, math.ceil(airflow / largest.airflow_m3_per_h - 1e-9)


def enclosure(lines: list[LossLine], wiring_loss_pct: float, ambient_c: float, temperature_rise_k: float,
              busbar_required_a: float, busbar_derating: float, catalogs) -> tuple[EnclosureResult, list[Check]]:
    """Sum the losses, size the ventilation and the busbars.

    Parameters
    ----------
    lines : list of LossLine
        The parts' losses (capacitors, reactors, contactors, fuses, control ...).
    wiring_loss_pct : float
        Allowance for wiring and busbar losses, % of the parts' sum [%].
    ambient_c, temperature_rise_k : float
        Air around the enclosure [°C] and the rise allowed inside [K].
    busbar_required_a : float
        Current the main busbars must carry: the main's conductor factor × its design current [A].
    busbar_derating : float
        Share of the table rating kept inside the enclosure [-].
    catalogs : Catalogs
        For ``fans`` and ``busbars``.

    Returns
    -------
    tuple
        (EnclosureResult, checks).
    """
    parts = sum(line.total_w for line in lines)
    wiring = parts * wiring_loss_pct / 100.0
    lines = [*lines, LossLine(item="Wiring and busbars (allowance)", qty=1, each_w=wiring, total_w=wiring,
                              source=f"{wiring_loss_pct:g}% of the parts' losses (spec assembly.wiring_loss_pct)")]
    total = parts + wiring
    rho = air_density_kg_m3(ambient_c)
    airflow = airflow_m3_per_h(total, temperature_rise_k, rho)
    fan, qty = pick_fans(catalogs.fans, airflow)
    bar = next((b for b in sorted(catalogs.busbars, key=lambda b: b.rating_a)
                if b.rating_a * busbar_derating >= busbar_required_a - 1e-9), None)
    checks = []
    inside = ambient_c + temperature_rise_k
    checks.append(Check(
        name="Enclosure air temperature", ok=inside <= CAPACITOR_MEAN_AMBIENT_C + 1e-9,
        rule="IEC 60831-1 temperature category D: ≤ 45 °C 24-hour mean (from memory)", level="caution",
        detail=(f"{ambient_c:g} °C ambient + {temperature_rise_k:g} K rise = {inside:g} °C around the units; "
                f"{total:,.0f} W inside needs {airflow:,.0f} m³/h")))
    if fan is None and airflow > 0:
        checks.append(Check(name="Ventilation fans", ok=False, rule="fan table", detail="the fan table is empty"))
    if bar is None:
        most = max((b.rating_a for b in catalogs.busbars), default=0.0)
        checks.append(Check(name="Main busbars", ok=False, rule="busbar rating × derating ≥ main's factor × current",
                            detail=f"{busbar_required_a:,.0f} A needed at derating {busbar_derating:g}; the busbar "
                                   f"table goes up to {most:,.0f} A"))
    result = EnclosureResult(
        losses=lines, total_losses_w=total, ambient_c=ambient_c, temperature_rise_k=temperature_rise_k,
        air_density_kg_m3=rho, airflow_m3_per_h=airflow,
        fan=None if fan is None else Pick(designation=fan.fan_id, value=fan.airflow_m3_per_h, table=fan.table,
                                          row=fan.row),
        fan_qty=qty,
        busbar=None if bar is None else Pick(designation=bar.busbar_id, value=bar.rating_a, table=bar.table,
                                             row=bar.row),
        busbar_required_a=busbar_required_a, busbar_derating=busbar_derating,
        busbar_rating_a=bar.rating_a * busbar_derating if bar else 0.0)
    return result, checks


def fan_va(result: EnclosureResult, catalogs) -> float:
    """Apparent power the chosen fans draw from the control circuit [VA]."""
    if result.fan is None:
        return 0.0
    row = next(f for f in catalogs.fans if f.row == result.fan.row)
    return result.fan_qty * row.power_w / FAN_POWER_FACTOR
