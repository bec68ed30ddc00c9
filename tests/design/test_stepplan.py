"""The step plan: proposed step sizes, reachable kvar values, and the exact unit selection behind each step.

Sources: the arithmetic of subset sums and of the re-rating rule (trade-facts.md); the selection rule
(fewest units, then least overshoot) is checked against brute force on small random tables.
"""

from __future__ import annotations

import itertools
import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bankbuild.design.select import best_combination, build_step
from bankbuild.design.stepplan import MAX_UNITS_PER_RESOLUTION, propose_steps, reachable

SIZES = st.lists(st.sampled_from([1.0, 2.5, 5.0, 7.5, 10.0, 12.5, 15.0, 20.0, 25.0, 30.0, 40.0, 50.0]),
                 min_size=1, max_size=5, unique=True)


# --- reachable values ------------------------------------------------------------------------------------------


def brute_reach(steps: list[float]) -> list[float]:
    """Every subset sum, by enumeration (the definition of what a controller can switch in)."""
    sums = {round(sum(c), 6) for r in range(len(steps) + 1) for c in itertools.combinations(steps, r)}
    return sorted(sums)


def test_reachable_binary_pattern():
    # Source: common practice (no single source) - a 1:2:4 bank of 25 kvar resolution reaches every multiple of
    # 25 kvar up to 175 kvar, eight values.
    reach = reachable([25, 50, 100])
    assert reach.values_kvar == (0, 25, 50, 75, 100, 125, 150, 175)
    assert reach.largest_gap_kvar == 25


def test_reachable_uneven_steps_leave_a_gap():
    # Source: subset sums by hand - steps 10 and 40 reach 0, 10, 40, 50: the widest jump is 10 -> 40 = 30 kvar.
    reach = reachable([10, 40])
    assert reach.values_kvar == (0, 10, 40, 50)
    assert reach.largest_gap_kvar == 30
    assert reach.count == 4


def test_reachable_scales_by_factor():
    # Source: re-rating rule (trade-facts.md): 60 kvar nameplate at 600 V delivers 60 × (480/600)² = 38.4 kvar at
    # 480 V; every reachable value scales by the same factor.
    reach = reachable([60, 120], factor=(480 / 600) ** 2)
    assert reach.values_kvar == pytest.approx((0, 38.4, 76.8, 115.2))
    assert reach.largest_gap_kvar == pytest.approx(38.4)


def test_too_many_values_are_counted_not_listed():
    # 16 steps of distinct odd sizes: more sums than the listing limit; count and gap still given.
    steps = [1.001 * 2**k for k in range(13)]
    reach = reachable(steps, max_listed=100)
    assert reach.values_kvar == ()
    assert reach.count == 2**13
    assert reach.largest_gap_kvar == pytest.approx(1.001)


@settings(max_examples=200, deadline=None)
@given(st.lists(st.sampled_from([2.5, 5.0, 7.5, 10.0, 12.5, 25.0, 33.3, 50.0, 60.0]), min_size=1, max_size=7))
def test_reachable_matches_enumeration(steps):
    reach = reachable(steps)
    expected = brute_reach(steps)
    assert list(reach.values_kvar) == pytest.approx(expected)
    gaps = [b - a for a, b in itertools.pairwise(expected)]
    assert reach.largest_gap_kvar == pytest.approx(max(gaps))
    assert reach.count == len(expected)


# --- the proposed plan -----------------------------------------------------------------------------------------


def test_plan_for_the_demo_bank():
    # Source: regression value, worked by hand - 388.3 kvar in six steps 1:2:2:2:2:2 (11 resolution steps) from
    # 600 V / 60 Hz units on 480 V with 7 % detuning: factor (480/600)² / 0.93 = 0.68817; resolution nameplate
    # ≥ 388.3 / 11 / 0.68817 = 51.30 kvar; the smallest clean multiple of one unit size is 60 kvar (2 × 30 or
    # 3 × 20 or 4 × 15 kvar), so the steps are 60 and 120 kvar nameplate: 41.29 and 82.58 kvar delivered.
    sizes = [2.5, 5, 7.5, 10, 12.5, 15, 20, 25, 30, 40, 50]
    factor = (480 / 600) ** 2 / (1 - 0.07)
    plan = propose_steps(388.3, [1, 2, 2, 2, 2, 2], sizes, factor)
    assert plan.resolution_rated_kvar == 60
    assert plan.rated_kvar == (60, 120, 120, 120, 120, 120)
    assert plan.rated_kvar[0] * factor == pytest.approx(41.29, abs=0.01)
    assert "51.30" in plan.rule


def test_plan_equal_steps():
    # 300 kvar in 4 equal steps of 480 V units on 480 V: 75 kvar each = 3 × 25 kvar (or 50 + 25), no overshoot.
    plan = propose_steps(300, [1, 1, 1, 1], [5, 10, 25, 50], 1.0)
    assert plan.rated_kvar == (75, 75, 75, 75)


def test_plan_without_units_is_none():
    assert propose_steps(100, [1, 2], [], 1.0) is None


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(need=st.floats(min_value=5, max_value=2000), weights=st.lists(st.sampled_from([1, 2, 4]), min_size=1,
                                                                      max_size=8),
       sizes=SIZES, factor=st.floats(min_value=0.4, max_value=1.3))
def test_plan_properties(need, weights, sizes, factor):
    weights = sorted(weights)
    plan = propose_steps(need, weights, sizes, factor)
    # the whole bank delivers at least the need
    assert sum(plan.rated_kvar) * factor >= need - 1e-6
    # every step is a whole multiple of the resolution step
    for w, q in zip(weights, plan.rated_kvar, strict=True):
        assert q == pytest.approx(w * plan.resolution_rated_kvar)
    # the resolution step is n identical units of one table size, n small unless it is the largest size
    assert plan.unit_kvar in sizes
    assert plan.resolution_rated_kvar == pytest.approx(plan.units_per_resolution * plan.unit_kvar)
    assert plan.units_per_resolution <= MAX_UNITS_PER_RESOLUTION or plan.unit_kvar == max(sizes)
    # no other clean candidate builds a smaller bank (least nameplate above the need), each step built from the
    # fewest units, then the least overshoot
    q = need / (sum(weights) * factor)

    def built(resolution: float) -> float:
        total = 0.0
        for w in weights:
            counts = best_combination(sizes, w * resolution)
            total += sum(c * s for c, s in zip(counts, sorted(sizes), strict=True))
        return total

    sizes = sorted(sizes)
    candidates = [math.ceil(q / s - 1e-9) * s for s in sizes
                  if math.ceil(q / s - 1e-9) <= MAX_UNITS_PER_RESOLUTION or s == max(sizes)]
    assert built(plan.resolution_rated_kvar) == pytest.approx(min(built(r) for r in candidates))


# --- exact selection of the units of one step -------------------------------------------------------------------


def all_counts(n_sizes: int, most: int):
    """Every count vector with at most ``most`` units in all."""
    for total in range(most + 1):
        for combo in itertools.combinations_with_replacement(range(n_sizes), total):
            counts = [0] * n_sizes
            for i in combo:
                counts[i] += 1
            yield tuple(counts)


@settings(max_examples=300, deadline=None)
@given(sizes=SIZES, target=st.floats(min_value=0.5, max_value=180))
def test_units_never_beaten_by_any_other_combination(sizes, target):
    # Source: definition of the selection rule - no combination from the table reaches the target with fewer
    # units, and none with as many units overshoots less.
    chosen = best_combination(sizes, target)
    n = sum(chosen)
    total = sum(c * s for c, s in zip(chosen, sizes, strict=True))
    assert total >= target - 1e-9
    for counts in all_counts(len(sizes), n):
        other = sum(c * s for c, s in zip(counts, sizes, strict=True))
        if other >= target - 1e-9:
            assert sum(counts) >= n
            if sum(counts) == n:
                assert other >= total - 1e-9


@settings(max_examples=100, deadline=None)
@given(sizes=SIZES, target=st.floats(min_value=0.5, max_value=150), factor=st.floats(min_value=0.3, max_value=1.2))
def test_build_step_delivers_at_least_the_target(sizes, target, factor):
    from types import SimpleNamespace as Unit

    units = [Unit(rated_kvar=s) for s in sizes]
    choice = build_step(units, target, factor)
    assert choice.delivered_kvar >= target - 1e-6
    assert choice.delivered_kvar == pytest.approx(choice.rated_kvar * factor)
    assert choice.quantity == math.ceil(target / (max(sizes) * factor) - 1e-9)


def test_benchmark_script_selects_the_bank():
    # The speed benchmark (not timed here): the README names it, and its selection is a real one.
    import importlib.util
    from pathlib import Path

    root = Path(__file__).parents[2]
    assert "benchmarks/select_bench.py" in (root / "README.md").read_text(encoding="utf-8")
    spec = importlib.util.spec_from_file_location("select_bench", root / "benchmarks" / "select_bench.py")
    bench = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(bench)
    units = bench.unit_table()
    assert len(units) == 60 and len({u.rated_kvar for u in units}) == 60
    steps = bench.select_bank(units)
    assert len(steps) == 25 and sum(s.delivered_kvar for s in steps) >= 5000
    assert bench.bench_select(repeats=1) > 0


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                 HealthCheck.function_scoped_fixture])
@given(sizes=st.lists(st.sampled_from([2.5, 5.0, 7.5, 10.0, 12.5, 15.0, 20.0, 25.0, 30.0, 40.0, 50.0]), min_size=1,
                      max_size=4, unique=True),
       steps=st.one_of(st.lists(st.floats(min_value=5, max_value=120), min_size=1, max_size=4),
                       st.builds(lambda c, p: {"count": c, "pattern": p}, st.integers(1, 5),
                                 st.sampled_from(["equal", "1:2", "1:2:2"]))),
       need=st.floats(min_value=20, max_value=300))
def test_pipeline_steps_are_never_beaten_on_random_tables(catalogs, size_bank, sizes, steps, need):
    # A random small unit table (480 V / 60 Hz) replaces the built-in one; every step the pipeline builds must
    # be unbeaten by brute force: no combination reaches the step's target with fewer units, none with as many
    # units overshoots less.
    import dataclasses

    from bankbuild.tables.rows import CapacitorUnit

    units = tuple(CapacitorUnit(unit_id=f"T-{s:g}", rated_kvar=s, rated_voltage_v=480.0, rated_frequency_hz=60.0,
                                connection="delta", discharge_voltage_v=50.0, discharge_time_s=60.0,
                                losses_w_per_kvar=0.5, description="", table="capacitor_units.csv", row=10 + i)
                  for i, s in enumerate(sorted(sizes)))
    tables = dataclasses.replace(catalogs, capacitor_units=units)
    bank = size_bank(tables=tables, need={"kvar": need}, steps=steps)
    ordered = sorted(sizes)
    for step in bank.steps:
        chosen = {u.rated_kvar: u.qty for u in step.units}
        n = sum(chosen.values())
        total = sum(k * q for k, q in chosen.items())
        assert total >= step.target_kvar - 1e-6
        for counts in all_counts(len(ordered), n):
            other = sum(c * s for c, s in zip(counts, ordered, strict=True))
            if other >= step.target_kvar - 1e-6:
                assert sum(counts) >= n
                if sum(counts) == n:
                    assert other >= total - 1e-6
