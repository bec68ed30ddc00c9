"""Rule bases (NEC-style, IEC-style): editions, discharge rule, and the cautions every output carries."""

from __future__ import annotations

from bankbuild.calc import capacitor as cap
from bankbuild.calc import discharge as dis
from bankbuild.results.sizing import Discharge

CAUTIONS = (
    "Capacitors hold a charge after they are switched off. Open and lock out the supply, wait at least the "
    "discharge time marked on the equipment, then prove zero voltage on every terminal with a tested meter "
    "and short the terminals to earth before touching them.",
    "Installation, testing and maintenance are work for qualified persons only, following lock-out / tag-out "
    "and the arc-flash and shock procedures of the site.",
    "The multipliers and tables here are typical practice, shown so each figure can be checked. They are no "
    "statement of compliance: verify every rating against the local code, the equipment makers' data and "
    "licensed engineering practice before anything is built or energised.",
    "Never connect capacitors to the output of a variable-frequency drive or soft starter, and check the "
    "harmonic spectrum of the site before choosing plain (not detuned) steps.",
)


def rule_basis_for(spec, basis=None):
    """The rule basis a spec sizes with: ``basis`` when the caller read one (a file the spec names, or a
    user's copy beside the tables), else the built-in one the spec names (``nec`` with its ``nec_edition``)."""
    if basis is not None:
        return basis
    from bankbuild.errors import SpecError
    from bankbuild.spec.rulebasis import builtin_rule_basis

    if spec.rules_file is not None:
        raise SpecError("", "rules", f"{spec.rules!r} is a rule-basis file: read the spec with its file "
                                     "(bankbuild.size or the CLI), which loads it")
    return builtin_rule_basis(spec.rules, spec.nec_edition)


def discharge_for(basis, bank, step, units, rated_voltage_v: float, connection: str | None = None) -> Discharge:
    """Discharge figures for ``step`` (the one with the most capacitance) under the bank's rule.

    ``basis`` is the rule basis's content (its ``discharge`` rule), unless the spec states its own rule;
    ``connection`` is the units' internal connection (the legs the resistors sit across), default the bank's.
    """
    if bank.discharge is not None:
        limit, time_s = bank.discharge.limit_v, bank.discharge.time_s
        rule = f"spec rule: ≤ {limit:g} V within {time_s:g} s"
    else:
        rule_ = basis.discharge
        limit, time_s, rule = rule_.limit_v, rule_.time_s, f"{rule_.clause}: {rule_.text}"
    leg_v = cap.leg_voltage_v(rated_voltage_v, connection or bank.connection)
    v0 = dis.start_voltage_v(leg_v)
    r_max = dis.max_resistance_ohm(step.capacitance_uf_per_leg, v0, limit, time_s)
    used = {u.id for u in step.units}
    step_units = [u for u in units if u.unit_id in used]
    builtin = max((dis.own_resistor_time_s(u.rated_voltage_v, u.discharge_voltage_v, u.discharge_time_s,
                                           dis.start_voltage_v(u.rated_voltage_v), limit) for u in step_units),
                  default=float("inf"))
    builtin_ok = builtin <= time_s + 1e-9
    return Discharge(
        step_index=step.index, capacitance_uf_per_leg=step.capacitance_uf_per_leg, leg_voltage_v=leg_v,
        start_voltage_v=v0,
        limit_v=limit, time_s=time_s, rule=rule, max_resistance_ohm=r_max,
        resistor_power_w=dis.resistor_power_w(leg_v, r_max), builtin_time_s=builtin, builtin_ok=builtin_ok,
        ok=builtin_ok)
