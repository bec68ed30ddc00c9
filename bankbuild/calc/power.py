"""Power triangle, motor input power and the reactive power needed to reach a target power factor.

All powers are three-phase totals; voltages are line-to-line. Reactive power is positive when lagging
(inductive load) and a correction (capacitor) kvar is a positive number that is subtracted from it.
"""

from __future__ import annotations

import math

from bankbuild.calc._domain import finite_nonneg as _finite_nonneg
from bankbuild.calc._domain import finite_pos as _finite_pos

HP_TO_KW = 0.745699872
"""Kilowatts per mechanical horsepower (550 ft·lbf/s)."""




def _power_factor_value(name: str, pf: float) -> None:
    if not (0.0 < pf <= 1.0):
        raise ValueError(f"{name} must lie in (0, 1], got {pf!r}")


def hp_to_kw(output_hp: float) -> float:
    """Convert a mechanical rating in horsepower to kilowatts.

    Parameters
    ----------
    output_hp : float
        Shaft output [hp]

    Returns
    -------
    float
        Shaft output [kW]

    Notes
    -----
    P_kW = P_hp · 0.745699872

    Examples
    --------
    >>> round(hp_to_kw(100.0), 2)
    74.57

    References
    ----------
    .. [1] NIST SP 811 (2008), Guide for the Use of the SI, Appendix B.8 (horsepower, 550 ft·lbf/s).
    """
    _finite_nonneg("output_hp", output_hp)
    return output_hp * HP_TO_KW


def motor_input_kw(output_kw: float, efficiency: float) -> float:
    """Electrical input power of a motor from its shaft output and efficiency.

    Parameters
    ----------
    output_kw : float
        Shaft output [kW]
    efficiency : float
        Efficiency as a fraction in (0, 1] [-]

    Returns
    -------
    float
        Electrical input [kW]

    Notes
    -----
    P_in = P_out / η

    Examples
    --------
    >>> round(motor_input_kw(74.57, 0.95), 2)
    78.49

    References
    ----------
    .. [1] NEMA MG 1, Part 12 (efficiency as output / input) -- clause from memory.
    """
    _finite_nonneg("output_kw", output_kw)
    if not (0.0 < efficiency <= 1.0):
        raise ValueError(f"efficiency must lie in (0, 1], got {efficiency!r}")
    return output_kw / efficiency


def tan_phi(pf: float) -> float:
    """Ratio Q/P of a load with the given (displacement) power factor.

    Parameters
    ----------
    pf : float
        Power factor in (0, 1] [-]

    Returns
    -------
    float
        tan φ = Q/P [-]

    Notes
    -----
    tan φ = √(1 − PF²) / PF, with φ = arccos(PF).

    Examples
    --------
    >>> round(tan_phi(0.8), 3)
    0.75

    References
    ----------
    .. [1] IEEE Std 141-1993 (Red Book), Ch. 8, power factor and the power triangle.
    """
    _power_factor_value("pf", pf)
    return math.sqrt(1.0 - pf * pf) / pf


def reactive_kvar(active_kw: float, pf: float) -> float:
    """Lagging reactive power of a load from its active power and power factor.

    Parameters
    ----------
    active_kw : float
        Active power [kW]
    pf : float
        Power factor in (0, 1] [-]

    Returns
    -------
    float
        Reactive power, lagging [kvar]

    Notes
    -----
    Q = P · tan φ

    Examples
    --------
    >>> round(reactive_kvar(8.0, 0.8), 3)
    6.0

    References
    ----------
    .. [1] IEEE Std 141-1993 (Red Book), Ch. 8, power factor and the power triangle.
    """
    _finite_nonneg("active_kw", active_kw)
    return active_kw * tan_phi(pf)


def apparent_kva(active_kw: float, reactive_kvar: float) -> float:
    """Apparent power from active and reactive power (either sign of Q).

    Parameters
    ----------
    active_kw : float
        Active power [kW]
    reactive_kvar : float
        Reactive power, positive lagging [kvar]

    Returns
    -------
    float
        Apparent power [kVA]

    Notes
    -----
    S = √(P² + Q²)

    Examples
    --------
    >>> round(apparent_kva(8.0, 6.0), 3)
    10.0

    References
    ----------
    .. [1] IEEE Std 1459-2010, Cl. 3.1 (sinusoidal apparent power) -- clause from memory.
    """
    _finite_nonneg("active_kw", active_kw)
    if not math.isfinite(reactive_kvar):
        raise ValueError(f"reactive_kvar must be finite, got {reactive_kvar!r}")
    return math.hypot(active_kw, reactive_kvar)


def power_factor(active_kw: float, reactive_kvar: float) -> float:
    """Power factor magnitude P/S; 1.0 for a load that draws nothing.

    Parameters
    ----------
    active_kw : float
        Active power [kW]
    reactive_kvar : float
        Reactive power, positive lagging, negative leading [kvar]

    Returns
    -------
    float
        Power factor in [0, 1] [-]

    Notes
    -----
    PF = P / S; the sign of Q (lagging or leading) is not carried, see :func:`is_leading`.

    Examples
    --------
    >>> round(power_factor(8.0, 6.0), 3)
    0.8

    References
    ----------
    .. [1] IEEE Std 141-1993 (Red Book), Ch. 8, power factor and the power triangle.
    """
    s_kva = apparent_kva(active_kw, reactive_kvar)
    if s_kva == 0.0:
        return 1.0
    return min(1.0, active_kw / s_kva)


def three_phase_kva(voltage_v: float, current_a: float) -> float:
    """Apparent power of a balanced three-phase circuit.

    Parameters
    ----------
    voltage_v : float
        Line-to-line voltage [V]
    current_a : float
        Line current [A]

    Returns
    -------
    float
        Apparent power [kVA]

    Notes
    -----
    S = √3 · V_LL · I_L / 1000

    Examples
    --------
    >>> round(three_phase_kva(208.0, 27.757), 2)
    10.0

    References
    ----------
    .. [1] IEEE Std 141-1993 (Red Book), Ch. 8; any circuits textbook on balanced three-phase power.
    """
    _finite_nonneg("voltage_v", voltage_v)
    _finite_nonneg("current_a", current_a)
    return math.sqrt(3.0) * voltage_v * current_a / 1000.0


def three_phase_current_a(apparent_kva: float, voltage_v: float) -> float:
    """Line current of a balanced three-phase load.

    Parameters
    ----------
    apparent_kva : float
        Apparent power [kVA]
    voltage_v : float
        Line-to-line voltage [V]

    Returns
    -------
    float
        Line current [A]

    Notes
    -----
    I_L = 1000 · S / (√3 · V_LL)

    Examples
    --------
    >>> round(three_phase_current_a(10.0, 208.0), 2)
    27.76

    References
    ----------
    .. [1] IEEE Std 141-1993 (Red Book), Ch. 8; any circuits textbook on balanced three-phase power.
    """
    _finite_nonneg("apparent_kva", apparent_kva)
    _finite_pos("voltage_v", voltage_v)
    return 1000.0 * apparent_kva / (math.sqrt(3.0) * voltage_v)


def required_kvar(active_kw: float, pf_present: float, pf_target: float) -> float:
    """Capacitor kvar that raises a load from one lagging power factor to a better one.

    Parameters
    ----------
    active_kw : float
        Active power of the load [kW]
    pf_present : float
        Present lagging power factor in (0, 1] [-]
    pf_target : float
        Target lagging power factor in [pf_present, 1] [-]

    Returns
    -------
    float
        Correction needed [kvar]

    Notes
    -----
    Q_c = P · (tan φ1 − tan φ2), φ = arccos(PF). The bracket is the "multiplier" of the usual tables.

    Examples
    --------
    >>> round(required_kvar(100.0, 0.80, 0.95), 1)
    42.1

    References
    ----------
    .. [1] IEEE Std 141-1993 (Red Book), Ch. 8, kvar required to improve power factor.
    """
    _finite_nonneg("active_kw", active_kw)
    _power_factor_value("pf_present", pf_present)
    _power_factor_value("pf_target", pf_target)
    if pf_target < pf_present:
        raise ValueError(f"pf_target ({pf_target!r}) is below pf_present ({pf_present!r})")
    return active_kw * (tan_phi(pf_present) - tan_phi(pf_target))


def correction_kvar(active_kw: float, reactive_kvar: float, pf_target: float) -> float:
    """Capacitor kvar that brings a load with known P and Q to a target lagging power factor.

    Parameters
    ----------
    active_kw : float
        Active power [kW]
    reactive_kvar : float
        Present reactive power, positive lagging [kvar]
    pf_target : float
        Target lagging power factor in (0, 1] [-]

    Returns
    -------
    float
        Correction needed, 0.0 when the load is already at or better than the target [kvar]

    Notes
    -----
    Q_c = max(0, Q − P · tan(arccos PF_target))

    Examples
    --------
    >>> round(correction_kvar(8.0, 6.0, 1.0), 3)
    6.0
    >>> correction_kvar(8.0, 1.0, 0.9)
    0.0

    References
    ----------
    .. [1] IEEE Std 141-1993 (Red Book), Ch. 8, kvar required to improve power factor.
    """
    _finite_nonneg("active_kw", active_kw)
    if not math.isfinite(reactive_kvar):
        raise ValueError(f"reactive_kvar must be finite, got {reactive_kvar!r}")
    _power_factor_value("pf_target", pf_target)
    return max(0.0, reactive_kvar - active_kw * tan_phi(pf_target))


def corrected_power_factor(active_kw: float, reactive_kvar: float, correction_kvar: float) -> float:
    """Power factor magnitude after a capacitor bank is switched in (may be leading).

    Parameters
    ----------
    active_kw : float
        Active power [kW]
    reactive_kvar : float
        Reactive power of the load, positive lagging [kvar]
    correction_kvar : float
        Capacitor output at the operating voltage [kvar]

    Returns
    -------
    float
        Power factor magnitude in [0, 1] [-]

    Notes
    -----
    PF = P / √(P² + (Q − Q_c)²); use :func:`is_leading` for the sense.

    Examples
    --------
    >>> round(corrected_power_factor(100.0, 75.0, 42.13), 3)
    0.95

    References
    ----------
    .. [1] IEEE Std 141-1993 (Red Book), Ch. 8, power factor and the power triangle.
    """
    _finite_nonneg("correction_kvar", correction_kvar)
    return power_factor(active_kw, reactive_kvar - correction_kvar)


def is_leading(reactive_kvar: float, correction_kvar: float) -> bool:
    """Whether a correction over-compensates the load (net reactive power leading).

    Parameters
    ----------
    reactive_kvar : float
        Reactive power of the load, positive lagging [kvar]
    correction_kvar : float
        Capacitor output at the operating voltage [kvar]

    Returns
    -------
    bool
        True when Q_c > Q

    Notes
    -----
    Net Q = Q − Q_c; leading when negative.

    Examples
    --------
    >>> is_leading(10.0, 12.0), is_leading(10.0, 10.0)
    (True, False)

    References
    ----------
    .. [1] IEEE Std 141-1993 (Red Book), Ch. 8, over-correction at light load.
    """
    _finite_nonneg("correction_kvar", correction_kvar)
    if not math.isfinite(reactive_kvar):
        raise ValueError(f"reactive_kvar must be finite, got {reactive_kvar!r}")
    return correction_kvar > reactive_kvar
