"""Switching the steps: inrush on energising and back-to-back, the capacitor-duty contactor, damping, and the
reconnection delay an automatic step needs before it is switched on again.

All inductances are per phase in µH, capacitances per phase of the wye equivalent in µF, voltages line to line.
"""

from __future__ import annotations

from collections.abc import Sequence

from bankbuild.calc import capacitor as cap
from bankbuild.calc import system as sysc
from bankbuild.calc.switching import (
    damping_inductance_uh,
    inrush_peak_a,
    parallel_uh,
    series_uf,
)
from bankbuild.results.sizing import Pick, StepSwitching

CAPACITOR_INRUSH_LIMIT_PU = 100.0
"""Peak inrush a capacitor unit may take, in multiples of its rated rms current: IEC 60831-1 (from memory)."""


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


