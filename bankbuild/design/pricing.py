"""Prices on the bill of materials: each line matched to a row of the user's price table, extended, totalled.

A price row names a part id of the tables (``CU-480-60-50.0``) or a pattern with ``*`` and ``?`` matched against
a line's part id or its description (``Fuse-link 600 A,*``). An exact part id (or description) wins over a
pattern, a longer pattern (more fixed characters) over a shorter one, an earlier row over a later one. A line
no row matches is left unpriced, and said to be so. Prices apply per the line's unit (pcs, set or m).
"""

from __future__ import annotations

import re
from collections.abc import Callable
from fnmatch import translate

from bankbuild.results.sizing import BomLine, BomTotal

WILD = frozenset("*?[")


def _specificity(pattern: str) -> int:
    return sum(1 for ch in pattern if ch not in WILD)


def _matcher(pattern: str) -> Callable[[str], bool]:
    """A test of names against one ``fnmatch`` pattern, both lower-cased. A pattern whose only wildcard is ``*``
    (every built-in one) is tested with plain string searches; ``?`` or ``[`` take the regex ``fnmatch`` makes.

    >>> m = _matcher("cu-*-*-50.0")
    >>> m("cu-480-60-50.0"), m("cu-480-50.0"), m("cu-480-60-50.01")
    (True, False, False)
    """
    if "?" in pattern or "[" in pattern:
        return re.compile(translate(pattern)).match
    if "*" not in pattern:
        return pattern.__eq__
    first, *middle, last = pattern.split("*")
    least = len(first) + len(last)

    def match(name: str) -> bool:
        if len(name) < least or not name.startswith(first) or not name.endswith(last):
            return False
        at, end = len(first), len(name) - len(last)
        for piece in middle:  # each in turn, as early as it occurs: a later piece then has the most room
            at = name.find(piece, at, end)
            if at < 0:
                return False
            at += len(piece)
        return True

    return match


class _Index:
    """The rows of one price table ready to look up: the first row of each exact name, and the pattern rows
    (each with its matcher, made when first needed) the most specific first and, among equals, in table order.
    A name is tried only against the patterns that can match it: those that begin with its first character or
    with a wildcard."""

    def __init__(self, prices):
        self.prices = prices
        self.exact: dict[str, tuple[int, object]] = {}
        for position, row in enumerate(prices):
            self.exact.setdefault(row.part, (position, row))
        rows = sorted((p for p in prices if not WILD.isdisjoint(p.part)), key=lambda p: -_specificity(p.part))
        self.patterns = [[None, row, row.part.lower()] for row in rows]
        self.by_start: dict[str, list[tuple[int, list]]] = {}  # first character -> (rank, entry), made when asked
        self.found: dict[tuple[str, ...], object] = {}

    def first_exact(self, names: list[str]):
        found = [self.exact[name] for name in names if name in self.exact]
        return min(found, key=lambda hit: hit[0])[1] if found else None

    def _candidates(self, start: str) -> list[tuple[int, list]]:
        if start not in self.by_start:
            self.by_start[start] = [(rank, entry) for rank, entry in enumerate(self.patterns)
                                    if entry[2][:1] == start or entry[2][:1] in WILD]
        return self.by_start[start]

    def first_pattern(self, lowered: list[str]):
        key = tuple(lowered)
        if key not in self.found:
            best: tuple[int, object] | None = None
            for name in lowered:
                for rank, entry in self._candidates(name[:1]):
                    if best is not None and rank >= best[0]:
                        break
                    if entry[0] is None:
                        entry[0] = _matcher(entry[2])
                    if entry[0](name):
                        best = (rank, entry[1])
                        break
            self.found[key] = best[1] if best is not None else None
        return self.found[key]


_INDEX: _Index | None = None  # of the last price table asked about


def _index(prices) -> _Index:
    global _INDEX
    if _INDEX is None or _INDEX.prices is not prices:
        _INDEX = _Index(prices)
    return _INDEX


def price_for(line: BomLine, prices) -> object | None:
    """The price row for one line, or None.

    Examples
    --------
    >>> from types import SimpleNamespace as Row
    >>> rows = [Row(part="Fuse-link *", row=5), Row(part="Fuse-link 600 A,*", row=6), Row(part="CU-480-60-50.0", row=7)]
    >>> line = BomLine(item=1, qty=3, unit="pcs", category="c", description="Fuse-link 600 A, time-delay")
    >>> price_for(line, rows).row
    6
    >>> price_for(line.model_copy(update={"description": "Fuse-link 30 A, gG"}), rows).row
    5
    >>> price_for(line.model_copy(update={"part_id": "CU-480-60-50.0"}), rows).row
    7
    """
    names = [n for n in (line.part_id, line.description) if n]
    index = _index(prices)
    exact = index.first_exact(names)
    if exact is not None:
        return exact
    return index.first_pattern([n.lower() for n in names])


def price_lines(lines: list[BomLine], catalogs) -> list[BomLine]:
    """The lines with their unit and extended prices (unchanged when there is no price table)."""
    prices = catalogs.prices
    if not prices:
        return lines
    priced = []
    for line in lines:
        row = price_for(line, prices)
        if row is None:
            priced.append(line.model_copy(update={"price_status": "no price"}))
            continue
        priced.append(line.model_copy(update={
            "unit_price": row.unit_price, "extended_price": round(row.unit_price * line.qty, 2),
            "currency": row.currency, "lead_time_days": row.lead_time_days, "supplier_note": row.supplier_note,
            "price_row": row.row, "price_status": "priced"}))
    return priced


def bom_total(lines: list[BomLine], catalogs) -> BomTotal | None:
    """The total of the priced lines, which lines have no price, and the longest lead time; None without prices.

    The price table counts as invented when its ``#`` notes say so (the built-in demo prices do).
    """
    prices = catalogs.prices
    if not prices:
        return None
    info = next((t for t in catalogs.tables if t.file_name == prices[0].table), None)
    invented = info is not None and any("invented" in note.lower() for note in info.notes)
    priced = [line for line in lines if line.extended_price is not None]
    unpriced = [line.item for line in lines if line.extended_price is None]
    leads = [line.lead_time_days for line in priced if line.lead_time_days is not None]
    return BomTotal(currency=prices[0].currency, total=round(sum(line.extended_price for line in priced), 2),
                    priced_lines=len(priced), unpriced_lines=len(unpriced), unpriced_items=unpriced,
                    longest_lead_time_days=max(leads) if leads else None,
                    complete=not unpriced, source=prices[0].table, invented=invented)
