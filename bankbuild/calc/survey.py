"""Arithmetic of a survey on metered data: the need of one interval, the billing power factor of a period, and
the step controller run over a whole period.

Pure functions on floats (the need also takes arrays: it uses only + − ×). The controller is a plain loop over
lists of floats: it is sequential by nature (each interval starts from the state the last one left), and a loop of
a few comparisons per interval runs a year of one-minute readings in well under a second.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence  # noqa: UP035 (calc imports only math, dataclasses, typing)

from . import EPS
from ._domain import finite_nonneg, finite_pos
from .power import tan_phi


def need_kvar(active_kw, reactive_kvar, pf_target: float):
    """kvar to add to bring a load to the target power factor (negative when it already meets it).

    Parameters
    ----------
    active_kw : float or array
        Active power drawn [kW].
    reactive_kvar : float or array
        Reactive power drawn, lagging positive [kvar].
    pf_target : float
        Target power factor, lagging, 0 < pf ≤ 1 [-].

    Returns
    -------
    float or array
        Q − P · tan φ₂ [kvar].

    Notes
    -----
    With Q = P · tan φ₁ this is the textbook Q_c = P · (tan φ₁ − tan φ₂). Only + − × are used, so a numpy
    array of readings goes through unchanged.

    Examples
    --------
    100 kW at PF 0.80 (Q = 75 kvar) to 0.95: multiplier 0.421 of the standard tables.

    >>> round(need_kvar(100.0, 75.0, 0.95), 2)
    42.13
    """
    return reactive_kvar - active_kw * tan_phi(pf_target)


def billing_power_factor(kwh: float, kvarh: float) -> float:
    """Average power factor of a billing period as tariffs commonly compute it.

    Parameters
    ----------
    kwh : float
        Active energy of the period [kWh].
    kvarh : float
        Reactive energy of the period, lagging [kvarh].

    Returns
    -------
    float
        kWh / √(kWh² + kvarh²); 1.0 for a period with no energy at all [-].

    Examples
    --------
    A month of 720 h at 100 kW and 75 kvar: 72,000 kWh and 54,000 kvarh.

    >>> billing_power_factor(72000.0, 54000.0)
    0.8
    """
    finite_nonneg("kwh", kwh)
    finite_nonneg("kvarh", kvarh)
    if kwh == 0.0 and kvarh == 0.0:
        return 1.0
    return kwh / math.hypot(kwh, kvarh)


def room_kvar(active_kw, reactive_kvar, pf_lead_limit: float):
    """The most kvar that may be connected before the power factor leads beyond a limit.

    Parameters
    ----------
    active_kw : float or array
        Active power drawn, clipped at zero by the caller when power is exported [kW].
    reactive_kvar : float or array
        Reactive power drawn, lagging positive [kvar].
    pf_lead_limit : float
        Leading power factor that must not be passed, 0 < pf ≤ 1; 1.0 allows no leading at all [-].

    Returns
    -------
    float or array
        Q + P · tan φ_lead [kvar]: with C connected, Q − C ≥ −P · tan φ_lead.

    Examples
    --------
    >>> round(room_kvar(100.0, 30.0, 0.98), 2)
    50.31
    """
    return reactive_kvar + active_kw * tan_phi(pf_lead_limit)


@dataclass(frozen=True)
class ControllerRun:
    """What the step controller did over a period.

    ``events`` lists every switching as ``(interval index, step index, closed)``: ``closed`` True when the step is
    switched in. ``operations`` counts the closings of each step (one closing and its opening make one operation
    of a contactor). ``lead_flags`` are the intervals where the connected kvar exceeds the room left by the
    leading limit with every switched step open: the fixed part leads beyond the limit (an interval whose load
    leads beyond it with nothing connected is not the bank's doing and is not flagged).
    """

    events: tuple[tuple[int, int, bool], ...]
    operations: tuple[int, ...]
    lead_flags: tuple[int, ...]


def simulate_controller(times_s: Sequence[float], need: Sequence[float], room: Sequence[float],
                        fixed_kvar: float, step_kvar: Sequence[float], delay_s: float,
                        switch_in_kvar: float, switch_out_kvar: float) -> ControllerRun:
    """Run an automatic bank's step controller over a period of interval readings.

    Parameters
    ----------
    times_s : sequence of float
        Start of each interval, ascending [s].
    need : sequence of float
        kvar to add in each interval to reach the target power factor (see :func:`need_kvar`) [kvar].
    room : sequence of float
        The most kvar that may be connected in each interval (see :func:`room_kvar`) [kvar].
    fixed_kvar : float
        The fixed part, always connected [kvar].
    step_kvar : sequence of float
        The switched steps, each positive [kvar].
    delay_s : float
        Reconnection delay: a step switched out is not switched in again for this long [s].
    switch_in_kvar : float
        Missing kvar above which a step is switched in [kvar].
    switch_out_kvar : float
        Surplus kvar above which a step is switched out [kvar].

    Returns
    -------
    ControllerRun
        The switching log, operations per step and the intervals where the fixed part alone leads too far.

    Notes
    -----
    The readings are interval averages, so the run is quasi-static: in each interval the controller settles on
    the state it would reach on that interval's load, starting from the state the last interval left.
    With C the switched kvar connected, F the fixed part, b_in and b_out the two thresholds:

    - the missing kvar is d = need − F − C; the controller switches in while d > b_in, each time the largest
      available open step with q ≤ d + b_out (so it leaves at most b_out surplus) whose closing keeps
      F + C + q ≤ room; an open step is available once ``delay_s`` has passed since it opened; among equal
      steps the one open longest goes in;
    - it switches out while the surplus −d > b_out, each time the largest closed step with q ≤ −d + b_in (so it
      leaves at most b_in missing; among equal steps the one closed longest); and while F + C > room it
      switches out that step, or the smallest closed step when none fits;
    - it never swaps a large step for a smaller one: a surplus that no single closed step fits stays.

    A move leaves −b_out ≤ d ≤ b_in (except one forced by the room), so no step goes in and straight out
    again. With b_in + b_out ≥ the smallest step, the smallest step always fits a missing kvar above b_in.

    Examples
    --------
    Need rising from 20 to 160 kvar and falling back, steps 50 + 50 + 100, a 60 s delay, in at 0 and out at
    50 kvar (the controller keeps the PF at or above the target). At 40 kvar the 100 kvar step and the 50 kvar
    step closed first go out; at 0 kvar the last 50 kvar stays (a surplus of 50, not above the threshold):

    >>> run = simulate_controller([0, 900, 1800, 2700, 3600], [20, 130, 160, 40, 0], [300] * 5, 0.0,
    ...                           [50, 50, 100], 60.0, 0.0, 50.0)
    >>> run.events
    ((0, 0, True), (1, 2, True), (2, 1, True), (3, 2, False), (3, 0, False))
    >>> run.operations
    (1, 1, 1)
    """
    finite_nonneg("fixed_kvar", fixed_kvar)
    finite_nonneg("delay_s", delay_s)
    finite_nonneg("switch_in_kvar", switch_in_kvar)
    finite_nonneg("switch_out_kvar", switch_out_kvar)
    steps = [float(q) for q in step_kvar]
    for q in steps:
        finite_pos("step_kvar", q)
    n = len(steps)
    if not (len(times_s) == len(need) == len(room)):
        raise ValueError("times_s, need and room must have the same length")
    events: list[tuple[int, int, bool]] = []
    operations = [0] * n
    lead_flags: list[int] = []
    b_in, b_out = switch_in_kvar, switch_out_kvar
    closed = [False] * n
    changed_s = [-math.inf] * n  # when each step last changed state
    connected = fixed_kvar
    low, high, floor = connected - b_out - EPS, connected + b_in + EPS, connected - EPS
    for i in range(len(need)):
        want = need[i]
        if low <= want <= high and room[i] >= floor:
            continue  # nothing to do: the fast path of almost every interval
        t, top = times_s[i], room[i]
        d = want - connected
        while d > b_in + EPS:  # switch in
            best = -1
            for k in range(n):
                if closed[k] or t - changed_s[k] < delay_s - EPS:
                    continue
                q = steps[k]
                if q > d + b_out + EPS or connected + q > top + EPS:
                    continue
                if best < 0 or q > steps[best] or (q == steps[best] and changed_s[k] < changed_s[best]):
                    best = k
            if best < 0:
                break
            closed[best] = True
            changed_s[best] = t
            connected += steps[best]
            operations[best] += 1
            events.append((i, best, True))
            d = want - connected
        while -d > b_out + EPS or connected > top + EPS:  # switch out
            best = -1
            for k in range(n):
                if not closed[k] or steps[k] > -d + b_in + EPS:
                    continue
                if best < 0 or steps[k] > steps[best] or (steps[k] == steps[best] and changed_s[k] < changed_s[best]):
                    best = k
            if best < 0 and connected > top + EPS:
                for k in range(n):
                    if closed[k] and (best < 0 or steps[k] < steps[best]
                                      or (steps[k] == steps[best] and changed_s[k] < changed_s[best])):
                        best = k
            if best < 0:
                break
            closed[best] = False
            changed_s[best] = t
            connected -= steps[best]
            events.append((i, best, False))
            d = want - connected
        if connected > EPS and connected > top + EPS:
            lead_flags.append(i)  # the fixed part leads beyond the limit (a load leading on its own is not flagged)
        low, high, floor = connected - b_out - EPS, connected + b_in + EPS, connected - EPS
    return ControllerRun(events=tuple(events), operations=tuple(operations), lead_flags=tuple(lead_flags))
