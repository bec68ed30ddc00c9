"""Prices on the bill of materials: each line matched to a row of the user's price table, extended, totalled.

A price row names a part id of the tables (``CU-480-60-50.0``) or a pattern with ``*`` and ``?`` matched against
a line's part id or its description (``Fuse-link 600 A,*``). An exact part id (or description) wins over a
pattern, a longer pattern (more fixed characters) over a shorter one, an earlier row over a later one. A line
no row matches is left unpriced, and said to be so. Prices apply per the line's unit (pcs, set or m).
"""

from __future__ import annotations

import re
from fnmatch import translate

from bankbuild.results.sizing import BomLine, BomTotal

WILD = frozenset("*?[")


def _specificity(pattern: str) -> int:
    return sum(1 for ch in pattern if ch not in WILD)


_PATTERNS: tuple[object, list] = (None, [])  # (the price rows, their pattern rows, best first)


def _pattern_rows(prices) -> list:
    """The rows of ``prices`` that hold a pattern, each with a slot for its compiled matcher (case-blind
    ``fnmatch``, compiled when first needed), the most specific first and, among equals, in the table's order;
    remembered for the last table asked about."""
    global _PATTERNS
    if _PATTERNS[0] is not prices:
        rows = sorted((p for p in prices if not WILD.isdisjoint(p.part)), key=lambda p: -_specificity(p.part))
        _PATTERNS = (prices, [[None, p] for p in rows])
    return _PATTERNS[1]


def _matches(entry: list, names: list[str]) -> bool:
    if entry[0] is None:
        entry[0] = re.compile(translate(entry[1].part.lower())).match
    return any(entry[0](n) for n in names)


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
    exact = next((p for p in prices if p.part in names), None)
    if exact is not None:
        return exact
    lowered = [n.lower() for n in names]
    return next((entry[1] for entry in _pattern_rows(prices) if _matches(entry, lowered)), None)


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
