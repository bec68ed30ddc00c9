"""Next-size-up, conventional-current and correction arithmetic, checked against the code's own examples."""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from bankbuild.calc.ampacity import (
    conventional_current_ok,
    corrected_ampacity_a,
    next_size_up,
    step_factor,
)

# NEC 240.6(A) standard ampere ratings of fuses and inverse-time breakers
NEC_RATINGS = [15, 20, 25, 30, 35, 40, 45, 50, 60, 70, 80, 90, 100, 110, 125, 150, 175, 200, 225, 250, 300, 350,
               400, 450, 500, 600, 700, 800, 1000, 1200, 1600, 2000, 2500, 3000, 4000, 5000, 6000]


@pytest.mark.parametrize(("device", "ampacity"), [(200, 175), (60, 50), (225, 200), (175, 150)])
def test_no_next_size_up_over_an_ampacity_that_is_a_standard_rating(device, ampacity):
    # NEC 240.4(B)(2): the allowance applies only when the ampacity does not equal a standard rating
    # (the four pairs the plan review found accepted)
    verdict = next_size_up(device, ampacity, NEC_RATINGS, 800)
    assert not verdict.ok
    assert verdict.sub_rule == "(B)(2)"


@pytest.mark.parametrize(("device", "ampacity"), [(175, 164.0), (125, 123.0), (800, 760.0)])
def test_next_size_up_when_the_ampacity_is_not_a_standard_rating(device, ampacity):
    # NEC 240.4(B): the next higher standard rating above a non-standard ampacity, ≤ 800 A
    verdict = next_size_up(device, ampacity, NEC_RATINGS, 800)
    assert verdict.ok and verdict.sub_rule == "(B)"


def test_not_two_ratings_up():
    # NEC 240.4(B): only the next higher standard rating (164 A takes 175 A, not 200 A)
    verdict = next_size_up(200, 164.0, NEC_RATINGS, 800)
    assert not verdict.ok and verdict.sub_rule == "next rating"


def test_above_800_a_the_ampacity_must_reach_the_device():
    # NEC 240.4(C): above 800 A the conductor ampacity must be ≥ the device rating
    assert next_size_up(1000, 950.0, NEC_RATINGS, 800).sub_rule == "(C)"
    assert next_size_up(1000, 1000.0, NEC_RATINGS, 800).ok


def test_device_at_or_below_the_ampacity():
    verdict = next_size_up(175, 175.0, NEC_RATINGS, 800)
    assert verdict.ok and verdict.sub_rule == "device ≤ ampacity"


@given(device=st.sampled_from(NEC_RATINGS), ampacity=st.floats(min_value=1, max_value=7000))
def test_next_size_up_accepts_exactly_the_code_cases(device, ampacity):
    # property: accepted ⇔ device ≤ ampacity, or (ampacity not standard, device the next rating, ≤ 800 A)
    # (NEC 240.4(B)(1)–(3), 240.4(C))
    verdict = next_size_up(device, ampacity, NEC_RATINGS, 800)
    standard = any(abs(ampacity - r) <= 1e-6 for r in NEC_RATINGS)
    above = [r for r in NEC_RATINGS if r > ampacity + 1e-6]
    allowance = (not standard and device <= 800 and bool(above) and device == min(above))
    assert verdict.ok == (device <= ampacity + 1e-6 or allowance)


def test_conventional_current_rule():
    # IEC 60364-4-43 433.1: I_2 ≤ 1.45 I_z; a 125 A gG fuse (I_2 = 1.6 × 125 = 200 A, IEC 60269-1 from memory)
    # needs I_z ≥ 137.9 A
    assert conventional_current_ok(125, 1.6, 137.94)
    assert not conventional_current_ok(125, 1.6, 137.9)
    assert not conventional_current_ok(125, 1.6, 124.0)  # I_n ≤ I_z fails first


def test_ambient_and_grouping_factors():
    # NEC Table 310.15(B)(1), 90 °C column (from memory): 41–45 °C 0.87; Table 310.15(C)(1): 4–6 conductors 80 %
    col90 = [(30, 1.0), (35, 0.96), (40, 0.91), (45, 0.87), (50, 0.82)]
    grouping = [(3, 1.0), (6, 0.8), (9, 0.7), (20, 0.5)]
    assert step_factor(col90, 45) == 0.87
    assert step_factor(grouping, 6) == 0.8
    assert step_factor(grouping, 7) == 0.7
    assert step_factor(col90, 60) is None
    # 2/0 AWG at 90 °C is 195 A (NEC Table 310.16, 2023): × 0.87 × 0.8 = 135.72 A
    assert corrected_ampacity_a(195.0, 0.87, 0.8) == pytest.approx(135.72, abs=1e-9)
