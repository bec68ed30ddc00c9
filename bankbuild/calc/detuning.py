"""Detuned (reactor-protected) capacitor steps.

The tuning factor ``p`` is the ratio X_L / X_C of the series reactor to the capacitor at the fundamental
frequency, as a fraction (0.07 for a "7 %" reactor). Voltages are line-to-line; kvar is three-phase.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from bankbuild.calc._domain import finite_nonneg as _finite_nonneg
from bankbuild.calc._domain import finite_pos as _finite_pos


def _tuning_factor(p: float, allow_zero: bool) -> None:
    low_ok = p >= 0.0 if allow_zero else p > 0.0
    if not (low_ok and p < 1.0):
        bracket = "[0, 1)" if allow_zero else "(0, 1)"
        raise ValueError(f"tuning factor p must be a fraction in {bracket}, got {p!r}")


def tuning_order(p: float) -> float:
    """Harmonic order at which the reactor and capacitor are in series resonance.

    Parameters
    ----------
    p : float
        Tuning factor X_L/X_C as a fraction in (0, 1) [-]

    Returns
    -------
    float
        Tuning order n = f_r / f1 [-]

    Notes
    -----
    n = 1 / √p

    Examples
    --------
    >>> round(tuning_order(0.07), 2)
    3.78

    References
    ----------
    .. [1] IEC 61642:1997, application of shunt capacitors with series reactors (clause from memory).
    .. [2] IEEE Std 1531-2003, Guide for harmonic filters, tuning of a single-tuned branch (from memory).
    """
    _tuning_factor(p, allow_zero=False)
    return 1.0 / math.sqrt(p)


def tuning_frequency_hz(frequency_hz: float, p: float) -> float:
    """Series-resonance frequency of a detuned step.

    Parameters
    ----------
    frequency_hz : float
        Supply (fundamental) frequency [Hz]
    p : float
        Tuning factor X_L/X_C as a fraction in (0, 1) [-]

    Returns
    -------
    float
        Tuning frequency f_r [Hz]

    Notes
    -----
    f_r = f1 / √p

    Examples
    --------
    >>> round(tuning_frequency_hz(50.0, 0.07))
    189

    References
    ----------
    .. [1] IEC 61642:1997, application of shunt capacitors with series reactors (clause from memory).
    """
    _finite_pos("frequency_hz", frequency_hz)
    return frequency_hz * tuning_order(p)


def capacitor_voltage_v(voltage_v: float, p: float) -> float:
    """Fundamental voltage across the capacitor of a detuned step (raised by the reactor).

    Parameters
    ----------
    voltage_v : float
        Supply voltage, line-to-line [V]
    p : float
        Tuning factor X_L/X_C as a fraction in [0, 1) [-]

    Returns
    -------
    float
        Capacitor voltage, line-to-line equivalent [V]

    Notes
    -----
    U_C = U / (1 − p)

    Examples
    --------
    >>> round(capacitor_voltage_v(400.0, 0.07), 1)
    430.1

    References
    ----------
    .. [1] IEC 61642:1997, voltage across capacitors in series with reactors (clause from memory).
    """
    _finite_nonneg("voltage_v", voltage_v)
    _tuning_factor(p, allow_zero=True)
    return voltage_v / (1.0 - p)


def detuned_kvar(capacitor_kvar_at_supply: float, p: float) -> float:
    """Output of a detuned step at the supply voltage.

    Parameters
    ----------
    capacitor_kvar_at_supply : float
        The capacitor's own output at the supply voltage U, without the reactor [kvar]
    p : float
        Tuning factor X_L/X_C as a fraction in [0, 1) [-]

    Returns
    -------
    float
        Step output at the supply voltage, reactor included [kvar]

    Notes
    -----
    Q = U² / (X_C − X_L) = Q_C(at U) / (1 − p)

    Examples
    --------
    >>> round(detuned_kvar(50.0, 0.07), 2)
    53.76

    References
    ----------
    .. [1] IEC 61642:1997, output of a capacitor with series reactor (clause from memory).
    """
    _finite_nonneg("capacitor_kvar_at_supply", capacitor_kvar_at_supply)
    _tuning_factor(p, allow_zero=True)
    return capacitor_kvar_at_supply / (1.0 - p)


def reactor_inductance_mh(
    capacitor_kvar_at_supply: float, voltage_v: float, frequency_hz: float, p: float
) -> float:
    """Inductance per phase (wye equivalent) of the reactor for a detuned step.

    Parameters
    ----------
    capacitor_kvar_at_supply : float
        The capacitor's own three-phase output at the supply voltage, without the reactor [kvar]
    voltage_v : float
        Supply voltage, line-to-line [V]
    frequency_hz : float
        Supply frequency [Hz]
    p : float
        Tuning factor X_L/X_C as a fraction in [0, 1) [-]

    Returns
    -------
    float
        Reactor inductance per phase [mH]

    Notes
    -----
    X_C = V² / (1000 · Q) [Ω, wye equivalent], X_L = p · X_C, L = X_L / ω, ω = 2πf.

    Examples
    --------
    >>> round(reactor_inductance_mh(50.0, 400.0, 50.0, 0.07), 3)
    0.713

    References
    ----------
    .. [1] IEC 61642:1997, application of shunt capacitors with series reactors (clause from memory).
    """
    _finite_pos("capacitor_kvar_at_supply", capacitor_kvar_at_supply)
    _finite_nonneg("voltage_v", voltage_v)
    _finite_pos("frequency_hz", frequency_hz)
    _tuning_factor(p, allow_zero=True)
    x_c_ohm = voltage_v**2 / (1000.0 * capacitor_kvar_at_supply)
    x_l_ohm = p * x_c_ohm
    return 1000.0 * x_l_ohm / (2.0 * math.pi * frequency_hz)


def reactor_current_a(
    step_kvar: float, voltage_v: float, harmonic_pct: dict[int, float] | None = None
) -> float:
    """RMS current of a detuned step, with an allowance for harmonic currents.

    Parameters
    ----------
    step_kvar : float
        Step output at the supply voltage [kvar]
    voltage_v : float
        Supply voltage, line-to-line [V]
    harmonic_pct : dict of int to float, optional
        Harmonic order -> current as a percentage of the fundamental current [%]

    Returns
    -------
    float
        RMS line current through the reactor [A]

    Notes
    -----
    I1 = 1000 · Q / (√3 · V); I_rms = I1 · √(1 + Σ (I_h% / 100)²)

    Examples
    --------
    >>> round(reactor_current_a(50.0, 400.0), 1)
    72.2
    >>> round(reactor_current_a(50.0, 400.0, {5: 30.0, 7: 10.0}), 1)
    75.7

    References
    ----------
    .. [1] IEEE Std 1459-2010, rms current of a non-sinusoidal waveform (clause from memory).
    """
    _finite_nonneg("step_kvar", step_kvar)
    _finite_pos("voltage_v", voltage_v)
    fundamental_a = 1000.0 * step_kvar / (math.sqrt(3.0) * voltage_v)
    total = 1.0
    for order, pct in (harmonic_pct or {}).items():
        if isinstance(order, bool) or not isinstance(order, int) or order < 2:
            raise ValueError(f"harmonic order must be an integer >= 2, got {order!r}")
        _finite_nonneg(f"harmonic_pct[{order}]", pct)
        total += (pct / 100.0) ** 2
    return fundamental_a * math.sqrt(total)


def p_from_tuning_order(order: float) -> float:
    """Tuning factor that places the series resonance at a given harmonic order.

    Parameters
    ----------
    order : float
        Tuning order n = f_r / f1, greater than 1 [-]

    Returns
    -------
    float
        Tuning factor p as a fraction [-]

    Notes
    -----
    p = 1 / n²

    Examples
    --------
    >>> round(p_from_tuning_order(3.78), 4)
    0.07

    References
    ----------
    .. [1] IEC 61642:1997, application of shunt capacitors with series reactors (clause from memory).
    """
    if not (math.isfinite(order) and order > 1.0):
        raise ValueError(f"tuning order must be a finite number > 1, got {order!r}")
    return 1.0 / order**2


def harmonic_current_pct(p: float, harmonic_voltage_pct: Mapping[int, float]) -> dict[int, float]:
    """Harmonic currents through a detuned step driven by harmonic voltages of the supply.

    Parameters
    ----------
    p : float
        Tuning factor X_L / X_C at the fundamental, a fraction in (0, 1) [-].
    harmonic_voltage_pct : mapping of int to float
        Harmonic order h -> supply voltage at that order, % of the fundamental [%].

    Returns
    -------
    dict of int to float
        Order -> current through the step, % of the fundamental step current [%]; infinite at the tuning
        order itself.

    Notes
    -----
    The step impedance at order h is X_C·(p·h − 1/h); at the fundamental its magnitude is X_C·(1 − p). So
    I_h / I_1 = (U_h / U_1) · (1 − p) / |p·h − 1/h|.

    Examples
    --------
    >>> {h: round(v, 1) for h, v in harmonic_current_pct(0.07, {5: 6.0, 7: 5.0}).items()}
    {5: 37.2, 7: 13.4}

    References
    ----------
    .. [1] Impedance of a series LC branch at harmonic frequencies; any circuits textbook.
    """
    out: dict[int, float] = {}
    for h, u_pct in sorted(harmonic_voltage_pct.items()):
        denominator = abs(p * h - 1.0 / h)
        out[h] = math.inf if denominator < 1e-12 else u_pct * (1.0 - p) / denominator
    return out


def capacitor_voltages_v(capacitor_voltage_v: float, current_pct: Mapping[int, float]) -> tuple[float, float]:
    """The rms voltage on the capacitor with harmonics, and fundamental plus harmonics added arithmetically.

    Parameters
    ----------
    capacitor_voltage_v : float
        Fundamental voltage across the capacitor, U / (1 − p) for a detuned step [V].
    current_pct : mapping of int to float
        Harmonic order -> current through the capacitor, % of the fundamental [%].

    Returns
    -------
    tuple of float
        (rms voltage [V], arithmetic sum [V]); the sum is the worst-case peak divided by √2.

    Notes
    -----
    The capacitor's reactance at order h is X_C / h, so U_h / U_1 = (I_h / I_1) / h.
    U_rms = U_1·√(1 + Σ (a_h / h)²), U_sum = U_1·(1 + Σ a_h / h) with a_h = I_h / I_1.

    Examples
    --------
    >>> [round(v, 1) for v in capacitor_voltages_v(516.1, {5: 37.2, 7: 13.4})]
    [517.6, 564.4]
    """
    rms = 1.0
    arithmetic = 1.0
    for h, pct in current_pct.items():
        a = pct / 100.0 / h
        rms += a * a
        arithmetic += a
    return capacitor_voltage_v * math.sqrt(rms), capacitor_voltage_v * arithmetic
