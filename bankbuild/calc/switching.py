"""Switching arithmetic: inrush peaks on energising and back-to-back, source and damping inductance, the
discharge time constant of a unit's own resistors and the reconnection delay.

All inductances are per phase in µH, capacitances per phase of the wye equivalent in µF, voltages line to line.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from bankbuild.calc.capacitor import capacitance_uf_per_leg

RESIDUAL_FRACTION = 0.10  # re-energise only at ≤ 10 % of rated voltage: IEC 60831-1 (from memory)

RESIDUAL_SAFE_V = 50.0  # and at ≤ 50 V, the residual the NEC 460.6(A) discharge rule aims at

DELAY_STEP_S = 5.0  # the delay is rounded up to a whole number of these (controller setting steps)


def inrush_peak_a(voltage_v: float, capacitance_uf: float, inductance_uh: float) -> float:
    """Peak inrush current when a capacitance is switched on through an inductance (undamped).

    Parameters
    ----------
    voltage_v : float
        Line-to-line voltage [V].
    capacitance_uf : float
        Capacitance per phase of the wye equivalent; the series combination for back-to-back switching [µF].
    inductance_uh : float
        Inductance per phase in the inrush loop [µH].

    Returns
    -------
    float
        Peak current [A].

    Notes
    -----
    Switching at the voltage peak into an LC loop: I_pk = √2 · V_ph · √(C / L), V_ph = V / √3. With the source
    inductance and one bank it is the energising formula √2·√(I_sc·I_1); with C = C1·C2/(C1 + C2) it is the
    back-to-back formula of IEEE C37.012 (constant 1747 at 60 Hz with V in kV and L in µH).

    Examples
    --------
    >>> round(inrush_peak_a(480.0, 1151.0, 5.0))
    5946

    References
    ----------
    .. [1] IEEE Std C37.012, application guide for capacitance current switching, inrush (from memory).
    """
    return math.sqrt(2.0) * voltage_v / math.sqrt(3.0) * math.sqrt(capacitance_uf / inductance_uh)


def series_uf(c1_uf: float, c2_uf: float) -> float:
    """Two capacitances in series [µF].

    >>> series_uf(100.0, 300.0)
    75.0
    """
    return c1_uf * c2_uf / (c1_uf + c2_uf)


def parallel_uh(inductances_uh: Sequence[float]) -> float:
    """Inductances in parallel [µH]; a zero branch (no reactor) makes the whole zero.

    >>> parallel_uh([100.0, 100.0]), parallel_uh([100.0, 0.0])
    (50.0, 0.0)
    """
    if not inductances_uh or any(x <= 0 for x in inductances_uh):
        return 0.0
    return 1.0 / sum(1.0 / x for x in inductances_uh)


def source_inductance_uh(short_circuit_current_a: float, voltage_v: float, frequency_hz: float) -> float:
    """Source inductance per phase seen from the bank [µH].

    Notes
    -----
    L = V_ph / (ω · I_sc), V_ph = V / √3, ω = 2πf.

    Examples
    --------
    >>> round(source_inductance_uh(20917.0, 480.0, 60.0), 2)
    35.14
    """
    return voltage_v / math.sqrt(3.0) / (2.0 * math.pi * frequency_hz * short_circuit_current_a) * 1e6


def damping_inductance_uh(peak_a: float, limit_a: float, loop_uh: float) -> float:
    """Inductance to add per phase so that the peak falls to ``limit_a`` (peak scales with 1/√L) [µH].

    >>> damping_inductance_uh(4000.0, 2000.0, 5.0)
    15.0
    """
    if peak_a <= limit_a:
        return 0.0
    return loop_uh * ((peak_a / limit_a) ** 2 - 1.0)


def reconnection_times_s(tau_s: float, rated_leg_voltage_v: float) -> tuple[float, float, float, float]:
    """Times for a step's discharge resistors to bring it down to 10 % of rated voltage and to 50 V.

    Parameters
    ----------
    tau_s : float
        Time constant R·C of the step's own discharge resistors [s].
    rated_leg_voltage_v : float
        Rated rms voltage across one leg [V].

    Returns
    -------
    tuple of float
        (start voltage √2·V [V], 10 % limit [V], time to 10 % [s], time to 50 V [s]).

    Notes
    -----
    V(t) = V0·e^(−t/τ), t = τ·ln(V0 / V_lim), V0 = √2·V_rated.

    Examples
    --------
    >>> [round(x, 1) for x in reconnection_times_s(22.4, 480.0)]
    [678.8, 48.0, 59.3, 58.4]
    """
    v0 = math.sqrt(2.0) * rated_leg_voltage_v
    limit = RESIDUAL_FRACTION * rated_leg_voltage_v
    t10 = tau_s * math.log(v0 / limit)
    t50 = tau_s * math.log(v0 / RESIDUAL_SAFE_V) if v0 > RESIDUAL_SAFE_V else 0.0
    return v0, limit, t10, t50


def delay_setting_s(time_s: float) -> float:
    """A reconnection delay setting: the time rounded up to the next whole 5 s.

    >>> delay_setting_s(59.3), delay_setting_s(60.0)
    (60.0, 60.0)
    """
    return DELAY_STEP_S * math.ceil(time_s / DELAY_STEP_S - 1e-9)


def capacitance_uf(rated_kvar: float, rated_voltage_v: float, rated_frequency_hz: float) -> float:
    """Capacitance per phase of the wye equivalent from nameplate kvar at rated V and f [µF].

    >>> round(capacitance_uf(100.0, 480.0, 60.0), 1)
    1151.3
    """
    return capacitance_uf_per_leg(rated_kvar, rated_voltage_v, rated_frequency_hz, "wye")
