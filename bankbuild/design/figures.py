"""The numbers behind the documents' charts, worked out here so that the reports only draw them: the discharge
curve of the largest step sampled in time, and the power triangle before and after correction.

Pure functions over results already computed (the discharge figures, the reconnection delay, the need, the
delivered kvar); the arithmetic is :mod:`bankbuild.calc`'s.
"""

from __future__ import annotations

import math

from bankbuild.calc import discharge as dis
from bankbuild.calc import power as pw
from bankbuild.results.sizing import CurvePoint, Discharge, DischargeCurve, NeedSummary, PowerTriangle, Reconnection

CURVE_POINTS = 21
"""Samples of a discharge curve: enough for a smooth line at print size, few enough to list beside it."""
CURVE_MARGIN = 1.15
"""The curve runs this far past the latest time it marks (the rule's time, the reconnection delay) [-]."""


def discharge_curve(discharge: Discharge, reconnection: Reconnection | None) -> DischargeCurve | None:
    """The leg voltage of the largest step after switch-off, from its peak, sampled for a chart.

    Two curves: through the largest discharge resistance that meets the rule (it reaches the limit exactly at
    the rule's time), and with the units' own resistors (from their rated discharge time, when the table gives
    it). Marked on the chart: the rule's limit point and the reconnection delay of automatic steps.

    Parameters
    ----------
    discharge : Discharge
        The bank's discharge figures (start voltage, limit, time, largest resistance, the units' own time).
    reconnection : Reconnection or None
        The reconnection delay of an automatic bank; None for a fixed bank.

    Returns
    -------
    DischargeCurve or None
        None when the start voltage is already at or below the limit (nothing to draw).

    Notes
    -----
    V(t) = V₀·e^(−t/RC) for both curves; the units' own resistance is the one that takes V₀ to the limit in
    their discharge time, R = t_own / (C·ln(V₀/V_lim)).

    Examples
    --------
    >>> d = Discharge(step_index=1, capacitance_uf_per_leg=100.0, leg_voltage_v=480.0, start_voltage_v=678.8,
    ...               limit_v=50.0, time_s=60.0,
    ...               rule="50 V in 60 s", max_resistance_ohm=230_000.0, resistor_power_w=1.0,
    ...               builtin_time_s=30.0, builtin_ok=True, ok=True)
    >>> curve = discharge_curve(d, None)
    >>> curve.rule_curve[0].voltage_v, round(curve.end_time_s, 1), len(curve.builtin_curve)
    (678.8, 69.0, 21)
    """
    v0, limit, c_uf = discharge.start_voltage_v, discharge.limit_v, discharge.capacitance_uf_per_leg
    if not (v0 > limit > 0 and c_uf > 0 and discharge.max_resistance_ohm > 0):
        return None
    delay = reconnection.delay_s if reconnection is not None else None
    marks = [discharge.time_s] + ([delay] if delay else [])
    own = discharge.builtin_time_s
    own_r = None
    if math.isfinite(own) and own > 0:
        own_r = own / (c_uf * 1e-6 * math.log(v0 / limit))
        if own <= 4 * max(marks):  # a very slow discharge would squash the rest of the chart
            marks.append(own)
    end = CURVE_MARGIN * max(marks)
    times = [end * k / (CURVE_POINTS - 1) for k in range(CURVE_POINTS)]

    def sampled(resistance_ohm: float) -> list[CurvePoint]:
        return [CurvePoint(time_s=t, voltage_v=dis.voltage_after_v(v0, t, resistance_ohm, c_uf)) for t in times]

    return DischargeCurve(start_voltage_v=v0, limit_v=limit, time_s=discharge.time_s, end_time_s=end,
                          rule_resistance_ohm=discharge.max_resistance_ohm,
                          rule_curve=sampled(discharge.max_resistance_ohm),
                          builtin_resistance_ohm=own_r, builtin_curve=sampled(own_r) if own_r else [],
                          reconnection_delay_s=delay)


def power_triangle(need: NeedSummary, delivered_kvar: float, voltage_v: float) -> PowerTriangle | None:
    """The load's power triangle before and after the bank, with the line currents; None when the need was
    given as kvar alone (no active power to draw it from).

    Parameters
    ----------
    need : NeedSummary
        The load's active and reactive power as the spec gives them.
    delivered_kvar : float
        What the bank delivers at the supply [kvar].
    voltage_v : float
        Supply line-to-line voltage [V].

    Notes
    -----
    Q₂ = Q₁ − Q_bank; S = √(P² + Q²); PF = P/S; φ = atan2(Q, P) (negative: leading); I = S/(√3·V).

    Examples
    --------
    >>> need = NeedSummary(form="power", active_kw=800.0, reactive_kvar=600.0, pf_present=0.8, pf_target=0.95,
    ...                    pf_corrected=None, required_kvar=337.1)
    >>> t = power_triangle(need, 350.0, 480.0)
    >>> t.kva_before, round(t.pf_after, 4), round(t.current_before_a, 1), round(t.angle_before_deg, 2)
    (1000.0, 0.9545, 1202.8, 36.87)
    """
    if need.active_kw is None or need.reactive_kvar is None:
        return None
    p, q1 = need.active_kw, need.reactive_kvar
    q2 = q1 - delivered_kvar
    s1, s2 = pw.apparent_kva(p, q1), pw.apparent_kva(p, q2)
    return PowerTriangle(
        active_kw=p, kvar_before=q1, kvar_after=q2, bank_kvar=delivered_kvar, kva_before=s1, kva_after=s2,
        pf_before=pw.power_factor(p, q1), pf_after=pw.power_factor(p, q2),
        angle_before_deg=math.degrees(math.atan2(q1, p)), angle_after_deg=math.degrees(math.atan2(q2, p)),
        current_before_a=pw.three_phase_current_a(s1, voltage_v),
        current_after_a=pw.three_phase_current_a(s2, voltage_v), leading_after=q2 < 0)
