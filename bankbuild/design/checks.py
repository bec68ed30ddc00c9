"""System checks of a bank where it is installed: capacitor voltage against the unit rating, resonance with the
supply for every step combination, over-correction at light load, and (in :mod:`bankbuild.design.motor`) a bank
at a motor's terminals. Both ``size`` and ``rerate`` call :func:`system_figures`.

Each check is a :class:`~bankbuild.results.sizing.Check` that names its rule; a limit the bank does not meet is a failed
check, never an exception. The limits are the published ones (IEEE Std 18, IEC 60831-1), marked where they are
from memory; none of this states compliance.
"""

from __future__ import annotations

import math

from bankbuild.calc import EPS
from bankbuild.calc import detuning as det
from bankbuild.calc import system as sysc
from bankbuild.calc.system import detuned_resonance_order
from bankbuild.design.motor import largest_within, motor_figures
from bankbuild.results.sizing import (
    Check,
    DetuningAdvice,
    LightLoadCheck,
    ResonancePoint,
    SystemResult,
    TuningCheck,
    VoltageStress,
)

IEC_VOLTAGE_CLASSES = (  # IEC 60831-1 maximum permissible voltages (from memory)
    (1.00, "continuous"), (1.10, "8 h in every 24 h"), (1.15, "30 min in every 24 h"), (1.20, "5 min"),
    (1.30, "1 min"))
UNDERUSED_PU = 0.5  # below this, most of a unit's nameplate kvar is wasted
DETUNED_MAX_ORDER = 4.5  # a detuned step's tuning order must stay below the 5th's ±10 % band
SUGGESTED_DETUNING = 0.07  # the usual tuning factor offered (189 Hz at 50 Hz, 227 Hz at 60 Hz)
MAX_COMBINATIONS = 2048


PERCENT_KEYS = (  # (key path, what it is, the range such values usually take [%]): common practice (no single source)
    (("supply", "transformer_z_pct"), "a distribution transformer's impedance", "4–8"),
    (("detuning_pct",), "a detuning tuning factor", "5.67–14"),
    (("voltage_margin_pct",), "a voltage margin", "5–10"),
)


def percent_as_fraction_checks(bank) -> list[Check]:
    """A percentage key written as a fraction (``transformer_z_pct: 0.0575`` for 5.75 %): a flag that names the
    key and the likely value; the bank is still sized as written.

    Examples
    --------
    >>> from types import SimpleNamespace as NS
    >>> bank = NS(supply=NS(transformer_z_pct=0.0575), detuning_pct=7.0, voltage_margin_pct=0.0)
    >>> [c.detail.split(";")[0] for c in percent_as_fraction_checks(bank)]
    ['supply.transformer_z_pct is 0.0575 %']
    """
    checks = []
    for path, what, usual in PERCENT_KEYS:
        value = bank
        for part in path:
            value = getattr(value, part, None)
        if value is not None and 0 < value < 1:
            key = ".".join(path)
            checks.append(Check(
                name="Percentage written as a fraction?", ok=False, level="caution", rule="spec plausibility",
                detail=f"{key} is {value:g} %; {what} is usually {usual} %: did you mean {value * 100:g}? "
                       f"(sized as written; a _pct key is in percent)"))
    return checks


def iec_duration(voltage_pu: float) -> str:
    """How long IEC 60831-1 lets a unit run at ``voltage_pu`` × U_N (from memory).

    >>> iec_duration(1.0), iec_duration(1.12), iec_duration(1.4)
    ('continuous', '30 min in every 24 h', 'not permitted')
    """
    for limit, duration in IEC_VOLTAGE_CLASSES:
        if voltage_pu <= limit + EPS:
            return duration
    return "not permitted"


def _limits(basis):
    """The capacitor voltage and current limits of a rule basis (the built-in NEC basis when none is given)."""
    if basis is None:
        from bankbuild.spec.rulebasis import builtin_rule_basis

        basis = builtin_rule_basis("nec").rules
    return basis.voltage_limits


def short_time_allowance(voltage_pu: float, limits) -> tuple[float | None, str]:
    """The smallest short-time allowance of ``limits`` that covers ``voltage_pu``: (pu, duration), or (None, "").

    >>> from types import SimpleNamespace as N
    >>> lim = N(short_time=[N(pu=1.10, duration="8 h in every 24 h"), N(pu=1.15, duration="30 min in every 24 h")])
    >>> short_time_allowance(1.06, lim), short_time_allowance(1.2, lim)
    ((1.1, '8 h in every 24 h'), (None, ''))
    """
    for allowance in limits.short_time:
        if voltage_pu <= allowance.pu + EPS:
            return allowance.pu, allowance.duration
    return None, ""


def voltage_stress(v_s: float, f_s: float, v_r: float, f_r: float, p: float, rise_pct: float | None,
                   delivered_kvar: float, rated_kvar: float, basis=None) -> VoltageStress:
    """Voltage, current and kvar of the units relative to their rating, at the supply and at light load.

    The verdicts use the rule basis's limits (``basis``; default the built-in NEC basis, IEEE Std 18): the
    capacitor voltage at the supply must be within the continuous limit; the light-load voltage (hours a day)
    within the basis's light-load limit (IEC 60831-1: 1.10 U_N for 8 h in 24 h; otherwise the continuous limit).
    ``ok`` is both, the one verdict every output uses; ``short_time_pu`` names the allowance the light-load
    voltage falls in, for the text.

    >>> s = voltage_stress(480.0, 60.0, 480.0, 60.0, 0.0, 1.2, 100.0, 100.0)
    >>> round(s.light_load_voltage_v, 2), round(s.kvar_pu, 4), s.ok
    (485.76, 1.0241, True)
    """
    limits = _limits(basis)
    v_c = det.capacitor_voltage_v(v_s, p) if p else v_s
    v_ll = v_c * (1.0 + (rise_pct or 0.0) / 100.0)
    pu = v_ll / v_r
    continuous_ok = v_c <= limits.continuous_pu * v_r + EPS
    short_pu, duration = (None, "") if pu <= limits.continuous_pu + EPS else short_time_allowance(pu, limits)
    light_ok = pu <= limits.light_load_limit_pu + EPS
    return VoltageStress(
        rated_voltage_v=v_r, rated_frequency_hz=f_r, capacitor_voltage_v=v_c, light_load_voltage_v=v_ll,
        voltage_pu=pu, current_pu=pu * f_s / f_r, kvar_pu=pu**2 * f_s / f_r,
        utilisation_pu=delivered_kvar / rated_kvar if rated_kvar > 0 else 0.0, iec_duration=iec_duration(pu),
        continuous_limit_pu=limits.continuous_pu, short_time_pu=short_pu, short_time_duration=duration,
        continuous_ok=continuous_ok, light_load_ok=light_ok, ok=continuous_ok and light_ok)


def voltage_checks(stress: VoltageStress, rules: str, v_s: float, p: float, rise_pct: float | None,
                   total_kvar: float, basis=None) -> list[Check]:
    """The capacitor-voltage, current/kvar and under-voltage checks of one bank, on the rule basis's limits.

    The voltage checks carry exactly the verdicts of ``stress`` (one verdict per fact in every output).
    """
    limits = _limits(basis)
    v_r, f_r = stress.rated_voltage_v, stress.rated_frequency_hz
    seen = f"{v_s:g} V / (1 − {p:g})" if p else "the supply"
    checks = [Check(
        name="Capacitor voltage", ok=stress.continuous_ok, rule=limits.clause,
        detail=f"units rated {v_r:g} V, {f_r:g} Hz see {stress.capacitor_voltage_v:.0f} V ({seen}) = "
               f"{stress.capacitor_voltage_v / v_r:.1%} of rating, continuously; limit "
               f"{limits.continuous_pu:.0%}")]
    if rise_pct is not None:
        pu = stress.voltage_pu
        if pu <= limits.continuous_pu + EPS:
            extra = f"; within the continuous limit {limits.continuous_pu:.0%}"
        elif stress.light_load_ok:
            extra = f"; above the continuous {limits.continuous_pu:.0%}: {limits.light_load_text}"
        else:
            extra = f"; above the {limits.light_load_limit_pu:.0%} allowed for hours a day"
            if stress.short_time_pu is not None:
                extra += (f" ({stress.short_time_pu:.0%} is allowed only {stress.short_time_duration}, "
                          f"{limits.short_time_clause})")
        checks.append(Check(
            name="Capacitor voltage at light load", ok=stress.light_load_ok,
            rule=limits.clause + (f"; {limits.short_time_clause}" if limits.short_time_clause else ""),
            detail=f"+{rise_pct:.2f}% rise with all {total_kvar:.0f} kvar on at light load: "
                   f"{stress.light_load_voltage_v:.0f} V = {pu:.1%} of {v_r:g} V{extra}"))
    freq = f" and {stress.rated_frequency_hz:g} Hz units run at other than rated frequency" \
        if abs(stress.current_pu / stress.voltage_pu - 1.0) > 1e-9 else ""
    ok = stress.current_pu <= limits.current_pu + EPS
    detail = f"current {stress.current_pu:.1%} of rating"
    if limits.kvar_pu is not None:
        ok = ok and stress.kvar_pu <= limits.kvar_pu + EPS
        detail = f"kvar {stress.kvar_pu:.1%}, " + detail
    checks.append(Check(name="Capacitor current and kvar", ok=ok, rule=limits.current_clause,
                        detail=detail + f" at the fundamental{freq}; harmonic currents add to it"))
    use = stress.utilisation_pu
    checks.append(Check(
        name="Unit under-voltage", ok=use >= UNDERUSED_PU - EPS, rule="re-rating: kvar ∝ (V/V_r)² · (f/f_r)",
        detail=f"units deliver {use:.0%} of their nameplate kvar here"
               + ("; most of it is wasted: pick units rated nearer the supply" if use < UNDERUSED_PU else "")))
    return checks


def step_combinations(values: list[float], limit: int = MAX_COMBINATIONS) -> tuple[list[tuple[float, list[int]]],
                                                                                    bool]:
    """Every distinct total that some combination of steps gives, with one combination (1-based step numbers).

    Returns the totals in ascending order and whether the list is complete (False when more than ``limit``
    distinct totals exist; the cumulative combinations 1, 1+2, 1+2+3 … are then always included).

    >>> step_combinations([25.0, 25.0, 50.0])
    ([(25.0, [1]), (50.0, [3]), (75.0, [1, 3]), (100.0, [1, 2, 3])], True)
    """
    sums: dict[float, tuple[float, list[int]]] = {0.0: (0.0, [])}
    complete = True
    for i, value in enumerate(values, start=1):
        for total, steps in list(sums.values()):
            new = total + value
            k = round(new, 6)
            if k in sums:
                if len(steps) + 1 < len(sums[k][1]):  # name the combination with the fewest steps
                    sums[k] = (new, steps + [i])
                continue
            if len(sums) > limit:
                complete = False
                break
            sums[k] = (new, steps + [i])
    if not complete:
        running = 0.0
        for i, value in enumerate(values, start=1):
            running += value
            sums.setdefault(round(running, 6), (running, list(range(1, i + 1))))
    return sorted((v for k, v in sums.items() if k > 0), key=lambda t: t[0]), complete


def tuning_check(bank, p: float) -> tuple[TuningCheck | None, list[Check]]:
    """A detuned bank's tuning order against the 5th harmonic (with or without a transformer given)."""
    if not p:
        return None, []
    f_s = bank.supply.frequency_hz
    order = det.tuning_order(p)
    f_t = det.tuning_frequency_hz(f_s, p)
    tuning = TuningCheck(tuning_pct=bank.detuning_pct, tuning_frequency_hz=f_t, tuning_order=order,
                         ok=order <= DETUNED_MAX_ORDER + EPS)
    wanted = det.tuning_frequency_hz(f_s, SUGGESTED_DETUNING)
    return tuning, [Check(
        name="Detuning", ok=tuning.ok, rule="tuning order below the 5th harmonic's band (≤ 4.5)",
        detail=(f"steps tuned to {f_t:.0f} Hz = order {order:.2f} at {f_s:g} Hz" + (
            "; inductive above it, so the steps cannot resonate at the 5th and above" if tuning.ok else
            f": so close to the 5th that the steps would absorb 5th-harmonic current from the whole network; "
            f"use reactors for p = {SUGGESTED_DETUNING:.0%} at {f_s:g} Hz ({wanted:.0f} Hz)")))]


def resonance(bank, steps, p: float, available_v: list[float]):
    """Resonance points for every step combination, detuning advice, and the resonance check."""
    supply = bank.supply
    if not supply.has_transformer:
        return None, [], True, None, []
    s_sc = sysc.short_circuit_mva(supply.transformer_kva, supply.transformer_z_pct, supply.source_sc_mva)
    source = (f"{supply.transformer_kva:g} kVA, {supply.transformer_z_pct:g}% transformer"
              + (f" with a {supply.source_sc_mva:g} MVA source in series" if supply.source_sc_mva else "")
              + f": S_sc {s_sc:.2f} MVA")
    cap_kvar = [s.detuning.capacitor_kvar_at_supply if (p and s.detuning) else s.kvar for s in steps]
    by_step = {s.index: s.kvar for s in steps}
    combos, complete = step_combinations(cap_kvar)
    points = []
    for q_c, members in combos:
        h = detuned_resonance_order(s_sc, q_c, p)
        points.append(ResonancePoint(steps=[steps[i - 1].index for i in members],
                                     kvar=sum(by_step[steps[i - 1].index] for i in members), capacitor_kvar=q_c,
                                     harmonic_order=h, near_harmonic=sysc.near_harmonic(h),
                                     position=sysc.harmonic_position(h)))
    advice = None
    flagged = [pt for pt in points if pt.near_harmonic]
    shown = "" if complete else f" (first {MAX_COMBINATIONS} distinct totals and the cumulative ones)"
    if not p or flagged:
        advice = _detuning_advice(supply.voltage_v, supply.frequency_hz, available_v)
    orders = [pt.harmonic_order for pt in points]
    detail = "; ".join(f"{_steps_text(pt.steps)} ({pt.kvar:.0f} kvar): h = {pt.harmonic_order:.2f}, "
                       f"near the {pt.near_harmonic}th" for pt in flagged[:6])
    if len(flagged) > 6:
        detail += f"; and {len(flagged) - 6} more combinations"
    if flagged and advice is not None:
        unit = (f"rate the units ≥ {advice.unit_voltage_v:g} V" if advice.unit_voltage_v else
                "no unit in the table is rated high enough")
        detail += (f"; detune: p = {advice.tuning_pct:g}% tunes each step to {advice.tuning_frequency_hz:.0f} Hz "
                   f"(order {advice.tuning_order:.2f}); units then see {advice.capacitor_voltage_v:.0f} V: {unit}")
    elif not flagged:
        detail = (f"{len(points)} step combinations{shown}: h from {min(orders):.2f} to {max(orders):.2f}, "
                  "clear of the 5th, 7th, 11th and 13th")
    check = Check(name="Resonance", ok=not flagged,
                  rule="h = √(S_sc/Q)" + (", detuned 1/√(Q_C/S_sc + p)" if p else "") + "; ±10% band",
                  detail=f"{source}; {detail}")
    return s_sc, points, complete, advice, [check]


def _steps_text(steps: list[int]) -> str:
    """``step 2`` or ``steps 1+3+4``."""
    return f"step {steps[0]}" if len(steps) == 1 else "steps " + "+".join(map(str, steps))


def _detuning_advice(v_s: float, f_s: float, available_v: list[float]) -> DetuningAdvice:
    v_c = det.capacitor_voltage_v(v_s, SUGGESTED_DETUNING)
    fits = [v for v in sorted(available_v) if v >= v_c - EPS]
    return DetuningAdvice(tuning_pct=100 * SUGGESTED_DETUNING,
                          tuning_frequency_hz=det.tuning_frequency_hz(f_s, SUGGESTED_DETUNING),
                          tuning_order=det.tuning_order(SUGGESTED_DETUNING), capacitor_voltage_v=v_c,
                          unit_voltage_v=fits[0] if fits else None)


def light_load_check(bank, steps, unit_rows, factor: float) -> tuple[LightLoadCheck | None, list[Check]]:
    """Over-correction when the plant runs light and the fixed steps stay on."""
    light = bank.light_load
    if light is None:
        return None, []
    n = bank.fixed_step_count
    fixed = steps[:n]
    fixed_kvar = sum(s.kvar for s in fixed)
    net = light.kvar - fixed_kvar
    pf = light.kw / math.hypot(light.kw, net) if (light.kw or net) else 1.0
    leading = net < -EPS
    best_kvar, best_units = largest_within(unit_rows, factor, light.kvar)
    figures = LightLoadCheck(kw=light.kw, kvar=light.kvar, fixed_steps=[s.index for s in fixed],
                             fixed_kvar=fixed_kvar, net_kvar=net, power_factor=pf, leading=leading,
                             max_fixed_kvar=light.kvar, suggested_kvar=best_kvar, suggested_units=best_units)
    load = f"light load {light.kw:g} kW, {light.kvar:g} kvar"
    if not fixed:
        detail = f"{load}; no step stays on (automatic bank): the controller switches steps out"
    else:
        which = "+".join(str(s.index) for s in fixed)
        units = " + ".join(f"{u.qty} × {u.id}" for u in best_units) or "no unit small enough"
        detail = (f"{load}; fixed steps {which} give {fixed_kvar:.1f} kvar: PF {pf:.3f} "
                  f"{'leading' if leading else 'lagging' if net > EPS else '(unity)'}")
        if leading:
            detail += (f"; the largest fixed kvar that avoids it is {light.kvar:.1f} kvar, e.g. {units} = "
                       f"{best_kvar:.1f} kvar; switch the rest with the load")
    return figures, [Check(name="Over-correction at light load", ok=not leading,
                           rule="fixed kvar ≤ light-load kvar (leading PF raises voltage); common practice",
                           detail=detail)]


def system_figures(bank, steps, *, rules: str, basis=None, v_r: float, f_r: float, rise_pct: float | None,
                   unit_rows, factor: float, available_v: list[float], rated_current_a: float,
                   main_conductor_ampacity_a: float, main_conductor: str, ctx) -> tuple[SystemResult, list[Check]]:
    """All system checks of one sized bank: what ``size`` and ``rerate`` add to the bank's checks.

    ``steps`` are the sized steps, ``unit_rows`` the table's units of the bank's rating (for suggestions) and
    ``factor`` what each gives per nameplate kvar at the supply; ``ctx`` is the bank's circuit context.
    """
    supply = bank.supply
    p = bank.tuning_factor
    delivered = sum(s.kvar for s in steps)
    rated = sum(s.rated_kvar for s in steps)
    stress = voltage_stress(supply.voltage_v, supply.frequency_hz, v_r, f_r, p, rise_pct, delivered, rated, basis)
    checks = voltage_checks(stress, rules, supply.voltage_v, p, rise_pct, delivered, basis)
    tuning, tuning_checks = tuning_check(bank, p)
    checks += tuning_checks
    s_sc, points, complete, advice, res_checks = resonance(bank, steps, p, available_v)
    checks += res_checks
    light, light_checks = light_load_check(bank, steps, unit_rows, factor)
    checks += light_checks
    motor, motor_checks = motor_figures(bank, delivered, rated_current_a, main_conductor_ampacity_a,
                                        main_conductor, ctx, unit_rows, factor)
    checks += motor_checks
    s_tx = (sysc.short_circuit_mva(supply.transformer_kva, supply.transformer_z_pct)
            if supply.has_transformer else None)
    return SystemResult(voltage=stress, short_circuit_mva=s_sc, transformer_short_circuit_mva=s_tx,
                        resonance_combinations=points,
                        combinations_complete=complete, tuning=tuning, detuning_advice=advice, light_load=light,
                        motor=motor), checks
