"""Sizing one circuit (a step or the main incomer): conductor, protective device, disconnect.

Every figure is a :class:`~bankbuild.results.sizing.SizingLine` that states the formula with the numbers in it, the
factor, the rule it follows and the standard rating chosen, so a reader can check it by hand. The multipliers
are typical practice: each line says so, and the rule basis decides only defaults and tables.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import NamedTuple

from bankbuild.calc import ampacity as amp
from bankbuild.design.select import ConductorChoice, Rating, next_rating, pick_conductor
from bankbuild.results.sizing import Check, SizingLine

# NEC 310.10(G): 1/0 AWG (105.6 kcmil, 53.5 mm²) and larger may run in parallel. The limit sits between 1 AWG
# (42.4 mm²) and 1/0 AWG so that the rounding of a table's area column (53.48) cannot exclude 1/0 AWG.
NEC_MIN_PARALLEL_MM2 = 53.0
NEC_MAX_SINGLE_MM2 = 253.4  # 500 kcmil: larger single conductors are hard to terminate (common practice)
IEC_MIN_PARALLEL_MM2 = 50.0  # common practice
IEC_MAX_SINGLE_MM2 = 240.0  # common practice
NEC_NEXT_SIZE_UP_MAX_A = 800.0  # NEC 240.4(B)(3) (the built-in NEC rule bases carry it)
NEC_SMALL_CONDUCTOR_MAX_A = {"14 AWG": 15.0, "12 AWG": 20.0, "10 AWG": 30.0}  # NEC 240.4(D), copper
IEC_FUSE_I2_FACTOR = 1.6  # conventional fusing current of gG fuses ≥ 16 A, IEC 60269-1 (from memory)
IEC_BREAKER_I2_FACTOR = 1.3  # conventional tripping current, IEC 60947-2 (from memory)
ONE_AWG_MM2 = 42.41  # 1 AWG, the largest size NEC 110.14(C)(1)(a) counts as small (area from the AWG formula)
VERIFY = "typical practice: verify with the local code"


@dataclass(frozen=True)
class CircuitContext:
    """What the sizing needs from the spec, the rule basis and the tables, gathered once per bank.

    ``basis`` is the rule-basis file's content (:class:`bankbuild.spec.rulebasis.RuleBasisFile`); without one
    the built-in basis of ``rules`` is taken. ``conductor_rows`` are the table rows of the conductor type and
    ``ampacity_attr`` the insulation column (``ampacity_90c_a``) or ``ampacity_a``; the corrections and the
    termination limit are applied per circuit by :func:`derated_rows`.
    """

    rules: str  # the rule family: nec | iec
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
    basis: object = None  # RuleBasisFile
    ambient_c: float | None = None  # air around the conductors; None: the table's base ambient
    ambient_text: str = ""  # where that figure comes from
    termination_c: int | None = None  # the terminals' marked rating; None: the rule basis's default
    grouped_steps: int = 1  # step circuits run together
    grouped_main: int = 1  # circuits the incomer runs with
    insulation: str = ""  # IEC: PVC | XLPE
    method: str = ""  # IEC installation method

    @property
    def rule_basis(self):
        """The rule basis's content (the built-in one of the family when none was given)."""
        if self.basis is not None:
            return self.basis
        from bankbuild.spec.rulebasis import builtin_rule_basis

        return builtin_rule_basis(self.rules).rules

    @property
    def insulation_c(self) -> int | None:
        """The insulation column (60, 75, 90 °C) of an AWG table; ``None`` for an IEC table."""
        if self.ampacity_attr.startswith("ampacity_") and self.ampacity_attr.endswith("c_a"):
            return int(self.ampacity_attr.removeprefix("ampacity_").removesuffix("c_a"))
        return None


class DeratedRow(NamedTuple):
    """One conductor size with its ampacity after correction and the termination limit (one set) [A]. A named
    tuple: every circuit derates every row of the table, so a 500-bank plant makes some 100,000 of them."""

    size: str
    area_mm2: float
    ampacity_a: float
    table_a: float  # the table's value in the insulation column
    ambient_factor: float
    grouping_factor: float
    termination_c: int | None
    termination_a: float | None  # the table's value in the termination column (the limit)
    termination_rule: str
    table: str
    row: int


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


def _i2_factor(ctx: CircuitContext, rating_a: float) -> float:
    coord = ctx.rule_basis.coordination
    if ctx.device == "fuse":
        return coord.fuse_i2_factor(rating_a) if coord.fuse_i2 else iec_fuse_i2_factor(rating_a)
    return coord.breaker_i2 or IEC_BREAKER_I2_FACTOR


def grouping_count(ctx: CircuitContext, circuits: int) -> int:
    """What the grouping table counts: current-carrying conductors (3 per three-phase circuit) or circuits."""
    return 3 * circuits if ctx.rule_basis.corrections.grouping_counts == "conductors" else circuits


def correction_factors(ctx: CircuitContext, circuits: int) -> tuple[float | None, float | None, str, str]:
    """Ambient and grouping factors for this context and ``circuits`` grouped, with the table entry each is."""
    corr = ctx.rule_basis.corrections
    key = str(ctx.insulation_c) if ctx.insulation_c is not None else ctx.insulation
    ambient = corr.base_ambient_c if ctx.ambient_c is None else ctx.ambient_c
    f_amb = amp.step_factor(corr.ambient.get(key, [(corr.base_ambient_c, 1.0)]), ambient)
    rows = corr.grouping.get(ctx.method) or corr.grouping.get("any") or [(1, 1.0)]
    count = grouping_count(ctx, circuits)
    f_grp = amp.step_factor(rows, count)
    column = f"{key} °C column" if ctx.insulation_c is not None else key
    amb_text = f"{ambient:g} °C, {column}"
    what = "current-carrying conductors" if corr.grouping_counts == "conductors" else "circuits"
    grp_text = f"{count} {what}" + (f", method {ctx.method}" if ctx.method and ctx.method in corr.grouping else "")
    return f_amb, f_grp, amb_text, grp_text


def termination_for(ctx: CircuitContext, circuit_a: float, area_mm2: float) -> tuple[int | None, str]:
    """The termination temperature that limits a conductor's ampacity, and the sub-rule that sets it.

    NEC 110.14(C)(1): (a) circuits rated 100 A or less, or 14–1 AWG conductors; (b) circuits over 100 A with
    conductors larger than 1 AWG. The equipment's marked rating (``termination_c``, or the rule basis's default)
    applies in both; the insulation column is never exceeded.
    """
    term = ctx.rule_basis.terminations
    insulation = ctx.insulation_c
    if term is None or insulation is None:
        return None, ""
    marked = ctx.termination_c if ctx.termination_c is not None else term.default_c
    text = term.small_circuit_text if _small(term, circuit_a, area_mm2) else term.large_circuit_text
    limit = min(marked, insulation)
    source = "stated" if ctx.termination_c is not None else "default, assumed marked"
    return limit, f"{text}; terminals {marked} °C ({source})"


def _small(term, circuit_a: float, area_mm2: float) -> bool:
    """NEC 110.14(C)(1)(a): a circuit rated 100 A or less, or a 14–1 AWG conductor."""
    return circuit_a <= term.small_circuit_max_a + 1e-9 or area_mm2 <= ONE_AWG_MM2 + 0.01


def derated_rows(ctx: CircuitContext, circuit_a: float, circuits: int) -> tuple[DeratedRow, ...]:
    """Every conductor row with its ampacity after the ambient and grouping factors and the termination limit.

    ``circuit_a`` is the circuit's rating (its device, else the current it must carry) [A]; ``circuits`` how many
    circuits run together. A row beyond a correction table gets ampacity 0 (it cannot be picked).
    """
    f_amb, f_grp, _, _ = correction_factors(ctx, circuits)
    out = []
    name = conductor_name(ctx.rules)
    term = ctx.rule_basis.terminations
    limits: dict[bool, tuple[int | None, str]] = {}  # the termination limit and its rule, by kind of row
    for row in ctx.conductor_rows:
        table_a = float(getattr(row, ctx.ampacity_attr))
        corrected = amp.corrected_ampacity_a(table_a, f_amb or 0.0, f_grp or 0.0)
        small = term is not None and _small(term, circuit_a, row.area_mm2)
        if small not in limits:
            limits[small] = termination_for(ctx, circuit_a, row.area_mm2)
        term_c, term_rule = limits[small]
        term_a = float(getattr(row, f"ampacity_{term_c}c_a")) if term_c is not None else None
        ampacity = corrected if term_a is None else min(corrected, term_a)
        out.append(DeratedRow(size=name(row), area_mm2=row.area_mm2, ampacity_a=ampacity, table_a=table_a,
                              ambient_factor=f_amb or 0.0, grouping_factor=f_grp or 0.0, termination_c=term_c,
                              termination_a=term_a, termination_rule=term_rule, table=row.table, row=row.row))
    return tuple(out)


def coordination(ctx: CircuitContext, device_a: float, choice: ConductorChoice) -> tuple[bool, str, str]:
    """Whether a device of ``device_a`` protects ``choice``; the formula and the sub-rule that decided."""
    coord = ctx.rule_basis.coordination
    ampacity = choice.ampacity_a
    if coord.method == "next_size_up":
        limit = coord.small_conductor_max_a.get(choice.size)
        if limit is not None and choice.sets == 1 and device_a > limit + 1e-9:
            return False, (f"device {device_a:g} A > {limit:g} A allowed on {choice.size}"), \
                coord.small_conductor_clause or coord.clause
        if limit is not None and choice.sets == 1:
            small = f"; {choice.size} ≤ {limit:g} A ({coord.small_conductor_clause})"
        else:
            small = ""
        ratings = [float(r.rating_a) for r in ctx.device_rows]
        verdict = amp.next_size_up(device_a, ampacity, ratings, coord.next_size_up_max_a)
        if verdict.sub_rule == "device ≤ ampacity":
            rule = f"{coord.clause}: device ≤ ampacity"
        elif verdict.sub_rule == "(C)":
            rule = coord.above_max_clause
        else:
            rule = coord.next_size_up_clause + f" [decided by {verdict.sub_rule}]"
        return verdict.ok, verdict.reason + small, rule
    i2 = _i2_factor(ctx, device_a)
    ok = amp.conventional_current_ok(device_a, i2, ampacity, coord.i2_ratio)
    formula = (f"I_n {device_a:g} A {'≤' if device_a <= ampacity + 1e-6 else '>'} I_z {ampacity:g} A; "
               f"I_2 = {i2:g} × {device_a:g} = {i2 * device_a:.1f} A "
               f"{'≤' if i2 * device_a <= coord.i2_ratio * ampacity + 1e-6 else '>'} "
               f"{coord.i2_ratio:g} × {ampacity:g} = {coord.i2_ratio * ampacity:.1f} A")
    return ok, formula, coord.clause


def _protects(ctx: CircuitContext, device: Rating | None):
    """The coordination test a conductor must pass with the chosen device."""

    def accept(choice: ConductorChoice) -> bool:
        return device is None or coordination(ctx, device.value, choice)[0]

    return accept


def _multiplier_rule(ctx: CircuitContext, kind: str, factor: float) -> str:
    """The clause of a multiplier; when the spec overrides the rule basis's factor, both are named."""
    mult = getattr(ctx.rule_basis.multipliers, kind)
    if abs(mult.factor - factor) <= 1e-9:
        return f"{mult.clause}; {VERIFY}"
    return f"spec factor {factor:g} (the rule basis gives {mult.factor:g}: {mult.clause}); {VERIFY}"


def _derating_line(ctx: CircuitContext, pick: ConductorChoice, row: DeratedRow, circuits: int) -> SizingLine:
    """The corrected ampacity of the picked conductor with every factor written out."""
    corr = ctx.rule_basis.corrections
    _, _, amb_text, grp_text = correction_factors(ctx, circuits)
    sets = f"{pick.sets} × " if pick.sets > 1 else ""
    corrected = amp.corrected_ampacity_a(row.table_a, row.ambient_factor, row.grouping_factor)
    formula = (f"{sets}{row.table_a:g} A × {row.ambient_factor:g} ({amb_text}) × {row.grouping_factor:g} "
               f"({grp_text}) = {sets}{corrected:.1f} A")
    rule = f"{corr.ambient_clause}; {corr.grouping_clause}"
    if row.termination_a is not None:
        limited = row.termination_a < corrected - 1e-9
        formula += (f"; termination {row.termination_c} °C column {row.termination_a:g} A"
                    + (f" limits it to {row.termination_a:g} A" if limited else " does not limit it"))
        rule += f"; {row.termination_rule}"
        if ctx.insulation_c and row.termination_c is not None and ctx.insulation_c > row.termination_c:
            rule += f"; {ctx.rule_basis.terminations.correction_base_text}"
    formula += f"; ampacity used {pick.ampacity_a:g} A"
    ok = pick.ampacity_a > 0
    return SizingLine(item="Conductor ampacity after correction", basis_a=row.table_a * pick.sets, factor=1.0,
                      required_a=pick.ampacity_a, formula=formula, rule=rule, chosen=pick.designation,
                      chosen_a=pick.ampacity_a, ok=ok)


def size_circuit(ctx: CircuitContext, label: str, current_a: float, basis_text: str,
                 with_disconnect: bool, floor_a: float = 0.0, floor_text: str = "",
                 circuits: int | None = None) -> Circuit:
    """Size conductor, device (and disconnect) for a circuit carrying ``current_a`` [A].

    ``floor_a`` is a further lower bound on the conductor ampacity [A] that another rule sets (e.g. a third
    of the motor circuit conductor's ampacity for a capacitor at motor terminals), stated in ``floor_text``.
    ``circuits`` is how many circuits run together (default: the context's main or step grouping by
    ``with_disconnect``). The conductor's ampacity is after the rule basis's ambient and grouping factors and
    the termination limit; the coordination rule is the rule basis's.
    """
    lines: list[SizingLine] = []
    checks: list[Check] = []
    basis = ctx.rule_basis
    if circuits is None:
        circuits = ctx.grouped_main if with_disconnect else ctx.grouped_steps

    dev_req = ctx.device_factor * current_a
    device = next_rating(ctx.device_rows, dev_req, "rating_a")
    dev_name = "Fuse" if ctx.device == "fuse" else "Breaker trip"
    dev_rule = f"{basis.tables.device_table_text}; " + _multiplier_rule(ctx, ctx.device, ctx.device_factor)
    lines.append(_line(f"{dev_name}", current_a, ctx.device_factor, dev_req, dev_rule, device, basis_text))
    if device is None:
        largest = max((float(r.rating_a) for r in ctx.device_rows), default=0.0)
        checks.append(Check(name=f"{label}: {dev_name.lower()} rating", ok=False, rule=dev_rule,
                            detail=f"none in the device table is large enough: {dev_req:.1f} A needed, the "
                                   f"largest is {largest:g} A"))
    cap = basis.multipliers.device_max
    if cap is not None and device is not None:
        ceiling = cap.factor * current_a
        checks.append(Check(name=f"{label}: device ceiling", ok=device.value <= ceiling + 1e-9, rule=cap.clause,
                            detail=f"{device.designation} against {cap.factor:g} × {current_a:.1f} A = "
                                   f"{ceiling:.1f} A"))
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
    cond_rule = _multiplier_rule(ctx, "conductor", ctx.conductor_factor)
    if floor_a > cond_req:
        cond_req = floor_a
        cond_formula = f"larger of {cond_formula} and {floor_text} = {floor_a:.1f} A"
    nec = ctx.rules == "nec"
    min_par, max_single = ((NEC_MIN_PARALLEL_MM2, NEC_MAX_SINGLE_MM2) if nec
                           else (IEC_MIN_PARALLEL_MM2, IEC_MAX_SINGLE_MM2))
    rows = derated_rows(ctx, device.value if device is not None else cond_req, circuits)
    by_key = {(r.table, r.row): r for r in rows}
    size_of = (lambda r: r.size)  # noqa: E731 - the derated row already carries the name
    plain = pick_conductor(rows, cond_req, "ampacity_a", size_of, ctx.max_sets, min_par, max_single)
    conductor = pick_conductor(rows, cond_req, "ampacity_a", size_of, ctx.max_sets, min_par, max_single,
                               accept=_protects(ctx, device))
    lines.append(SizingLine(
        item="Conductor ampacity", basis_a=current_a, factor=ctx.conductor_factor, required_a=cond_req,
        formula=cond_formula,
        rule=cond_rule, chosen=(f"{plain.designation} ({ctx.conductor_label})" if plain else "none large enough"),
        chosen_a=plain.ampacity_a if plain else 0.0, ok=plain is not None))
    if plain is None:
        checks.append(Check(name=f"{label}: conductor", ok=False, rule=cond_rule,
                            detail=f"no conductor (up to {ctx.max_sets} in parallel) reaches {cond_req:.1f} A after "
                                   "correction"))
    final = conductor if (conductor is not None and device is not None) else plain
    if final is not None:
        lines.append(_derating_line(ctx, final, by_key[(final.table, final.row)], circuits))
    if plain is not None and device is not None:
        if conductor is None:
            ok, formula, rule = coordination(ctx, device.value, plain)
            checks.append(Check(name=f"{label}: conductor protected by device", ok=False, rule=rule,
                                detail=f"no conductor in the table is protected by {device.designation}: with "
                                       f"{plain.designation}, {formula}"))
            lines.append(SizingLine(
                item="Conductor, coordinated", basis_a=device.value, factor=1.0, required_a=device.value,
                formula=formula, rule=rule, chosen=f"{plain.designation}: not protected", chosen_a=plain.ampacity_a,
                ok=False))
        else:
            ok, formula, rule = coordination(ctx, device.value, conductor)
            note = (f"upsized from {plain.designation} so that {device.designation} protects it"
                    if conductor != plain else "")
            chosen = (f"{conductor.designation} ({ctx.conductor_label})" if conductor != plain
                      else f"{conductor.designation} (as sized)")
            lines.append(SizingLine(
                item="Conductor, coordinated", basis_a=device.value, factor=1.0, required_a=device.value,
                formula=formula, rule=rule, chosen=chosen, chosen_a=conductor.ampacity_a, ok=ok, note=note))

    disconnect = None
    if with_disconnect:
        disc_req = ctx.disconnect_factor * current_a
        disc_text = f"{ctx.disconnect_factor:g} × {current_a:.1f} A = {disc_req:.1f} A"
        if ctx.device == "fuse" and device is not None and device.value > disc_req:
            disc_req = device.value
            disc_text += f"; fusible switch must hold the {device.designation} fuse"
        disconnect = next_rating(ctx.disconnect_rows, disc_req, "rating_a")
        disc_rule = _multiplier_rule(ctx, "disconnect", ctx.disconnect_factor)
        lines.append(SizingLine(
            item="Disconnect", basis_a=current_a, factor=ctx.disconnect_factor, required_a=disc_req,
            formula=disc_text, rule=disc_rule, chosen=disconnect.designation if disconnect else "none large enough",
            chosen_a=disconnect.value if disconnect else 0.0, ok=disconnect is not None))
        if disconnect is None:
            checks.append(Check(name=f"{label}: disconnect", ok=False, rule=disc_rule,
                                detail=f"none in the disconnect table is large enough: {disc_req:.1f} A needed"))
    return Circuit(conductor=final, device=device, frame=frame, disconnect=disconnect, lines=lines,
                   checks=checks)


def _coord_formula(ctx: CircuitContext, rating_a: float, ampacity_a: float) -> str:
    """The coordination test written out with the device rating and the conductor's ampacity."""
    choice = ConductorChoice(designation="", size="", sets=1, ampacity_a=ampacity_a, table="", row=0)
    return coordination(ctx, rating_a, choice)[1]


def _line(item: str, current_a: float, factor: float, required_a: float, rule: str, pick: Rating | None,
          basis_text: str) -> SizingLine:
    return SizingLine(
        item=item, basis_a=current_a, factor=factor, required_a=required_a,
        formula=f"{factor:g} × {current_a:.1f} A ({basis_text}) = {required_a:.1f} A", rule=rule,
        chosen=pick.designation if pick else "none large enough", chosen_a=pick.value if pick else 0.0,
        ok=pick is not None)
