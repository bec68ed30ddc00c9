"""A survey on metered data: the need in every interval, a proposed bank, and that bank proven on the same data.

:func:`survey` takes cleaned readings (:func:`bankbuild.spec.meter.read_meter_data`) and the capacitor unit table
and returns a frozen :class:`~bankbuild.results.survey.SurveyResult`, with a spec that ``bankbuild size`` takes
unchanged. No file access; numpy is imported inside the functions (the arrays come from the reader).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from bankbuild._version import __version__
from bankbuild.calc import survey as sv
from bankbuild.calc.discharge import discharge_tau_s
from bankbuild.calc.switching import delay_setting_s, reconnection_times_s
from bankbuild.design import stepplan
from bankbuild.design.select import pick_unit_voltage, unit_voltages
from bankbuild.design.survey_months import DEMAND_INTERVAL_S, monthly_lines
from bankbuild.errors import DataError, OptionError
from bankbuild.results.sizing import Check
from bankbuild.results.survey import (
    Curve,
    DataSummary,
    NeedFigures,
    ProposedBank,
    Simulation,
    StepDuty,
    SurveyCharts,
    SurveyResult,
)
from bankbuild.spec.model import StepPlan

DEFAULT_SHARE = 0.95
DEFAULT_PATTERN = "1:2:2"
DEFAULT_STEP_COUNT = 6
"""Six switched steps in a 1:2:2 pattern reach 11 equal increments: a common controller size (6 outputs) and a
resolution of about a tenth of the switched kvar - common practice (no single source)."""
DEFAULT_SWITCH_IN_SHARE = 0.0
"""The controller switches a step in as soon as the power factor falls below the target (a missing kvar above
0 × the smallest step) and out when the surplus passes the smallest step: the band of one smallest step then lies
on the capacitive side of the target, so the target is met whenever a step is free. Controllers set to respond
at about two thirds of the smallest step (s = 1/3 here) switch less and miss the target by up to a third of a
step - common practice (no single source)."""
DEFAULT_LEAD_LIMIT = 0.98
"""The controller may let the power factor lead down to 0.98 and no further: a usual setting where the utility
does not bill leading kvarh - common practice (no single source). 1.0 forbids any leading."""
MAX_FIXED_UNITS = 4  # the fixed part is built from at most this many identical units (as the resolution step)
CONTACTOR_ENDURANCE_OPS = 100_000
CONTACTOR_SOURCE = ("capacitor-duty contactors (AC-6b, IEC 60947-4-1) are commonly given about 100,000 electrical "
                    "operations at their capacitor rating - common practice (no single source), from memory; "
                    "check the maker's figure")
CAPACITOR_SWITCHINGS_PER_YEAR = 5_000
CAPACITOR_SOURCE = "capacitor units are designed for up to 5,000 switching operations a year: IEC 60831-1 (from memory)"
CONTACTOR_LIFE_YEARS = 10.0  # the check asks for at least this many years - common practice (no single source)
CURVE_POINTS = 201


def _option(field: str, value: float, low: float, high: float, low_open: bool = False) -> None:
    if not (math.isfinite(value) and (value > low if low_open else value >= low) and value <= high):
        bracket = "(" if low_open else "["
        raise OptionError("", field, f"{value:g} is outside {bracket}{low:g}, {high:g}]")


def survey(data, *, voltage_v: float, pf_target: float, units: Sequence, frequency_hz: float = 60.0,
           share: float = DEFAULT_SHARE, pf_lead_limit: float = DEFAULT_LEAD_LIMIT,
           steps: int | None = None, pattern: str = DEFAULT_PATTERN,
           switch_in_share: float = DEFAULT_SWITCH_IN_SHARE, demand_interval_min: float = DEMAND_INTERVAL_S / 60,
           rules: str = "nec", name: str = "Surveyed bank", tables: Sequence[str] = ()) -> SurveyResult:
    """Need, proposed bank, simulation and months of one file of readings.

    Parameters
    ----------
    data : MeterData
        Cleaned readings (three-phase totals).
    voltage_v : float
        Supply line-to-line voltage [V].
    pf_target : float
        Target power factor, lagging [-].
    units : sequence of CapacitorUnit
        The capacitor unit table.
    frequency_hz : float
        Supply frequency [Hz].
    share : float
        Share of importing intervals in which the bank must meet the target; it sizes the total [-].
    pf_lead_limit : float
        Leading power factor the controller must not pass [-].
    steps : int, optional
        Switched steps; default 6, fewer when the resolution step would be below the smallest unit.
    pattern : str
        Step weights, ``equal`` or like ``1:2:2`` (the last weight repeats).
    switch_in_share : float
        Missing kvar that switches a step in, as a share s of the smallest step; the surplus that switches one
        out is (1 − s) of it, so the two add up to the smallest step [-].
    demand_interval_min : float
        Tariff demand interval for the kVA demand [min].
    rules : str
        Rule basis written into the spec (``nec`` or ``iec``).
    name : str
        The bank's name in the spec.
    tables : sequence of str
        The rating tables used, as "file sha256", for the documents' provenance.

    Returns
    -------
    SurveyResult
    """
    import numpy as np

    _option("voltage_v", voltage_v, 100, 1000)
    if rules not in ("nec", "iec"):
        raise OptionError("", "rules", f"{rules!r} is not one of nec, iec")
    _option("pf_target", pf_target, 0, 1, low_open=True)
    _option("frequency_hz", frequency_hz, 45, 65)
    _option("share", share, 0, 1, low_open=True)
    _option("pf_lead_limit", pf_lead_limit, 0, 1, low_open=True)
    _option("switch_in_share", switch_in_share, 0, 1)
    _option("demand_interval_min", demand_interval_min, 1, 1440)
    if steps is not None:
        _option("steps", steps, 1, 32)
        if steps != int(steps):
            raise OptionError("", "steps", f"{steps:g} is not a whole number")
    try:
        weights = StepPlan(count=int(steps or DEFAULT_STEP_COUNT), pattern=pattern).weights()
    except ValueError as exc:
        raise OptionError("", "pattern", str(exc).splitlines()[-1].strip()) from None

    p, q, t = data.active_kw, data.reactive_kvar, data.time_s
    importing = p > 0
    if not importing.any():
        raise DataError(data.path, "", "no interval draws active power: there is no need to correct")
    p_in = np.clip(p, 0, None)
    need_all = sv.need_kvar(p_in, q, pf_target)
    need = np.clip(need_all[importing], 0, None)
    figures = NeedFigures(
        max=float(need.max()), p95=float(np.percentile(need, 95)), mean=float(need.mean()), share=share,
        at_share=float(np.percentile(need, share * 100)),
        max_at=_stamp(data, int(np.flatnonzero(importing)[int(np.argmax(need))])),
        importing_intervals=int(importing.sum()))
    low = int(np.argmin(q))
    light = max(0.0, float(q[low]))

    proposed, unit_rows = _propose(figures.at_share, light, units, voltage_v, frequency_hz, weights,
                                   steps is None)
    delay_s, delay_rule = _delay(unit_rows, proposed.unit_voltage_v)
    room = sv.room_kvar(p_in, q, pf_lead_limit)
    q_min = min(proposed.steps) if proposed.steps else 0.0
    run = sv.simulate_controller(t.tolist(), need_all.tolist(), room.tolist(), proposed.fixed_kvar, proposed.steps,
                                 delay_s, switch_in_share * q_min, (1 - switch_in_share) * q_min)
    connected = np.full(len(t), proposed.fixed_kvar)
    if run.events:
        at, step, closed = (np.array(col) for col in zip(*run.events, strict=True))
        delta = np.zeros(len(t))
        np.add.at(delta, at, np.where(closed, 1.0, -1.0) * np.asarray(proposed.steps)[step])
        connected += np.cumsum(delta)
    q_after = q - connected
    simulation = _simulation(data, run, proposed, p, q, q_after, importing, pf_target, pf_lead_limit,
                             switch_in_share, delay_s, delay_rule)
    demand_interval_s = demand_interval_min * 60
    monthly = monthly_lines(data.local_s, data.interval_s, p, q, q_after, demand_interval_s)
    charts = _charts(need, p[importing], q[importing], q_after[importing])
    checks = _checks(figures, simulation, proposed, data, share)
    peak_a = float(np.hypot(p, q).max()) * 1000 / (math.sqrt(3) * voltage_v)
    spec = _spec(name, rules, voltage_v, frequency_hz, proposed, float(p[low]), light, peak_a)
    return SurveyResult(
        name=name, version=__version__, rules=rules, tables=list(tables), supply_voltage_v=voltage_v,
        frequency_hz=frequency_hz, pf_target=pf_target,
        intervals=data.intervals, interval_s=data.interval_s, data=_data_summary(data), need_kvar=figures,
        light_load_kvar=light, light_load_at=_stamp(data, low), proposed=proposed, simulation=simulation,
        monthly=monthly, formulas=_formulas(demand_interval_s), assumptions=_assumptions(data, voltage_v),
        checks=checks, cautions=list(CAUTIONS), spec=spec, charts=charts)


def _stamp(data, index: int) -> str:
    """The local time of reading ``index`` as text (minutes)."""
    import numpy as np

    return str(np.datetime64(int(data.local_s[index]), "s").astype("datetime64[m]")).replace("T", " ")


def largest_fixed_kvar(limit_kvar: float, unit_kvar: Sequence[float], factor: float,
                       max_units: int = MAX_FIXED_UNITS) -> tuple[float, int, float]:
    """The largest fixed part, built from up to ``max_units`` identical units, that stays within a limit.

    Parameters
    ----------
    limit_kvar : float
        The most the fixed part may deliver at the supply [kvar].
    unit_kvar : sequence of float
        Nameplate kvar of the available units [kvar].
    factor : float
        Delivered per nameplate kvar at the supply [-].
    max_units : int
        Most identical units in the fixed part.

    Returns
    -------
    tuple
        (delivered kvar, unit count, unit nameplate kvar); (0, 0, 0) when no unit fits.

    Examples
    --------
    >>> largest_fixed_kvar(38.0, [5, 10, 25, 50], 1.0)
    (30.0, 3, 10.0)
    """
    best = (0.0, 0, 0.0)
    for s in sorted({float(u) for u in unit_kvar if u > 0}):
        n = min(max_units, math.floor(limit_kvar / (s * factor) + 1e-9))
        if n >= 1 and (n * s * factor > best[0] + 1e-9 or (abs(n * s * factor - best[0]) <= 1e-9 and n < best[1])):
            best = (n * s * factor, n, s)
    return best


def _floor2(x: float) -> float:
    """Down to 0.01 kvar, so that ``size`` building a step of units never needs more than the plan's units."""
    return math.floor(x * 100 + 1e-6) / 100


def _propose(target: float, light: float, units: Sequence, voltage_v: float, frequency_hz: float,
             weights: list[int], auto_count: bool):
    """The bank: fixed part within the light load, switched steps for the rest of the target."""
    freqs = sorted({u.rated_frequency_hz for u in units}, key=lambda f: (abs(f - frequency_hz), f))
    if not freqs:
        raise DataError("capacitor_units.csv", "", "the unit table is empty")
    f_r = freqs[0]
    v_r = pick_unit_voltage(unit_voltages(units, f_r), voltage_v) or max(unit_voltages(units, f_r))
    rows = [u for u in units if u.rated_frequency_hz == f_r and u.rated_voltage_v == v_r]
    sizes = [u.rated_kvar for u in rows]
    factor = (voltage_v / v_r) ** 2 * (frequency_hz / f_r)
    fixed, n_fixed, s_fixed = largest_fixed_kvar(min(light, target), sizes, factor)
    fixed = _floor2(fixed)
    fixed_rule = (f"the largest part of at most {MAX_FIXED_UNITS} identical units within the light-load kvar "
                  f"({light:,.1f}) and the target: {n_fixed} × {s_fixed:g} kvar units" if n_fixed else
                  f"no unit fits within the light-load kvar ({light:,.1f}): no fixed part")
    rest = target - fixed
    smallest = min(sizes) * factor
    steps: list[float] = []
    rule = "the fixed part meets the target: no switched steps"
    if rest > 1e-6:
        while auto_count and len(weights) > 1 and rest / sum(weights) < smallest:
            weights = weights[:-1]
        plan = stepplan.propose_steps(rest, weights, sizes, factor)
        steps = [_floor2(r * factor) for r in plan.rated_kvar]
        rule = plan.rule
    reach = stepplan.reachable(steps) if steps else stepplan.reachable([])
    return ProposedBank(
        total_kvar=round(fixed + sum(steps), 2), fixed_kvar=fixed, steps=steps, sized_on_kvar=target,
        pattern=":".join(map(str, weights[: len(steps)])) if steps else "", unit_voltage_v=v_r, unit_frequency_hz=f_r,
        delivered_per_rated=factor, resolution_kvar=min(steps) if steps else 0.0,
        largest_gap_kvar=reach.largest_gap_kvar, rule=rule, fixed_rule=fixed_rule), rows


def _delay(rows: Sequence, v_r: float) -> tuple[float, str]:
    """Reconnection delay from the units' own discharge figures (the slowest unit of the chosen voltage)."""
    worst = (0.0, 0.0, 0.0, 0.0)
    for row in rows:
        tau = discharge_tau_s(row.rated_voltage_v, row.discharge_voltage_v, row.discharge_time_s)
        times = reconnection_times_s(tau, v_r)  # delta: each leg sees the rated line voltage
        if max(times[2:]) > max(worst[2:]):
            worst = times
    _, _, t10, t50 = worst
    delay = delay_setting_s(max(t10, t50))
    return delay, (f"units' discharge resistors bring a step to 10% of rated voltage in {t10:.0f} s and to 50 V in "
                   f"{t50:.0f} s: delay {delay:g} s (re-energise only at ≤ 10% of rated voltage, IEC 60831-1, "
                   "from memory, and ≤ 50 V)")


def _simulation(data, run, proposed: ProposedBank, p, q, q_after, importing, pf_target: float,
                pf_lead_limit: float, switch_in_share: float, delay_s: float, delay_rule: str) -> Simulation:
    import numpy as np

    pi, qi, ai = p[importing], q[importing], q_after[importing]
    pf_before = pi / np.hypot(pi, qi)
    pf_after = pi / np.hypot(pi, ai)
    meets_before = float(np.mean(pf_before >= pf_target - 1e-9))
    meets_after = float(np.mean(pf_after >= pf_target - 1e-9))
    years = (float(data.time_s[-1] - data.time_s[0]) + data.interval_s) / (365.25 * 86400)
    duties = []
    for k, (kvar, ops) in enumerate(zip(proposed.steps, run.operations, strict=True)):
        per_year = ops / years
        life = CONTACTOR_ENDURANCE_OPS / per_year if per_year > 0 else None
        duties.append(StepDuty(step=k + 1, kvar=kvar, operations=ops, per_year=per_year, contactor_life_years=life))
    q_min = min(proposed.steps) if proposed.steps else 0.0
    b_in, b_out = switch_in_share * q_min, (1 - switch_in_share) * q_min
    return Simulation(
        share_meeting_target=meets_after, share_meeting_target_before=meets_before,
        leading_intervals=int((ai < -1e-6).sum()), leading_beyond_limit_intervals=len(run.lead_flags),
        switching_per_step_per_year=[d.per_year for d in duties], operations=list(run.operations), steps=duties,
        switch_in_kvar=b_in, switch_out_kvar=b_out, delay_s=delay_s, delay_rule=delay_rule,
        pf_lead_limit=pf_lead_limit, years=years, contactor_endurance_operations=CONTACTOR_ENDURANCE_OPS,
        contactor_endurance_source=CONTACTOR_SOURCE, capacitor_switchings_per_year=CAPACITOR_SWITCHINGS_PER_YEAR,
        capacitor_switchings_source=CAPACITOR_SOURCE,
        controller_rule=(f"switch in while the kvar missing exceeds {b_in:,.1f} kvar ({switch_in_share:.0%} of the "
                         f"smallest step), out while the surplus exceeds {b_out:,.1f} kvar or the PF would lead beyond "
                         f"{pf_lead_limit:g}; largest fitting step first; a step opened waits {delay_s:g} s; "
                         "quasi-static on interval averages (see calc.survey.simulate_controller)"))


def _charts(need, p, q, q_after) -> SurveyCharts:
    import numpy as np

    x = np.linspace(0.0, 100.0, CURVE_POINTS)
    curve = np.percentile(need, 100.0 - x)
    pf_b = np.percentile(p / np.hypot(p, q), 100.0 - x)
    pf_a = np.percentile(p / np.hypot(p, q_after), 100.0 - x)
    xs = [float(v) for v in x]
    return SurveyCharts(need_duration=Curve(x=xs, y=[float(v) for v in curve]),
                        pf_before=Curve(x=xs, y=[float(v) for v in pf_b]),
                        pf_after=Curve(x=xs, y=[float(v) for v in pf_a]))


def _checks(figures: NeedFigures, sim: Simulation, proposed: ProposedBank, data, share: float) -> list[Check]:
    if proposed.total_kvar <= 0:
        return [Check(name="No bank needed", ok=True, level="info", rule="the total is sized on the share",
                      detail=f"the need met in {share:.0%} of importing intervals is 0 kvar (peak {figures.max:,.1f} "
                             "kvar): no bank proposed, no spec written")]
    checks = [
        Check(name="Target met in the chosen share of intervals", ok=sim.share_meeting_target >= share - 1e-9,
              rule=f"sized on the need met in {share:.0%} of importing intervals",
              detail=f"simulated: {sim.share_meeting_target:.1%} of importing intervals meet the target "
                     f"(before: {sim.share_meeting_target_before:.1%})"),
        Check(name="No leading power factor beyond the limit", ok=sim.leading_beyond_limit_intervals == 0,
              rule=f"the controller never lets the PF lead beyond {sim.pf_lead_limit:g}",
              detail=(f"{sim.leading_beyond_limit_intervals:,} intervals where the fixed part alone leads beyond it"
                      if sim.leading_beyond_limit_intervals else
                      f"none; {sim.leading_intervals:,} intervals lead within the limit")),
        Check(name="Peak need", ok=True, level="info", rule="the total is sized on the share, not the peak",
              detail=f"peak {figures.max:,.1f} kvar at {figures.max_at}; bank {proposed.total_kvar:,.1f} kvar"),
    ]
    for d in sim.steps:
        checks.append(Check(
            name=f"Switching duty, step {d.step} ({d.kvar:g} kvar)", ok=d.per_year <= CAPACITOR_SWITCHINGS_PER_YEAR
            and (d.contactor_life_years is None or d.contactor_life_years >= CONTACTOR_LIFE_YEARS),
            rule=f"≤ {CAPACITOR_SWITCHINGS_PER_YEAR:,} a year (IEC 60831-1, from memory); contactor ≥ "
                 f"{CONTACTOR_LIFE_YEARS:g} years at {CONTACTOR_ENDURANCE_OPS:,} operations (common practice, from "
                 "memory)",
            detail=f"{d.operations:,} closings in {sim.years:.2f} years = {d.per_year:,.0f} a year"
                   + (f"; contactor life about {d.contactor_life_years:,.0f} years" if d.contactor_life_years
                      else "")))
    if data.cleaning.gaps or data.cleaning.irregular_intervals:
        checks.append(Check(name="Data complete", ok=False, level="caution", rule="gaps reported, not filled",
                            detail=f"{data.cleaning.gaps:,} gaps ({data.cleaning.gap_time_s / 3600:,.1f} h), "
                                   f"{data.cleaning.irregular_intervals:,} irregular intervals"))
    return checks


def _spec(name: str, rules: str, voltage_v: float, frequency_hz: float, proposed: ProposedBank,
          light_kw: float, light_kvar: float, peak_a: float) -> dict:
    """The spec ``size`` takes: the need, the steps (the fixed part first), the light load, and the largest load
    current of the data for the controller's current transformer."""
    if proposed.total_kvar <= 0:
        return {}
    bank: dict = {"name": name, "supply": {"voltage_v": voltage_v, "frequency_hz": frequency_hz},
                  "need": {"kvar": min(round(proposed.sized_on_kvar, 2), proposed.total_kvar)},
                  "connection": "delta", "capacitor_voltage_v": proposed.unit_voltage_v}
    parts = ([proposed.fixed_kvar] if proposed.fixed_kvar > 0 else []) + list(proposed.steps)
    if proposed.steps:
        bank["steps"] = parts
    elif proposed.fixed_kvar > 0:
        bank["need"] = {"kvar": proposed.fixed_kvar}
    if proposed.steps:
        bank["assembly"] = {"ct_load_current_a": math.ceil(peak_a)}
    if proposed.fixed_kvar > 0:
        bank["light_load"] = {"kw": round(max(light_kw, 0.0), 2), "kvar": round(light_kvar, 2), "fixed_steps": 1}
    return {"project": {"name": f"{name}: bank proposed from metered data"}, "rules": rules, "banks": [bank]}


def _data_summary(data) -> DataSummary:
    c = data.cleaning
    first, last = _stamp(data, 0), _stamp(data, data.intervals - 1)
    return DataSummary(
        file=data.path, sha256=data.sha256,
        columns=[f"{col.role}: {col.header!r}" + (f" × {col.scale:g}" if col.scale != 1 else "")
                 for col in data.columns],
        kvar_sign=data.kvar_sign, utc_offsets=data.has_offsets, rows_read=c.rows_read, rows_used=c.rows_used,
        missing_rows=c.missing_rows, impossible_rows=c.impossible_rows, duplicate_rows=c.duplicate_rows,
        conflicting_rows=c.conflicting_rows, gaps=c.gaps, gap_time_h=c.gap_time_s / 3600,
        irregular_intervals=c.irregular_intervals, exporting_intervals=c.exporting_intervals, first=first, last=last,
        span_days=(float(data.time_s[-1] - data.time_s[0]) + data.interval_s) / 86400, notes=list(c.notes))


def _formulas(demand_interval_s: float) -> list[str]:
    return [
        "need in an interval: Qc = Q − P·tan(arccos PF_target) (= P·(tan φ1 − tan φ2)), where P > 0; "
        "below zero counts as zero",
        "need met in a share s of intervals: the s-th percentile of the need (numpy's linear interpolation)",
        "light-load kvar: the smallest Q of any interval (zero when some interval already leads): "
        "a fixed part within it never makes the PF leading",
        "PF after: P / √(P² + (Q − Q_bank)²), Q_bank the fixed part plus the steps the controller has on",
        "month: kWh = sum of max(P, 0)·Δt, kvarh = sum of max(Q, 0)·Δt (lagging only), "
        "billing PF = kWh / √(kWh² + kvarh²)",
        f"kVA demand: the month's largest √(P_avg² + Q_avg²) over {demand_interval_s / 60:g}-minute intervals of "
        "the local clock (P_avg, Q_avg the averages of the readings in each)",
    ]


def _assumptions(data, voltage_v: float) -> list[str]:
    return [
        "readings are three-phase totals, averages over their interval; each reading counts for "
        f"{data.interval_s:g} s",
        f"kvar sign: {data.kvar_sign.replace('-', ' ')}; a PF column is read as lagging",
        f"capacitor kvar at the nominal {voltage_v:g} V (a capacitor's kvar follows V²: the real voltage moves it)",
        "tariff rules vary (averaging period, leading kvarh counted or not, demand interval): check the tariff",
        "the controller is simulated on interval averages: switching inside an interval is not seen, so the "
        "counts are a lower bound for fast-changing loads",
    ]


CAUTIONS = (
    "Capacitors hold a dangerous charge after disconnection: wait the discharge time and verify zero voltage "
    "before touching any part.",
    "Work on the bank only by qualified persons, with the supply isolated and locked out.",
    "This survey proposes a bank from the data given; it does not claim compliance with any code or tariff. "
    "Verify with the local code, the utility's tariff and licensed practice.",
)
