"""The rating tables the assembly picks from: row types and their declared schemas.

Reactors, contactors, controllers, current transformers, control transformers and fuses, device losses,
enclosure fans and busbars. The row types are plain frozen dataclasses; the schemas are built by
:func:`assembly_tables`, which :mod:`bankbuild.catalog_schema` calls with its own ``Column`` and ``TableSchema``
classes and appends to its registry. This module imports nothing of the package, so the registry can import
it at any time without an import cycle.

The CSV files live in ``bankbuild/data/catalogs/``; each states its source, or "from memory", in its ``#``
notes.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Reactor:
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


@dataclass(frozen=True)
class Contactor:
    """A capacitor-duty contactor rating at one voltage; ``damping`` names pre-insertion resistors."""

    contactor_id: str
    damping: str
    voltage_v: float
    max_kvar: float
    max_peak_a: float
    coil_sealed_va: float
    coil_inrush_va: float
    losses_w: float
    description: str
    table: str
    row: int


@dataclass(frozen=True)
class Controller:
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


@dataclass(frozen=True)
class CurrentTransformer:
    """A measuring current transformer: ratio, rated burden and accuracy class."""

    ct_id: str
    secondary_a: float
    primary_a: float
    burden_va: float
    accuracy_class: str
    description: str
    table: str
    row: int


@dataclass(frozen=True)
class ControlTransformer:
    """A single-phase control power transformer."""

    transformer_id: str
    rating_va: float
    losses_w: float
    description: str
    table: str
    row: int


@dataclass(frozen=True)
class ControlFuse:
    """A small fuse for control and measuring circuits."""

    fuse_id: str
    rating_a: float
    losses_w: float
    description: str
    table: str
    row: int


@dataclass(frozen=True)
class DeviceLoss:
    """Power loss of one fuse-link or one breaker pole at rated current, up to ``max_rating_a``."""

    device: str
    max_rating_a: float
    losses_w: float
    table: str
    row: int


@dataclass(frozen=True)
class Fan:
    """An enclosure fan with its inlet filter and outlet grille; airflow with the filters fitted."""

    fan_id: str
    airflow_m3_per_h: float
    power_w: float
    description: str
    table: str
    row: int


@dataclass(frozen=True)
class Busbar:
    """A copper busbar arrangement per phase and its continuous current rating."""

    busbar_id: str
    bars_per_phase: int
    width_mm: float
    thickness_mm: float
    rating_a: float
    description: str
    table: str
    row: int


def assembly_tables(column, schema) -> tuple:
    """The schemas of the assembly tables, built with the registry's ``Column`` and ``TableSchema`` classes.

    Parameters
    ----------
    column : type
        :class:`bankbuild.catalog_schema.Column`.
    schema : type
        :class:`bankbuild.catalog_schema.TableSchema`.

    Returns
    -------
    tuple of TableSchema
        In the order the :class:`bankbuild.catalogs.Catalogs` fields follow.

    Examples
    --------
    >>> from bankbuild.catalog_schema import Column, TableSchema
    >>> [t.file_name for t in assembly_tables(Column, TableSchema)][:2]
    ['reactors.csv', 'contactors.csv']
    """
    c = column
    text = c("description", str, required=False)
    watts = {"unit": "W", "minimum": 0.0, "maximum": 20000.0}
    return (
        schema(
            file_name="reactors.csv", attr="reactors", row_type=Reactor,
            title="Generic three-phase detuning reactors, by frequency, tuning factor, system voltage and step",
            columns=(
                c("reactor_id", str),
                c("frequency_hz", float, "Hz", allowed=(50.0, 60.0)),
                c("tuning_pct", float, "%", 1.0, 20.0),
                c("voltage_v", float, "V", 100.0, 1000.0),
                c("step_kvar", float, "kvar", 0.5, 1000.0),
                c("inductance_mh", float, "mH", 0.001, 1000.0),
                c("current_a", float, "A", 0.1, 5000.0),
                c("losses_w", float, **watts),
                text,
            ),
            keys=(("reactor_id",), ("frequency_hz", "tuning_pct", "voltage_v", "step_kvar")),
            order=("frequency_hz", "tuning_pct", "voltage_v", "step_kvar"),
            rising=("current_a",),
        ),
        schema(
            file_name="contactors.csv", attr="contactors", row_type=Contactor,
            title="Generic capacitor-duty contactors (AC-6b), kvar they may switch at each voltage",
            columns=(
                c("contactor_id", str),
                c("damping", str, allowed=("none", "resistors")),
                c("voltage_v", float, "V", 100.0, 1000.0),
                c("max_kvar", float, "kvar", 0.5, 2000.0),
                c("max_peak_a", float, "A", 10.0, 200000.0),
                c("coil_sealed_va", float, "VA", 0.0, 2000.0),
                c("coil_inrush_va", float, "VA", 0.0, 20000.0),
                c("losses_w", float, **watts),
                text,
            ),
            keys=(("contactor_id", "voltage_v"), ("damping", "voltage_v", "max_kvar")),
            order=("damping", "voltage_v", "max_kvar"),
            rising=("max_peak_a",),
            across=("coil_sealed_va", "coil_inrush_va"),
        ),
        schema(
            file_name="controllers.csv", attr="controllers", row_type=Controller,
            title="Generic power-factor controllers",
            columns=(
                c("controller_id", str),
                c("outputs", int, "", 1, 64),
                c("min_current_a", float, "A", 0.0001, 1.0),
                c("ct_input_va", float, "VA", 0.0, 50.0),
                c("max_reconnect_delay_s", float, "s", 1.0, 3600.0),
                c("supply_va", float, "VA", 0.0, 500.0),
                c("losses_w", float, **watts),
                text,
            ),
            keys=(("controller_id",), ("outputs",)),
            order=("outputs",),
        ),
        schema(
            file_name="current_transformers.csv", attr="current_transformers", row_type=CurrentTransformer,
            title="Generic measuring current transformers",
            columns=(
                c("ct_id", str),
                c("secondary_a", float, "A", allowed=(1.0, 5.0)),
                c("primary_a", float, "A", 1.0, 50000.0),
                c("burden_va", float, "VA", 0.5, 100.0),
                c("accuracy_class", str, allowed=("0.5", "1", "3")),
                text,
            ),
            keys=(("ct_id",), ("secondary_a", "primary_a")),
            order=("secondary_a", "primary_a"),
            rising=("burden_va",),
        ),
        schema(
            file_name="control_transformers.csv", attr="control_transformers", row_type=ControlTransformer,
            title="Generic single-phase control power transformers",
            columns=(c("transformer_id", str), c("rating_va", float, "VA", 10.0, 50000.0),
                     c("losses_w", float, **watts), text),
            keys=(("transformer_id",), ("rating_va",)),
            order=("rating_va",),
            rising=("losses_w",),
        ),
        schema(
            file_name="control_fuses.csv", attr="control_fuses", row_type=ControlFuse,
            title="Generic fuses for control and measuring circuits",
            columns=(c("fuse_id", str), c("rating_a", float, "A", 0.05, 63.0), c("losses_w", float, **watts),
                     text),
            keys=(("fuse_id",), ("rating_a",)),
            order=("rating_a",),
            rising=("losses_w",),
        ),
        schema(
            file_name="device_losses.csv", attr="device_losses", row_type=DeviceLoss,
            title="Generic power loss of a fuse-link or a breaker pole at rated current",
            columns=(c("device", str, allowed=("fuse", "breaker")),
                     c("max_rating_a", float, "A", 0.1, 10000.0), c("losses_w", float, **watts)),
            keys=(("device", "max_rating_a"),),
            order=("device", "max_rating_a"),
            rising=("losses_w",),
        ),
        schema(
            file_name="fans.csv", attr="fans", row_type=Fan,
            title="Generic enclosure fans with filters",
            columns=(c("fan_id", str), c("airflow_m3_per_h", float, "m3/h", 1.0, 100000.0),
                     c("power_w", float, "W", 0.0, 10000.0), text),
            keys=(("fan_id",), ("airflow_m3_per_h",)),
            order=("airflow_m3_per_h",),
        ),
        schema(
            file_name="busbars.csv", attr="busbars", row_type=Busbar,
            title="Copper busbars per phase and their continuous current rating",
            columns=(
                c("busbar_id", str),
                c("bars_per_phase", int, "", 1, 8),
                c("width_mm", float, "mm", 5.0, 300.0),
                c("thickness_mm", float, "mm", 1.0, 30.0),
                c("rating_a", float, "A", 10.0, 20000.0),
                text,
            ),
            keys=(("busbar_id",), ("bars_per_phase", "width_mm", "thickness_mm")),
            order=("rating_a",),
        ),
    )
