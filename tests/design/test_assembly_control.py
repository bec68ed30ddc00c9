"""Controller, current transformer and control circuit.

Sources beside each value: S = √3·V·I (trade-facts.md), copper resistivity (handbook value), and the stated
common-practice factors of :mod:`bankbuild.design.control`.
"""

from __future__ import annotations

import dataclasses

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.design.control import ControlInputs, control_circuit, ct_basis, lead_burden_va


def inputs(**changes) -> ControlInputs:
    base = ControlInputs(rules="nec", steps=6, smallest_step_a=50.0, supply_voltage_v=480.0, ct_basis_a=1804.2,
                         ct_basis_text="transformer", ct_secondary_a=5.0, ct_lead_length_m=5.0,
                         control_voltage_v=None, coil_sealed_va=(14.0,) * 6, fan_va=100.0)
    return dataclasses.replace(base, **changes)


def test_ct_basis_is_the_transformer_full_load_current():
    # Source: trade-facts.md - S = √3·V_LL·I: 1500 kVA at 480 V -> 1804.2 A.
    amps, text = ct_basis(None, 1500.0, 900.0, 480.0)
    assert amps == pytest.approx(1804.2, abs=0.05)
    assert "1500 kVA" in text


def test_ct_basis_from_the_load_then_the_override():
    # Source: trade-facts.md - 415.7 kVA at 480 V is 500.0 A.
    assert ct_basis(None, None, 415.69, 480.0)[0] == pytest.approx(500.0, abs=0.05)
    assert ct_basis(750.0, 1500.0, 415.69, 480.0) == (750.0, "load current stated in the spec "
                                                            "(assembly.ct_load_current_a)")
    assert ct_basis(None, None, None, 480.0)[0] is None


def test_lead_burden():
    # Source: handbook copper resistivity 0.0175 Ω·mm²/m: 2 × 10 m of 2.5 mm² = 0.14 Ω; at 5 A: 25 × 0.14 = 3.5 VA.
    assert lead_burden_va(5.0, 10.0) == pytest.approx(3.5)
    assert lead_burden_va(1.0, 10.0) == pytest.approx(0.14)  # a 1 A secondary: 25 times less


def test_controller_ct_and_control_transformer(catalogs):
    result, checks = control_circuit(inputs(), catalogs)
    assert result.controller.designation == "CTL-6OUT" and result.controller.value == 6
    assert result.ct.value == 2000  # the next standard primary above 1804 A
    # 5 m each way of 2.5 mm² at 5 A (1.75 VA) plus the controller's 0.5 VA input
    assert result.ct_burden_needed_va == pytest.approx(2.25)
    assert result.smallest_step_secondary_a == pytest.approx(50.0 * 5 / 2000)
    # sealed load: controller 8 VA + 6 coils × 14 VA + fans 100 VA = 192 VA; × 1.25 = 240 VA -> 250 VA
    assert result.control_load_va == pytest.approx(192.0)
    assert result.control_transformer.value == 250
    # primary 250 VA / 480 V = 0.52 A; the largest fuse up to 2.5 × = 1.30 A is 1.25 A
    assert result.primary_fuse.value == 1.25
    # secondary: 1.25 × 192 VA / 120 V = 2.0 A -> 2 A
    assert result.secondary_fuse.value == 2.0
    assert result.control_voltage_v == 120.0  # Source: common practice (no single source) - 120 V under nec
    assert all(c.ok for c in checks), checks


def test_iec_control_at_the_supply_voltage_needs_no_transformer(catalogs):
    result, _ = control_circuit(inputs(rules="iec", supply_voltage_v=400.0, control_voltage_v=400.0), catalogs)
    assert result.control_transformer is None and result.primary_fuse is None
    assert result.secondary_fuse is not None


def test_a_fixed_bank_has_no_controller(catalogs):
    result, _ = control_circuit(inputs(steps=0, coil_sealed_va=(), fan_va=20.0), catalogs)
    assert result.controller is None and result.ct is None and result.measuring_fuse is None
    assert result.control_transformer is not None  # the fans still need a supply


def test_unknown_load_current_is_a_caution_not_a_crash(catalogs):
    result, checks = control_circuit(inputs(ct_basis_a=None, ct_basis_text="not known"), catalogs)
    assert result.ct is None
    assert [c.name for c in checks if not c.ok] == ["Current transformer"]


def test_too_many_steps_for_any_controller(catalogs):
    result, checks = control_circuit(inputs(steps=40, coil_sealed_va=(14.0,) * 40), catalogs)
    assert result.controller is None
    assert any(c.name == "Controller outputs" and not c.ok for c in checks)


def test_a_step_too_small_for_the_controller_to_see(catalogs):
    # 2 A on a 2000/5 CT is 5 mA on the secondary, below the 15 mA the controller measures (controllers.csv).
    _, checks = control_circuit(inputs(smallest_step_a=2.0), catalogs)
    ct = next(c for c in checks if c.name == "Current transformer")
    assert not ct.ok and "cannot see the smallest step" in ct.detail


@settings(max_examples=60, deadline=None)
@given(steps=st.integers(min_value=1, max_value=16), load=st.floats(min_value=30, max_value=5500))
def test_controller_and_ct_always_large_enough(catalogs, steps, load):
    result, _ = control_circuit(inputs(steps=steps, coil_sealed_va=(10.0,) * steps, ct_basis_a=load), catalogs)
    assert result.controller.value >= steps
    assert min(r.outputs for r in catalogs.controllers if r.outputs >= steps) == result.controller.value
    assert result.ct.value >= load
    assert result.control_transformer.value >= 1.25 * result.control_load_va
