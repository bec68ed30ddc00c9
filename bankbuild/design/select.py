"""Picking from rating tables: the unit voltage, the units of each step, and standard ratings.

Each picker returns a small frozen object that names the row it took (or ``None`` when the table has nothing
large enough — the caller turns that into a failed check, never a crash).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from functools import lru_cache

from bankbuild.calc import EPS


@dataclass(frozen=True)
class UnitChoice:
    """Units that build one step: ``counts[i]`` of ``units[i]``; delivered kvar at the supply."""

    units: tuple  # tuple[CapacitorUnit, ...]
    counts: tuple[int, ...]
    rated_kvar: float
    delivered_kvar: float

    @property
    def quantity(self) -> int:
        return sum(self.counts)


@dataclass(frozen=True)
class Rating:
    """A standard rating picked from a table."""

    designation: str
    value: float
    table: str
    row: int


def unit_voltages(units: Sequence, frequency_hz: float) -> list[float]:
    """Rated voltages available among units rated for ``frequency_hz``, ascending."""
    return sorted({u.rated_voltage_v for u in units if u.rated_frequency_hz == frequency_hz})


def pick_unit_voltage(available_v: Sequence[float], needed_v: float) -> float | None:
    """Smallest available rated voltage at or above ``needed_v``; ``None`` when every unit is lower.

    >>> pick_unit_voltage([400, 415, 440, 480, 525], 430.1)
    440
    >>> pick_unit_voltage([240, 480, 600], 645.2) is None
    True
    """
    fits = [v for v in sorted(available_v) if v >= needed_v - EPS]
    return fits[0] if fits else None


def best_combination(sizes_kvar: Sequence[float], target_kvar: float) -> tuple[int, ...] | None:
    """Exact search: counts per size with the fewest units, then the least overshoot, reaching the target.

    Parameters
    ----------
    sizes_kvar : sequence of float
        What one unit of each size delivers [kvar], all positive.
    target_kvar : float
        What the combination must at least deliver [kvar].

    Returns
    -------
    tuple of int or None
        Count of each size (same order as ``sizes_kvar``); ``None`` only when no size is given.

    Notes
    -----
    The fewest units is n = ceil(T / largest size), since n of the largest reach T and fewer cannot. Among
    multisets of exactly n units the one with the smallest total that reaches T is found by a search over
    partial sums, pruned to sums below T + largest (the n-largest total already overshoots by less than the
    largest size). Ties prefer larger units (fewer distinct parts to stock).

    Examples
    --------
    >>> best_combination([10, 20, 25, 50], 65)
    (0, 1, 0, 1)
    >>> best_combination([12.5, 25], 30)
    (1, 1)
    """
    if not sizes_kvar:
        return None
    return _best(tuple(float(s) for s in sizes_kvar), round(float(target_kvar), 9))


@lru_cache(maxsize=4096)
def _best(sizes: tuple[float, ...], target: float) -> tuple[int, ...]:
    largest = max(sizes)
    if target <= EPS:
        return tuple(0 for _ in sizes)
    n = max(1, math.ceil(target / largest - EPS))
    bound = target + largest
    order = sorted(range(len(sizes)), key=lambda i: -sizes[i])
    # A state is (partial sum, counts per position, last position used); two states with the same sum and
    # last position can reach the same finals, so only the one with more large units is kept.
    layer: dict[tuple[float, int], tuple[float, tuple[int, ...], int]] = {
        (0.0, 0): (0.0, tuple(0 for _ in sizes), 0)}
    for k in range(n):
        remaining = n - k - 1
        nxt: dict[tuple[float, int], tuple[float, tuple[int, ...], int]] = {}
        for total, counts, start in layer.values():
            for pos in range(start, len(order)):
                size = sizes[order[pos]]
                new_total = total + size
                if new_total >= bound - EPS:
                    continue
                if new_total + remaining * largest < target - EPS:
                    break  # sizes only get smaller from here on
                key = (round(new_total, 6), pos)
                new_counts = list(counts)
                new_counts[pos] += 1
                cand = (new_total, tuple(new_counts), pos)
                old = nxt.get(key)
                if old is None or cand[1] > old[1]:
                    nxt[key] = cand
        layer = nxt
    finals = [v for v in layer.values() if v[0] >= target - EPS]
    if not finals:  # cannot happen (n of the largest always qualify), kept as a guard
        finals = [(n * largest, tuple([n] + [0] * (len(sizes) - 1)), 0)]
    best_total = min(v[0] for v in finals)
    best = max((v for v in finals if abs(v[0] - best_total) < 1e-6), key=lambda v: v[1])
    counts_by_size = [0] * len(sizes)
    for pos, count in enumerate(best[1]):
        counts_by_size[order[pos]] = count
    return tuple(counts_by_size)


def build_step(units: Sequence, target_kvar: float, factor: float) -> UnitChoice | None:
    """Units of one rated voltage that deliver at least ``target_kvar`` when each gives ``rated × factor``."""
    if not units or factor <= 0:
        return None
    sizes = [u.rated_kvar * factor for u in units]
    counts = best_combination(sizes, target_kvar)
    if counts is None:
        return None
    chosen = [(u, c) for u, c in zip(units, counts, strict=True) if c]
    chosen.sort(key=lambda uc: -uc[0].rated_kvar)
    rated = sum(u.rated_kvar * c for u, c in chosen)
    return UnitChoice(units=tuple(u for u, _ in chosen), counts=tuple(c for _, c in chosen),
                      rated_kvar=rated, delivered_kvar=rated * factor)


def next_rating(rows: Sequence, required: float, value_attr: str, label: str = "{:g} A") -> Rating | None:
    """The smallest row whose ``value_attr`` is at least ``required``; ``None`` when none is large enough.

    >>> from types import SimpleNamespace as R
    >>> rows = [R(rating_a=a, table="t.csv", row=i) for i, a in enumerate([100, 110, 125, 150])]
    >>> next_rating(rows, 103.1, "rating_a").designation
    '110 A'
    >>> next_rating(rows, 151, "rating_a") is None
    True
    """
    best = None
    for row in rows:
        value = getattr(row, value_attr)
        if value >= required - EPS and (best is None or value < getattr(best, value_attr)):
            best = row
    if best is None:
        return None
    value = float(getattr(best, value_attr))
    return Rating(designation=label.format(value), value=value, table=best.table, row=best.row)


@dataclass(frozen=True)
class ConductorChoice:
    """A conductor size (possibly several in parallel per phase) and the ampacity of the whole set."""

    designation: str
    size: str
    sets: int
    ampacity_a: float
    table: str
    row: int


def conductor_options(rows: Sequence, ampacity_attr: str, max_sets: int, min_parallel_mm2: float):
    """Every (sets, row) option in order of preference: one set first, then smallest size."""
    ordered = sorted(rows, key=lambda r: r.area_mm2)
    for sets in range(1, max_sets + 1):
        for row in ordered:
            if sets > 1 and row.area_mm2 < min_parallel_mm2 - EPS:
                continue
            yield sets, row, sets * float(getattr(row, ampacity_attr))


def pick_conductor(rows: Sequence, required_a: float, ampacity_attr: str, size_name, max_sets: int,
                   min_parallel_mm2: float, max_single_mm2: float,
                   accept=lambda option: True) -> ConductorChoice | None:
    """Smallest conductor (fewest parallel sets first) whose ampacity reaches ``required_a`` and that
    ``accept`` takes (e.g. coordination with the protective device); ``size_name(row)`` names a size.
    Above ``max_single_mm2`` a size is only used when no parallel set of smaller sizes works."""
    fallback = None
    for sets, row, ampacity in conductor_options(rows, ampacity_attr, max_sets, min_parallel_mm2):
        if ampacity < required_a - EPS:
            continue
        choice = ConductorChoice(
            designation=(f"{sets} × {size_name(row)}" if sets > 1 else size_name(row)),
            size=size_name(row), sets=sets, ampacity_a=ampacity, table=row.table, row=row.row)
        if not accept(choice):
            continue
        if row.area_mm2 > max_single_mm2 + EPS:
            fallback = fallback or choice
            continue
        return choice
    return fallback
