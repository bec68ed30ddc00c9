"""Capacitors connected at the terminals of an induction motor: self-excitation limit, reduced line current,
and the conductor rule for the capacitor circuit.

Voltages are line-to-line, currents are line currents, kvar is three-phase.
"""

from __future__ import annotations

import math

from bankbuild.calc._domain import finite_nonneg as _finite_nonneg
from bankbuild.calc._domain import finite_pos as _finite_pos

SQRT3 = math.sqrt(3.0)




def _pf(name: str, pf: float) -> None:
    if not (math.isfinite(pf) and 0.0 <= pf <= 1.0):
        raise ValueError(f"{name} must be in [0, 1], got {pf!r}")


def magnetising_kvar(voltage_v: float, no_load_current_a: float, no_load_pf: float = 0.0) -> float:
    """Reactive power an induction motor draws running unloaded: the self-excitation limit for a capacitor
    switched with the motor.

    Parameters
    ----------
    voltage_v : float
        Line-to-line voltage at the motor [V]
    no_load_current_a : float
        Line current of the motor running without load [A]
    no_load_pf : float, optional
        Power factor at no load; 0 takes the whole no-load current as magnetising [-]

    Returns
    -------
    float
        Magnetising (no-load reactive) power [kvar]

    Notes
    -----
    Q_0 = √3 · V · I_0 · sin φ_0 / 1000, sin φ_0 = √(1 − PF_0²). A capacitor larger than Q_0 would carry the
    motor past unity power factor at no load; disconnected while the motor spins on, it can self-excite the
    machine to a voltage above rating. The no-load power factor of a standard motor is low (about 0.05–0.2),
    so taking the whole no-load current as magnetising overstates Q_0 by 0.1–2 % only.

    Examples
    --------
    A 460 V motor drawing 30 A at no load:

    >>> round(magnetising_kvar(460.0, 30.0), 2)
    23.9
    >>> round(magnetising_kvar(460.0, 30.0, 0.1), 2)
    23.78

    References
    ----------
    .. [1] CSA C22.1 (Canadian Electrical Code), Rule 26-218: capacitor kvar at a motor not more than the kvar
       that raises the no-load power factor to unity (rule number from memory).
    .. [2] NEMA MG 1, Part 14, power factor correction (from memory).
    """
    _finite_pos("voltage_v", voltage_v)
    _finite_nonneg("no_load_current_a", no_load_current_a)
    _pf("no_load_pf", no_load_pf)
    return SQRT3 * voltage_v * no_load_current_a * math.sqrt(1.0 - no_load_pf**2) / 1000.0


def no_load_current_a(voltage_v: float, magnetising_kvar: float) -> float:
    """The no-load (magnetising) current that corresponds to a magnetising kvar, taken as wholly reactive.

    Parameters
    ----------
    voltage_v : float
        Line-to-line voltage at the motor [V]
    magnetising_kvar : float
        No-load reactive power of the motor [kvar]

    Returns
    -------
    float
        Magnetising line current [A]

    Notes
    -----
    I_0 = 1000 · Q_0 / (√3 · V), the inverse of :func:`magnetising_kvar` at PF_0 = 0.

    Examples
    --------
    >>> round(no_load_current_a(460.0, 23.9), 1)
    30.0

    References
    ----------
    .. [1] Any circuits textbook, three-phase power S = √3 · V · I.
    """
    _finite_pos("voltage_v", voltage_v)
    _finite_nonneg("magnetising_kvar", magnetising_kvar)
    return 1000.0 * magnetising_kvar / (SQRT3 * voltage_v)


def reduced_line_current_a(
    voltage_v: float, full_load_current_a: float, full_load_pf: float, capacitor_kvar: float
) -> float:
    """Line current of the motor and its terminal capacitor together at full load.

    Parameters
    ----------
    voltage_v : float
        Line-to-line voltage at the motor [V]
    full_load_current_a : float
        Full-load line current of the motor alone [A]
    full_load_pf : float
        Power factor of the motor alone at full load, lagging [-]
    capacitor_kvar : float
        Output of the capacitor at ``voltage_v`` [kvar]

    Returns
    -------
    float
        Line current feeding motor and capacitor [A]

    Notes
    -----
    S = √3 · V · I_FL; P = S · PF; Q = S · sin φ; I' = √(P² + (Q − Q_c)²) / (√3 · V). The active power does not
    change, so I' / I_FL = PF / PF' (the power factors before and after). An overload relay on the line side of
    the capacitor sees I', and is set on it (NEC 460.9).

    Examples
    --------
    A 460 V motor, 124 A at PF 0.85, with 30 kvar at its terminals:

    >>> round(reduced_line_current_a(460.0, 124.0, 0.85, 30.0), 1)
    109.0

    References
    ----------
    .. [1] NFPA 70 (NEC), 460.9: overload relay rating or setting based on the improved power factor.
    .. [2] Electrical Installation Guide, "Power factor correction of induction motors": relay setting reduced
       in the ratio cos φ before / cos φ after.
    """
    _finite_pos("voltage_v", voltage_v)
    _finite_nonneg("full_load_current_a", full_load_current_a)
    _pf("full_load_pf", full_load_pf)
    _finite_nonneg("capacitor_kvar", capacitor_kvar)
    s_kva = SQRT3 * voltage_v * full_load_current_a / 1000.0
    p_kw = s_kva * full_load_pf
    q_kvar = s_kva * math.sqrt(1.0 - full_load_pf**2)
    return 1000.0 * math.hypot(p_kw, q_kvar - capacitor_kvar) / (SQRT3 * voltage_v)


def improved_power_factor(full_load_pf: float, full_load_current_a: float, reduced_current_a: float) -> float:
    """Power factor of motor and capacitor together, from the currents before and after.

    Parameters
    ----------
    full_load_pf : float
        Power factor of the motor alone [-]
    full_load_current_a : float
        Line current of the motor alone [A]
    reduced_current_a : float
        Line current with the capacitor [A]

    Returns
    -------
    float
        Power factor with the capacitor (magnitude) [-]

    Notes
    -----
    PF' = PF · I_FL / I' (the active current is the same before and after).

    Examples
    --------
    >>> round(improved_power_factor(0.85, 124.0, 108.98), 3)
    0.967

    References
    ----------
    .. [1] Electrical Installation Guide, "Power factor correction of induction motors", current ratio
       cos φ before / cos φ after.
    """
    _pf("full_load_pf", full_load_pf)
    _finite_nonneg("full_load_current_a", full_load_current_a)
    _finite_pos("reduced_current_a", reduced_current_a)
    return min(1.0, full_load_pf * full_load_current_a / reduced_current_a)


def min_capacitor_conductor_ampacity_a(
    capacitor_rated_current_a: float, motor_conductor_ampacity_a: float, conductor_factor: float = 1.35
) -> float:
    """Smallest ampacity of the conductors that connect a capacitor to a motor circuit.

    Parameters
    ----------
    capacitor_rated_current_a : float
        Rated current of the capacitor [A]
    motor_conductor_ampacity_a : float
        Ampacity of the motor circuit conductors [A]
    conductor_factor : float, optional
        Multiple of the capacitor's rated current, 1.35 in NEC 460.8(A) [-]

    Returns
    -------
    float
        Required ampacity [A]

    Notes
    -----
    I_z ≥ max(1.35 · I_C, I_z,motor / 3).

    Examples
    --------
    A 30 kvar, 480 V capacitor (36.1 A) tapped onto a motor circuit of 150 A conductors:

    >>> round(min_capacitor_conductor_ampacity_a(36.08, 150.0), 1)
    50.0

    References
    ----------
    .. [1] NFPA 70 (NEC), 460.8(A): ≥ 135 % of the capacitor's rated current, and for a capacitor connected to
       a motor circuit ≥ one-third of the ampacity of the motor circuit conductors.
    """
    _finite_nonneg("capacitor_rated_current_a", capacitor_rated_current_a)
    _finite_nonneg("motor_conductor_ampacity_a", motor_conductor_ampacity_a)
    _finite_pos("conductor_factor", conductor_factor)
    return max(conductor_factor * capacitor_rated_current_a, motor_conductor_ampacity_a / 3.0)
