"""An existing bank: the units a spec lists per step (``units:``), looked up in the unit table.

A bank that is already built is described by its units instead of step sizes. Each id must be a ``unit_id`` of
the capacitor unit table, and every unit of the bank must share one rated voltage and frequency (the pipeline
works with one unit rating per bank). Problems are :class:`~bankbuild.errors.SpecError` lines that name the
step, the id and the table.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass

from bankbuild.design.select import UnitChoice
from bankbuild.errors import SpecError


@dataclass(frozen=True)
class ExistingUnits:
    """The units of an existing bank, per step, with the one rating they share."""

    rated_voltage_v: float
    rated_frequency_hz: float
    steps: tuple[tuple[tuple, tuple[int, ...]], ...]  # per step: (units, counts)

    def choice(self, index: int, factor: float) -> UnitChoice:
        """Step ``index`` (0-based) as a :class:`~.select.UnitChoice`; each unit gives rated × factor."""
        units, counts = self.steps[index]
        rated = sum(u.rated_kvar * c for u, c in zip(units, counts, strict=True))
        return UnitChoice(units=units, counts=counts, rated_kvar=rated, delivered_kvar=rated * factor)

    def nameplate_kvar(self, index: int) -> float:
        """Nameplate kvar of step ``index`` (0-based) at the units' rated voltage and frequency."""
        units, counts = self.steps[index]
        return sum(u.rated_kvar * c for u, c in zip(units, counts, strict=True))


def resolve_units(bank, unit_rows, where: str, field: str) -> ExistingUnits:
    """Look up every ``{id, qty}`` of ``bank.units`` in ``unit_rows`` (the unit table).

    Parameters
    ----------
    bank : bankbuild.spec.model.Bank
        A bank with ``units`` given.
    unit_rows : sequence of CapacitorUnit
        The rows of the capacitor unit table.
    where, field : str
        The spec file and the bank's field path, for error messages.
    """
    by_id = {u.unit_id: u for u in unit_rows}
    table = unit_rows[0].table if unit_rows else "capacitor_units.csv"
    steps = []
    ratings: dict[tuple[float, float], str] = {}
    for k, step in enumerate(bank.units):
        merged: dict[str, int] = {}
        for j, item in enumerate(step):
            if item.id not in by_id:
                near = difflib.get_close_matches(item.id, list(by_id), n=1)
                hint = f"; did you mean {near[0]}?" if near else "; see 'bankbuild catalog copy' for the ids"
                raise SpecError(where, f"{field}.units[{k}][{j}].id",
                                f"no unit {item.id!r} in the unit table {table}{hint}")
            unit = by_id[item.id]
            ratings.setdefault((unit.rated_voltage_v, unit.rated_frequency_hz), f"units[{k}][{j}] ({item.id})")
            merged[item.id] = merged.get(item.id, 0) + item.qty
        ordered = sorted(merged.items(), key=lambda kv: -by_id[kv[0]].rated_kvar)
        steps.append((tuple(by_id[i] for i, _ in ordered), tuple(q for _, q in ordered)))
    if len(ratings) > 1:
        shown = "; ".join(f"{v:g} V {f:g} Hz at {at}" for (v, f), at in ratings.items())
        raise SpecError(where, f"{field}.units",
                        f"units of different ratings in one bank ({shown}); describe each rating as its own bank")
    (v_r, f_r), _ = next(iter(ratings.items()))
    if bank.capacitor_voltage_v is not None and bank.capacitor_voltage_v != v_r:
        raise SpecError(where, f"{field}.capacitor_voltage_v",
                        f"{bank.capacitor_voltage_v:g} V differs from the listed units' rating {v_r:g} V; "
                        "drop capacitor_voltage_v or correct it")
    return ExistingUnits(rated_voltage_v=v_r, rated_frequency_hz=f_r, steps=tuple(steps))
