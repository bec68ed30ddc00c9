"""Strategies and invariants for tests/test_fuzz.py: spec mappings (mostly valid, some broken on purpose),
and the properties every sized bank must have, checked on the JSON document a user would get.

The factors are the spec's (or the documented defaults: conductor 135 %, NEC 460.8(A); device 165 % fuse /
135 % breaker, common practice (no single source)). The currents are recomputed here from the step's kvar and
voltages (I = Q / (√3·V), textbook), not read from the tool's own sizing lines.
"""

from __future__ import annotations

import json
import math

from hypothesis import strategies as st

from bankbuild.design.sizing import size_project
from bankbuild.errors import BankbuildError, SpecError
from bankbuild.reports.jsonout import project_json
from bankbuild.spec.model import Protection
from bankbuild.spec.read import validate_spec
from bankbuild.spec.rulebasis import builtin_rule_basis
from bankbuild.tables.load import load_catalogs

EPS = 1e-6
SQRT3 = math.sqrt(3)
BUILTIN = load_catalogs()

# -- spec strategies -----------------------------------------------------------------------------------------

VOLTAGES = [208, 220, 240, 380, 400, 415, 440, 460, 480, 525, 575, 600, 690]
finite = st.floats(allow_nan=False, allow_infinity=False)


def _num(low: float, high: float):
    return st.one_of(st.floats(min_value=low, max_value=high, allow_nan=False), st.integers(int(math.ceil(low)),
                                                                                          int(high)))


pf = st.floats(min_value=0.3, max_value=0.99)


@st.composite
def loads(draw):
    form = draw(st.sampled_from(["motor_kw", "motor_hp", "input_kw", "kva", "current"]))
    load = {"name": draw(st.text(max_size=12)), "quantity": draw(st.integers(1, 20)), "pf": draw(pf)}
    if form in ("motor_kw", "motor_hp"):
        load["output_kw" if form == "motor_kw" else "output_hp"] = draw(_num(0.5, 800))
        load["efficiency"] = draw(st.floats(min_value=0.6, max_value=0.99))
    else:
        load[{"input_kw": "input_kw", "kva": "kva", "current": "line_current_a"}[form]] = draw(_num(0.5, 800))
    return load


@st.composite
def need(draw):
    form = draw(st.sampled_from(["kvar", "power", "loads"]))
    if form == "kvar":
        return {"kvar": draw(_num(1, 6000))}
    target = draw(st.floats(min_value=0.85, max_value=1.0))
    if form == "power":
        return {"kw": draw(_num(5, 5000)), "pf_present": draw(st.floats(min_value=0.4, max_value=0.84)),
                "pf_target": target}
    return {"loads": draw(st.lists(loads(), min_size=1, max_size=5)), "pf_target": target}


@st.composite
def bank(draw, index: int):
    frequency = draw(st.sampled_from([50, 60, 50.0, 60.0]))
    out = {"name": f"Bank {index} " + draw(st.text(alphabet="abc -_/<>&=+@", max_size=8)),
           "supply": {"voltage_v": draw(st.one_of(st.sampled_from(VOLTAGES), _num(100, 1000))),
                      "frequency_hz": frequency},
           "need": draw(need())}
    if draw(st.booleans()):
        out["supply"] |= {"transformer_kva": draw(_num(50, 5000)), "transformer_z_pct": draw(_num(2, 10))}
    steps = draw(st.sampled_from(["none", "list", "plan"]))
    if steps == "list":
        out["steps"] = draw(st.lists(_num(1, 600), min_size=1, max_size=8))
    elif steps == "plan":
        out["steps"] = {"count": draw(st.integers(1, 25)),
                        "pattern": draw(st.sampled_from(["equal", "1:2", "1:2:2", "1:2:4", "1:1:2:2"]))}
    if draw(st.integers(0, 3)) == 0:
        out["detuning_pct"] = draw(st.one_of(st.sampled_from([5.67, 7, 14]), _num(1, 19)))
    if draw(st.booleans()):
        out["connection"] = draw(st.sampled_from(["delta", "wye", "star"]))
    if draw(st.booleans()):
        out["voltage_margin_pct"] = draw(_num(0, 20))
    if draw(st.booleans()):
        prot = {"device": draw(st.sampled_from(["fuse", "breaker"]))}
        for key in ("conductor_factor", "device_factor", "disconnect_factor"):
            if draw(st.booleans()):
                prot[key] = draw(st.floats(min_value=1.0, max_value=3.0))
        if draw(st.booleans()):
            prot["max_parallel_sets"] = draw(st.integers(1, 8))
        out["protection"] = prot
    if draw(st.integers(0, 4)) == 0:
        out["discharge"] = {"limit_v": draw(_num(10, 100)), "time_s": draw(_num(5, 600))}
    return out


@st.composite
def spec(draw):
    rules = draw(st.sampled_from(["nec", "iec"]))
    banks = [draw(bank(i)) for i in range(draw(st.integers(1, 2)))]
    out = {"rules": rules, "banks": banks}
    if rules == "iec":
        for b in banks:
            # the built-in IEC table covers PVC/B1, PVC/C, PVC/E and XLPE/E
            b.setdefault("protection", {})["insulation"] = draw(st.sampled_from(["PVC", "XLPE"]))
            b["protection"]["installation_method"] = "E" if b["protection"]["insulation"] == "XLPE" else \
                draw(st.sampled_from(["B1", "C", "E"]))
    if draw(st.booleans()):
        out["project"] = {"name": draw(st.text(max_size=30)), "revision": draw(st.text(max_size=3))}
    return out


JUNK = st.one_of(st.just(float("nan")), st.just(float("inf")), st.just(-float("inf")), st.just(-1), st.just(0),
                 st.just(1e300), st.just(10**30), st.text(max_size=8), st.none(), st.builds(list), st.builds(dict),
                 st.booleans(), st.lists(st.integers(), max_size=3), st.just("480"), st.just(-0.0))


def _paths(node, prefix=()):
    """Every (path, container) of a nested dict/list, for picking something to break."""
    if isinstance(node, dict):
        for key, value in node.items():
            yield (*prefix, key), node
            yield from _paths(value, (*prefix, key))
    elif isinstance(node, list):
        for i, value in enumerate(node):
            yield (*prefix, i), node
            yield from _paths(value, (*prefix, i))


@st.composite
def broken_spec(draw):
    """A spec with one to three things broken: a junk value, a key removed, an unknown key added."""
    data = draw(spec())
    for _ in range(draw(st.integers(1, 3))):
        places = list(_paths(data))
        if not places:  # everything was removed already
            break
        path, container = draw(st.sampled_from(places))
        action = draw(st.sampled_from(["junk", "junk", "drop", "extra"]))
        key = path[-1]
        if action == "junk":
            container[key] = draw(JUNK)
        elif action == "drop" and isinstance(container, dict):
            container.pop(key, None)
        elif isinstance(container, dict):
            container[draw(st.sampled_from(["voltage", "kvar_", "Steps", "fuse_factor", "x"]))] = draw(JUNK)
    return data


# -- invariants ----------------------------------------------------------------------------------------------


def _standard(catalogs, rules: str, device: str) -> set[float]:
    return {r.rating_a for r in catalogs.device_ratings if (r.basis, r.device) == (rules, device)}


def _failed(bank: dict, *words: str) -> bool:
    return any(not c["ok"] and all(w.lower() in (c["name"] + " " + c["detail"]).lower() for w in words)
               for c in bank["checks"])


def check_invariants(data: dict, result, catalogs) -> None:
    """The properties every sized bank must have, read from the JSON document a user would get."""
    doc = json.loads(project_json(result), parse_constant=lambda c: (_ for _ in ()).throw(ValueError(c)))
    assert len(doc["banks"]) == len(data["banks"])
    rules = data.get("rules", "nec")
    for spec_bank, bank in zip(data["banks"], doc["banks"], strict=True):
        prot = Protection.model_validate(spec_bank.get("protection", {}))
        mult = builtin_rule_basis(rules, data.get("nec_edition", 2023)).rules.multipliers  # the basis's defaults
        device_factor = prot.device_factor or getattr(mult, prot.device).factor
        standard = _standard(catalogs, rules, prot.device)
        unit_ids = {u.unit_id for u in catalogs.capacitor_units}
        v_r, v_s = bank["capacitor_voltage_v"], bank["supply_voltage_v"]

        if isinstance(spec_bank.get("steps"), list):  # the user's own step sizes: they may fall short, flagged
            assert bank["delivered_kvar"] >= min(bank["required_kvar"], sum(spec_bank["steps"])) - EPS
            if bank["delivered_kvar"] < bank["required_kvar"] - EPS:
                assert _failed(bank, "delivered covers the need")
        else:
            assert bank["delivered_kvar"] >= bank["required_kvar"] - EPS
        assert sum(s["kvar"] for s in bank["steps"]) == _approx(bank["delivered_kvar"])

        circuits = []
        for step in bank["steps"]:
            assert step["kvar"] >= step["target_kvar"] - EPS
            assert step["units"] and all(u["qty"] >= 1 and u["id"] in unit_ids for u in step["units"])
            assert sum(u["qty"] * u["rated_kvar"] for u in step["units"]) == _approx(step["rated_kvar"])
            rated_a = step["rated_kvar"] * 1000 / (SQRT3 * v_r)  # I = Q / (√3·V), textbook
            line_a = step["kvar"] * 1000 / (SQRT3 * v_s)
            circuits.append((f"Step {step['index']}", max(rated_a, line_a), step))
        main = bank["main"]
        rated_total = bank["rated_kvar"] * 1000 / (SQRT3 * v_r)
        line_total = bank["delivered_kvar"] * 1000 / (SQRT3 * v_s)
        circuits.append(("Main", max(rated_total, line_total), main))

        for label, current_a, circuit in circuits:
            rating = circuit["device_rating_a"]
            if rating:
                assert rating in standard, (label, rating)
                assert rating >= device_factor * current_a * (1 - EPS), (label, rating, current_a)
            else:
                assert _failed(bank, label), (label, bank["checks"])
            ampacity = circuit["conductor_ampacity_a"]
            if circuit["conductor"] != "none":
                factor = prot.conductor_factor or mult.conductor.factor
                assert ampacity >= factor * current_a * (1 - EPS), (label, ampacity, current_a)
            else:
                assert _failed(bank, label, "conductor"), (label, bank["checks"])
        if main["disconnect_rating_a"]:
            factor = prot.disconnect_factor or mult.disconnect.factor
            assert main["disconnect_rating_a"] >= factor * max(rated_total, line_total) * (1 - EPS)
        else:
            assert _failed(bank, "disconnect")

        discharge = bank["discharge"]
        if discharge["ok"]:
            assert discharge["builtin_time_s"] <= discharge["time_s"] + EPS
        else:
            assert _failed(bank, "discharge")
        expected_rule = spec_bank.get("discharge")
        if expected_rule:
            assert (discharge["limit_v"], discharge["time_s"]) == (expected_rule["limit_v"], expected_rule["time_s"])


class _Approx(float):
    def __eq__(self, other):  # relative 1e-9: sums of the same floats in another order
        return math.isclose(float(self), other, rel_tol=1e-9, abs_tol=1e-9)

    __hash__ = float.__hash__


def _approx(value: float) -> _Approx:
    return _Approx(value)


def run_spec_data(data: dict, catalogs=BUILTIN):
    """Validate and size ``data``; returns the result, or None when refused with a proper message."""
    try:
        spec_obj = validate_spec(data, "fuzz.yaml")
        return size_project(spec_obj, catalogs, spec_path="fuzz.yaml")
    except BankbuildError as exc:
        line = exc.line()
        assert "\n" not in line and line.startswith("fuzz.yaml"), line
        assert isinstance(exc, SpecError)
        return None
