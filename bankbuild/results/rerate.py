"""Results of ``rerate``: an existing bank at another supply, what still fits, and a re-sized alternative.

Frozen like the sizing results (:mod:`bankbuild.results.sizing`); the re-sized bank is a full
:class:`~bankbuild.results.sizing.BankResult`, so it carries the same keys as ``size --json``.
"""

from __future__ import annotations

from bankbuild._version import __version__
from bankbuild.results.base import Frozen
from bankbuild.results.sizing import BankResult, Check, Provenance, UnitLine


class RerateStep(Frozen):
    """One step of the existing bank, before and after the move."""

    index: int
    units: list[UnitLine]  # delivered_kvar_each at the new supply
    rated_kvar: float
    original_kvar: float
    delivered_kvar: float
    rated_current_a: float
    original_line_current_a: float
    line_current_a: float


class ItemFit(Frozen):
    """An installed part against what the bank needs at the new supply."""

    item: str  # e.g. "Step 2 fuse", "Main conductor", "Step 1 reactor", "Step 1 capacitor units"
    installed: str
    required: str
    fits: bool
    action: str  # keep | change
    detail: str = ""


class BomChange(Frozen):
    """One line of the difference between the existing bank and the re-sized one."""

    action: str  # keep | remove | add
    qty: float
    unit: str  # pcs | set | m
    category: str
    description: str
    id: str = ""


class RerateBank(Frozen):
    """One bank moved to the new supply."""

    name: str
    original_voltage_v: float
    original_frequency_hz: float
    voltage_v: float
    frequency_hz: float
    original_kvar: float  # delivered at the original supply
    delivered_kvar: float  # the same units at the new supply
    kvar_ratio: float  # delivered / original = (V2/V1)² · (f2/f1) for plain steps
    linear_scaling_kvar: float  # what the (wrong) linear-in-voltage habit would claim
    capacitor_voltage_v: float  # rated voltage of the units
    rated_frequency_hz: float
    capacitor_voltage_seen_v: float  # at the new supply, with the detuning rise
    capacitor_voltage_ok: bool  # within 110 % of rating at the supply and at light load
    rated_current_a: float
    original_line_current_a: float
    line_current_a: float
    original_tuning_pct: float | None
    tuning_pct: float | None  # the same reactors at the new frequency: p · (f2/f1)²
    tuning_frequency_hz: float | None  # unchanged in hertz: set by the reactor and capacitor
    steps: list[RerateStep]
    items: list[ItemFit]
    checks: list[Check]  # every check of the existing bank at the new supply
    at_new_supply: BankResult  # the existing units at the new supply, protection sized there
    resized: BankResult  # units suited to the new supply, restoring the original kvar per step
    bom_basis: str  # "bill of materials" or "units and protection"
    bom_difference: list[BomChange]
    original_capacitor_voltage_seen_v: float | None = None  # at the original supply, with the detuning rise
    original_light_load_voltage_v: float | None = None  # … and at light load with every step on
    light_load_voltage_v: float | None = None  # at the new supply, light load, every step on
    capacitor_voltage_limit_v: float | None = None  # the rule basis's continuous limit on the units' voltage


class RerateResult(Frozen):
    version: str = __version__  # the bankbuild version that wrote the results
    project: dict[str, str]
    provenance: Provenance
    voltage_v: float
    frequency_hz: float | None  # None: each bank keeps its own frequency
    banks: list[RerateBank]
    cautions: list[str]
