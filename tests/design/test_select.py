"""Picking from tables (bankbuild.design.select): the exact unit search, unit voltage, standard ratings, conductors."""

from __future__ import annotations

import itertools
import math
from types import SimpleNamespace

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.design.protection import NEC_MAX_SINGLE_MM2, NEC_MIN_PARALLEL_MM2
from bankbuild.design.select import (
    best_combination,
    build_step,
    next_rating,
    pick_conductor,
    pick_unit_voltage,
    unit_voltages,
)

# --- best_combination: fewest units, then least overshoot ----------------------------------------------------


def brute_force(sizes: list[float], target: float) -> tuple[int, float]:
    """(units, total) of the best multiset by trying every multiset of up to n units, n = ceil(T / largest)."""
    n = max(1, math.ceil(target / max(sizes) - 1e-9))
    for k in range(1, n + 1):
        totals = [sum(c) for c in itertools.combinations_with_replacement(sizes, k)]
        reaching = [t for t in totals if t >= target - 1e-9]
        if reaching:
            return k, min(reaching)
    raise AssertionError("n of the largest size always reach the target")


# Sizes on a 0.5 kvar grid so that equal totals (ties) are common.
size_lists = st.lists(st.integers(1, 120).map(lambda h: h / 2), min_size=1, max_size=5, unique=True)


@settings(max_examples=200, deadline=None)
@given(size_lists, st.floats(0.1, 1.0), st.integers(1, 5))
def test_best_combination_matches_brute_force(sizes, fraction, multiple):
    target = fraction * multiple * max(sizes)
    counts = best_combination(sizes, target)
    total = sum(c * s for c, s in zip(counts, sizes, strict=True))
    units, best_total = brute_force(sizes, target)
    assert sum(counts) == units
    assert total == pytest.approx(best_total, abs=1e-9)
    assert total >= target - 1e-9


@settings(max_examples=100, deadline=None)
@given(size_lists, st.floats(0.1, 400))
def test_best_combination_reaches_any_target(sizes, target):
    counts = best_combination(sizes, target)
    assert len(counts) == len(sizes)
    assert all(c >= 0 for c in counts)
    assert sum(c * s for c, s in zip(counts, sizes, strict=True)) >= target - 1e-9
    # Fewest units: no multiset of one unit less can reach the target.
    assert sum(counts) == max(1, math.ceil(target / max(sizes) - 1e-9))


@pytest.mark.parametrize(("sizes", "target", "expected"), [
    ([10, 20, 25, 50], 65, (0, 1, 0, 1)),  # 50 + 20 = 70: two units, 5 over (50 + 25 = 75 is 10 over)
    ([12.5, 25], 30, (1, 1)),  # 37.5 with two units
    ([2.5, 5, 50], 100, (0, 0, 2)),  # exact
    ([2.5, 5, 50], 100.01, (1, 0, 2)),  # three units; 102.5 is the least overshoot
    ([25, 50], 50, (0, 1)),  # one unit beats two equal ones
    ([50, 25], 75, (1, 1)),  # order of the sizes is kept in the answer
])
def test_best_combination_examples(sizes, target, expected):
    # Regression values, each worked by hand in the comment.
    assert best_combination(sizes, target) == expected


def test_best_combination_prefers_larger_units_on_a_tie():
    # 50 + 50 and 25 + 75 both give 100 with two units: the tie goes to the combination with the largest unit.
    assert best_combination([25, 50, 75], 100) == (1, 0, 1)


def test_best_combination_works_on_counts_not_units():
    # A million units of 50 kvar: the answer is arithmetic on the count (no loop per unit, no state per unit).
    assert best_combination([50.0], 50e6) == (1_000_000,)
    # 50,000.01 kvar from 10 and 50 kvar units: 1,001 units; 1,000 × 50 + 1 × 10 is the least overshoot.
    assert best_combination([10.0, 50.0], 50_000.01) == (1, 1000)


def test_best_combination_on_a_long_table_reaches_the_target_with_the_fewest_units():
    # 20,000 sizes (the table's row limit), 0.02 kvar apart: the search is bounded by its candidate budget, and
    # whatever it keeps still reaches the target with the fewest units.
    sizes = [round(0.1 + k * 0.02, 2) for k in range(20_000)]
    target = 1234.567
    counts = best_combination(sizes, target)
    total = sum(c * s for c, s in zip(counts, sizes, strict=True))
    assert sum(counts) == math.ceil(target / max(sizes))
    assert target - 1e-9 <= total < target + max(sizes)


def test_best_combination_edge_cases():
    assert best_combination([], 10) is None
    assert best_combination([10, 20], 0) == (0, 0)


# --- pick_unit_voltage, unit_voltages -----------------------------------------------------------------------


@settings(max_examples=100, deadline=None)
@given(st.lists(st.sampled_from([208, 240, 400, 415, 440, 480, 525, 600, 690]), min_size=1, unique=True),
       st.floats(100, 800))
def test_pick_unit_voltage_is_the_smallest_that_covers(available, needed):
    picked = pick_unit_voltage(available, needed)
    covering = [v for v in available if v >= needed]
    if covering:
        assert picked == min(covering)
    else:
        assert picked is None


def test_pick_unit_voltage_examples():
    assert pick_unit_voltage([240, 480, 600], 480) == 480  # equal to the supply is enough
    assert pick_unit_voltage([240, 480, 600], 516.1) == 600  # 480 V / (1 - 0.07) = 516.1 V behind a 7% reactor
    assert pick_unit_voltage([400, 415, 440, 480], 430.1) == 440  # 400 V / 0.93
    assert pick_unit_voltage([240, 480, 600], 690) is None


def test_unit_voltages_by_frequency(catalogs):
    # Regression values: the voltages of the built-in unit table.
    assert unit_voltages(catalogs.capacitor_units, 60) == [240, 480, 600]
    assert unit_voltages(catalogs.capacitor_units, 50) == [400, 415, 440, 480, 525, 690]
    assert unit_voltages(catalogs.capacitor_units, 55) == []


# --- build_step --------------------------------------------------------------------------------------------------


def test_build_step_rerated_units(catalogs):
    units = [u for u in catalogs.capacitor_units if (u.rated_voltage_v, u.rated_frequency_hz) == (600, 60)]
    factor = (480 / 600) ** 2  # 0.64: a 600 V unit on 480 V (re-rating formula, trade-facts)
    choice = build_step(units, 100, factor)
    # Largest unit gives 50 × 0.64 = 32 kvar: four units are needed; 3 × 32 = 96, and the smallest fourth unit
    # that reaches 100 is 7.5 kvar (7.5 × 0.64 = 4.8): 100.8 kvar from 157.5 kvar nameplate.
    assert [(u.rated_kvar, c) for u, c in zip(choice.units, choice.counts, strict=True)] == [(50, 3), (7.5, 1)]
    assert choice.quantity == 4
    assert choice.rated_kvar == pytest.approx(157.5)
    assert choice.delivered_kvar == pytest.approx(100.8)


def test_build_step_nothing_to_build_from():
    assert build_step([], 100, 1.0) is None
    assert build_step([SimpleNamespace(rated_kvar=10)], 100, 0.0) is None


# --- next_rating -------------------------------------------------------------------------------------------------


def nec_fuses(catalogs):
    return [r for r in catalogs.device_ratings if (r.basis, r.device) == ("nec", "fuse")]


@pytest.mark.parametrize(("required", "expected"), [
    (595.4, 600),  # Source: NEC 240.6(A) standard ratings: 600 is the next at or above 595.4
    (600.0, 600),  # a rating equal to the requirement is taken
    (600.2, 601),  # Source: NEC 240.6(A) lists 601 A as an additional standard fuse rating
    (5.95, 6),  # Source: NEC 240.6(A) additional fuse ratings 1, 3, 6, 10
    (916.9, 1000),  # Source: NEC 240.6(A): no rating between 800 and 1000
    (6000.0, 6000),
])
def test_next_nec_fuse_rating(catalogs, required, expected):
    rating = next_rating(nec_fuses(catalogs), required, "rating_a")
    assert rating.value == expected
    assert rating.designation == f"{expected} A"
    assert rating.table == "device_ratings.csv"


def test_next_rating_none_above_the_table(catalogs):
    assert next_rating(nec_fuses(catalogs), 6000.1, "rating_a") is None


@settings(max_examples=100, deadline=None)
@given(st.lists(st.integers(1, 5000), min_size=1, max_size=30, unique=True), st.floats(0, 6000))
def test_next_rating_is_the_smallest_at_or_above(values, required):
    rows = [SimpleNamespace(rating_a=v, table="t.csv", row=i + 2) for i, v in enumerate(values)]
    rating = next_rating(rows, required, "rating_a")
    above = [v for v in values if v >= required]
    if above:
        assert rating.value == min(above)
        assert rating.row == values.index(min(above)) + 2
    else:
        assert rating is None


# --- conductors ------------------------------------------------------------------------------------------------


def nec_rows(catalogs, largest: str | None = None):
    rows = [r for r in catalogs.conductors_nec if r.edition == 2023]
    if largest:
        limit = next(r.area_mm2 for r in rows if r.size == largest)
        rows = [r for r in rows if r.area_mm2 <= limit]
    return rows


def pick_nec(rows, required_a, temp="75", max_sets=6, accept=lambda c: True):
    return pick_conductor(rows, required_a, f"ampacity_{temp}c_a", lambda r: r.size, max_sets,
                          NEC_MIN_PARALLEL_MM2, NEC_MAX_SINGLE_MM2, accept)


@pytest.mark.parametrize(("required", "size", "ampacity"), [
    (16.2, "14 AWG", 20),  # Source: NEC Table 310.16 (2023), Cu 75 °C: 14 AWG = 20 A
    (48.7, "8 AWG", 50),  # Source: NEC Table 310.16 (2023), Cu 75 °C: 8 AWG = 50 A
    (162.4, "2/0 AWG", 175),  # Source: NEC Table 310.16 (2023), Cu 75 °C: 1/0 = 150 A, 2/0 = 175 A
    (380.0, "500 kcmil", 380),  # Source: NEC Table 310.16 (2023), Cu 75 °C: 500 kcmil = 380 A
])
def test_single_conductor(catalogs, required, size, ampacity):
    choice = pick_nec(nec_rows(catalogs), required)
    assert (choice.designation, choice.size, choice.sets, choice.ampacity_a) == (size, size, 1, ampacity)
    assert choice.table == "conductors_nec.csv"


def test_parallel_sets_before_very_large_single_conductors(catalogs):
    # 1.35 × 360.8 A = 487.1 A. A single 1000 kcmil (545 A) would do, but sizes above 500 kcmil are used only
    # when no parallel set works (common practice); two sets need 243.6 A each: 250 kcmil (255 A) -> 510 A.
    # Source: NEC Table 310.16 (2023), Cu 75 °C: 250 kcmil = 255 A.
    choice = pick_nec(nec_rows(catalogs), 487.1)
    assert (choice.designation, choice.sets, choice.size, choice.ampacity_a) == ("2 × 250 kcmil", 2, "250 kcmil", 510)


def test_parallel_sets_may_be_1_0_awg(catalogs):
    # NEC 310.10(G): conductors 1/0 AWG and larger may run in parallel. With a table that stops at 1/0 AWG,
    # 280 A needs two sets of 1/0 AWG (2 × 150 A = 300 A). Source: NEC Table 310.16 (2023), 1/0 AWG 75 °C = 150 A.
    choice = pick_nec(nec_rows(catalogs, largest="1/0 AWG"), 280)
    assert choice is not None
    assert (choice.designation, choice.ampacity_a) == ("2 × 1/0 AWG", 300)


def test_no_parallel_sets_below_1_0_awg(catalogs):
    # A table stopping at 1 AWG (130 A): 140 A cannot be made of parallel 1 AWG (NEC 310.10(G)).
    assert pick_nec(nec_rows(catalogs, largest="1 AWG"), 140) is None


def test_large_single_conductor_as_the_last_resort(catalogs):
    # With one set allowed, 500 A needs a single conductor above 500 kcmil: 800 kcmil has 490 A, 900 kcmil 520 A
    # at 75 °C (rows from memory in the table, beyond the stored 2023 values that end at 600 kcmil).
    choice = pick_nec(nec_rows(catalogs), 500, max_sets=1)
    assert (choice.designation, choice.ampacity_a) == ("900 kcmil", 520)


def test_nothing_large_enough_is_none(catalogs):
    assert pick_nec(nec_rows(catalogs), 10_000, max_sets=6) is None


def test_accept_upsizes_the_conductor(catalogs):
    # A coordination test that wants at least 200 A: 1.35 × 100 A = 135 A would be 1/0 AWG, taken is 3/0 AWG.
    choice = pick_nec(nec_rows(catalogs), 135, accept=lambda c: c.ampacity_a >= 200)
    assert (choice.designation, choice.ampacity_a) == ("3/0 AWG", 200)


@settings(max_examples=100, deadline=None)
@given(st.floats(1, 3000), st.sampled_from(["60", "75", "90"]), st.integers(1, 8))
def test_conductor_pick_properties(catalogs, required, temp, max_sets):
    rows = nec_rows(catalogs)
    choice = pick_nec(rows, required, temp, max_sets)
    attr = f"ampacity_{temp}c_a"
    if choice is None:
        best = max(max_sets * getattr(r, attr) for r in rows if r.area_mm2 >= NEC_MIN_PARALLEL_MM2 - 0.01)
        assert max(best, max(getattr(r, attr) for r in rows)) < required
        return
    row = next(r for r in rows if r.size == choice.size)
    assert choice.ampacity_a == choice.sets * getattr(row, attr) >= required - 1e-9
    assert 1 <= choice.sets <= max_sets
    if choice.sets > 1:
        assert row.area_mm2 >= NEC_MIN_PARALLEL_MM2 - 0.01
    # Fewer sets first: no single conductor up to 500 kcmil would have done.
    if choice.sets > 1:
        assert all(getattr(r, attr) < required for r in rows if r.area_mm2 <= NEC_MAX_SINGLE_MM2)
