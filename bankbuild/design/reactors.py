"""Detuning reactors: the inductance and current each detuned step needs, the reactor picked from the table,
and the voltage the capacitor units then see, with the harmonics the rating allows for.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence

from bankbuild.calc import detuning as det
from bankbuild.calc.detuning import capacitor_voltages_v, harmonic_current_pct
from bankbuild.results.sizing import Pick, Step, StepReactor

REACTOR_LOSSES_W_PER_KVAR = 5.0
"""Losses of a reactor made to order, per step kvar [W/kvar] - from memory (the basis of reactors.csv)."""

IEEE18_RMS_VOLTAGE_PU = 1.10  # continuous rms voltage limit, IEEE Std 18-2012
IEEE18_PEAK_VOLTAGE_PU = 1.20  # continuous peak voltage limit with harmonics, IEEE Std 18-2012


def pick_reactor(rows: Sequence, frequency_hz: float, tuning_pct: float, voltage_v: float,
                 required_mh: float, required_a: float, tolerance_pct: float):
    """The table reactor for a step: same frequency and tuning, voltage class at least the supply, inductance
    within ``tolerance_pct`` of ``required_mh`` and current rating at least ``required_a``.

    Among those, the smallest current rating, then the closest inductance, then the lowest voltage class.
    ``None`` when no row fits.

    Examples
    --------
    >>> from types import SimpleNamespace as R
    >>> rows = [R(frequency_hz=60.0, tuning_pct=7.0, voltage_v=480.0, inductance_mh=l, current_a=a)
    ...         for l, a in [(1.15, 54.0), (0.92, 67.4), (0.58, 108.0)]]
    >>> pick_reactor(rows, 60, 7, 480, 1.114, 51.0, 5.0).inductance_mh
    1.15
    >>> pick_reactor(rows, 60, 7, 480, 0.75, 80.0, 5.0) is None
    True
    """
    fits = [r for r in rows
            if r.frequency_hz == frequency_hz and abs(r.tuning_pct - tuning_pct) < 0.005
            and r.voltage_v >= voltage_v - 1e-9
            and abs(r.inductance_mh / required_mh - 1.0) <= tolerance_pct / 100.0 + 1e-9
            and r.current_a >= required_a - 1e-9]
    if not fits:
        return None
    return min(fits, key=lambda r: (r.current_a, abs(r.inductance_mh - required_mh), r.voltage_v))


def step_reactor(step: Step, voltage_v: float, frequency_hz: float, tuning_pct: float, unit_voltage_v: float,
                 harmonic_voltage_pct: Mapping[int, float], rows: Sequence, tolerance_pct: float) -> StepReactor:
    """Everything about the reactor of one detuned step.

    Parameters
    ----------
    step : Step
        The sized step; its ``detuning`` figures give the capacitor's own kvar at the supply.
    voltage_v, frequency_hz : float
        The supply [V], [Hz].
    tuning_pct : float
        Tuning factor p in percent [%].
    unit_voltage_v : float
        Rated voltage of the step's capacitor units [V].
    harmonic_voltage_pct : mapping of int to float
        Supply harmonic voltages the rating allows for, by order [%].
    rows : sequence of Reactor
        The reactor table.
    tolerance_pct : float
        How far a table reactor's inductance may be from the required one [%].

    Returns
    -------
    StepReactor
    """
    p = tuning_pct / 100.0
    q_c = step.detuning.capacitor_kvar_at_supply if step.detuning else step.kvar * (1.0 - p)
    required_mh = det.reactor_inductance_mh(q_c, voltage_v, frequency_hz, p)
    fundamental_a = det.reactor_current_a(step.kvar, voltage_v)
    currents = harmonic_current_pct(p, harmonic_voltage_pct)
    finite = all(math.isfinite(v) for v in currents.values())
    required_a = (det.reactor_current_a(step.kvar, voltage_v, {h: v for h, v in currents.items()})
                  if finite else math.inf)
    u_c = det.capacitor_voltage_v(voltage_v, p)
    u_rms, u_sum = capacitor_voltages_v(u_c, currents) if finite else (math.inf, math.inf)
    voltage_ok = (u_c <= unit_voltage_v + 1e-9 and u_rms <= IEEE18_RMS_VOLTAGE_PU * unit_voltage_v
                  and u_sum <= IEEE18_PEAK_VOLTAGE_PU * unit_voltage_v)
    row = pick_reactor(rows, frequency_hz, tuning_pct, voltage_v, required_mh, required_a, tolerance_pct)
    if row is not None:
        pick = Pick(designation=row.reactor_id, value=row.inductance_mh, table=row.table, row=row.row)
        inductance, rating, losses = row.inductance_mh, row.current_a, row.losses_w
    else:
        pick = None
        inductance = required_mh
        rating = required_a
        losses = REACTOR_LOSSES_W_PER_KVAR * step.kvar
    x_c = voltage_v**2 / (1000.0 * q_c)
    p_actual = 2.0 * math.pi * frequency_hz * inductance / 1000.0 / x_c
    return StepReactor(
        tuning_pct=tuning_pct, tuning_frequency_hz=det.tuning_frequency_hz(frequency_hz, p),
        required_inductance_mh=required_mh, fundamental_current_a=fundamental_a,
        harmonic_voltage_pct=dict(harmonic_voltage_pct), harmonic_current_pct=currents,
        required_current_a=required_a, capacitor_voltage_v=u_c, capacitor_voltage_rms_v=u_rms,
        capacitor_voltage_sum_v=u_sum, unit_voltage_v=unit_voltage_v,
        voltage_margin_pct=(unit_voltage_v / u_c - 1.0) * 100.0, voltage_ok=voltage_ok, reactor=pick,
        inductance_mh=inductance, current_rating_a=rating,
        actual_tuning_frequency_hz=det.tuning_frequency_hz(frequency_hz, p_actual) if 0 < p_actual < 1 else 0.0,
        losses_w=losses, made_to_order=row is None)
