"""The registry of rating tables: every table's file, row type, columns, keys and order, declared once.

The loader in :mod:`bankbuild.tables.load` reads only these declarations. To add a table: write its row type
in :mod:`bankbuild.tables.rows`, add a :class:`~bankbuild.tables.schema.TableSchema` here, add a field of the
same name to :class:`bankbuild.tables.load.Catalogs` and ship the CSV in ``bankbuild/tables/data/``.
"""

from __future__ import annotations

from bankbuild.tables.rows import (
    BreakerFrame,
    Busbar,
    CapacitorUnit,
    Contactor,
    ControlFuse,
    Controller,
    ControlTransformer,
    CurrentTransformer,
    DeviceLoss,
    DeviceRating,
    DisconnectRating,
    Fan,
    IecConductor,
    NecConductor,
    Price,
    Reactor,
)
from bankbuild.tables.schema import Column, TableSchema

_BASIS = Column("basis", str, allowed=("nec", "iec"))
_AMPS = {"unit": "A", "minimum": 0.1, "maximum": 10000.0}
_AMPACITY = {"unit": "A", "minimum": 1.0, "maximum": 2000.0}

TABLES: tuple[TableSchema, ...] = (  # the electrical ratings; the assembly's tables follow
    TableSchema(
        file_name="capacitor_units.csv",
        attr="capacitor_units",
        row_type=CapacitorUnit,
        title="Generic three-phase low-voltage capacitor units",
        columns=(
            Column("unit_id", str),
            Column("rated_kvar", float, "kvar", 0.1, 500.0),
            Column("rated_voltage_v", float, "V", 100.0, 1000.0),
            Column("rated_frequency_hz", float, "Hz", allowed=(50.0, 60.0)),
            Column("connection", str, allowed=("delta", "wye")),
            Column("discharge_voltage_v", float, "V", 1.0, 100.0),
            Column("discharge_time_s", float, "s", 1.0, 900.0),
            Column("losses_w_per_kvar", float, "W/kvar", 0.0, 10.0),
            Column("description", str, required=False),
        ),
        keys=(("unit_id",), ("rated_voltage_v", "rated_frequency_hz", "rated_kvar")),
        order=("rated_frequency_hz", "rated_voltage_v", "rated_kvar"),
    ),
    TableSchema(
        file_name="device_ratings.csv",
        attr="device_ratings",
        row_type=DeviceRating,
        title="Standard ampere ratings of fuses and breakers",
        columns=(
            _BASIS,
            Column("device", str, allowed=("fuse", "breaker")),
            Column("rating_a", float, **_AMPS),
        ),
        keys=(("basis", "device", "rating_a"),),
        order=("basis", "device", "rating_a"),
    ),
    TableSchema(
        file_name="breaker_frames.csv",
        attr="breaker_frames",
        row_type=BreakerFrame,
        title="Breaker frame sizes",
        columns=(_BASIS, Column("frame_a", float, **_AMPS)),
        keys=(("basis", "frame_a"),),
        order=("basis", "frame_a"),
    ),
    TableSchema(
        file_name="disconnect_ratings.csv",
        attr="disconnect_ratings",
        row_type=DisconnectRating,
        title="Ampere ratings of disconnecting means",
        columns=(_BASIS, Column("rating_a", float, **_AMPS)),
        keys=(("basis", "rating_a"),),
        order=("basis", "rating_a"),
    ),
    TableSchema(
        file_name="conductors_nec.csv",
        attr="conductors_nec",
        row_type=NecConductor,
        title="Copper conductor ampacity, NEC Table 310.16, by edition",
        columns=(
            Column("edition", int, "", 1970, 2100),
            Column("size", str, pattern=r"\d+ AWG|[1-4]/0 AWG|\d+ kcmil"),
            Column("area_mm2", float, "mm2", 0.1, 1100.0),
            Column("ampacity_60c_a", float, **_AMPACITY),
            Column("ampacity_75c_a", float, **_AMPACITY),
            Column("ampacity_90c_a", float, **_AMPACITY),
        ),
        keys=(("edition", "size"), ("edition", "area_mm2")),
        order=("edition", "area_mm2"),
        rising=("ampacity_60c_a", "ampacity_75c_a", "ampacity_90c_a"),
        across=("ampacity_60c_a", "ampacity_75c_a", "ampacity_90c_a"),
    ),
    TableSchema(
        file_name="conductors_iec.csv",
        attr="conductors_iec",
        row_type=IecConductor,
        title="Copper conductor current-carrying capacity, IEC 60364-5-52",
        columns=(
            Column("insulation", str, allowed=("PVC", "XLPE")),
            Column("method", str, allowed=("B1", "C", "E")),
            Column("area_mm2", float, "mm2", 0.5, 1000.0),
            Column("ampacity_a", float, **_AMPACITY),
        ),
        keys=(("insulation", "method", "area_mm2"),),
        order=("insulation", "method", "area_mm2"),
        rising=("ampacity_a",),
    ),
)

# The assembly's tables: reactors, contactors, controllers, transformers, fuses, losses, fans, busbars.
_TEXT = Column("description", str, required=False)
_WATTS = {"unit": "W", "minimum": 0.0, "maximum": 20000.0}
_ASSEMBLY: tuple[TableSchema, ...] = (
    TableSchema(
        file_name="reactors.csv", attr="reactors", row_type=Reactor,
        title="Generic three-phase detuning reactors, by frequency, tuning factor, system voltage and step",
        columns=(
            Column("reactor_id", str),
            Column("frequency_hz", float, "Hz", allowed=(50.0, 60.0)),
            Column("tuning_pct", float, "%", 1.0, 20.0),
            Column("voltage_v", float, "V", 100.0, 1000.0),
            Column("step_kvar", float, "kvar", 0.5, 1000.0),
            Column("inductance_mh", float, "mH", 0.001, 1000.0),
            Column("current_a", float, "A", 0.1, 5000.0),
            Column("losses_w", float, **_WATTS),
            _TEXT,
        ),
        keys=(("reactor_id",), ("frequency_hz", "tuning_pct", "voltage_v", "step_kvar")),
        order=("frequency_hz", "tuning_pct", "voltage_v", "step_kvar"),
        rising=("current_a",),
    ),
    TableSchema(
        file_name="contactors.csv", attr="contactors", row_type=Contactor,
        title=("Generic capacitor-duty contactors (AC-6b): the current each frame may switch at each voltage; the "
               "kvar it may switch there is derived, Q = √3 · U · I_e"),
        columns=(
            Column("contactor_id", str),
            Column("damping", str, allowed=("none", "resistors")),
            Column("voltage_v", float, "V", 100.0, 1000.0),
            Column("ac6b_current_a", float, "A", 0.5, 5000.0),
            Column("max_peak_a", float, "A", 10.0, 200000.0),
            Column("coil_sealed_va", float, "VA", 0.0, 2000.0),
            Column("coil_inrush_va", float, "VA", 0.0, 20000.0),
            Column("losses_w", float, **_WATTS),
            _TEXT,
        ),
        keys=(("contactor_id", "voltage_v"), ("damping", "voltage_v", "ac6b_current_a")),
        order=("damping", "voltage_v", "ac6b_current_a"),
        rising=("max_peak_a",),
        across=("coil_sealed_va", "coil_inrush_va"),
    ),
    TableSchema(
        file_name="controllers.csv", attr="controllers", row_type=Controller,
        title="Generic power-factor controllers",
        columns=(
            Column("controller_id", str),
            Column("outputs", int, "", 1, 64),
            Column("min_current_a", float, "A", 0.0001, 1.0),
            Column("ct_input_va", float, "VA", 0.0, 50.0),
            Column("max_reconnect_delay_s", float, "s", 1.0, 3600.0),
            Column("supply_va", float, "VA", 0.0, 500.0),
            Column("losses_w", float, **_WATTS),
            _TEXT,
        ),
        keys=(("controller_id",), ("outputs",)),
        order=("outputs",),
    ),
    TableSchema(
        file_name="current_transformers.csv", attr="current_transformers", row_type=CurrentTransformer,
        title="Generic measuring current transformers",
        columns=(
            Column("ct_id", str),
            Column("secondary_a", float, "A", allowed=(1.0, 5.0)),
            Column("primary_a", float, "A", 1.0, 50000.0),
            Column("burden_va", float, "VA", 0.5, 100.0),
            Column("accuracy_class", str, allowed=("0.5", "1", "3")),
            _TEXT,
        ),
        keys=(("ct_id",), ("secondary_a", "primary_a")),
        order=("secondary_a", "primary_a"),
        rising=("burden_va",),
    ),
    TableSchema(
        file_name="control_transformers.csv", attr="control_transformers", row_type=ControlTransformer,
        title="Generic single-phase control power transformers",
        columns=(Column("transformer_id", str), Column("rating_va", float, "VA", 10.0, 50000.0),
                 Column("losses_w", float, **_WATTS), _TEXT),
        keys=(("transformer_id",), ("rating_va",)),
        order=("rating_va",),
        rising=("losses_w",),
    ),
    TableSchema(
        file_name="control_fuses.csv", attr="control_fuses", row_type=ControlFuse,
        title="Generic fuses for control and measuring circuits",
        columns=(Column("fuse_id", str), Column("rating_a", float, "A", 0.05, 63.0),
                 Column("losses_w", float, **_WATTS), _TEXT),
        keys=(("fuse_id",), ("rating_a",)),
        order=("rating_a",),
        rising=("losses_w",),
    ),
    TableSchema(
        file_name="device_losses.csv", attr="device_losses", row_type=DeviceLoss,
        title="Generic power loss of a fuse-link or a breaker pole at rated current",
        columns=(Column("device", str, allowed=("fuse", "breaker")),
                 Column("max_rating_a", float, "A", 0.1, 10000.0), Column("losses_w", float, **_WATTS)),
        keys=(("device", "max_rating_a"),),
        order=("device", "max_rating_a"),
        rising=("losses_w",),
    ),
    TableSchema(
        file_name="fans.csv", attr="fans", row_type=Fan,
        title="Generic enclosure fans with filters",
        columns=(Column("fan_id", str), Column("airflow_m3_per_h", float, "m3/h", 1.0, 100000.0),
                 Column("power_w", float, "W", 0.0, 10000.0), _TEXT),
        keys=(("fan_id",), ("airflow_m3_per_h",)),
        order=("airflow_m3_per_h",),
    ),
    TableSchema(
        file_name="busbars.csv", attr="busbars", row_type=Busbar,
        title="Copper busbars per phase and their continuous current rating",
        columns=(
            Column("busbar_id", str),
            Column("bars_per_phase", int, "", 1, 8),
            Column("width_mm", float, "mm", 5.0, 300.0),
            Column("thickness_mm", float, "mm", 1.0, 30.0),
            Column("rating_a", float, "A", 10.0, 20000.0),
            _TEXT,
        ),
        keys=(("busbar_id",), ("bars_per_phase", "width_mm", "thickness_mm")),
        order=("rating_a",),
    ),
)

PRICES = TableSchema(
    file_name="prices.csv", attr="prices", row_type=Price,
    title="Unit prices for quotation (optional: used when a folder of user tables holds it; the built-in file "
          "holds invented demo prices for `bankbuild demo`)",
    columns=(
        Column("part", str, max_length=120),
        Column("unit_price", float, "", 0.0, 1e9),
        Column("currency", str, pattern="[A-Z]{3}"),
        Column("lead_time_days", int, "d", 0, 730),
        Column("supplier_note", str, required=False),
    ),
    keys=(("part",),),
    order=("part",),
    uniform=("currency",),
    optional=True,
)

TABLES = (*TABLES, *_ASSEMBLY, PRICES)

TABLES_BY_FILE: dict[str, TableSchema] = {t.file_name: t for t in TABLES}


def describe_tables() -> str:
    """The schema of every table as Markdown (the column reference in ``tables/data/README.md``).

    Examples
    --------
    >>> print(describe_tables().splitlines()[0])
    ## capacitor_units.csv
    """
    out: list[str] = []
    for t in TABLES:
        out += [f"## {t.file_name}", "", t.title + ".", ""]
        out += ["| column | type | unit | allowed |", "|---|---|---|---|"]
        for c in t.columns:
            if c.allowed:
                allowed = ", ".join(f"{v:g}" if isinstance(v, float) else str(v) for v in c.allowed)
            elif c.minimum is not None:
                allowed = f"{c.minimum:g} to {c.maximum:g}"
            elif c.pattern:
                allowed = "matches `" + c.pattern.replace("|", "\\|") + "`"
            else:
                allowed = "any text" if c.required else "any text, may be empty"
            out.append(f"| `{c.name}` | {c.dtype.__name__} | {c.unit or '-'} | {allowed} |")
        out += ["", f"Rows are sorted by {', '.join(t.order)} on load (add rows in any order); two rows with the "
                    "same values there are refused."]
        out += [f"Unique: {' + '.join(k)}." for k in t.keys]
        if t.rising:
            out.append(f"Must not fall as {t.order[-1]} rises: {', '.join(t.rising)}.")
        if t.across:
            out.append(f"Must not fall from left to right in a row: {', '.join(t.across)}.")
        if t.uniform:
            out.append(f"One value in the whole table: {', '.join(t.uniform)}.")
        if t.optional:
            out.append("Optional: used only when a folder of user tables holds it.")
        out.append("")
    return "\n".join(out)
