"""Benchmark: selecting a 5,000 kvar bank of 25 steps from a 60-row capacitor unit table.

The selection is the step plan (:func:`bankbuild.design.stepplan.propose_steps`), the exact unit search of
every step (:func:`bankbuild.design.select.build_step`) and the reachable values (:func:`~bankbuild.design.stepplan.
reachable`). The unit table is invented: 60 ratings at 480 V / 60 Hz from 1 to 101.3 kvar in uneven steps, so
the search cannot lean on round numbers. The search's cache is cleared before every run, so each run computes
from scratch. Target: under 100 ms of compute per selection (the median is printed).

Run it on its own (``.venv/bin/python benchmarks/select_bench.py``); ``benchmarks/run.py`` calls
:func:`bench_select`.
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from bankbuild.design.select import _best, build_step  # noqa: E402
from bankbuild.design.stepplan import propose_steps, reachable  # noqa: E402
from bankbuild.tables.rows import CapacitorUnit  # noqa: E402

NEED_KVAR = 5000.0
STEPS = 25
ROWS = 60
TARGET_MS = 100.0


def unit_table(rows: int = ROWS) -> list[CapacitorUnit]:
    """An invented table of ``rows`` units at 480 V / 60 Hz: 1.0, 2.7, 4.4 ... kvar (steps of 1.7 kvar)."""
    return [CapacitorUnit(unit_id=f"BU-{k:02d}", rated_kvar=round(1.0 + 1.7 * k, 1), rated_voltage_v=480.0,
                          rated_frequency_hz=60.0, connection="delta", discharge_voltage_v=50.0,
                          discharge_time_s=60.0, losses_w_per_kvar=0.5, description="benchmark unit",
                          table="benchmark", row=k + 2) for k in range(rows)]


def select_bank(units, need_kvar: float = NEED_KVAR, weights: tuple[int, ...] = (1,) * STEPS):
    """Plan the steps, build each from the fewest units, list the reachable values; returns the steps."""
    factor = 1.0  # units rated at the supply voltage and frequency
    plan = propose_steps(need_kvar, weights, [u.rated_kvar for u in units], factor)
    steps = [build_step(units, q * factor, factor) for q in plan.rated_kvar]
    reachable([s.rated_kvar for s in steps], factor)
    return steps


def bench_select(repeats: int = 21, weights: tuple[int, ...] = (1,) * STEPS) -> float:
    """Median wall time of one selection from scratch [ms] over ``repeats`` runs."""
    units = unit_table()
    times = []
    for _ in range(repeats):
        _best.cache_clear()
        start = time.perf_counter()
        steps = select_bank(units, weights=weights)
        times.append((time.perf_counter() - start) * 1000.0)
    assert len(steps) == len(weights) and sum(s.delivered_kvar for s in steps) >= NEED_KVAR - 1e-6
    return statistics.median(times)


def main() -> None:
    equal = bench_select()
    pattern = bench_select(weights=(1,) + (2,) * (STEPS - 1))
    for label, ms in (("25 equal steps", equal), ("25 steps 1:2:2", pattern)):
        verdict = "within" if ms < TARGET_MS else "OVER"
        print(f"select {NEED_KVAR:,.0f} kvar, {label}, {ROWS}-row unit table: median {ms:.1f} ms "
              f"({verdict} the {TARGET_MS:g} ms target)")


if __name__ == "__main__":
    main()
