"""The row types of every rating table: plain named tuples (immutable), so that callers never need pandas.

Each row keeps the file name (``table``) and line (``row``) it came from, so that a pick can name its source.
The declared schemas are in :mod:`bankbuild.tables.registry`; the CSV files in ``bankbuild/tables/data/``,
each stating its source, or "from memory", in its ``#`` notes.
"""

from __future__ import annotations

from typing import NamedTuple


class CapacitorUnit(NamedTuple):
    """A three-phase capacitor unit: nameplate kvar at its rated voltage and frequency."""

    unit_id: str
    rated_kvar: float
    rated_voltage_v: float
    rated_frequency_hz: float
    connection: str
    discharge_voltage_v: float
    discharge_time_s: float
    losses_w_per_kvar: float
    description: str
    table: str
    row: int


class Price(NamedTuple):
    """A unit price for quotation: a part id or a pattern of ids or descriptions, and what the part costs."""

    part: str
    unit_price: float
    currency: str
    lead_time_days: int
    supplier_note: str
    table: str
    row: int


class DeviceRating(NamedTuple):
    """A standard ampere rating of a fuse or breaker under one rule basis."""

    basis: str
    device: str
    rating_a: float
    table: str
    row: int


class BreakerFrame(NamedTuple):
    """A breaker frame size (largest trip rating the frame accepts)."""

    basis: str
    frame_a: float
    table: str
    row: int


class DisconnectRating(NamedTuple):
    """An ampere rating of a disconnecting means (switch)."""

    basis: str
    rating_a: float
    table: str
    row: int


class NecConductor(NamedTuple):
    """A copper conductor size with its NEC Table 310.16 ampacities for one code edition."""

    edition: int
    size: str
    area_mm2: float
    ampacity_60c_a: float
    ampacity_75c_a: float
    ampacity_90c_a: float
    table: str
    row: int


class IecConductor(NamedTuple):
    """A copper cross-section with its IEC 60364-5-52 current-carrying capacity for one installation."""

    insulation: str
    method: str
    area_mm2: float
    ampacity_a: float
    table: str
    row: int


class Reactor(NamedTuple):
    """A three-phase detuning reactor for one step: tuning factor, system voltage and step output."""

    reactor_id: str
    frequency_hz: float
    tuning_pct: float
    voltage_v: float
    step_kvar: float
    inductance_mh: float
    current_a: float
    losses_w: float
    description: str
    table: str
    row: int


class Contactor(NamedTuple):
    """A capacitor-duty contactor rating at one voltage; ``damping`` names pre-insertion resistors.

    ``ac6b_current_a`` is the capacitor current the frame may switch at ``voltage_v`` (category AC-6b); the kvar
    it may switch there is derived from it, Q = √3·U·I_e, never tabulated.
    """

    contactor_id: str
    damping: str
    voltage_v: float
    ac6b_current_a: float
    max_peak_a: float
    coil_sealed_va: float
    coil_inrush_va: float
    losses_w: float
    description: str
    table: str
    row: int


class Controller(NamedTuple):
    """A power-factor controller: step outputs, measuring sensitivity and reconnection-delay range."""

    controller_id: str
    outputs: int
    min_current_a: float
    ct_input_va: float
    max_reconnect_delay_s: float
    supply_va: float
    losses_w: float
    description: str
    table: str
    row: int


class CurrentTransformer(NamedTuple):
    """A measuring current transformer: ratio, rated burden and accuracy class."""

    ct_id: str
    secondary_a: float
    primary_a: float
    burden_va: float
    accuracy_class: str
    description: str
    table: str
    row: int


class ControlTransformer(NamedTuple):
    """A single-phase control power transformer."""

    transformer_id: str
    rating_va: float
    losses_w: float
    description: str
    table: str
    row: int


class ControlFuse(NamedTuple):
    """A small fuse for control and measuring circuits."""

    fuse_id: str
    rating_a: float
    losses_w: float
    description: str
    table: str
    row: int


class DeviceLoss(NamedTuple):
    """Power loss of one fuse-link or one breaker pole at rated current, up to ``max_rating_a``."""

    device: str
    max_rating_a: float
    losses_w: float
    table: str
    row: int


class Fan(NamedTuple):
    """An enclosure fan with its inlet filter and outlet grille; airflow with the filters fitted."""

    fan_id: str
    airflow_m3_per_h: float
    power_w: float
    description: str
    table: str
    row: int


class Busbar(NamedTuple):
    """A copper busbar arrangement per phase and its continuous current rating."""

    busbar_id: str
    bars_per_phase: int
    width_mm: float
    thickness_mm: float
    rating_a: float
    description: str
    table: str
    row: int
