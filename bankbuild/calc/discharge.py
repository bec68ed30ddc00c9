"""Discharge resistors: the largest resistance that meets a residual-voltage rule, and its dissipation.

The model is one resistor across one capacitor element (an RC circuit); ``capacitance_uf`` is the
capacitance of that element and the voltages are the voltages across it.
"""

from __future__ import annotations

import math

from bankbuild.calc._domain import finite_nonneg as _finite_nonneg
from bankbuild.calc._domain import finite_pos as _finite_pos


def start_voltage_v(rated_voltage_v: float) -> float:
    """Voltage from which the discharge is assumed to start: the peak of the rated rms voltage.

    Parameters
    ----------
    rated_voltage_v : float
        Rated rms voltage of the element [V]

    Returns
    -------
    float
        Starting (peak) voltage [V]

    Notes
    -----
    V0 = √2 · U_N (disconnection at the crest of the wave, the worst case).

    Examples
    --------
    >>> round(start_voltage_v(480.0), 1)
    678.8

    References
    ----------
    .. [1] IEC 60831-1:2014, discharge device, from √2·U_N (start value from memory).
    """
    _finite_nonneg("rated_voltage_v", rated_voltage_v)
    return math.sqrt(2.0) * rated_voltage_v


def max_resistance_ohm(
    capacitance_uf: float, start_voltage_v: float, limit_voltage_v: float, time_s: float
) -> float:
    """Largest discharge resistance that brings the element down to a limit within a time.

    Parameters
    ----------
    capacitance_uf : float
        Capacitance of the element the resistor is across [µF]
    start_voltage_v : float
        Voltage at disconnection [V]
    limit_voltage_v : float
        Residual voltage allowed at ``time_s`` [V]
    time_s : float
        Time allowed [s]

    Returns
    -------
    float
        Largest resistance; ``math.inf`` when the start voltage is already at or below the limit [Ω]

    Notes
    -----
    R = t / (C · ln(V0 / V_lim))

    Examples
    --------
    NEC 460.6(A): 50 V within 1 min; a 100 µF element rated 480 V:

    >>> round(max_resistance_ohm(100.0, start_voltage_v(480.0), 50.0, 60.0) / 1000.0, 1)
    230.0

    References
    ----------
    .. [1] NFPA 70 (NEC), 460.6(A): 50 V or less within 1 minute, circuits of 1000 V and less.
    .. [2] IEC 60831-1:2014, discharge device: 75 V within 3 min (clause from memory).
    """
    _finite_pos("capacitance_uf", capacitance_uf)
    _finite_nonneg("start_voltage_v", start_voltage_v)
    _finite_pos("limit_voltage_v", limit_voltage_v)
    _finite_nonneg("time_s", time_s)
    if start_voltage_v <= limit_voltage_v:
        return math.inf
    return time_s / (capacitance_uf * 1e-6 * math.log(start_voltage_v / limit_voltage_v))


def discharge_time_s(
    resistance_ohm: float, capacitance_uf: float, start_voltage_v: float, limit_voltage_v: float
) -> float:
    """Time for an element to discharge through a resistor from a start voltage to a limit.

    Parameters
    ----------
    resistance_ohm : float
        Discharge resistance across the element [Ω]
    capacitance_uf : float
        Capacitance of the element [µF]
    start_voltage_v : float
        Voltage at disconnection [V]
    limit_voltage_v : float
        Residual voltage to reach [V]

    Returns
    -------
    float
        Time; 0.0 when the start voltage is already at or below the limit [s]

    Notes
    -----
    t = R · C · ln(V0 / V_lim)

    Examples
    --------
    >>> round(discharge_time_s(220e3, 100.0, 678.8, 50.0), 1)
    57.4

    References
    ----------
    .. [1] Any circuits textbook, natural response of an RC circuit, V(t) = V0·e^(−t/RC).
    """
    _finite_pos("resistance_ohm", resistance_ohm)
    _finite_pos("capacitance_uf", capacitance_uf)
    _finite_nonneg("start_voltage_v", start_voltage_v)
    _finite_pos("limit_voltage_v", limit_voltage_v)
    if start_voltage_v <= limit_voltage_v:
        return 0.0
    return resistance_ohm * capacitance_uf * 1e-6 * math.log(start_voltage_v / limit_voltage_v)


def voltage_after_v(
    start_voltage_v: float, time_s: float, resistance_ohm: float, capacitance_uf: float
) -> float:
    """Residual voltage of an element after discharging through a resistor for a time.

    Parameters
    ----------
    start_voltage_v : float
        Voltage at disconnection [V]
    time_s : float
        Time since disconnection [s]
    resistance_ohm : float
        Discharge resistance across the element [Ω]
    capacitance_uf : float
        Capacitance of the element [µF]

    Returns
    -------
    float
        Residual voltage [V]

    Notes
    -----
    V(t) = V0 · e^(−t / RC)

    Examples
    --------
    >>> round(voltage_after_v(678.8, 60.0, 220e3, 100.0), 1)
    44.4

    References
    ----------
    .. [1] Any circuits textbook, natural response of an RC circuit, V(t) = V0·e^(−t/RC).
    """
    _finite_nonneg("start_voltage_v", start_voltage_v)
    _finite_nonneg("time_s", time_s)
    _finite_pos("resistance_ohm", resistance_ohm)
    _finite_pos("capacitance_uf", capacitance_uf)
    return start_voltage_v * math.exp(-time_s / (resistance_ohm * capacitance_uf * 1e-6))


def resistor_power_w(voltage_rms_v: float, resistance_ohm: float) -> float:
    """Continuous dissipation of a discharge resistor while the bank is energised.

    Parameters
    ----------
    voltage_rms_v : float
        RMS voltage across the resistor (the element voltage) [V]
    resistance_ohm : float
        Resistance [Ω]

    Returns
    -------
    float
        Dissipated power [W]

    Notes
    -----
    P = V² / R

    Examples
    --------
    >>> round(resistor_power_w(480.0, 220e3), 2)
    1.05

    References
    ----------
    .. [1] Any circuits textbook, Joule heating P = V²/R.
    """
    _finite_nonneg("voltage_rms_v", voltage_rms_v)
    _finite_pos("resistance_ohm", resistance_ohm)
    return voltage_rms_v**2 / resistance_ohm


def discharge_tau_s(rated_voltage_v: float, discharge_voltage_v: float, discharge_time_s: float) -> float:
    """Time constant R·C of a unit's own discharge resistors from its table data [s].

    The unit table states that the resistors bring √2·V_rated down to ``discharge_voltage_v`` within
    ``discharge_time_s``: τ = t / ln(√2·V_rated / V_d).

    Examples
    --------
    >>> round(discharge_tau_s(480.0, 50.0, 60.0), 2)
    23.0
    """
    return discharge_time_s / math.log(math.sqrt(2.0) * rated_voltage_v / discharge_voltage_v)


def own_resistor_time_s(rated_voltage_v: float, discharge_voltage_v: float, discharge_time_s: float,
                        start_voltage_v: float, limit_v: float) -> float:
    """Time a unit's own discharge resistors take from ``start_voltage_v`` to ``limit_v`` [s].

    The unit's data state that its resistors bring √2·V_rated down to ``discharge_voltage_v`` within
    ``discharge_time_s``; that fixes the time constant τ = R·C (:func:`discharge_tau_s`), which holds for any
    start and limit: t = τ·ln(V_start / V_limit).

    Parameters
    ----------
    rated_voltage_v : float
        The unit's rated voltage [V].
    discharge_voltage_v, discharge_time_s : float
        The unit's stated discharge: to this voltage [V] within this time [s].
    start_voltage_v, limit_v : float
        The start voltage and the limit of the rule checked [V].

    Examples
    --------
    >>> round(own_resistor_time_s(480.0, 50.0, 60.0, start_voltage_v(480.0), 50.0), 1)
    60.0
    >>> own_resistor_time_s(30.0, 50.0, 60.0, 100.0, 50.0)  # the unit starts below its own stated limit
    0.0
    """
    if math.sqrt(2.0) * rated_voltage_v <= discharge_voltage_v:
        return 0.0
    tau = discharge_tau_s(rated_voltage_v, discharge_voltage_v, discharge_time_s)
    return tau * math.log(start_voltage_v / limit_v) if start_voltage_v > limit_v else 0.0

