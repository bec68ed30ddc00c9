"""Results of a survey on metered data: the need found in the readings, the bank proposed, and the bank proven on
the same readings by a simulated step controller.

The keys that the product design lists as stable (``intervals``, ``interval_s``, ``need_kvar.max``/``p95``,
``light_load_kvar``, ``proposed.total_kvar``/``fixed_kvar``/``steps``, ``simulation.share_meeting_target``/
``leading_intervals``/``switching_per_step_per_year``, ``monthly[].month``/``billing_pf_before``/
``billing_pf_after``/``kwh``/``kvarh_before``) keep their meaning; everything else may grow.
"""

from __future__ import annotations

from bankbuild.results.base import Frozen
from bankbuild.results.sizing import Check


class DataSummary(Frozen):
    """The file read and what cleaning did."""

    file: str
    sha256: str
    columns: list[str]  # e.g. "kW: 'P (kW)'", in the order time, first quantity, second quantity
    kvar_sign: str
    utc_offsets: bool
    rows_read: int
    rows_used: int
    missing_rows: int
    impossible_rows: int
    duplicate_rows: int
    conflicting_rows: int
    gaps: int
    gap_time_h: float
    irregular_intervals: int
    exporting_intervals: int
    first: str
    last: str
    span_days: float
    notes: list[str]


class NeedFigures(Frozen):
    """kvar each interval needs to reach the target PF, over the importing intervals."""

    max: float
    p95: float  # numpy's default (linear) interpolation
    mean: float
    share: float  # the chosen share of intervals (0.95 unless given)
    at_share: float  # kvar that meets the target in that share of intervals
    max_at: str  # start of the interval with the largest need
    importing_intervals: int


class ProposedBank(Frozen):
    """Total, fixed part and switched steps (kvar delivered at the supply), and how they were chosen."""

    total_kvar: float
    fixed_kvar: float
    steps: list[float]
    sized_on_kvar: float
    pattern: str
    unit_voltage_v: float
    unit_frequency_hz: float
    delivered_per_rated: float
    resolution_kvar: float
    largest_gap_kvar: float
    rule: str
    fixed_rule: str


class StepDuty(Frozen):
    """Switching duty of one switched step over the period, against typical endurance figures."""

    step: int  # 1-based, the fixed part not counted
    kvar: float
    operations: int
    per_year: float
    contactor_life_years: float | None


class Simulation(Frozen):
    """The step controller run over every interval of the data with the proposed bank."""

    share_meeting_target: float
    share_meeting_target_before: float
    leading_intervals: int
    leading_beyond_limit_intervals: int  # flagged: the fixed part alone leads beyond the limit there
    switching_per_step_per_year: list[float]
    operations: list[int]
    steps: list[StepDuty]
    switch_in_kvar: float
    switch_out_kvar: float
    delay_s: float
    delay_rule: str
    pf_lead_limit: float
    years: float
    contactor_endurance_operations: int
    contactor_endurance_source: str
    capacitor_switchings_per_year: int
    capacitor_switchings_source: str
    controller_rule: str


class MonthLine(Frozen):
    """One calendar month (local time) before and after the bank."""

    month: str  # YYYY-MM
    billing_pf_before: float
    billing_pf_after: float
    kwh: float
    kvarh_before: float
    kvarh_after: float
    kvarh_leading_after: float
    kva_demand_before: float
    kva_demand_after: float
    coverage: float  # share of the month's hours with readings


class Curve(Frozen):
    """A curve for the report: x values and y values, already thinned to a few hundred points."""

    x: list[float]
    y: list[float]


class SurveyCharts(Frozen):
    """What the report draws (kept out of the JSON summary)."""

    need_duration: Curve  # x: share of importing intervals [%], y: need at or above [kvar]
    pf_before: Curve  # x: share of importing intervals [%], y: PF at or above (leading shown negative)
    pf_after: Curve


class SurveyResult(Frozen):
    """A survey: data, need, proposed bank, simulation, months, checks and the spec that ``size`` takes."""

    name: str
    version: str
    rules: str
    tables: list[str]  # each rating table used: "file sha256"
    supply_voltage_v: float
    frequency_hz: float
    pf_target: float
    intervals: int
    interval_s: float
    data: DataSummary
    need_kvar: NeedFigures
    light_load_kvar: float
    light_load_at: str
    proposed: ProposedBank
    simulation: Simulation
    monthly: list[MonthLine]
    formulas: list[str]
    assumptions: list[str]
    checks: list[Check]
    cautions: list[str]
    spec: dict
    charts: SurveyCharts
