"""A capacitor unit or three-phase bank: output at another voltage and frequency, currents, capacitance.

``connection`` is ``"delta"`` or ``"wye"`` and describes how the three elements (legs) of a three-phase
bank are joined. Voltages are line-to-line; kvar is the three-phase total.
"""

from __future__ import annotations

import math

from bankbuild.calc._domain import finite_nonneg as _finite_nonneg
from bankbuild.calc._domain import finite_pos as _finite_pos

CONNECTIONS = ("delta", "wye")
"""The two ways of joining the three legs of a bank."""




def _connection(connection: str) -> str:
    if connection not in CONNECTIONS:
        raise ValueError(f"connection must be one of {CONNECTIONS}, got {connection!r}")
    return connection


def rerate_kvar(
    rated_kvar: float,
    rated_voltage_v: float,
    rated_frequency_hz: float,
    voltage_v: float,
    frequency_hz: float,
) -> float:
    """Output of a capacitor applied at a voltage and frequency other than its rating.

    Parameters
    ----------
    rated_kvar : float
        Nameplate output [kvar]
    rated_voltage_v : float
        Nameplate voltage [V]
    rated_frequency_hz : float
        Nameplate frequency [Hz]
    voltage_v : float
        Applied voltage [V]
    frequency_hz : float
        Applied frequency [Hz]

    Returns
    -------
    float
        Output at the applied voltage and frequency [kvar]

    Notes
    -----
    Q = Q_r · (V / V_r)² · (f / f_r), since Q = ωCV² with C fixed. Output does not scale linearly with V.

    Examples
    --------
    >>> round(rerate_kvar(30.0, 480.0, 60.0, 440.0, 60.0), 1)
    25.2

    References
    ----------
    .. [1] IEEE Std 18-2012, rated kvar defined at rated voltage and frequency (clause from memory).
    .. [2] IEC 60831-1:2014, rated output Q_N = ωC_N·U_N² (clause from memory).
    """
    _finite_nonneg("rated_kvar", rated_kvar)
    _finite_pos("rated_voltage_v", rated_voltage_v)
    _finite_pos("rated_frequency_hz", rated_frequency_hz)
    _finite_nonneg("voltage_v", voltage_v)
    _finite_nonneg("frequency_hz", frequency_hz)
    return rated_kvar * (voltage_v / rated_voltage_v) ** 2 * (frequency_hz / rated_frequency_hz)


def _legs_omega(connection: str, frequency_hz: float) -> float:
    """3ω for delta (three legs across V_LL), ω for wye (the per-leg form Q = ω·C·V_LL²) [rad/s]."""
    return (3.0 if _connection(connection) == "delta" else 1.0) * 2.0 * math.pi * frequency_hz


def line_current_a(reactive_kvar: float, voltage_v: float) -> float:
    """Line current drawn by a three-phase capacitor bank.

    Parameters
    ----------
    reactive_kvar : float
        Bank output at ``voltage_v`` [kvar]
    voltage_v : float
        Line-to-line voltage [V]

    Returns
    -------
    float
        Line current [A]

    Notes
    -----
    I_L = 1000 · Q / (√3 · V_LL); for a purely capacitive bank kvar = kVA.

    Examples
    --------
    >>> round(line_current_a(100.0, 480.0), 1)
    120.3

    References
    ----------
    .. [1] IEEE Std 18-2012, rated current of a three-phase unit (clause from memory).
    """
    _finite_nonneg("reactive_kvar", reactive_kvar)
    _finite_pos("voltage_v", voltage_v)
    return 1000.0 * reactive_kvar / (math.sqrt(3.0) * voltage_v)


def kvar_at_current(current_a: float, voltage_v: float) -> float:
    """Three-phase capacitor kvar that a line current stands for at a voltage: the inverse of :func:`line_current_a`.

    Parameters
    ----------
    current_a : float
        Line current [A]
    voltage_v : float
        Line-to-line voltage [V]

    Returns
    -------
    float
        Reactive power [kvar]

    Notes
    -----
    Q = √3 · V_LL · I_L / 1000. It gives the kvar a capacitor-duty (AC-6b) contactor may switch at a voltage from
    its rated current there.

    Examples
    --------
    >>> round(kvar_at_current(25.0, 400.0), 2)
    17.32
    >>> round(kvar_at_current(120.28, 480.0), 1)
    100.0

    References
    ----------
    .. [1] IEEE Std 18-2012, rated current of a three-phase unit (clause from memory).
    """
    _finite_nonneg("current_a", current_a)
    _finite_pos("voltage_v", voltage_v)
    return math.sqrt(3.0) * voltage_v * current_a / 1000.0


def phase_current_a(line_current_a: float, connection: str) -> float:
    """Current in one leg (element) of a balanced bank.

    Parameters
    ----------
    line_current_a : float
        Line current [A]
    connection : str
        ``"delta"`` or ``"wye"`` [-]

    Returns
    -------
    float
        Leg current [A]

    Notes
    -----
    Delta: I_leg = I_L / √3. Wye: I_leg = I_L.

    Examples
    --------
    >>> round(phase_current_a(120.3, "delta"), 1)
    69.5

    References
    ----------
    .. [1] Any circuits textbook, balanced delta and wye connections.
    """
    _finite_nonneg("line_current_a", line_current_a)
    if _connection(connection) == "delta":
        return line_current_a / math.sqrt(3.0)
    return line_current_a


def leg_voltage_v(voltage_v: float, connection: str) -> float:
    """Voltage across one leg (element) of a balanced bank.

    Parameters
    ----------
    voltage_v : float
        Line-to-line voltage [V]
    connection : str
        ``"delta"`` or ``"wye"`` [-]

    Returns
    -------
    float
        Leg voltage [V]

    Notes
    -----
    Delta: V_leg = V_LL. Wye: V_leg = V_LL / √3.

    Examples
    --------
    >>> round(leg_voltage_v(400.0, "wye"), 1)
    230.9

    References
    ----------
    .. [1] Any circuits textbook, balanced delta and wye connections.
    """
    _finite_nonneg("voltage_v", voltage_v)
    if _connection(connection) == "delta":
        return voltage_v
    return voltage_v / math.sqrt(3.0)


def capacitance_uf_per_leg(
    reactive_kvar: float, voltage_v: float, frequency_hz: float, connection: str
) -> float:
    """Capacitance of each of the three legs of a bank.

    Parameters
    ----------
    reactive_kvar : float
        Three-phase bank output [kvar]
    voltage_v : float
        Line-to-line voltage [V]
    frequency_hz : float
        Supply frequency [Hz]
    connection : str
        ``"delta"`` or ``"wye"`` [-]

    Returns
    -------
    float
        Capacitance per leg [µF]

    Notes
    -----
    Delta: C = Q / (3 · ω · V_LL²). Wye: C = Q / (ω · V_LL²), three times the delta value. ω = 2πf.

    Examples
    --------
    >>> round(capacitance_uf_per_leg(6.0, 208.0, 60.0, "delta"), 1)
    122.6

    References
    ----------
    .. [1] IEC 60831-1:2014, rated output Q_N = ωC_N·U_N² per element (clause from memory).
    """
    _finite_nonneg("reactive_kvar", reactive_kvar)
    _finite_pos("voltage_v", voltage_v)
    _finite_pos("frequency_hz", frequency_hz)
    return 1000.0 * reactive_kvar / (_legs_omega(connection, frequency_hz) * voltage_v**2) * 1e6


def kvar_from_capacitance(
    capacitance_uf_per_leg: float, voltage_v: float, frequency_hz: float, connection: str
) -> float:
    """Three-phase output of a bank from the capacitance of each leg.

    Parameters
    ----------
    capacitance_uf_per_leg : float
        Capacitance of each leg [µF]
    voltage_v : float
        Line-to-line voltage [V]
    frequency_hz : float
        Supply frequency [Hz]
    connection : str
        ``"delta"`` or ``"wye"`` [-]

    Returns
    -------
    float
        Three-phase output [kvar]

    Notes
    -----
    Delta: Q = 3 · ω · C · V_LL². Wye: Q = ω · C · V_LL². ω = 2πf.

    Examples
    --------
    >>> round(kvar_from_capacitance(122.6, 208.0, 60.0, "delta"), 2)
    6.0

    References
    ----------
    .. [1] IEC 60831-1:2014, rated output Q_N = ωC_N·U_N² per element (clause from memory).
    """
    _finite_nonneg("capacitance_uf_per_leg", capacitance_uf_per_leg)
    _finite_nonneg("voltage_v", voltage_v)
    _finite_pos("frequency_hz", frequency_hz)
    return _legs_omega(connection, frequency_hz) * capacitance_uf_per_leg * 1e-6 * voltage_v**2 / 1000.0


def reactance_ohm(capacitance_uf: float, frequency_hz: float) -> float:
    """Reactance of a capacitor.

    Parameters
    ----------
    capacitance_uf : float
        Capacitance [µF]
    frequency_hz : float
        Frequency [Hz]

    Returns
    -------
    float
        Reactance magnitude X_C [Ω]

    Notes
    -----
    X_C = 1 / (ωC), ω = 2πf.

    Examples
    --------
    >>> round(reactance_ohm(221.0, 60.0), 2)
    12.0

    References
    ----------
    .. [1] G. M. Masters, Renewable and Efficient Electric Power Systems, Wiley, Ch. 2 (edition unconfirmed).
    """
    _finite_pos("capacitance_uf", capacitance_uf)
    _finite_pos("frequency_hz", frequency_hz)
    return 1.0 / (2.0 * math.pi * frequency_hz * capacitance_uf * 1e-6)
