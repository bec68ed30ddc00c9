"""The quick kvar figure (bankbuild.design.quick): published examples, outside libraries, and refused options."""

from __future__ import annotations

import math

import electricpy
import pint
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.design.quick import kvar_figures, kvar_text
from bankbuild.errors import OptionError, SpecError


def figures(kw=None, pf_present=None, pf_target=None, loads=None, voltage_v=480.0, frequency_hz=60.0):
    return kvar_figures(kw, pf_present, pf_target, loads, voltage_v, frequency_hz)


def test_250_kw_against_electricpy():
    f = figures(250, 0.72, 0.96)
    # electricpy takes apparent power S = P / PF_old [VA]; it returns the wye per-phase C and Qc [var].
    c_wye, qc = electricpy.pfcorrection(250e3 / 0.72, 0.72, 0.96, VLL=480)
    assert f["required_kvar"] * 1000 == pytest.approx(qc, rel=1e-9)
    assert f["required_kvar"] == pytest.approx(168.0465, abs=5e-5)  # oracle notes: 168,046.5 var
    assert f["capacitance_uf_per_leg_wye"] == pytest.approx(c_wye * 1e6, rel=1e-9)
    assert f["capacitance_uf_per_leg_wye"] == pytest.approx(1934.71, abs=0.005)  # oracle notes: 1934.71 µF
    assert f["capacitance_uf_per_leg_delta"] == pytest.approx(644.90, abs=0.005)  # oracle notes: wye / 3
    assert f["capacitor_current_a"] == pytest.approx(electricpy.acpiv(S=qc, VLL=480), rel=1e-9)
    assert f["capacitor_current_a"] == pytest.approx(202.13, abs=0.005)  # oracle notes: 202.13 A


def test_250_kw_capacitance_with_pint():
    u = pint.UnitRegistry()
    u.define("volt_ampere_reactive = volt * ampere = var")
    w = 2 * math.pi * u.Quantity(60, "Hz")
    delta = (u.Quantity(168.0465, "kvar") / (3 * w * u.Quantity(480, "V") ** 2)).to("uF")
    assert delta.magnitude == pytest.approx(644.9, abs=0.05)  # oracle notes: pint gives 644.9 µF
    assert figures(250, 0.72, 0.96)["capacitance_uf_per_leg_delta"] == pytest.approx(delta.magnitude, rel=1e-6)


def test_208_v_10_kva_to_unity():
    # Source: trade-facts, checkable example: "208 V, 10 kVA load, PF 0.8 -> 1.0: line current 27.76 -> 22.21 A;
    # delta 122.6 µF per leg; wye 367.9 µF". P = 10 × 0.8 = 8 kW; Q = 6 kvar; all 6 kvar corrected.
    f = figures(8, 0.8, 1.0, voltage_v=208)
    assert f["required_kvar"] == pytest.approx(6.0)
    assert f["line_current_before_a"] == pytest.approx(27.76, abs=0.005)
    assert f["line_current_after_a"] == pytest.approx(22.21, abs=0.005)
    assert f["capacitance_uf_per_leg_delta"] == pytest.approx(122.6, abs=0.05)
    assert f["capacitance_uf_per_leg_wye"] == pytest.approx(367.9, abs=0.05)


@pytest.mark.parametrize(("pf1", "pf2", "multiplier"), [(0.70, 0.95, 0.691), (0.80, 0.95, 0.421)])
def test_multiplier_tables(pf1, pf2, multiplier):
    # Source: standard multiplier tables (trade-facts): 0.70 -> 0.95 = 0.691; 0.80 -> 0.95 = 0.421. The tables
    # cut to three places (0.70 -> 0.95 is 0.6915).
    f = figures(1000, pf1, pf2)
    assert math.floor(f["multiplier"] * 1000) / 1000 == pytest.approx(multiplier)
    assert f["required_kvar"] == pytest.approx(1000 * f["multiplier"])


def test_kvar_text_exact():
    # Figures by hand: Q = 250 × tan(acos 0.72) = 240.97 kvar; S = 347.2 kVA -> 417.6 A before; after,
    # Q = 240.97 − 168.05 = 72.92 kvar, S = 260.4 kVA -> 313.2 A.
    assert kvar_text(figures(250, 0.72, 0.96)) == "\n".join([
        "load            250.0 kW, 241.0 kvar, PF 0.720",
        "correction      168.0 kvar to reach PF 0.960 (multiplier tan φ1 − tan φ2 = 0.672)",
        "at 480 V, 60 Hz: 644.9 µF per leg in delta, 1,934.7 µF per leg in wye",
        "currents        capacitor 202.1 A; line 417.6 A before, 313.2 A after",
    ])


def test_kvar_text_when_nothing_needs_correcting(write_yaml):
    # 100 kW at PF 0.98 with a target of 0.9: nothing to add (a negative multiplier would only confuse).
    path = write_yaml("pf_target: 0.9\nloads:\n  - {input_kw: 100, pf: 0.98}\n", "loads.yaml")
    f = figures(loads=path)
    assert f["required_kvar"] == 0
    assert kvar_text(f) == ("load            100.0 kW, 20.3 kvar, PF 0.980\n"
                            "correction      none: PF 0.980 already meets the target 0.900")


@settings(max_examples=100, deadline=None)
@given(st.floats(1, 10_000), st.floats(0.3, 0.99), st.floats(0.0, 0.5), st.sampled_from([208, 400, 480, 600]),
       st.sampled_from([50, 60]))
def test_quick_figure_properties(kw, pf1, gain, volts, hz):
    pf2 = min(1.0, pf1 + gain)
    f = figures(kw, pf1, pf2, voltage_v=volts, frequency_hz=hz)
    assert f["required_kvar"] >= 0
    assert f["capacitance_uf_per_leg_wye"] == pytest.approx(3 * f["capacitance_uf_per_leg_delta"])
    assert f["line_current_after_a"] <= f["line_current_before_a"] + 1e-9
    # After correction the load's PF is the target.
    q_after = f["reactive_kvar"] - f["required_kvar"]
    assert kw / math.hypot(kw, q_after) == pytest.approx(pf2, abs=1e-9)


# --- a load list file ---------------------------------------------------------------------------------------


LOADS = """\
pf_target: 0.95
loads:
  - {name: Hydraulic pumps, quantity: 2, output_hp: 100, efficiency: 0.94, pf: 0.85}
  - {name: Lighting, input_kw: 40, pf: 0.9}
"""


def test_loads_file(write_yaml):
    path = write_yaml(LOADS, "loads.yaml")
    f = figures(loads=path)
    # P = 2 × 100 × 0.7457 / 0.94 + 40 = 158.660 + 40 = 198.660 kW;
    # Q = 158.660 × tan(acos 0.85) + 40 × tan(acos 0.9) = 98.328 + 19.373 = 117.701 kvar.
    assert f["active_kw"] == pytest.approx(198.660, abs=1e-3)
    assert f["reactive_kvar"] == pytest.approx(117.701, abs=1e-3)
    assert f["required_kvar"] == pytest.approx(117.701 - 198.660 * math.tan(math.acos(0.95)), abs=1e-3)
    assert f["source"] == str(path)


def test_loads_file_target_from_the_option(write_yaml):
    f = figures(pf_target=1.0, loads=write_yaml(LOADS, "loads.yaml"))
    assert f["pf_target"] == 1.0
    assert f["required_kvar"] == pytest.approx(f["reactive_kvar"])


def test_loads_file_errors_name_the_file(write_yaml, tmp_path):
    path = write_yaml(LOADS.replace("pf: 0.9", "pf: '0.9'"), "loads.yaml")
    with pytest.raises(SpecError) as info:
        figures(loads=path)
    assert info.value.where == str(path)
    assert info.value.field == "loads[1].pf"
    bad = write_yaml("kvar: 100\n", "k.yaml")
    with pytest.raises(SpecError, match="must hold 'loads'"):
        figures(loads=bad)
    with pytest.raises(SpecError, match="no such file"):
        figures(loads=tmp_path / "missing.yaml")


@pytest.mark.parametrize(("options", "name", "problem"), [
    ({"pf_present": 0.8, "pf_target": 0.9}, "kw", "is required"),
    ({"kw": 100, "pf_target": 0.9}, "pf_present", "is required"),
    ({"kw": 100, "pf_present": 0.8}, "pf_target", "is required"),
    ({"kw": 100, "pf_present": 0.9, "pf_target": 0.8}, "pf_target", "0.8 is below `pf_present` 0.9"),
    ({"kw": 0, "pf_present": 0.8, "pf_target": 0.9}, "kw", "must be in (0, 1e+07]"),
    ({"kw": float("nan"), "pf_present": 0.8, "pf_target": 0.9}, "kw", "must be a finite number"),
    ({"kw": 100, "pf_present": 1.2, "pf_target": 0.9}, "pf_present", "must be in (0, 1]"),
    ({"kw": 100, "pf_present": 0.8, "pf_target": 0.9, "voltage_v": -480}, "voltage_v", "must be in [1"),
    # regression values: below 1 V and 1 Hz, V² and ω underflow and the figures stop being numbers
    ({"kw": 100, "pf_present": 0.8, "pf_target": 0.9, "voltage_v": 1e-300}, "voltage_v", "must be in [1, 100000]"),
    ({"kw": 100, "pf_present": 0.8, "pf_target": 0.9, "frequency_hz": 1e-300}, "frequency_hz", "must be in [1, "),
    ({"kw": 100, "pf_present": 1e-300, "pf_target": 0.9}, "pf_present", "the quick figure goes to 10,000,000 kvar"),
    ({"kw": 100, "pf_present": 0.8, "pf_target": 0.9, "frequency_hz": float("inf")}, "frequency_hz", "finite"),
])
def test_bad_options(options, name, problem):
    """The library names its own parameters (the command line writes them as options: tests/cli)."""
    with pytest.raises(OptionError) as info:
        figures(**options)
    assert info.value.field == name
    assert problem in info.value.problem
    assert "--" not in info.value.line()


def test_loads_and_kw_together_are_refused(write_yaml):
    with pytest.raises(OptionError, match="either `loads` or `kw`"):
        figures(kw=100, loads=write_yaml(LOADS, "loads.yaml"))
