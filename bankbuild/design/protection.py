"""Sizing one circuit (a step or the main incomer): conductor, protective device, disconnect.

Every figure is a :class:`~bankbuild.results.sizing.SizingLine` that states the formula with the numbers in it, the
factor, the rule it follows and the standard rating chosen, so a reader can check it by hand. The multipliers
are typical practice: each line says so, and the rule basis decides only defaults and tables.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from bankbuild.design.select import ConductorChoice, Rating, next_rating, pick_conductor
from bankbuild.results.sizing import Check, SizingLine

# NEC 310.10(G): 1/0 AWG (105.6 kcmil, 53.5 mm²) and larger may run in parallel. The limit sits between 1 AWG
# (42.4 mm²) and 1/0 AWG so that the rounding of a table's area column (53.48) cannot exclude 1/0 AWG.
NEC_MIN_PARALLEL_MM2 = 53.0
NEC_MAX_SINGLE_MM2 = 253.4  # 500 kcmil: larger single conductors are hard to terminate (common practice)
IEC_MIN_PARALLEL_MM2 = 50.0  # common practice
IEC_MAX_SINGLE_MM2 = 240.0  # common practice
NEC_NEXT_SIZE_UP_MAX_A = 800.0  # NEC 240.4(B)
NEC_SMALL_CONDUCTOR_MAX_A = {"14 AWG": 15.0, "12 AWG": 20.0, "10 AWG": 30.0}  # NEC 240.4(D), copper
IEC_FUSE_I2_FACTOR = 1.6  # conventional fusing current of gG fuses ≥ 16 A, IEC 60269-1 (from memory)
IEC_BREAKER_I2_FACTOR = 1.3  # conventional tripping current, IEC 60947-2 (from memory)
VERIFY = "typical practice: verify with the local code"


@dataclass(frozen=True)
class CircuitContext:
    """What the sizing needs from the spec and tables, gathered once per bank."""

    rules: str  # nec | iec
    device: str  # fuse | breaker
    conductor_factor: float
    device_factor: float
    disconnect_factor: float
    conductor_rows: tuple
    ampacity_attr: str
    conductor_label: str  # e.g. "Cu 75 °C, NEC Table 310.16 (2023)"
    device_rows: tuple
    frame_rows: tuple
    disconnect_rows: tuple
    max_sets: int


@dataclass(frozen=True)
class Circuit:
    conductor: ConductorChoice | None
    device: Rating | None
    frame: Rating | None
    disconnect: Rating | None
    lines: list[SizingLine] = field(default_factory=list)
    checks: list[Check] = field(default_factory=list)


def iec_fuse_i2_factor(rating_a: float) -> float:
    """Conventional fusing current of a gG fuse-link as a multiple of its rated current [-].

    Parameters
    ----------
    rating_a : float
        Rated current I_n of the fuse-link [A]

    Returns
    -------
    float
        I_2 / I_n: 2.1 up to 4 A, 1.9 above 4 A and below 16 A, 1.6 from 16 A [-]

    References
    ----------
    .. [1] IEC 60269-1, conventional time and current of gG fuse-links (from memory: verify).

    Examples
    --------
    >>> iec_fuse_i2_factor(4), iec_fuse_i2_factor(12), iec_fuse_i2_factor(125)
    (2.1, 1.9, 1.6)
    """
    if rating_a <= 4:
        return 2.1
    if rating_a < 16:
        return 1.9
    return IEC_FUSE_I2_FACTOR


def conductor_name(rules: str):
    """How a conductor row is named on the documents."""
    if rules == "nec":
        return lambda row: row.size
    return lambda row: f"{row.area_mm2:g} mm²"


def _protects(ctx: CircuitContext, device: Rating | None):
    """The coordination test a conductor must pass with the chosen device."""

    def accept(choice: ConductorChoice) -> bool:
        if device is None:
            return True
        rating = device.value
        if ctx.rules == "nec":
            limit = NEC_SMALL_CONDUCTOR_MAX_A.get(choice.size)
            if limit is not None and choice.sets == 1 and rating > limit:
                return False
            if rating <= choice.ampacity_a:
                return True
            # NEC 240.4(B): the next standard rating above the ampacity, up to 800 A.
            above = next_rating(ctx.device_rows, choice.ampacity_a + 1e-6, "rating_a")
            return rating <= NEC_NEXT_SIZE_UP_MAX_A and above is not None and rating <= above.value
        i2 = (iec_fuse_i2_factor(rating) if ctx.device == "fuse" else IEC_BREAKER_I2_FACTOR) * rating
        return rating <= choice.ampacity_a and i2 <= 1.45 * choice.ampacity_a

    return accept


def size_circuit(ctx: CircuitContext, label: str, current_a: float, basis_text: str,
                 with_disconnect: bool, floor_a: float = 0.0, floor_text: str = "") -> Circuit:
    """Size conductor, device (and disconnect) for a circuit carrying ``current_a`` [A].

    ``floor_a`` is a further lower bound on the conductor ampacity [A] that another rule sets (e.g. a third
    of the motor circuit conductor's ampacity for a capacitor at motor terminals), stated in ``floor_text``.
    """
    lines: list[SizingLine] = []
    checks: list[Check] = []
    nec = ctx.rules == "nec"

    dev_req = ctx.device_factor * current_a
    device = next_rating(ctx.device_rows, dev_req, "rating_a")
    dev_name = "Fuse" if ctx.device == "fuse" else "Breaker trip"
    if nec:
        dev_rule = "NEC 460.8(B), 240.6(A); factor " + VERIFY
    elif ctx.device == "fuse":
        dev_rule = "IEC 60269 gG ratings; 1.6–1.8 × I_N " + VERIFY
    else:
        dev_rule = "IEC 60947-2 trip ratings; factor " + VERIFY
    lines.append(_line(f"{dev_name}", current_a, ctx.device_factor, dev_req, dev_rule, device, basis_text))
    if device is None:
        checks.append(Check(name=f"{label}: {dev_name.lower()} rating", ok=False, rule=dev_rule,
                            detail=f"no standard rating ≥ {dev_req:.1f} A in the device table"))
    frame = None
    if ctx.device == "breaker" and device is not None:
        frame = next_rating(ctx.frame_rows, device.value, "frame_a", "{:g} AF")
        lines.append(_line("Breaker frame", device.value, 1.0, device.value, "frame ≥ trip rating",
                           frame, "trip rating"))
        if frame is None:
            checks.append(Check(name=f"{label}: breaker frame", ok=False, rule="frame ≥ trip rating",
                                detail=f"no frame ≥ {device.value:g} A in the frame table"))

    cond_req = ctx.conductor_factor * current_a
    cond_formula = f"{ctx.conductor_factor:g} × {current_a:.1f} A ({basis_text}) = {cond_req:.1f} A"
    cond_rule = ("NEC 460.8(A)" if nec else "IEC 60831-1 1.3 × I_N (1.43 with tolerance)") + "; " + VERIFY
    if floor_a > cond_req:
        cond_req = floor_a
        cond_formula = f"larger of {cond_formula} and {floor_text} = {floor_a:.1f} A"
    name = conductor_name(ctx.rules)
    min_par, max_single = ((NEC_MIN_PARALLEL_MM2, NEC_MAX_SINGLE_MM2) if nec
                           else (IEC_MIN_PARALLEL_MM2, IEC_MAX_SINGLE_MM2))
    plain = pick_conductor(ctx.conductor_rows, cond_req, ctx.ampacity_attr, name, ctx.max_sets, min_par,
                           max_single)
    conductor = pick_conductor(ctx.conductor_rows, cond_req, ctx.ampacity_attr, name, ctx.max_sets, min_par,
                               max_single, accept=_protects(ctx, device))
    lines.append(SizingLine(
        item="Conductor ampacity", basis_a=current_a, factor=ctx.conductor_factor, required_a=cond_req,
        formula=cond_formula,
        rule=cond_rule, chosen=(f"{plain.designation} ({ctx.conductor_label})" if plain else "none large enough"),
        chosen_a=plain.ampacity_a if plain else 0.0, ok=plain is not None))
    if plain is None:
        checks.append(Check(name=f"{label}: conductor", ok=False, rule=cond_rule,
                            detail=f"no conductor (up to {ctx.max_sets} in parallel) reaches {cond_req:.1f} A"))
    elif device is not None:
        coord_rule = ("NEC 240.4(B)/(D) applied conservatively (240.4(G) refers capacitor circuits to "
                      "460.8(B): verify)" if nec else "IEC 60364-4-43 433.1: I_n ≤ I_z, I_2 ≤ 1.45 I_z")
        if conductor is None:
            checks.append(Check(name=f"{label}: conductor protected by device", ok=False, rule=coord_rule,
                                detail=f"no conductor in the table is protected by {device.designation}"))
        elif conductor != plain:
            note = f"upsized from {plain.designation} so that {device.designation} protects it"
            lines.append(SizingLine(
                item="Conductor, coordinated", basis_a=device.value, factor=1.0, required_a=device.value,
                formula=_coord_formula(ctx, device.value, conductor.ampacity_a), rule=coord_rule,
                chosen=f"{conductor.designation} ({ctx.conductor_label})", chosen_a=conductor.ampacity_a,
                ok=True, note=note))
        else:
            lines.append(SizingLine(
                item="Conductor, coordinated", basis_a=device.value, factor=1.0, required_a=device.value,
                formula=_coord_formula(ctx, device.value, conductor.ampacity_a), rule=coord_rule,
                chosen=f"{conductor.designation} (as sized)", chosen_a=conductor.ampacity_a, ok=True))
    final = conductor if (conductor is not None and device is not None) else plain

    disconnect = None
    if with_disconnect:
        disc_req = ctx.disconnect_factor * current_a
        disc_text = f"{ctx.disconnect_factor:g} × {current_a:.1f} A = {disc_req:.1f} A"
        if ctx.device == "fuse" and device is not None and device.value > disc_req:
            disc_req = device.value
            disc_text += f"; fusible switch must hold the {device.designation} fuse"
        disconnect = next_rating(ctx.disconnect_rows, disc_req, "rating_a")
        disc_rule = ("NEC 460.8(C)" if nec else "IEC 60947-3 switch-disconnector") + "; " + VERIFY
        lines.append(SizingLine(
            item="Disconnect", basis_a=current_a, factor=ctx.disconnect_factor, required_a=disc_req,
            formula=disc_text, rule=disc_rule, chosen=disconnect.designation if disconnect else "none large enough",
            chosen_a=disconnect.value if disconnect else 0.0, ok=disconnect is not None))
        if disconnect is None:
            checks.append(Check(name=f"{label}: disconnect", ok=False, rule=disc_rule,
                                detail=f"no disconnect rating ≥ {disc_req:.1f} A in the table"))
    return Circuit(conductor=final, device=device, frame=frame, disconnect=disconnect, lines=lines,
                   checks=checks)


def _coord_formula(ctx: CircuitContext, rating_a: float, ampacity_a: float) -> str:
    """The coordination test written out with the device rating and the conductor's ampacity."""
    if ctx.rules == "nec":
        if rating_a <= ampacity_a:
            return f"device {rating_a:g} A ≤ ampacity {ampacity_a:g} A"
        return (f"device {rating_a:g} A is the next standard rating above ampacity {ampacity_a:g} A "
                f"(allowed up to {NEC_NEXT_SIZE_UP_MAX_A:g} A)")
    factor = iec_fuse_i2_factor(rating_a) if ctx.device == "fuse" else IEC_BREAKER_I2_FACTOR
    return (f"I_n {rating_a:g} A ≤ I_z {ampacity_a:g} A; I_2 = {factor:g} × {rating_a:g} = "
            f"{factor * rating_a:.1f} A ≤ 1.45 × {ampacity_a:g} = {1.45 * ampacity_a:.1f} A")


def _line(item: str, current_a: float, factor: float, required_a: float, rule: str, pick: Rating | None,
          basis_text: str) -> SizingLine:
    return SizingLine(
        item=item, basis_a=current_a, factor=factor, required_a=required_a,
        formula=f"{factor:g} × {current_a:.1f} A ({basis_text}) = {required_a:.1f} A", rule=rule,
        chosen=pick.designation if pick else "none large enough", chosen_a=pick.value if pick else 0.0,
        ok=pick is not None)
