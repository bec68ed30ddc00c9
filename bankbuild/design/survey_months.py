"""Calendar months of a survey: energies, billing power factor and kVA demand, before and after the bank.

numpy only (imported inside the function): grouping by month and by demand interval is done with ``bincount``
on integer labels, so a year of one-minute readings takes a few tens of milliseconds.
"""

from __future__ import annotations

from bankbuild.calc.survey import billing_power_factor
from bankbuild.results.survey import MonthLine

DEMAND_INTERVAL_S = 900.0
"""kVA demand is the largest average over 15-minute intervals of the local clock: a common tariff interval
(30 minutes is also used) - common practice (no single source); tariffs vary, so it is a parameter."""


def monthly_lines(local_s, interval_s: float, active_kw, reactive_kvar, reactive_after_kvar,
                  demand_interval_s: float = DEMAND_INTERVAL_S) -> list[MonthLine]:
    """One line per calendar month (local time) with energies, billing PF and kVA demand before and after.

    Parameters
    ----------
    local_s : array
        Start of each reading on the local clock, seconds since 1970-01-01 [s].
    interval_s : float
        What each reading counts for [s].
    active_kw, reactive_kvar : array
        Readings: active power and reactive power (lagging positive) [kW], [kvar].
    reactive_after_kvar : array
        Reactive power with the bank connected as simulated [kvar].
    demand_interval_s : float
        Demand interval of the tariff [s].

    Returns
    -------
    list of MonthLine

    Notes
    -----
    kWh = Σ max(P, 0)·Δt; kvarh = Σ max(Q, 0)·Δt (lagging energy only; leading energy after the bank is shown
    apart); billing PF = kWh / √(kWh² + kvarh²). kVA demand = the month's largest √(P̄² + Q̄²) over demand
    intervals, P̄ and Q̄ the averages of the readings in each; a reading longer than the demand interval counts
    as its own interval. A month's coverage is the hours of readings over the hours of the month.
    """
    import numpy as np

    hours = interval_s / 3600.0
    month_of = (np.floor(local_s).astype("int64") * 1_000_000_000).astype("datetime64[ns]").astype("datetime64[M]")
    months, label = np.unique(month_of, return_inverse=True)
    count = len(months)
    kwh = np.bincount(label, np.clip(active_kw, 0, None), count) * hours
    kvarh = np.bincount(label, np.clip(reactive_kvar, 0, None), count) * hours
    kvarh_after = np.bincount(label, np.clip(reactive_after_kvar, 0, None), count) * hours
    leading_after = np.bincount(label, np.clip(-reactive_after_kvar, 0, None), count) * hours
    readings = np.bincount(label, None, count)
    month_hours = (((months + 1).astype("datetime64[s]") - months.astype("datetime64[s]")).astype("int64")
                   / 3600.0)

    demand_bin = np.floor(local_s / max(demand_interval_s, interval_s)).astype("int64")
    bins, bin_label = np.unique(demand_bin, return_inverse=True)
    per_bin = np.bincount(bin_label, None, len(bins))
    p_bar = np.bincount(bin_label, active_kw, len(bins)) / per_bin
    q_bar = np.bincount(bin_label, reactive_kvar, len(bins)) / per_bin
    q_bar_after = np.bincount(bin_label, reactive_after_kvar, len(bins)) / per_bin
    first_of_bin = np.zeros(len(bins), dtype="int64")
    first_of_bin[bin_label[::-1]] = np.arange(len(label))[::-1]  # the first reading of each bin
    bin_month = label[first_of_bin]
    demand = np.zeros(count)
    demand_after = np.zeros(count)
    np.maximum.at(demand, bin_month, np.hypot(p_bar, q_bar))
    np.maximum.at(demand_after, bin_month, np.hypot(p_bar, q_bar_after))

    lines = []
    for m in range(count):
        lines.append(MonthLine(
            month=str(months[m]), kwh=float(kwh[m]), kvarh_before=float(kvarh[m]), kvarh_after=float(kvarh_after[m]),
            kvarh_leading_after=float(leading_after[m]),
            billing_pf_before=billing_power_factor(float(kwh[m]), float(kvarh[m])),
            billing_pf_after=billing_power_factor(float(kwh[m]), float(kvarh_after[m])),
            kva_demand_before=float(demand[m]), kva_demand_after=float(demand_after[m]),
            coverage=float(readings[m] * hours / month_hours[m])))
    return lines
