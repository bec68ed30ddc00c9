"""Picking from rating tables: the unit voltage, the units of each step, and standard ratings.

Each picker returns a small frozen object that names the row it took (or ``None`` when the table has nothing
large enough — the caller turns that into a failed check, never a crash).
"""

from __future__ import annotations

import math
from bisect import bisect_left
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


SEARCH_BUDGET = 100_000  # candidate units tried per search: a bound no table, target or quantity can raise


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
    The fewest units is n = ceil(T / L), L the largest size, since n of the largest reach T and fewer cannot.
    Among multisets of exactly n units the one with the smallest total that reaches T is found on the counts,
    not unit by unit: start from n of the largest, whose total overshoots T by the slack s = n·L − T < L, and
    swap k of them for smaller units, each swap taking away its difference d = L − size. The best set takes
    away the most without passing s; every swap takes away at least the smallest difference d_min, so
    k ≤ s / d_min, however large n is. The swaps are searched over partial sums of differences (a state is a
    sum and the last size used, with a link to the state it came from, so its memory does not grow with the
    table), at most :data:`SEARCH_BUDGET` candidates in all; if that bound is reached, the best set found so
    far is kept (it reaches the target with the fewest units, perhaps with more overshoot). Ties prefer larger
    units (fewer distinct parts to stock).

    Examples
    --------
    >>> best_combination([10, 20, 25, 50], 65)
    (0, 1, 0, 1)
    >>> best_combination([12.5, 25], 30)
    (1, 1)
    >>> best_combination([50.0], 5e6)  # a million units: arithmetic on the count, no loop per unit
    (100000,)
    """
    if not sizes_kvar:
        return None
    return _best(tuple(float(s) for s in sizes_kvar), round(float(target_kvar), 9))


def _positions(chain) -> list[int]:
    """The positions of a state's swapped units, smallest first (a chain is (position, parent chain))."""
    out = []
    while chain is not None:
        out.append(chain[0])
        chain = chain[1]
    return out[::-1]


@lru_cache(maxsize=4096)
def _best(sizes: tuple[float, ...], target: float) -> tuple[int, ...]:
    if target <= EPS:
        return tuple(0 for _ in sizes)
    order = sorted(range(len(sizes)), key=lambda i: (-sizes[i], i))
    largest = sizes[order[0]]
    n = max(1, math.ceil(target / largest - EPS))
    slack = n * largest - target
    diff = [largest - sizes[i] for i in order]  # rising along the positions
    usable = [pos for pos in range(1, len(order)) if EPS < diff[pos] <= slack + EPS]
    best_sum, best_chain = 0.0, None
    if usable:
        most = min(n, math.floor((slack + EPS) / diff[usable[0]]))
        layer: dict[tuple[float, int], tuple[float, object]] = {(0.0, 0): (0.0, None)}
        budget = SEARCH_BUDGET
        for _ in range(most):
            nxt: dict[tuple[float, int], tuple[float, object]] = {}
            for (_, start), (taken, chain) in layer.items():
                for pos in usable[bisect_left(usable, start):]:
                    budget -= 1
                    new = taken + diff[pos]
                    if new > slack + EPS or budget < 0:
                        break  # differences only grow from here on
                    key = (round(new, 6), pos)
                    old = nxt.get(key)
                    cand = (new, (pos, chain))
                    if old is None or _positions(cand[1]) < _positions(old[1]):
                        nxt[key] = cand
                if budget < 0:
                    break
            layer = nxt
            if not layer:
                break
            top = max(taken for taken, _ in layer.values())
            if top > best_sum + 1e-6:  # strictly better; on a tie the fewer swaps (more large units) stay
                ties = [chain for taken, chain in layer.values() if abs(taken - top) < 1e-6]
                best_sum, best_chain = top, min(ties, key=_positions)
            if budget < 0 or best_sum >= slack - 1e-6:
                break
    counts = [0] * len(sizes)
    swapped = _positions(best_chain)
    counts[order[0]] = n - len(swapped)
    for pos in swapped:
        counts[order[pos]] += 1
    return tuple(counts)


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
