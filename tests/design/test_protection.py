"""Protection sizing (bankbuild.design.protection) against the published rules, with hand-worked examples.

Each example writes its arithmetic beside the expected value and names the rule and table the value comes from.
The multipliers (165% fuse, 135% breaker) are common practice (no single source); NEC 460.8 gives the 135% of
the conductor and the disconnect.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.design.protection import (
    IEC_BREAKER_I2_FACTOR,
    NEC_NEXT_SIZE_UP_MAX_A,
    NEC_SMALL_CONDUCTOR_MAX_A,
    iec_fuse_i2_factor,
    size_circuit,
)
from bankbuild.design.sizing import circuit_context
from bankbuild.spec.model import Spec

# Source: NEC 240.6(A), standard ampere ratings of fuses and inverse time circuit breakers (fuses also 1, 3, 6,
# 10 and 601 A).
NEC_240_6_A = {15, 20, 25, 30, 35, 40, 45, 50, 60, 70, 80, 90, 100, 110, 125, 150, 175, 200, 225, 250, 300, 350,
               400, 450, 500, 600, 700, 800, 1000, 1200, 1600, 2000, 2500, 3000, 4000, 5000, 6000}
NEC_FUSES = NEC_240_6_A | {1, 3, 6, 10, 601}
# Source: IEC 60269 gG fuse-link ratings (from memory, as in trade-facts).
IEC_GG = {2, 4, 6, 8, 10, 12, 16, 20, 25, 32, 40, 50, 63, 80, 100, 125, 160, 200, 250, 315, 400, 500, 630, 800,
          1000, 1250}


def rated_current(kvar: float, volts: float) -> float:
    """I = Q / (√3 · V_LL) [A] (textbook three-phase formula)."""
    return kvar * 1000 / (math.sqrt(3) * volts)


@pytest.fixture(scope="module")
def context(catalogs):
    """A CircuitContext for a rule basis and protection block, from the built-in tables."""

    def make(rules="nec", **protection):
        # at the tables' 30 °C base ambient, so the published table values apply unchanged; the corrections
        # have their own tests (test_corrections.py)
        protection = {"conductor_ambient_c": 30.0, **protection}
        spec = Spec.model_validate({"rules": rules, "banks": [
            {"name": "B", "supply": {"voltage_v": 480, "frequency_hz": 60}, "need": {"kvar": 1},
             "protection": protection}]})
        return circuit_context(spec, spec.banks[0], catalogs, "", "")

    return make


def main_circuit(ctx, current_a):
    return size_circuit(ctx, "Main", current_a, "rated current", True)


def line(circuit, item):
    (found,) = [x for x in circuit.lines if x.item == item]
    return found


# --- NEC basis, fuses -----------------------------------------------------------------------------------------


def test_nec_300_kvar_480_v_fuse(context):
    i = rated_current(300, 480)
    assert i == pytest.approx(360.84, abs=0.005)  # 300,000 / (1.7321 × 480) = 360.84 A
    c = main_circuit(context("nec", device="fuse"), i)
    # Fuse: 1.65 × 360.84 = 595.39 A -> 600 A, the next NEC 240.6(A) rating (common-practice factor).
    assert line(c, "Fuse").required_a == pytest.approx(595.39, abs=0.005)
    assert c.device.value == 600  # Source: NEC 240.6(A)
    # Conductor: 1.35 × 360.84 = 487.14 A (NEC 460.8(A)); no single conductor up to 500 kcmil (380 A) reaches it,
    # two sets need 243.6 A each: 250 kcmil, 255 A -> 510 A. Source: NEC Table 310.16 (2023), Cu 75 °C.
    assert line(c, "Conductor ampacity").required_a == pytest.approx(487.14, abs=0.005)
    assert (c.conductor.designation, c.conductor.ampacity_a) == ("2 × 250 kcmil", 510)
    # 600 A on 510 A: NEC 240.4(B) allows the next standard rating above 510 A (600 A, ≤ 800 A).
    assert "(as sized)" in line(c, "Conductor, coordinated").chosen
    # Disconnect: 1.35 × 360.84 = 487.1 A (NEC 460.8(C)), and a fusible switch must hold the 600 A fuse: 600 A.
    assert c.disconnect.value == 600
    assert c.checks == []


def test_nec_next_size_up_stops_at_800_a(context):
    i = rated_current(500, 480)  # 500,000 / (1.7321 × 480) = 601.41 A
    c = main_circuit(context("nec", device="fuse"), i)
    # Fuse: 1.65 × 601.41 = 992.3 A -> 1000 A. Source: NEC 240.6(A) (nothing between 800 and 1000).
    assert c.device.value == 1000
    # Conductor: 1.35 × 601.41 = 811.9 A -> 3 × 300 kcmil (3 × 285 = 855 A). A 1000 A device is above 800 A, so
    # NEC 240.4(B) does not apply and 240.4(C) wants ampacity ≥ 1000 A: 3 × 400 kcmil = 3 × 335 = 1005 A.
    # Source: NEC Table 310.16 (2023), Cu 75 °C: 300 kcmil 285 A, 400 kcmil 335 A.
    assert line(c, "Conductor ampacity").chosen.startswith("3 × 300 kcmil")
    assert (c.conductor.designation, c.conductor.ampacity_a) == ("3 × 400 kcmil", 1005)
    assert c.conductor.ampacity_a >= c.device.value
    coordinated = line(c, "Conductor, coordinated")
    assert coordinated.note == "upsized from 3 × 300 kcmil so that 1000 A protects it"
    # Disconnect must hold the 1000 A fuse: 1200 A, the next size of the switch table (common practice).
    assert c.disconnect.value == 1200


def test_nec_next_size_up_below_800_a(context):
    i = rated_current(220, 480)  # 220,000 / (1.7321 × 480) = 264.62 A
    c = main_circuit(context("nec", device="fuse"), i)
    # Fuse: 1.65 × 264.62 = 436.6 A -> 450 A. Source: NEC 240.6(A).
    assert c.device.value == 450
    # Conductor: 1.35 × 264.62 = 357.2 A -> 500 kcmil (380 A). The next standard rating above 380 A is 400 A, and
    # 450 A > 400 A: NEC 240.4(B) does not cover it. Two sets of 3/0 AWG (2 × 200 = 400 A) do not either: 400 A
    # is itself a standard rating, so NEC 240.4(B)(2) allows no larger device. Two sets of 4/0 AWG (2 × 230 =
    # 460 A ≥ 450 A) do. Source: NEC Table 310.16 (2023), Cu 75 °C: 500 kcmil 380 A, 3/0 AWG 200 A, 4/0 AWG 230 A.
    assert line(c, "Conductor ampacity").chosen.startswith("500 kcmil")
    assert (c.conductor.designation, c.conductor.ampacity_a) == ("2 × 4/0 AWG", 460)
    assert line(c, "Conductor, coordinated").rule.startswith("NEC 240.4")


@pytest.mark.parametrize(("kvar", "fuse", "plain", "final"), [
    # 10 kvar: I = 12.03 A; fuse 1.65 × 12.03 = 19.85 -> 20 A; conductor 1.35 × 12.03 = 16.2 A -> 14 AWG (20 A),
    # but NEC 240.4(D) limits 14 AWG to a 15 A device: 12 AWG (25 A, limit 20 A).
    (10, 20, "14 AWG", "12 AWG"),
    # 15 kvar: I = 18.04 A; fuse 29.8 -> 30 A; conductor 24.4 A -> 12 AWG (25 A), limited to 20 A by 240.4(D):
    # 10 AWG (35 A, limit 30 A).
    (15, 30, "12 AWG", "10 AWG"),
    # 2.5 kvar: I = 3.01 A; fuse 4.96 -> 6 A (an additional fuse rating of 240.6(A)); 14 AWG, 6 A ≤ 15 A.
    (2.5, 6, "14 AWG", "14 AWG"),
])
def test_nec_small_conductor_rule(context, kvar, fuse, plain, final):
    # Source: NEC 240.4(D) (14 AWG 15 A, 12 AWG 20 A, 10 AWG 30 A, copper); NEC Table 310.16 (2023), Cu 75 °C.
    c = size_circuit(context("nec", device="fuse"), "Step 1", rated_current(kvar, 480), "rated current", False)
    assert c.device.value == fuse
    assert line(c, "Conductor ampacity").chosen.startswith(plain + " ")
    assert c.conductor.designation == final
    assert c.disconnect is None


def test_nec_small_conductor_limits_are_the_code_values():
    assert NEC_SMALL_CONDUCTOR_MAX_A == {"14 AWG": 15, "12 AWG": 20, "10 AWG": 30}  # Source: NEC 240.4(D)
    assert NEC_NEXT_SIZE_UP_MAX_A == 800  # Source: NEC 240.4(B)(3)


# --- NEC basis, breakers ------------------------------------------------------------------------------------


def test_nec_100_kvar_breaker(context):
    i = rated_current(100, 480)  # 120.28 A
    c = main_circuit(context("nec", device="breaker"), i)
    # Breaker: 1.35 × 120.28 = 162.4 A -> 175 A (NEC 240.6(A)); conductor 162.4 A -> 2/0 AWG, 175 A
    # (NEC Table 310.16 (2023), Cu 75 °C); 175 A ≤ 175 A. Frame: 225 AF, the next frame of the table (common
    # practice). Disconnect: 1.35 × 120.28 = 162.4 A -> 200 A (NEC 460.8(C); switch sizes common practice).
    assert c.device.value == 175
    assert (c.conductor.designation, c.conductor.ampacity_a) == ("2/0 AWG", 175)
    assert c.frame.value == 225
    assert c.disconnect.value == 200
    assert line(c, "Disconnect").required_a == pytest.approx(162.38, abs=0.005)


def test_disconnect_is_135_percent_of_rated_current(context):
    # Source: NEC 460.8(C): the disconnecting means is rated at least 135% of the capacitor's rated current.
    # With a breaker nothing else raises it: 1.35 × 148.0 = 199.8 A -> 200 A; 1.35 × 148.2 = 200.07 A -> 400 A.
    ctx = context("nec", device="breaker")
    assert main_circuit(ctx, 148.0).disconnect.value == 200
    assert main_circuit(ctx, 148.2).disconnect.value == 400


# --- IEC basis ---------------------------------------------------------------------------------------------------


def test_iec_50_kvar_400_v_gg_fuse(context):
    i = rated_current(50, 400)  # 50,000 / (1.7321 × 400) = 72.17 A
    c = main_circuit(context("iec", device="fuse", installation_method="B1"), i)
    # gG fuse: 1.65 × 72.17 = 119.1 A -> 125 A (IEC 60269 ratings, from memory; factor common practice).
    assert c.device.value == 125
    # Conductor: 1.35 × 72.17 = 97.4 A -> 35 mm², 110 A. Source: IEC 60364-5-52 Table B.52.4, PVC, method B1.
    assert line(c, "Conductor ampacity").chosen.startswith("35 mm²")
    # IEC 60364-4-43 433.1: I_n ≤ I_z and I_2 ≤ 1.45 I_z, I_2 = 1.6 × 125 = 200 A -> I_z ≥ 137.9 A:
    # 50 mm² (134 A) fails, 70 mm² (171 A) holds. Source: IEC 60364-5-52 Table B.52.4, PVC, B1.
    assert (c.conductor.designation, c.conductor.ampacity_a) == ("70 mm²", 171)
    # Disconnect: 1.35 × 72.17 = 97.4 A, and the switch must hold the 125 A fuse: 125 A.
    assert c.disconnect.value == 125


def test_iec_50_kvar_400_v_breaker(context):
    c = main_circuit(context("iec", device="breaker", installation_method="B1"), rated_current(50, 400))
    # Breaker: 1.35 × 72.17 = 97.4 A -> 100 A; conductor 35 mm² (110 A, Table B.52.4, B1): 100 ≤ 110 and
    # I_2 = 1.3 × 100 = 130 ≤ 1.45 × 110 = 159.5 (IEC 60364-4-43 433.1; 1.3 from memory, IEC 60947-2).
    assert c.device.value == 100
    assert (c.conductor.designation, c.conductor.ampacity_a) == ("35 mm²", 110)
    assert c.frame.value == 100
    assert IEC_BREAKER_I2_FACTOR == 1.3


def test_iec_small_gg_fuse_uses_its_own_fusing_factor(context):
    # 5 kvar, 400 V: I = 7.22 A; gG fuse 1.65 × 7.22 = 11.9 A -> 12 A. Conductor 1.35 × 7.22 = 9.7 A -> 1.5 mm²
    # (15.5 A, Table B.52.4, B1). A 12 A gG fuse has I_2 = 1.9 × 12 = 22.8 A (4 A < I_n < 16 A; IEC 60269-1,
    # from memory), and 1.45 × 15.5 = 22.5 A < 22.8 A: 2.5 mm² (21 A; 1.45 × 21 = 30.5 A) is needed.
    c = size_circuit(context("iec", device="fuse", installation_method="B1"), "Step 1", rated_current(5, 400),
                     "rated current", False)
    assert c.device.value == 12
    assert c.conductor.designation == "2.5 mm²"


@pytest.mark.parametrize(("rating", "factor"), [
    (2, 2.1), (4, 2.1), (6, 1.9), (12, 1.9), (16, 1.6), (63, 1.6), (125, 1.6), (1250, 1.6),
])
def test_iec_gg_conventional_fusing_factor(rating, factor):
    # IEC 60269-1, conventional fusing current of gG fuse-links (from memory): 2.1 I_n up to 4 A,
    # 1.9 I_n from 4 to 16 A, 1.6 I_n from 16 A.
    assert iec_fuse_i2_factor(rating) == factor


# --- properties --------------------------------------------------------------------------------------------------


@settings(max_examples=150, deadline=None)
@given(st.floats(0.5, 2500), st.sampled_from(["fuse", "breaker"]), st.floats(1.0, 2.5), st.floats(1.0, 2.0),
       st.sampled_from([60, 75, 90]))
def test_nec_circuit_properties(context, current, device, device_factor, conductor_factor, temp):
    ctx = context("nec", device=device, device_factor=device_factor, conductor_factor=conductor_factor,
                  conductor_temp_c=temp)
    c = main_circuit(ctx, current)
    if c.checks:
        assert all(not check.ok for check in c.checks)
        return
    table = NEC_FUSES if device == "fuse" else NEC_240_6_A
    assert c.device.value in table
    assert c.device.value >= device_factor * current - 1e-6
    assert c.conductor.ampacity_a >= conductor_factor * current - 1e-6
    assert c.disconnect.value >= ctx.disconnect_factor * current - 1e-6
    rating, ampacity = c.device.value, c.conductor.ampacity_a
    if rating > ampacity:  # only NEC 240.4(B): the next standard rating above the ampacity, up to 800 A
        assert rating <= 800
        assert not any(ampacity < r < rating for r in table)
    limit = NEC_SMALL_CONDUCTOR_MAX_A.get(c.conductor.designation)
    if limit is not None:
        assert rating <= limit


@settings(max_examples=150, deadline=None)
@given(st.floats(0.5, 1200), st.sampled_from(["fuse", "breaker"]), st.sampled_from(["B1", "C", "E"]))
def test_iec_circuit_properties(context, current, device, method):
    ctx = context("iec", device=device, installation_method=method)
    c = main_circuit(ctx, current)
    if c.checks:
        assert all(not check.ok for check in c.checks)
        return
    if device == "fuse":
        assert c.device.value in IEC_GG
    assert c.device.value >= ctx.device_factor * current - 1e-6
    assert c.conductor.ampacity_a >= ctx.conductor_factor * current - 1e-6
    # IEC 60364-4-43 433.1: I_n ≤ I_z and I_2 ≤ 1.45 I_z.
    i2 = (iec_fuse_i2_factor(c.device.value) if device == "fuse" else IEC_BREAKER_I2_FACTOR) * c.device.value
    assert c.device.value <= c.conductor.ampacity_a
    assert i2 <= 1.45 * c.conductor.ampacity_a + 1e-9


def test_nothing_large_enough_is_a_failed_check(context):
    c = main_circuit(context("nec", device="fuse", max_parallel_sets=1), 5000)
    names = {check.name for check in c.checks}
    assert "Main: conductor" in names
    assert all(not check.ok for check in c.checks)
    assert line(c, "Conductor ampacity").chosen == "none large enough"


def test_every_line_says_it_is_typical_practice(context):
    c = main_circuit(context("nec"), 100)
    for item in ("Fuse", "Conductor ampacity", "Disconnect"):
        assert "verify with the local code" in line(c, item).rule
