"""Switching the steps: inrush on energising and back-to-back, the capacitor-duty contactor, damping, and the
reconnection delay an automatic step needs before it is switched on again.

All inductances are per phase in µH, capacitances per phase of the wye equivalent in µF, voltages line to line.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from bankbuild.calc import capacitor as cap
from bankbuild.calc import system as sysc
from bankbuild.results.sizing import Pick, StepSwitching

CAPACITOR_INRUSH_LIMIT_PU = 100.0
"""Peak inrush a capacitor unit may take, in multiples of its rated rms current: IEC 60831-1 (from memory)."""

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


def contactor_rows_at(rows: Sequence, voltage_v: float) -> list:
    """Contactor rows at the lowest table voltage at or above ``voltage_v`` (all frames, both dampings)."""
    volts = sorted({r.voltage_v for r in rows if r.voltage_v >= voltage_v - 1e-9})
    if not volts:
        return []
    return [r for r in rows if r.voltage_v == volts[0]]


def contactor_current_a(row) -> float:
    """Capacitor-duty current of a contactor row: its AC-6b rated current at the row's voltage [A]."""
    return row.ac6b_current_a


def contactor_kvar(row) -> float:
    """The kvar a contactor row may switch at its voltage, from its current: Q = √3 · U · I_e [kvar]."""
    return cap.kvar_at_current(row.ac6b_current_a, row.voltage_v)


def pick_contactor(rows: Sequence, required_a: float, peak_a: float | None, capacitor_limit_a: float):
    """The contactor for a step, and whether damping was needed.

    The smallest frame that carries the current, without damping resistors when the prospective peak is within
    both its and the capacitor's limit (a larger frame is not chosen just to make the inrush: that is what
    damping is for); else the smallest frame with damping resistors that carries the current, when it makes the
    peak; else that frame all the same (the caller then asks for damping reactors).

    Returns
    -------
    tuple
        (row or None, damping needed: bool)
    """
    fit = sorted((r for r in rows if contactor_current_a(r) >= required_a - 1e-9), key=lambda r: r.ac6b_current_a)
    plain = [r for r in fit if r.damping == "none"]
    damped = [r for r in fit if r.damping == "resistors"]
    if peak_a is None:
        return (plain or damped or [None])[0], False
    if plain and peak_a <= min(plain[0].max_peak_a, capacitor_limit_a):
        return plain[0], False
    if damped and peak_a <= damped[0].max_peak_a:
        return damped[0], True
    return (damped or plain or [None])[0], True


def step_switching(index: int, capacitances_uf: Sequence[float], reactors_uh: Sequence[float],
                   rated_current_a: float, required_a: float, voltage_v: float, inter_step_uh: float,
                   source_uh: float | None, rows: Sequence) -> StepSwitching:
    """Inrush and contactor of step ``index`` (0-based) of an automatic bank.

    Parameters
    ----------
    index : int
        Which step, 0-based.
    capacitances_uf : sequence of float
        Capacitance per phase (wye equivalent) of every step [µF].
    reactors_uh : sequence of float
        Series (detuning) inductance per phase of every step, 0 for a plain step [µH].
    rated_current_a : float
        The step's rated current, basis of the capacitor's inrush limit [A].
    required_a : float
        Current the contactor's capacitor-duty rating must reach [A].
    voltage_v : float
        The supply voltage [V].
    inter_step_uh : float
        Assumed inductance between two steps [µH].
    source_uh : float or None
        Source inductance (None without a transformer) [µH].
    rows : sequence of Contactor
        The contactor table.

    Returns
    -------
    StepSwitching
    """
    c_k = capacitances_uf[index]
    l_k = reactors_uh[index]
    energising = inrush_peak_a(voltage_v, c_k, source_uh + l_k) if source_uh else None
    others_c = sum(c for j, c in enumerate(capacitances_uf) if j != index)
    b2b = loop = freq = None
    if others_c > 0:
        loop = inter_step_uh + l_k + parallel_uh([x for j, x in enumerate(reactors_uh) if j != index])
        c_eq = series_uf(c_k, others_c)
        b2b = inrush_peak_a(voltage_v, c_eq, loop)
        freq = sysc.inrush_frequency_hz(loop, c_eq)
    elif energising is not None:
        freq = sysc.inrush_frequency_hz(source_uh + l_k, c_k)
    peaks = [x for x in (energising, b2b) if x is not None]
    peak = max(peaks) if peaks else None
    cap_limit = CAPACITOR_INRUSH_LIMIT_PU * rated_current_a
    row, needed = pick_contactor(contactor_rows_at(rows, voltage_v), required_a, peak, cap_limit)
    limit = cap_limit
    extra = None
    if row is not None:
        limit = row.max_peak_a if row.damping == "resistors" else min(row.max_peak_a, cap_limit)
    if peak is not None and peak > limit:
        worst_loop = loop if (b2b is not None and b2b >= (energising or 0.0)) else (source_uh or 0.0) + l_k
        extra = damping_inductance_uh(peak, limit, worst_loop)
    pick = None if row is None else Pick(designation=row.contactor_id, value=row.ac6b_current_a, table=row.table,
                                         row=row.row)
    return StepSwitching(
        contactor=pick, damping=row.damping if row is not None else "none", required_current_a=required_a,
        contactor_current_a=contactor_current_a(row) if row is not None else 0.0,
        contactor_voltage_v=row.voltage_v if row is not None else 0.0,
        contactor_kvar=contactor_kvar(row) if row is not None else 0.0, energising_peak_a=energising,
        back_to_back_peak_a=b2b, loop_inductance_uh=loop, inrush_frequency_hz=freq, capacitor_limit_a=cap_limit,
        contactor_limit_a=row.max_peak_a if row is not None else 0.0, damping_needed=needed or extra is not None,
        damping_reactor_uh=extra, coil_sealed_va=row.coil_sealed_va if row is not None else 0.0,
        coil_inrush_va=row.coil_inrush_va if row is not None else 0.0,
        losses_w=row.losses_w if row is not None else 0.0)


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
    return cap.capacitance_uf_per_leg(rated_kvar, rated_voltage_v, rated_frequency_hz, "wye")
