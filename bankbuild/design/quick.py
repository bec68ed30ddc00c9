"""The quick kvar figure: kW and power factors (or a load list) to kvar, µF per leg and currents."""

from __future__ import annotations

import math
from pathlib import Path

from bankbuild.calc import capacitor as cap
from bankbuild.calc import power as pw
from bankbuild.errors import OptionError

QUICK_KW_MAX = 1e7  # the quick figure's reach, for kW and for the kvar worked out from them


def _check_option(name: str, value: float | None, low: float, high: float, low_open: bool = True) -> None:
    if value is None:
        return
    if not math.isfinite(value):
        raise OptionError("", name, "must be a finite number")
    if (value <= low if low_open else value < low) or value > high:
        bracket = "(" if low_open else "["
        raise OptionError("", name, f"must be in {bracket}{low:g}, {high:g}] (got {value:g})")


def kvar_figures(kw: float | None, pf_present: float | None, pf_target: float | None, loads: Path | None,
                 voltage_v: float, frequency_hz: float) -> dict:
    """Work out the correction; every bad option is an OptionError naming it."""
    # from 1 V and 1 Hz up: below that V² and ω underflow to nothing and the figures stop being numbers
    _check_option("voltage_v", voltage_v, 1, 100_000, low_open=False)
    _check_option("frequency_hz", frequency_hz, 1, 1000, low_open=False)
    _check_option("kw", kw, 0, QUICK_KW_MAX)
    _check_option("pf_present", pf_present, 0, 1)
    _check_option("pf_target", pf_target, 0, 1)
    if loads is not None:
        if kw is not None or pf_present is not None:
            raise OptionError("", "loads", "give either `loads` or `kw` with `pf_present`, not both")
        p_kw, q_kvar, target = _from_loads(loads, pf_target, voltage_v)
        source = str(loads)
    else:
        missing = [n for n, v in (("kw", kw), ("pf_present", pf_present), ("pf_target", pf_target))
                   if v is None]
        if missing:
            raise OptionError("", missing[0], "is required (or give `loads`)")
        if pf_target < pf_present:
            raise OptionError("", "pf_target", f"{pf_target:g} is below `pf_present` {pf_present:g}")
        p_kw, q_kvar, target = kw, pw.reactive_kvar(kw, pf_present), pf_target
        source = "options"
    q_c = pw.correction_kvar(p_kw, q_kvar, target)
    if not math.isfinite(q_c) or q_c > QUICK_KW_MAX:
        name = "loads" if loads is not None else "pf_present"
        raise OptionError("", name, f"{p_kw:,.6g} kW with {q_kvar:,.6g} kvar needs {q_c:,.6g} kvar to reach PF "
                                    f"{target:g}; the quick figure goes to {QUICK_KW_MAX:,.0f} kvar (as far as "
                                    "`kw` goes): check `pf_present`")
    pf_before = pw.power_factor(p_kw, q_kvar)
    return {
        "source": source, "active_kw": p_kw, "reactive_kvar": q_kvar, "pf_present": pf_before,
        "pf_target": target, "required_kvar": q_c,
        "multiplier": pw.tan_phi(pf_before) - pw.tan_phi(target),
        "voltage_v": voltage_v, "frequency_hz": frequency_hz,
        "capacitance_uf_per_leg_delta": cap.capacitance_uf_per_leg(q_c, voltage_v, frequency_hz, "delta"),
        "capacitance_uf_per_leg_wye": cap.capacitance_uf_per_leg(q_c, voltage_v, frequency_hz, "wye"),
        "capacitor_current_a": cap.line_current_a(q_c, voltage_v),
        "line_current_before_a": pw.three_phase_current_a(pw.apparent_kva(p_kw, q_kvar), voltage_v),
        "line_current_after_a": pw.three_phase_current_a(pw.apparent_kva(p_kw, q_kvar - q_c), voltage_v),
    }


def _from_loads(path: Path, pf_target: float | None, voltage_v: float) -> tuple[float, float, float]:
    from pydantic import ValidationError

    from bankbuild.design.sizing import load_pq
    from bankbuild.errors import SpecError
    from bankbuild.spec.model import Need
    from bankbuild.spec.read import _message, _read_bytes, field_path, parse_yaml

    data = parse_yaml(_read_bytes(path, str(path)), str(path))
    if pf_target is not None:
        data = {**data, "pf_target": pf_target}
    try:
        need = Need.model_validate(data)
    except ValidationError as exc:
        first = exc.errors(include_url=False)[0]
        raise SpecError(str(path), field_path(first["loc"], data), _message(first)) from None  # as for a spec
    if need.form != "loads":
        raise SpecError(str(path), "loads", "the file must hold 'loads' (a list) and 'pf_target'")
    p_total = q_total = 0.0
    for load in need.loads:
        p, q = load_pq(load, voltage_v)
        p_total += p * load.quantity
        q_total += q * load.quantity
    return p_total, q_total, need.pf_target


def kvar_text(f: dict) -> str:
    """The quick figure as a few lines of text."""
    load = f"load            {f['active_kw']:,.1f} kW, {f['reactive_kvar']:,.1f} kvar, PF {f['pf_present']:.3f}"
    if f["required_kvar"] <= 0:
        return "\n".join([load, f"correction      none: PF {f['pf_present']:.3f} already meets the target "
                                 f"{f['pf_target']:.3f}"])
    return "\n".join([
        load,
        f"correction      {f['required_kvar']:,.1f} kvar to reach PF {f['pf_target']:.3f} "
        f"(multiplier tan φ1 − tan φ2 = {f['multiplier']:.3f})",
        f"at {f['voltage_v']:g} V, {f['frequency_hz']:g} Hz: {f['capacitance_uf_per_leg_delta']:,.1f} µF per leg "
        f"in delta, {f['capacitance_uf_per_leg_wye']:,.1f} µF per leg in wye",
        f"currents        capacitor {f['capacitor_current_a']:,.1f} A; line {f['line_current_before_a']:,.1f} A "
        f"before, {f['line_current_after_a']:,.1f} A after",
    ])
