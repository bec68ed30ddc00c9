"""Reading a file of metered readings (CSV or XLSX) for a survey, and cleaning it the way an engineer would.

The file holds a time column and two of active power, reactive power, apparent power and power factor, three-phase
totals, each named in its header with its unit (``kW``, ``W``, ``MW``, ``kvar``, ``var``, ``kVA``, ``PF`` …) or
mapped by name. What cleaning did is counted and said, never done silently:

- a row with an empty cell is dropped (a missing reading);
- a row with an impossible value (PF above 1 or below 0, negative kVA, kW above kVA) is dropped;
- rows out of time order are sorted; a time given twice keeps its first row (identical repeats and conflicting
  ones are counted apart: a repeated hour of a daylight-saving change in local time shows as the latter);
- gaps are reported, not filled: energies are the sum of the readings present;
- intervals shorter or longer than the usual one (and not a whole number of it) are counted as irregular;
- times with a UTC offset are put on UTC for the intervals and kept in local time for months and demand
  intervals; a change of offset is reported as a daylight-saving change.

A cell that is not a number or not a time, a missing column, or a header that leaves the columns unclear is a
:class:`~bankbuild.errors.DataError` naming the row (the header is row 1, as in a spreadsheet) and the column.
pandas is imported here only, inside the functions.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

from ..errors import DataError, OptionError

ROLES = ("kw", "kvar", "kva", "pf")
ROLE_NAMES = {"time": "time", "kw": "kW", "kvar": "kvar", "kva": "kVA", "pf": "PF"}
UNIT_TOKENS: dict[str, tuple[str, float]] = {
    "kw": ("kw", 1.0), "w": ("kw", 1e-3), "mw": ("kw", 1e3),
    "kvar": ("kvar", 1.0), "var": ("kvar", 1e-3), "mvar": ("kvar", 1e3),
    "kva": ("kva", 1.0), "va": ("kva", 1e-3), "mva": ("kva", 1e3),
    "pf": ("pf", 1.0), "cosphi": ("pf", 1.0),
}
TIME_TOKENS = {"time", "timestamp", "date", "datetime"}
ENERGY_TOKENS = {"kwh", "wh", "mwh", "kvarh", "varh", "kvah", "vah"}
PAIRS = (("kw", "kvar"), ("kw", "pf"), ("kva", "pf"), ("kw", "kva"), ("kvar", "kva"))
"""Pairs read, in order of preference when a file has more than two quantities."""
KVAR_SIGNS = ("lagging-positive", "lagging-negative")
MAX_BYTES = 1_000_000_000  # 1 GB: several years of one-minute readings
IRREGULAR_TOLERANCE = 0.02  # an interval within 2 % of the usual one (or of a whole multiple of it) is regular
OFFSET_RE = r"(Z|[+-]\d\d:?\d\d)$"


@dataclass(frozen=True)
class Column:
    """A column read: its role (kw, kvar, kva, pf, time), its header and the factor to the role's unit."""

    role: str
    header: str
    scale: float


@dataclass(frozen=True)
class Cleaning:
    """What reading and cleaning did, counted; ``notes`` says it in sentences."""

    rows_read: int
    rows_used: int
    missing_rows: int
    impossible_rows: int
    duplicate_rows: int
    conflicting_rows: int
    out_of_order_rows: int
    gaps: int
    gap_time_s: float
    irregular_intervals: int
    exporting_intervals: int
    offset_changes: int
    notes: tuple[str, ...]


@dataclass(frozen=True, eq=False)
class MeterData:
    """Cleaned readings, in time order. Arrays are numpy float64 (times in seconds since 1970-01-01).

    ``time_s`` is UTC when the file gave offsets, else the times as written; ``local_s`` is the local wall clock
    (the same as ``time_s`` without offsets), used for calendar months and demand intervals. ``rows`` are the
    file's row numbers (header = row 1).
    """

    path: str
    time_s: object
    local_s: object
    active_kw: object
    reactive_kvar: object
    rows: object
    interval_s: float
    columns: tuple[Column, ...]
    pair: tuple[str, str]
    kvar_sign: str
    has_offsets: bool
    cleaning: Cleaning
    sha256: str = ""

    @property
    def intervals(self) -> int:
        return len(self.time_s)


def header_role(header: str) -> tuple[str, float] | None:
    """The role and unit factor a header names, from the unit written in it; ``None`` when it names none.

    >>> header_role("P (kW)"), header_role("Q [var]"), header_role("cos phi"), header_role("Timestamp")
    (('kw', 1.0), ('kvar', 0.001), ('pf', 1.0), ('time', 1.0))
    >>> header_role("Energy kWh") is None
    True
    """
    text = header.lower().replace("φ", "phi").replace("cos phi", "cosphi").replace("cos_phi", "cosphi")
    tokens = re.findall(r"[a-z]+", text)
    found = {UNIT_TOKENS[t] for t in tokens if t in UNIT_TOKENS}
    if len(found) == 1:
        return found.pop()
    if not found and any(t in TIME_TOKENS for t in tokens):
        return ("time", 1.0)
    return None


def pick_columns(path: str, headers: list[str], mapped: dict[str, str]) -> tuple[Column, tuple[Column, Column]]:
    """The time column and the pair of quantities to read, from the headers and the names mapped by options.

    Raises
    ------
    DataError
        A mapped name not in the header, two columns with one role, no time column, or fewer than two quantities.
    """
    found: dict[str, Column] = {}
    for role, name in mapped.items():
        if name not in headers:
            shown = ", ".join(repr(h) for h in headers[:12])
            raise OptionError(path, f"{role}_column", f"no column {name!r} in the header (it has {shown})")
        guess = header_role(name)
        scale = guess[1] if guess and guess[0] == role else 1.0
        found[role] = Column(role=role, header=name, scale=scale)
    taken = {c.header for c in found.values()}
    for header in headers:
        guess = header_role(header)
        if header in taken or guess is None or guess[0] in mapped:
            continue
        role, scale = guess
        if role in found:
            raise DataError(path, "row 1", f"columns {found[role].header!r} and {header!r} both read as "
                                           f"{ROLE_NAMES[role]}; name the one to use with `{role}_column`")
        found[role] = Column(role=role, header=header, scale=scale)
    if "time" not in found:
        raise DataError(path, "row 1", "no time column (a header naming time, date or timestamp); name it with "
                                       "`time_column`")
    for pair in PAIRS:
        if all(r in found for r in pair):
            return found["time"], (found[pair[0]], found[pair[1]])
    have = [ROLE_NAMES[r] for r in ROLES if r in found]
    energy = [h for h in headers if set(re.findall(r"[a-z]+", h.lower())) & ENERGY_TOKENS]
    hint = (f"; energy columns ({', '.join(map(repr, energy[:3]))}) are not read: give average power per interval"
            if energy else "")
    raise DataError(path, "row 1", f"needs two of kW, kvar, kVA and PF named in the header with their unit "
                                   f"(found {', '.join(have) or 'none'}; PF goes with kW or kVA); map columns "
                                   f"with `kw_column`, `kvar_column`, `kva_column`, `pf_column`{hint}")


def _read_table(path: Path, label: str, usecols: list[str] | None = None):
    """The file as a DataFrame (XLSX: as the sheet holds it; CSV: numbers parsed by pandas' C reader, a column
    with any cell that is not a number left as text). ``usecols``: CSV columns to read (``None``: the header only).
    """
    import pandas as pd

    suffix = path.suffix.lower()
    try:
        if suffix in (".xlsx", ".xlsm"):
            return pd.read_excel(path, sheet_name=0, engine="openpyxl")
        if suffix in (".csv", ".txt"):
            if usecols is None:
                return pd.read_csv(path, nrows=0, encoding="utf-8-sig")
            return pd.read_csv(path, usecols=usecols, dtype={usecols[0]: str}, skip_blank_lines=False,
                               encoding="utf-8-sig", keep_default_na=False, na_values=[""], engine="c",
                               low_memory=False)[usecols]
    except UnicodeDecodeError:
        raise DataError(label, "", "not UTF-8 text; save the readings as UTF-8 CSV or as XLSX") from None
    except (ValueError, OSError, KeyError) as exc:
        raise DataError(label, "", f"cannot be read as {suffix[1:].upper()} ({_short(exc)})") from None
    except Exception as exc:  # parser errors of pandas and openpyxl (a bad zip, a ragged row)
        raise DataError(label, "", f"cannot be read ({_short(exc)})") from None
    raise DataError(label, "", f"unknown file type {suffix or '(none)'!r}: give a .csv or an .xlsx file")


def _short(exc: Exception) -> str:
    return " ".join(str(exc).split())[:200] or type(exc).__name__


def _numbers(frame, column: Column, label: str):
    """A column as float64 in the role's unit; a cell that is not a number is an error naming its row."""
    import numpy as np
    import pandas as pd

    raw = frame[column.header]
    values = pd.to_numeric(raw, errors="coerce")
    bad = values.isna() & raw.notna()
    if bad.any():
        at = int(np.flatnonzero(bad.to_numpy())[0])
        raise DataError(label, f"row {at + 2}, column {column.header!r}",
                        f"{str(raw.iloc[at])[:40]!r} is not a number")
    out = values.to_numpy(dtype="float64") * column.scale
    finite = np.isfinite(out) | np.isnan(out)
    if not finite.all():
        at = int(np.flatnonzero(~finite)[0])
        raise DataError(label, f"row {at + 2}, column {column.header!r}", "is not a finite number")
    return out


def _times(frame, column: Column, label: str):
    """(UTC or as-written seconds, local wall-clock seconds, had offsets) of the time column; NaN where empty."""
    import numpy as np
    import pandas as pd

    raw = frame[column.header]
    present = raw.notna().to_numpy()
    offsets_s = None
    if pd.api.types.is_datetime64_any_dtype(raw):
        parsed = raw.dt.tz_convert("UTC").dt.tz_localize(None) if raw.dt.tz is not None else raw
        aware = raw.dt.tz is not None
    else:
        text = raw.astype("string").str.strip()
        first = text[present].iloc[0] if present.any() else ""
        aware = bool(re.search(OFFSET_RE, str(first)))
        try:
            if aware:
                parts = text.str.extract(r"(?:(Z)|([+-])(\d\d):?(\d\d))$")
                naive = present & parts[0].isna().to_numpy() & parts[1].isna().to_numpy()
                if naive.any():
                    at = int(np.flatnonzero(naive)[0])
                    raise DataError(label, f"row {at + 2}, column {column.header!r}",
                                    f"{str(raw.iloc[at])[:40]!r} has no UTC offset while the first time has one; "
                                    "give every time with its offset, or none")
                sign = np.where(parts[1].to_numpy() == "-", -1.0, 1.0)
                hours = pd.to_numeric(parts[2], errors="coerce").fillna(0).to_numpy()
                minutes = pd.to_numeric(parts[3], errors="coerce").fillna(0).to_numpy()
                offsets_s = sign * (hours * 3600 + minutes * 60)
                parsed = pd.to_datetime(text, utc=True, format="ISO8601", errors="coerce").dt.tz_localize(None)
            else:
                parsed = pd.to_datetime(text, format="ISO8601", errors="coerce")
                if (parsed.isna().to_numpy() & present).any():
                    parsed = pd.to_datetime(text, format="mixed", errors="coerce", dayfirst=False)
        except (ValueError, TypeError, OverflowError):
            parsed = pd.Series(pd.NaT, index=raw.index)
    bad = parsed.isna().to_numpy() & present
    if bad.any():
        at = int(np.flatnonzero(bad)[0])
        raise DataError(label, f"row {at + 2}, column {column.header!r}",
                        f"{str(raw.iloc[at])[:40]!r} is not a time (write it as 2026-03-01 00:15, ISO 8601)")
    seconds = parsed.to_numpy(dtype="datetime64[ns]").astype("int64").astype("float64") / 1e9
    seconds[~present] = np.nan
    local = seconds + offsets_s if offsets_s is not None else seconds
    return seconds, local, aware, offsets_s


def read_meter_data(path: Path | str, columns: dict[str, str] | None = None,
                    kvar_sign: str = "lagging-positive", label: str | None = None) -> MeterData:
    """Read and clean a file of metered readings.

    Parameters
    ----------
    path : path
        The CSV or XLSX file.
    columns : dict, optional
        Role -> header for columns the header does not name with a unit: roles ``time``, ``kw``, ``kvar``,
        ``kva``, ``pf`` (an error names a role as ``kw_column`` …). A mapped column without a unit in its name is
        taken in kW, kvar or kVA.
    kvar_sign : str
        ``lagging-positive`` (the meter shows inductive kvar as positive) or ``lagging-negative``.
    label : str, optional
        The file's name in messages (default: the path).

    Returns
    -------
    MeterData

    Raises
    ------
    DataError
        The file cannot be read, a column is missing, or a cell is not a number or a time.
    """
    import numpy as np

    path = Path(path)
    label = label or str(path)
    if kvar_sign not in KVAR_SIGNS:
        raise OptionError(label, "kvar_sign", f"{kvar_sign!r} is not one of {', '.join(KVAR_SIGNS)}")
    try:
        if not path.is_file():
            raise DataError(label, "", "not found" if not path.exists() else "is not a file")
        if path.stat().st_size > MAX_BYTES:
            raise DataError(label, "", f"larger than {MAX_BYTES // 1_000_000:,} MB")
    except OSError as exc:
        raise DataError(label, "", f"cannot be read ({exc.strerror or exc})") from None
    frame = _read_table(path, label)
    sha256 = _sha256(path, label)
    headers = [str(h) for h in frame.columns]
    frame.columns = headers
    twice = [h for h in headers if headers.count(h) > 1 or re.fullmatch(r".+\.\d+", h) and h.rsplit(".", 1)[0]
             in headers]
    if twice:
        raise DataError(label, "row 1", f"column {twice[0].rsplit('.', 1)[0]!r} appears twice in the header")
    time_col, (a, b) = pick_columns(label, headers, dict(columns or {}))
    if path.suffix.lower() not in (".xlsx", ".xlsm"):
        frame = _read_table(path, label, [time_col.header, a.header, b.header])
    if len(frame) == 0:
        raise DataError(label, "", "has a header but no readings")
    t, local, aware, offsets = _times(frame, time_col, label)
    x = _numbers(frame, a, label)
    y = _numbers(frame, b, label)
    rows = np.arange(2, len(frame) + 2, dtype="int64")
    notes: list[str] = []
    rows_read = len(frame)

    missing = np.isnan(t) | np.isnan(x) | np.isnan(y)
    p, q, impossible, why = _power(a.role, b.role, x, y)
    if a.role == "kvar" or b.role == "kvar":
        if kvar_sign == "lagging-negative":
            q = -q
    impossible &= ~missing
    if missing.any():
        notes.append(f"{int(missing.sum()):,} rows with an empty cell dropped (first: row {int(rows[missing][0])})")
    if impossible.any():
        at = int(np.flatnonzero(impossible)[0])
        notes.append(f"{int(impossible.sum()):,} rows with impossible values dropped ({why}; first: row "
                     f"{int(rows[at])})")
    keep = ~(missing | impossible)
    t, local, p, q, rows = t[keep], local[keep], p[keep], q[keep], rows[keep]
    if offsets is not None:
        offsets = offsets[keep]
    if len(t) < 2:
        raise DataError(label, "", f"fewer than two usable readings ({rows_read:,} rows read)")

    order = np.argsort(t, kind="stable")
    out_of_order = int((np.diff(t) < 0).sum())
    if out_of_order:
        notes.append(f"{out_of_order:,} rows earlier than the row before them: readings sorted by time")
        t, local, p, q, rows = t[order], local[order], p[order], q[order], rows[order]
        if offsets is not None:
            offsets = offsets[order]
    repeat = np.concatenate(([False], np.diff(t) == 0))
    same = repeat & np.concatenate(([False], (np.diff(p) == 0) & (np.diff(q) == 0)))
    duplicate_rows, conflicting_rows = int(same.sum()), int((repeat & ~same).sum())
    if duplicate_rows:
        notes.append(f"{duplicate_rows:,} repeated rows (same time and values) dropped "
                     f"(first: row {int(rows[same][0])})")
    if conflicting_rows:
        clash = repeat & ~same
        notes.append(f"{conflicting_rows:,} rows repeat an earlier time with other values: the first reading of "
                     f"each time kept (first: row {int(rows[clash][0])}"
                     + ("; a repeated hour of a daylight-saving change in local time looks like this)" if not aware
                        else ")"))
    keep = ~repeat
    t, local, p, q, rows = t[keep], local[keep], p[keep], q[keep], rows[keep]
    if offsets is not None:
        offsets = offsets[keep]
    if len(t) < 2:
        raise DataError(label, "", "fewer than two readings at distinct times")

    step = np.diff(t)
    values, counts = np.unique(np.round(step, 3), return_counts=True)
    interval = float(values[np.argmax(counts)])  # the most common interval (the shortest of equals)
    if interval <= 0:
        raise DataError(label, f"column {time_col.header!r}", "the usual interval between readings is zero")
    ratio = step / interval
    whole = np.rint(ratio)
    regular = (np.abs(ratio - whole) <= IRREGULAR_TOLERANCE * np.maximum(whole, 1)) & (whole >= 1)
    gap = regular & (whole >= 2)
    irregular = int((~regular).sum())
    gaps = int(gap.sum())
    gap_time = float(((whole - 1) * interval)[gap].sum())
    if gaps:
        at = int(np.argmax(np.where(gap, step, 0)))
        notes.append(f"{gaps:,} gaps ({gap_time / 3600:,.1f} h of readings missing, the longest "
                     f"{step[at] / 3600 - interval / 3600:,.1f} h after row {int(rows[at])}): not filled; energies "
                     "are the sums of the readings present")
        if not aware:
            dst = gap & (np.abs(step - interval - 3600) <= IRREGULAR_TOLERANCE * interval)
            if dst.any():
                notes.append(f"{int(dst.sum())} gap(s) of exactly one hour (first after row "
                             f"{int(rows[:-1][dst][0])}): the hour skipped by a daylight-saving change in local "
                             "time looks like this")
    if irregular:
        notes.append(f"{irregular:,} intervals that are not a whole number of the usual {interval:g} s "
                     f"(first after row {int(rows[:-1][~regular][0])}): each reading still counts for {interval:g} s")
    offset_changes = 0
    if offsets is not None:
        offset_changes = int((np.diff(offsets) != 0).sum())
        if offset_changes:
            notes.append(f"the UTC offset changes {offset_changes} time(s) (daylight saving): intervals taken on "
                         "UTC, months and demand intervals on local time")
    exporting = int((p < 0).sum())
    if exporting:
        notes.append(f"{exporting:,} intervals export active power (kW below zero): no need is counted in them, "
                     "and the bank must not lead there")
    cleaning = Cleaning(
        rows_read=rows_read, rows_used=len(t), missing_rows=int(missing.sum()),
        impossible_rows=int(impossible.sum()), duplicate_rows=duplicate_rows, conflicting_rows=conflicting_rows,
        out_of_order_rows=out_of_order, gaps=gaps, gap_time_s=gap_time, irregular_intervals=irregular,
        exporting_intervals=exporting, offset_changes=offset_changes, notes=tuple(notes))
    return MeterData(path=label, time_s=t, local_s=local, active_kw=p, reactive_kvar=q, rows=rows,
                     interval_s=interval, columns=(time_col, a, b), pair=(a.role, b.role), kvar_sign=kvar_sign,
                     has_offsets=aware, cleaning=cleaning, sha256=sha256)


def _sha256(path: Path, label: str) -> str:
    """SHA-256 of the file as read, for the documents' provenance."""
    import hashlib

    digest = hashlib.sha256()
    try:
        with path.open("rb") as handle:
            for block in iter(lambda: handle.read(1 << 20), b""):
                digest.update(block)
    except OSError as exc:
        raise DataError(label, "", f"cannot be read ({exc.strerror or exc})") from None
    return digest.hexdigest()


def _power(role_a: str, role_b: str, x, y):
    """(kW, kvar lagging positive, impossible rows, why) from a pair of quantities.

    A PF column is read as lagging (its sign is not read: meters disagree on it); kvar from kVA is lagging.
    """
    import numpy as np

    with np.errstate(invalid="ignore", divide="ignore"):
        pair = (role_a, role_b)
        if pair == ("kw", "kvar"):
            return x, y, np.zeros(len(x), dtype=bool), ""
        if pair == ("kw", "pf"):
            bad = ~((y > 0) & (y <= 1))
            q = np.abs(x) * np.sqrt(np.clip(1 - y * y, 0, None)) / np.where(bad, 1, y)
            return x, q, bad, "PF outside 0 < PF ≤ 1"
        if pair == ("kva", "pf"):
            bad = ~((y >= 0) & (y <= 1)) | (x < 0)
            return x * y, x * np.sqrt(np.clip(1 - y * y, 0, None)), bad, "PF outside 0 to 1, or negative kVA"
        if pair == ("kw", "kva"):
            bad = (y < 0) | (np.abs(x) > y * 1.001)
            return x, np.sqrt(np.clip(y * y - x * x, 0, None)), bad, "negative kVA, or kW above kVA"
        # kvar and kVA: active power taken as drawn (positive)
        bad = (y < 0) | (np.abs(x) > y * 1.001)
        return np.sqrt(np.clip(y * y - x * x, 0, None)), x, bad, "negative kVA, or kvar above kVA"
