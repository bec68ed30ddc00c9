"""The bank in its supply system: short-circuit level, parallel resonance, voltage rise and inrush.

Voltages are line-to-line; kvar is three-phase; inductances are per phase.
"""

from __future__ import annotations

import math

from bankbuild.calc._domain import finite_nonneg as _finite_nonneg
from bankbuild.calc._domain import finite_pos as _finite_pos

CHARACTERISTIC_HARMONICS = (5, 7, 11, 13)
"""Characteristic harmonics of six-pulse converters, the usual ones to keep resonance away from."""




def transformer_sc_mva(transformer_kva: float, z_pct: float) -> float:
    """Short-circuit power at the secondary of a transformer fed from an infinite source.

    Parameters
    ----------
    transformer_kva : float
        Transformer rating [kVA]
    z_pct : float
        Impedance voltage [%]

    Returns
    -------
    float
        Short-circuit power [MVA]

    Notes
    -----
    S_sc = kVA / (Z% / 100) / 1000

    Examples
    --------
    >>> round(transformer_sc_mva(1000.0, 5.75), 2)
    17.39

    References
    ----------
    .. [1] IEEE Std 141-1993 (Red Book), Ch. 4, short-circuit calculations (clause from memory).
    """
    _finite_pos("transformer_kva", transformer_kva)
    _finite_pos("z_pct", z_pct)
    return transformer_kva / (z_pct / 100.0) / 1000.0


def short_circuit_mva(transformer_kva: float, z_pct: float, source_sc_mva: float | None = None) -> float:
    """Short-circuit power at the bank: the transformer alone, or in series with the source.

    Parameters
    ----------
    transformer_kva : float
        Transformer rating [kVA]
    z_pct : float
        Impedance voltage [%]
    source_sc_mva : float, optional
        Short-circuit power of the upstream source; None for an infinite source [MVA]

    Returns
    -------
    float
        Short-circuit power [MVA]

    Notes
    -----
    1 / S_sc = 1 / S_tx + 1 / S_src (impedances in series, same voltage base).

    Examples
    --------
    >>> round(short_circuit_mva(1000.0, 5.75, 250.0), 2)
    16.26

    References
    ----------
    .. [1] IEEE Std 141-1993 (Red Book), Ch. 4, per-unit / MVA method (clause from memory).
    """
    s_tx = transformer_sc_mva(transformer_kva, z_pct)
    if source_sc_mva is None:
        return s_tx
    _finite_pos("source_sc_mva", source_sc_mva)
    return 1.0 / (1.0 / s_tx + 1.0 / source_sc_mva)


def resonance_order(short_circuit_mva: float, reactive_kvar: float) -> float:
    """Harmonic order of the parallel resonance between the bank and the supply inductance.

    Parameters
    ----------
    short_circuit_mva : float
        Short-circuit power at the bank [MVA]
    reactive_kvar : float
        Capacitor kvar in service [kvar]

    Returns
    -------
    float
        Resonance order h_r [-]

    Notes
    -----
    h_r = √(S_sc / Q_c) = √(1000 · S_sc[MVA] / Q_c[kvar])

    Examples
    --------
    >>> round(resonance_order(17.39, 300.0), 2)
    7.61

    References
    ----------
    .. [1] IEEE Std 1036-2010, Guide for the application of shunt power capacitors, harmonic resonance
       (clause from memory).
    .. [2] IEEE Std 519-2014, harmonic control (resonance with power-factor capacitors; from memory).
    """
    _finite_pos("short_circuit_mva", short_circuit_mva)
    _finite_pos("reactive_kvar", reactive_kvar)
    return math.sqrt(short_circuit_mva * 1000.0 / reactive_kvar)


def voltage_rise_pct(reactive_kvar: float, transformer_kva: float, z_pct: float) -> float:
    """Approximate steady-state voltage rise at the transformer secondary caused by the bank.

    Parameters
    ----------
    reactive_kvar : float
        Capacitor kvar in service [kvar]
    transformer_kva : float
        Transformer rating [kVA]
    z_pct : float
        Impedance voltage [%]

    Returns
    -------
    float
        Voltage rise [%]

    Notes
    -----
    ΔV% ≈ Q_c · Z% / kVA_tx (reactance taken as the whole impedance, light load).

    Examples
    --------
    >>> round(voltage_rise_pct(300.0, 1000.0, 5.75), 3)
    1.725

    References
    ----------
    .. [1] IEEE Std 1036-2010, voltage rise due to shunt capacitors (clause from memory).
    """
    _finite_nonneg("reactive_kvar", reactive_kvar)
    _finite_pos("transformer_kva", transformer_kva)
    _finite_nonneg("z_pct", z_pct)
    return reactive_kvar * z_pct / transformer_kva


def voltage_rise_sc_pct(reactive_kvar: float, short_circuit_mva: float) -> float:
    """Voltage rise at the bank from its kvar and the short-circuit power at the bank.

    Parameters
    ----------
    reactive_kvar : float
        Capacitor kvar in service [kvar]
    short_circuit_mva : float
        Short-circuit power at the bank: the transformer, with the utility source in series when known [MVA]

    Returns
    -------
    float
        Voltage rise [%]

    Notes
    -----
    ΔV% ≈ 100 · Q_c / S_sc. With the transformer alone S_sc = kVA_tx·100/Z%, and this is Q_c·Z%/kVA_tx; the
    source's own impedance in series lowers S_sc and raises the rise.

    Examples
    --------
    300 kvar on a 1000 kVA, 5.75 % transformer (17.39 MVA): 1.725 %; with a 250 MVA source in series
    (16.26 MVA): 1.845 %.

    >>> round(voltage_rise_sc_pct(300.0, transformer_sc_mva(1000.0, 5.75)), 3)
    1.725
    >>> round(voltage_rise_sc_pct(300.0, short_circuit_mva(1000.0, 5.75, 250.0)), 3)
    1.845

    References
    ----------
    .. [1] IEEE Std 1036-2010, voltage rise due to shunt capacitors (clause from memory).
    """
    _finite_nonneg("reactive_kvar", reactive_kvar)
    _finite_pos("short_circuit_mva", short_circuit_mva)
    return 100.0 * reactive_kvar / (1000.0 * short_circuit_mva)


def short_circuit_current_a(short_circuit_mva: float, voltage_v: float) -> float:
    """Symmetrical three-phase short-circuit current.

    Parameters
    ----------
    short_circuit_mva : float
        Short-circuit power [MVA]
    voltage_v : float
        Line-to-line voltage [V]

    Returns
    -------
    float
        Short-circuit current, rms symmetrical [A]

    Notes
    -----
    I_sc = 10⁶ · S_sc / (√3 · V)

    Examples
    --------
    >>> round(short_circuit_current_a(17.39, 480.0))
    20917

    References
    ----------
    .. [1] IEEE Std 141-1993 (Red Book), Ch. 4, short-circuit calculations (clause from memory).
    """
    _finite_nonneg("short_circuit_mva", short_circuit_mva)
    _finite_pos("voltage_v", voltage_v)
    return 1e6 * short_circuit_mva / (math.sqrt(3.0) * voltage_v)


def energising_inrush_peak_a(short_circuit_current_a: float, capacitor_current_a: float) -> float:
    """Peak inrush current when an isolated bank is energised (no other bank on the bus).

    Parameters
    ----------
    short_circuit_current_a : float
        Available short-circuit current at the bank, rms [A]
    capacitor_current_a : float
        Rated current of the bank, rms [A]

    Returns
    -------
    float
        Peak inrush current [A]

    Notes
    -----
    I_pk ≈ √2 · √(I_sc · I_1)  (from memory, in the style of IEEE C37.012)

    Examples
    --------
    >>> round(energising_inrush_peak_a(20917.0, 360.8))
    3885

    References
    ----------
    .. [1] IEEE Std C37.012, capacitance current switching, isolated bank inrush (from memory).
    """
    _finite_nonneg("short_circuit_current_a", short_circuit_current_a)
    _finite_nonneg("capacitor_current_a", capacitor_current_a)
    return math.sqrt(2.0) * math.sqrt(short_circuit_current_a * capacitor_current_a)


def back_to_back_inrush_peak_a(
    voltage_v: float, current_a_1: float, current_a_2: float, inductance_uh: float, frequency_hz: float
) -> float:
    """Peak inrush current when a step is switched in beside steps already energised.

    Parameters
    ----------
    voltage_v : float
        Line-to-line voltage [V]
    current_a_1 : float
        Rated current of the step being switched [A]
    current_a_2 : float
        Rated current of the steps already energised [A]
    inductance_uh : float
        Total inductance per phase between the two, cables and any inrush reactors [µH]
    frequency_hz : float
        Supply frequency [Hz]

    Returns
    -------
    float
        Peak inrush current [A]

    Notes
    -----
    I_pk = √(2 · V_ph / ω) · √(I1 · I2 / ((I1 + I2) · L)), V_ph = V / √3, L in H. With V in kV and L in µH
    the leading factor is ≈ 1750 at 60 Hz and ≈ 1917 at 50 Hz (IEEE C37.012 gives 1747 at 60 Hz).

    Examples
    --------
    >>> round(back_to_back_inrush_peak_a(480.0, 120.3, 240.6, 10.0, 60.0))
    3434

    References
    ----------
    .. [1] IEEE Std C37.012, capacitance current switching, back-to-back inrush (clause from memory).
    """
    _finite_pos("voltage_v", voltage_v)
    _finite_pos("current_a_1", current_a_1)
    _finite_pos("current_a_2", current_a_2)
    _finite_pos("inductance_uh", inductance_uh)
    _finite_pos("frequency_hz", frequency_hz)
    omega = 2.0 * math.pi * frequency_hz
    v_ph = voltage_v / math.sqrt(3.0)
    inductance_h = inductance_uh * 1e-6
    return math.sqrt(2.0 * v_ph / omega) * math.sqrt(
        current_a_1 * current_a_2 / ((current_a_1 + current_a_2) * inductance_h)
    )


def inrush_frequency_hz(inductance_uh: float, capacitance_uf: float) -> float:
    """Natural frequency of the inrush oscillation.

    Parameters
    ----------
    inductance_uh : float
        Inductance in the inrush loop, per phase [µH]
    capacitance_uf : float
        Equivalent capacitance in the loop, per phase [µF]

    Returns
    -------
    float
        Inrush frequency [Hz]

    Notes
    -----
    f = 1 / (2π √(L · C))

    Examples
    --------
    >>> round(inrush_frequency_hz(10.0, 1000.0))
    1592

    References
    ----------
    .. [1] Any circuits textbook, natural frequency of an LC circuit.
    """
    _finite_pos("inductance_uh", inductance_uh)
    _finite_pos("capacitance_uf", capacitance_uf)
    return 1.0 / (2.0 * math.pi * math.sqrt(inductance_uh * 1e-6 * capacitance_uf * 1e-6))


def near_harmonic(
    order: float, harmonics: tuple[int, ...] = CHARACTERISTIC_HARMONICS, band: float = 0.1
) -> int | None:
    """The characteristic harmonic that a resonance order falls close to, if any.

    Parameters
    ----------
    order : float
        Resonance order to test [-]
    harmonics : tuple of int, optional
        Harmonic orders to keep clear of [-]
    band : float, optional
        Half-width of the band around each harmonic as a fraction of that harmonic [-]

    Returns
    -------
    int or None
        The harmonic h with |order − h| ≤ band · h, the relatively closest when bands overlap; None if none.

    Notes
    -----
    Hit when h · (1 − band) ≤ order ≤ h · (1 + band); 4.5–5.5 for the 5th at band 0.1.

    Examples
    --------
    >>> near_harmonic(4.6), near_harmonic(6.0)
    (5, None)

    References
    ----------
    .. [1] IEEE Std 519-2014, characteristic harmonics of six-pulse converters, h = 6k ± 1 (from memory).
    """
    if not math.isfinite(order) or order < 0.0:
        raise ValueError(f"order must be a finite number >= 0, got {order!r}")
    if not (math.isfinite(band) and 0.0 <= band < 1.0):
        raise ValueError(f"band must be a fraction in [0, 1), got {band!r}")
    best: int | None = None
    best_distance = math.inf
    for harmonic in harmonics:
        if harmonic <= 0:
            raise ValueError(f"harmonic orders must be > 0, got {harmonic!r}")
        distance = abs(order - harmonic) / harmonic
        if distance <= band + 1e-12 and distance < best_distance:
            best, best_distance = harmonic, distance
    return best


def detuned_resonance_order(short_circuit_mva: float, capacitor_kvar: float, p: float) -> float:
    """Parallel resonance order of detuned steps (reactor in series with each step) with the supply.

    Parameters
    ----------
    short_circuit_mva : float
        Short-circuit power at the bank [MVA]
    capacitor_kvar : float
        Capacitor kvar in service, at the supply voltage without the reactor's rise [kvar]
    p : float
        Tuning factor X_L / X_C; 0 for plain steps [-]

    Returns
    -------
    float
        Resonance order [-]

    Notes
    -----
    The source reactance X_s = V²/S_sc resonates with the branch X_L − X_C where h·X_s = X_C/h − h·X_L, so
    h = √(X_C / (X_s + X_L)) = 1 / √(Q_C/S_sc + p); with p = 0 it is √(S_sc/Q_C). It always lies below the
    tuning order 1/√p.

    Examples
    --------
    >>> round(detuned_resonance_order(26.09, 400.0, 0.07), 3)
    3.423
    >>> round(detuned_resonance_order(17.39, 350.0, 0.0), 2)
    7.05

    References
    ----------
    .. [1] IEEE Std 1531-2020, guide for harmonic filter components (series-tuned branch; from memory).
    """
    return 1.0 / math.sqrt(capacitor_kvar / (1000.0 * short_circuit_mva) + p)


def harmonic_position(
    order: float, harmonics: tuple[int, ...] = CHARACTERISTIC_HARMONICS, band: float = 0.1
) -> str:
    """Where a resonance order lies against the characteristic harmonics, as short text.

    Parameters
    ----------
    order : float
        Resonance order [-]
    harmonics : tuple of int, optional
        Harmonic orders, rising [-]
    band : float, optional
        Half-width of the band around each harmonic as a fraction of that harmonic [-]

    Returns
    -------
    str
        "above the 13th" or "below the 5th" outside the bands at either end, else the relatively nearest
        harmonic with the order's deviation from it in percent.

    Examples
    --------
    >>> harmonic_position(11.68), harmonic_position(26.87), harmonic_position(3.2)
    ('11th (+6%)', 'above the 13th', 'below the 5th')
    """
    if order > harmonics[-1] * (1 + band):
        return f"above the {harmonics[-1]}th"
    if order < harmonics[0] * (1 - band):
        return f"below the {harmonics[0]}th"
    nearest = min(harmonics, key=lambda h: abs(order - h) / h)
    return f"{nearest}th ({(order - nearest) / nearest * 100:+.0f}%)"

