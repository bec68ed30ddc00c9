"""What a rating table must look like, and the checks every row must pass.

:class:`Column` and :class:`TableSchema` declare a table (columns, types, units, ranges, keys, order);
:func:`cell_problems` and :func:`row_problem` check its cells and rows. The row types are in
:mod:`bankbuild.tables.rows`, the declared tables in :mod:`bankbuild.tables.registry`, the loader in
:mod:`bankbuild.tables.load`.

The checks are plain Python (no pandas): the tables are small, and importing pandas would cost every run
about a second.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from itertools import pairwise
from typing import Any


@dataclass(frozen=True)
class Column:
    """One column of a rating table.

    ``dtype`` is ``str``, ``float`` or ``int``. ``unit`` is the unit of a number column, also written as
    the last part of its name (``rating_a`` is in A). ``minimum``/``maximum`` bound numbers (inclusive),
    ``allowed`` lists the only values a cell may hold, ``pattern`` is a regular expression a text cell must
    match in full. A column that is not ``required`` may have empty cells.
    """

    name: str
    dtype: type
    unit: str = ""
    minimum: float | None = None
    maximum: float | None = None
    allowed: tuple[str | float, ...] = ()
    pattern: str = ""
    required: bool = True
    max_length: int = 200  # text cells: longer text is refused (it ends up on documents)


@dataclass(frozen=True)
class TableSchema:
    """A rating table: its file, the row dataclass it becomes, and the rules its rows keep.

    ``order`` lists the columns the rows are sorted by; the last one (the rating) strictly increases
    within each group of rows that agree on the others. ``rising`` columns must not fall from one row to
    the next within a group; ``across`` columns must not fall from left to right within a row. Each entry of
    ``keys`` is a set of columns whose values together are unique.
    """

    file_name: str
    attr: str
    row_type: type
    title: str
    columns: tuple[Column, ...]
    keys: tuple[tuple[str, ...], ...]
    order: tuple[str, ...]
    rising: tuple[str, ...] = ()
    across: tuple[str, ...] = ()
    uniform: tuple[str, ...] = ()  # columns that hold one value in the whole table (a price list's currency)
    optional: bool = False  # used only when a user's folder holds it (the built-in file is a demo)

    @property
    def names(self) -> tuple[str, ...]:
        """The column names in their declared order."""
        return tuple(c.name for c in self.columns)




# -- checks (the loader raises on the first problem they report) -----------------------------------------


def fmt(value: Any) -> str:
    """A cell value for a message: numbers as written, text quoted."""
    if isinstance(value, float):
        return f"{value:g}"
    return f"'{value}'" if isinstance(value, str) else str(value)


# Control characters, and direction overrides that make printed text read differently from what it holds.
CONTROL_CHARS = "[\x00-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]"
# A decimal number as a table may hold it (ASCII digits, optional sign, point and exponent; no "1_000",
# no "0x10", no thousands separators). NaN and infinity are recognised apart, to say they are not finite.
_NUMBER = re.compile(r"[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
_NOT_FINITE = ("nan", "inf", "infinity")


def _number(text: str) -> float | None:
    """The value of a number cell, or None when it is not a decimal number (NaN and infinity included)."""
    return float(text) if _NUMBER.fullmatch(text) else None


def cell_problems(column: Column, cells: dict[int, str]) -> list[tuple[int, str]]:
    """(line, problem) for the first bad cell of each check in one column.

    ``cells`` maps each data row's line number to its cell text (stripped), in file order. The checks run in
    a fixed order, so that the loader can report the first problem in reading order (line, column, check).
    Plain Python: the tables are small, and this keeps pandas (about a second to import) off every run.

    Examples
    --------
    >>> rating = Column("rating_a", float, "A", 0.1, 10000.0)
    >>> cell_problems(rating, {4: "15", 5: "twenty", 6: "-3", 7: "inf"})
    [(5, "'twenty' is not a number"), (7, "'inf' is not a finite number"), (6, '-3 is outside 0.1 to 10000 A')]
    """
    issues: list[tuple[int, str]] = []

    def first(bad: Any, problem: Any) -> None:
        for line, text in cells.items():
            if bad(text):
                issues.append((line, problem(text)))
                return

    if column.required:
        first(lambda t: t == "", lambda t: "empty cell; a value is required")
    if column.dtype is str:
        control = re.compile(CONTROL_CHARS)
        first(lambda t: len(t) > column.max_length,
              lambda t: f"text of {len(t):,} characters; at most {column.max_length} are allowed")
        first(lambda t: t != "" and control.search(t) is not None,
              lambda t: "holds a control character; use printable text only")
        if column.allowed:
            allowed = ", ".join(map(str, column.allowed))
            first(lambda t: t != "" and t not in column.allowed, lambda t: f"{fmt(t)} is not one of {allowed}")
        if column.pattern:
            pattern = re.compile(column.pattern)
            first(lambda t: t != "" and pattern.fullmatch(t) is None,
                  lambda t: f"{fmt(t)} is not in the expected form ({column.pattern})")
        return issues
    values = {line: _number(text) for line, text in cells.items()}
    if _all_fine(column, cells, values):  # one pass for a good column; the checks below find the first problem
        return issues
    literal = {line: text.lower().lstrip("+-") in _NOT_FINITE for line, text in cells.items()}
    unit = f" {column.unit}" if column.unit else ""

    def check(bad: Any, problem: Any) -> None:
        for line, text in cells.items():
            if text != "" and bad(line, values[line]):
                issues.append((line, problem(text)))
                return

    check(lambda n, v: v is None and not literal[n], lambda t: f"'{t}' is not a number")
    check(lambda n, v: literal[n] or (v is not None and math.isinf(v)), lambda t: f"'{t}' is not a finite number")

    def finite(bad: Any) -> Any:
        return lambda n, v: v is not None and math.isfinite(v) and bad(v)

    if column.dtype is int:
        check(finite(lambda v: v != round(v)), lambda t: f"{t} is not a whole number")
    if column.minimum is not None and column.maximum is not None:
        check(finite(lambda v: not column.minimum <= v <= column.maximum),
              lambda t: f"{t} is outside {column.minimum:g} to {column.maximum:g}{unit}")
    if column.allowed:
        allowed = ", ".join(f"{v:g}" for v in column.allowed)
        check(finite(lambda v: v not in column.allowed), lambda t: f"{t} is not one of {allowed}{unit}")
    return issues


def _all_fine(column: Column, cells: dict[int, str], values: dict[int, float | None]) -> bool:
    """Whether every number cell of ``column`` passes every check (empty cells are checked apart)."""
    low, high, allowed, whole = column.minimum, column.maximum, column.allowed, column.dtype is int
    bounded = low is not None and high is not None
    for line, value in values.items():
        if value is None:
            if cells[line] == "":
                continue
            return False
        if not math.isfinite(value) or (whole and value != round(value)) or (bounded and not low <= value <= high) \
                or (allowed and value not in allowed):
            return False
    return True


def row_problem(schema: TableSchema, rows: list[dict[str, Any]]) -> tuple[int, str, str] | None:
    """The first (line, column, problem) among the rules between rows, or None.

    Keys are unique, rows are in order, ratings rise within their group, ``rising`` columns do not fall
    within a group and ``across`` columns do not fall along a row. Each row dict holds typed values and
    ``row``, its line number.
    """
    for key in schema.keys:
        seen: dict[tuple[Any, ...], int] = {}
        for row in rows:
            value = tuple(row[c] for c in key)
            if value in seen:
                same = ", ".join(f"{c} {fmt(v)}" for c, v in zip(key, value, strict=True))
                return row["row"], "", f"duplicate of row {seen[value]} (same {same})"
            seen[value] = row["row"]
    group, last = schema.order[:-1], schema.order[-1]
    for prev, cur in pairwise(rows):
        for col in schema.order:
            if cur[col] > prev[col]:
                break
            if cur[col] < prev[col]:
                if col == last:
                    within = ", ".join(f"{c} {fmt(cur[c])}" for c in group)
                    problem = f"{fmt(cur[col])} is not above {fmt(prev[col])} on row {prev['row']}; " + (
                        f"{col} must increase within {within}" if group else f"{col} must increase"
                    )
                else:
                    problem = (f"{fmt(cur[col])} comes after {fmt(prev[col])} on row {prev['row']}; "
                               f"rows must be sorted by {', '.join(schema.order)}")
                return cur["row"], col, problem
        else:
            return cur["row"], "", f"same {', '.join(schema.order)} as row {prev['row']}"
        if all(cur[c] == prev[c] for c in group):
            for col in schema.rising:
                if cur[col] < prev[col]:
                    problem = (f"{fmt(cur[col])} is below {fmt(prev[col])} on row {prev['row']}; "
                               f"{col} must not fall as {last} rises")
                    return cur["row"], col, problem
    for column in schema.uniform:
        for prev, cur in pairwise(rows):
            if cur[column] != prev[column]:
                return cur["row"], column, (f"{fmt(cur[column])} differs from {fmt(prev[column])} on row "
                                            f"{prev['row']}; one {column} for the whole table")
    for row in rows:
        for left, right in pairwise(schema.across):
            if row[right] < row[left]:
                problem = f"{fmt(row[right])} is below {left} {fmt(row[left])} in the same row"
                return row["row"], right, problem
    return None
