"""The step plan of an automatic bank: practical step sizes, and the kvar values the controller can reach.

A bank given as a step count and a pattern (``steps: {count: 6, pattern: "1:2:2"}``) gets a *resolution step*
(weight 1) built from identical units of the chosen voltage, and every other step is a whole multiple of it,
so that the controller reaches evenly spaced values. Explicit step lists are kept as given; their reachable
values are reported the same way.
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from dataclasses import dataclass
from functools import reduce

from bankbuild.calc import EPS
from bankbuild.design.select import best_combination

MAX_UNITS_PER_RESOLUTION = 4
"""A resolution step is built from at most this many identical units (common practice, no single source):
more small units in the smallest step cost parts and wiring for nothing. The largest unit size is always a
candidate, whatever count it needs, so that every need has a plan."""

MAX_LISTED = 4096
"""Reachable values are listed up to this many (every value of a 12-step binary plan); above it only their
count and the largest gap are given."""


MAX_BITS = 1 << 22
"""The bit set of reachable values holds at most this many bits (half a megabyte), whatever the steps."""


@dataclass(frozen=True)
class ProposedPlan:
    """Step sizes proposed for a count and pattern: nameplate kvar of each step, and how they were chosen."""

    rated_kvar: tuple[float, ...]  # nameplate kvar each step is built to (at the unit's rated V and f)
    resolution_rated_kvar: float
    unit_kvar: float  # the identical units of the resolution step
    units_per_resolution: int
    rule: str


def _bank_cost(sizes: tuple[float, ...], weights: Sequence[int], resolution: float):
    """(nameplate total, unit count, distinct sizes) of the steps built for ``resolution``."""
    total = 0.0
    count = 0
    used: set[int] = set()
    for w in sorted(set(weights)):
        counts = best_combination(sizes, w * resolution)
        built = sum(c * s for c, s in zip(counts, sizes, strict=True))
        times = sum(1 for x in weights if x == w)
        total += built * times
        count += sum(counts) * times
        used.update(i for i, c in enumerate(counts) if c)
    return total, count, len(used)


def propose_steps(required_kvar: float, weights: Sequence[int], unit_kvar: Sequence[float],
                  factor: float) -> ProposedPlan | None:
    """Practical step sizes for a bank given as a total and a pattern of weights.

    Parameters
    ----------
    required_kvar : float
        What the whole bank must deliver at the supply [kvar].
    weights : sequence of int
        Weight of each step (1 = the resolution step), e.g. ``[1, 2, 2, 2]``.
    unit_kvar : sequence of float
        Nameplate kvar of the units available at the chosen rated voltage and frequency [kvar].
    factor : float
        What one nameplate kvar delivers at the supply: (V/V_r)²·(f/f_r), divided by (1 − p) when detuned [-].

    Returns
    -------
    ProposedPlan or None
        ``None`` when there are no units or weights.

    Notes
    -----
    The resolution step must give at least q = need / (Σw · factor) nameplate kvar. For each unit size s the
    candidate is n = ⌈q / s⌉ identical units (n ≤ 4, or any n for the largest size); step k is built to
    w_k · n · s nameplate kvar by the exact unit search (fewest units, then least overshoot). The candidate
    kept has the least nameplate total (least overshoot above the need), then the fewest units, then the
    fewest distinct unit sizes, then the larger unit.

    Examples
    --------
    >>> plan = propose_steps(150.0, [1, 2, 2], [10, 20, 25, 30, 50], 1.0)
    >>> plan.rated_kvar, plan.units_per_resolution, plan.unit_kvar
    ((30.0, 60.0, 60.0), 1, 30.0)
    """
    sizes = tuple(sorted({float(s) for s in unit_kvar if s > 0}))
    if not sizes or not weights or factor <= 0:
        return None
    total_weight = sum(weights)
    q = required_kvar / (total_weight * factor)
    candidates = []
    for s in sizes:
        n = max(1, math.ceil(q / s - EPS))
        if n <= MAX_UNITS_PER_RESOLUTION or s == sizes[-1]:
            candidates.append((n * s, n, s))
    candidates.sort(key=lambda c: (c[0], c[1]))
    best = None
    for resolution, n, s in candidates:
        if best is not None and total_weight * resolution > best[0][0] + EPS:
            break  # built steps never fall below their targets: nothing later can beat the best
        cost = _bank_cost(sizes, weights, resolution)
        key = (round(cost[0], 6), cost[1], cost[2], -s)
        if best is None or key < best[1]:
            best = (cost, key, resolution, n, s)
    _, _, resolution, n, s = best
    steps = tuple(w * resolution for w in weights)
    pattern = ":".join(str(w) for w in weights)
    rule = (f"need {required_kvar:,.1f} kvar ÷ {total_weight} (weights {pattern}) ÷ {factor:.4g} kvar delivered "
            f"per nameplate kvar = {q:,.2f} kvar nameplate per resolution step; rounded up to {resolution:g} kvar "
            f"nameplate ({n} × {s:g} kvar reaches it), which delivers {resolution * factor:,.1f} kvar here; every "
            f"step a whole multiple of it, each built from the fewest units that reach its nameplate kvar (the step "
            f"list shows which)")
    return ProposedPlan(rated_kvar=steps, resolution_rated_kvar=resolution, unit_kvar=s,
                        units_per_resolution=n, rule=rule)


@dataclass(frozen=True)
class Reach:
    """Every sum of steps: the values (when not too many), their count and the largest gap between two, with
    the value it starts from (the lowest, where several are as wide)."""

    values_kvar: tuple[float, ...]
    count: int
    largest_gap_kvar: float
    gap_from_kvar: float = 0.0


def reachable(step_kvar: Sequence[float], factor: float = 1.0, max_listed: int = MAX_LISTED) -> Reach:
    """Every kvar value a controller can reach by switching whole steps, and the largest gap between two.

    Parameters
    ----------
    step_kvar : sequence of float
        Each step's kvar (nameplate or delivered), all positive [kvar].
    factor : float, optional
        Multiplier applied to every sum, e.g. delivered per nameplate kvar [-].
    max_listed : int, optional
        List the values only when there are at most this many.

    Returns
    -------
    Reach
        Values (0 included) times ``factor``, their count, and the largest gap times ``factor``.

    Notes
    -----
    Subset sums on a bit set: step sizes are counted in 0.001 kvar and divided by their greatest common divisor,
    so a 1:2:2 plan costs a handful of bits whatever its size. Bit k set means k·g is reachable; for each step
    of d units, reach |= reach << d. Steps with no common measure (say 0.001 and 99,999.999 kvar) would need
    more than :data:`MAX_BITS` bits: they are counted on a grid coarse enough to stay within it.

    Examples
    --------
    >>> r = reachable([25, 25, 50, 50])
    >>> r.values_kvar, r.largest_gap_kvar
    ((0.0, 25.0, 50.0, 75.0, 100.0, 125.0, 150.0), 25.0)
    >>> reachable([10, 40]).largest_gap_kvar, reachable([10, 40]).gap_from_kvar
    (30.0, 10.0)
    """
    if not step_kvar:
        return Reach(values_kvar=(0.0,), count=1, largest_gap_kvar=0.0)
    quantum = 0.001  # kvar
    ints = [max(1, round(float(q) / quantum)) for q in step_kvar]
    g = reduce(math.gcd, ints)
    if sum(ints) // g > MAX_BITS:  # steps with no common measure: count on a coarser grid (bounded memory)
        quantum = max(quantum, float(sum(step_kvar)) / MAX_BITS)
        ints = [max(1, round(float(q) / quantum)) for q in step_kvar]
        g = reduce(math.gcd, ints)
    bits = 1
    for d in (i // g for i in ints):
        bits |= bits << d
    text = bin(bits)[:1:-1]  # index k is bit k
    count = text.count("1")
    unit = g * quantum * factor
    runs = [(len(m.group()), m.start()) for m in re.finditer("0+", text)]
    longest = max(runs, key=lambda r: (r[0], -r[1]), default=(0, 1))  # the lowest of the widest
    gap_bits = longest[0] + 1
    values: tuple[float, ...] = ()
    if count <= max_listed:
        values = tuple(k * unit for k, ch in enumerate(text) if ch == "1")
    return Reach(values_kvar=values, count=count, largest_gap_kvar=gap_bits * unit,
                 gap_from_kvar=(longest[1] - 1) * unit)
