"""Rule bases (NEC-style, IEC-style): editions, discharge rule, and the cautions every output carries."""

from __future__ import annotations

from dataclasses import dataclass

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


@dataclass(frozen=True)
class RuleBasis:
    name: str
    edition: str
    discharge_limit_v: float
    discharge_time_s: float
    discharge_rule: str


def rule_basis(rules: str, nec_edition: int = 2023) -> RuleBasis:
    """Defaults and tables that the rule basis picks; every factor remains the user's to override."""
    if rules == "nec":
        return RuleBasis("nec", f"NEC {nec_edition} (Table 310.16, 240.6(A), Article 460)", 50.0, 60.0,
                         "NEC 460.6(A): ≤ 50 V within 1 min")
    return RuleBasis("iec", "IEC 60831-1, IEC 60364-5-52, IEC 60269", 75.0, 180.0,
                     "IEC 60831-1: ≤ 75 V within 3 min")


def discharge_for(rules: str, bank, step, units, rated_voltage_v: float) -> Discharge:
    """Discharge figures for ``step`` (the one with the most capacitance) under the bank's rule."""
    basis = rule_basis(rules)
    if bank.discharge is not None:
        limit, time_s = bank.discharge.limit_v, bank.discharge.time_s
        rule = f"spec rule: ≤ {limit:g} V within {time_s:g} s"
    else:
        limit, time_s, rule = basis.discharge_limit_v, basis.discharge_time_s, basis.discharge_rule
    leg_v = cap.leg_voltage_v(rated_voltage_v, bank.connection)
    v0 = dis.start_voltage_v(leg_v)
    r_max = dis.max_resistance_ohm(step.capacitance_uf_per_leg, v0, limit, time_s)
    used = {u.id for u in step.units}
    step_units = [u for u in units if u.unit_id in used]
    builtin = max((dis.own_resistor_time_s(u.rated_voltage_v, u.discharge_voltage_v, u.discharge_time_s,
                                           dis.start_voltage_v(u.rated_voltage_v), limit) for u in step_units),
                  default=float("inf"))
    builtin_ok = builtin <= time_s + 1e-9
    return Discharge(
        step_index=step.index, capacitance_uf_per_leg=step.capacitance_uf_per_leg, start_voltage_v=v0,
        limit_v=limit, time_s=time_s, rule=rule, max_resistance_ohm=r_max,
        resistor_power_w=dis.resistor_power_w(leg_v, r_max), builtin_time_s=builtin, builtin_ok=builtin_ok,
        ok=builtin_ok)
