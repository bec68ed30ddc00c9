"""Rating tables: load the CSV files, check them against their declared schema, hand out frozen rows.

Each table is a CSV file that starts with ``#`` comment lines (what it is, its source, which values are from
memory), then one header row, then the data rows. The schema of every table is declared in
:mod:`bankbuild.tables.schema`. A user folder replaces the built-in table of the same file name; tables
it does not hold come from the built-in folder.

Every problem raises :class:`bankbuild.errors.CatalogError` naming the file, the row (its line number as an
editor shows it, comment lines counted) and the column. The checks are plain Python (no pandas).
"""

from __future__ import annotations

import csv
import difflib
import functools
import hashlib
import os
import re
from dataclasses import dataclass, fields
from importlib import resources
from pathlib import Path
from typing import Any

from bankbuild.errors import CatalogError
from bankbuild.tables.registry import TABLES, TABLES_BY_FILE
from bankbuild.tables.rows import (
    BreakerFrame,
    Busbar,
    CapacitorUnit,
    Contactor,
    ControlFuse,
    Controller,
    ControlTransformer,
    CurrentTransformer,
    DeviceLoss,
    DeviceRating,
    DisconnectRating,
    Fan,
    IecConductor,
    NecConductor,
    Price,
    Reactor,
)
from bankbuild.tables.schema import TableSchema, cell_problems, row_problem

__all__ = [
    "BreakerFrame", "CapacitorUnit", "Catalogs", "DeviceRating", "DisconnectRating", "IecConductor",
    "NecConductor", "TableInfo", "builtin_dir", "check_catalogs", "copy_catalogs", "load_catalogs",
]


MAX_TABLE_BYTES = 4 * 1024 * 1024  # ample for tens of thousands of rows; refuses a runaway or hostile file
MAX_TABLE_ROWS = 20_000  # far beyond any maker's range; keeps loading and searching a table to about a second
_LINE_BREAK = re.compile(r"\r\n|\r|\n")


@dataclass(frozen=True)
class TableInfo:
    """Provenance of one table file: its name, where it was read, the SHA-256 of its bytes, its notes."""

    file_name: str
    path: str
    sha256: str
    notes: tuple[str, ...]


@dataclass(frozen=True)
class Catalogs:
    """All rating tables, as tuples of frozen rows in file order."""

    capacitor_units: tuple[CapacitorUnit, ...]
    device_ratings: tuple[DeviceRating, ...]
    breaker_frames: tuple[BreakerFrame, ...]
    disconnect_ratings: tuple[DisconnectRating, ...]
    conductors_nec: tuple[NecConductor, ...]
    conductors_iec: tuple[IecConductor, ...]
    reactors: tuple[Reactor, ...]
    contactors: tuple[Contactor, ...]
    controllers: tuple[Controller, ...]
    current_transformers: tuple[CurrentTransformer, ...]
    control_transformers: tuple[ControlTransformer, ...]
    control_fuses: tuple[ControlFuse, ...]
    device_losses: tuple[DeviceLoss, ...]
    fans: tuple[Fan, ...]
    busbars: tuple[Busbar, ...]
    prices: tuple[Price, ...]  # empty unless a price table was given (optional)
    tables: tuple[TableInfo, ...]
    source_dir: str | None


def builtin_dir() -> Path:
    """The folder of the built-in tables, ``bankbuild/tables/data`` inside the installed package.

    Examples
    --------
    >>> builtin_dir().name
    'data'
    """
    return Path(str(resources.files("bankbuild").joinpath("tables", "data")))


# -- reading one file ----------------------------------------------------------------------------------------


def _fail(path: Path, problem: str, line: int | None = None, column: str = "") -> CatalogError:
    field = ", ".join(p for p in (f"row {line}" if line else "", f"column {column}" if column else "") if p)
    return CatalogError(where=str(path), field=field, problem=problem)


def _read_text(path: Path) -> tuple[bytes, str]:
    """The file's bytes and its text; refuses missing, non-regular, binary and non-UTF-8 files."""
    if not path.exists():
        if path.is_symlink():
            raise _fail(path, "a link to a file that is not there (or a loop of links)")
        raise _fail(path, "file not found")
    if not path.is_file():
        raise _fail(path, "not a regular file")
    try:
        with path.open("rb") as handle:  # at most one byte past the limit, whatever the file claims
            data = handle.read(MAX_TABLE_BYTES + 1)
    except OSError as exc:
        raise _fail(path, f"cannot be read ({exc.strerror or exc})") from None
    if len(data) > MAX_TABLE_BYTES:
        raise _fail(path, f"over {MAX_TABLE_BYTES:,} bytes; a rating table may be at most that large")
    if not data.strip():
        raise _fail(path, "the file is empty; expected # comment lines, a header row and data rows")
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        raise _fail(path, "UTF-16 text (a spreadsheet's 'Unicode text'); save the table as CSV UTF-8")
    if b"\0" in data:
        line = data[: data.index(b"\0")].count(b"\n") + 1
        raise _fail(path, "not a text file (it holds NUL bytes); save the table as CSV text", line)
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        byte = data[exc.start]
        raise _fail(path, f"not UTF-8 text (byte 0x{byte:02x}); save the table as CSV UTF-8", line) from None
    return data, text


def _split(path: Path, text: str) -> tuple[list[str], int, list[str], list[tuple[int, list[str]]]]:
    """Split the text into comment notes, the header (line number and names) and data records.

    Lines that are blank or start with ``#`` are skipped anywhere; those before the header are the notes.
    A record never spans lines, so its line number is the one an editor shows.
    """
    notes: list[str] = []
    header: tuple[int, list[str]] | None = None
    records: list[tuple[int, list[str]]] = []
    for number, line in enumerate(_LINE_BREAK.split(text), start=1):  # CR LF, LF, or a lone CR (old Macs)
        if line.lstrip().startswith("#"):
            if header is None:
                notes.append(line.lstrip()[1:].strip())
            continue
        if not line.strip():
            continue
        try:
            cells = next(csv.reader([line], strict=True))
        except csv.Error as exc:
            raise _fail(path, f"cannot be read as CSV ({exc})", number) from None
        if header is None:
            header = (number, [c.strip() for c in cells])
        elif len(records) >= MAX_TABLE_ROWS:
            raise _fail(path, f"more than {MAX_TABLE_ROWS:,} data rows; a rating table may hold at most that many",
                        number)
        else:
            records.append((number, cells))
    if header is None:
        raise _fail(path, "no header row after the # comment lines")
    return notes, header[0], header[1], records


def _check_header(path: Path, schema: TableSchema, line: int, names: list[str]) -> None:
    expected = ", ".join(schema.names)
    for sep, label in ((";", "semicolons"), ("\t", "tabs")):
        if len(names) == 1 and sep in names[0]:  # a spreadsheet set to another locale, or a pasted TSV
            raise _fail(path, f"the header is separated by {label}; save the table as CSV with commas "
                              f"(expected {expected})", line)
    for name in names:
        if names.count(name) > 1:
            raise _fail(path, f"column '{name}' appears more than once; expected {expected}", line, name)
    for name in names:
        if name not in schema.names:
            close = difflib.get_close_matches(name, schema.names, n=1, cutoff=0.6)
            if not name:
                raise _fail(path, f"a column has no name (a stray comma?); expected {expected}", line)
            hint = f"did you mean '{close[0]}'? (the unit is part of the name)" if close else ""
            hint = hint or f"expected {expected}"
            raise _fail(path, f"unknown column '{name}'; {hint}", line, name)
    for name in schema.names:
        if name not in names:
            raise _fail(path, f"missing column '{name}'; expected {expected}", line, name)


def _read_table(schema: TableSchema, path: Path) -> tuple[TableInfo, tuple[Any, ...]]:
    """Read and check one table file; its provenance and its rows as ``schema.row_type`` objects."""
    data, text = _read_text(path)
    notes, header_line, names, records = _split(path, text)
    _check_header(path, schema, header_line, names)
    for line, cells in records:
        if len(cells) != len(names):
            raise _fail(path, f"{len(cells)} cells, but the header has {len(names)} columns", line)
    if not records:
        raise _fail(path, f"no data rows after the header on row {header_line}; the table is empty")
    cells: dict[str, dict[int, str]] = {name: {} for name in names}  # column -> line -> stripped text
    for line, record in records:
        for name, cell in zip(names, record, strict=True):
            cells[name][line] = cell.strip()
    issues = []  # the first bad cell in reading order: by line, then column, then check
    for index, column in enumerate(schema.columns):
        found = cell_problems(column, cells[column.name])
        issues += [(line, index, check, column.name, problem) for check, (line, problem) in enumerate(found)]
    if issues:
        line, _, _, name, problem = min(issues)
        raise _fail(path, problem, line, name)
    rows = []
    for line, _ in records:
        row: dict[str, Any] = {c.name: c.dtype(float(v)) if c.dtype is int else c.dtype(v)
                               for c in schema.columns for v in (cells[c.name][line],)}
        rows.append(row | {"row": line})
    rows.sort(key=lambda r: tuple(r[c] for c in schema.order))  # rows appended out of order take their place
    problem = row_problem(schema, rows)
    if problem:
        raise _fail(path, problem[2], problem[0], problem[1])
    info = TableInfo(schema.file_name, str(path), hashlib.sha256(data).hexdigest(), tuple(notes))
    return info, tuple(schema.row_type(**row, table=schema.file_name) for row in rows)


# -- folders -------------------------------------------------------------------------------------------------


def _folder(directory: str | Path) -> Path:
    path = Path(directory)
    if not path.exists():
        raise CatalogError(str(path), "", "catalog folder not found")
    if not path.is_dir():
        raise CatalogError(str(path), "", "not a folder; give the folder that holds the rating tables")
    return path


def _known_files(folder: Path) -> list[TableSchema]:
    """The schemas of the tables present in ``folder``; an unknown ``.csv`` file there is an error.

    Hidden files and the lock files spreadsheets leave beside an open file (``~$name.csv``) are ignored.
    """
    expected = ", ".join(TABLES_BY_FILE)
    for entry in sorted(folder.iterdir()):
        if entry.name.startswith((".", "~$")):
            continue
        if entry.suffix.lower() == ".csv" and entry.name not in TABLES_BY_FILE:
            close = difflib.get_close_matches(entry.name.lower(), TABLES_BY_FILE, n=1, cutoff=0.6)
            hint = f"did you mean {close[0]}?" if close else f"expected one of {expected}"
            raise CatalogError(str(entry), "", f"not a known rating table; {hint}")
    present = [t for t in TABLES if os.path.lexists(folder / t.file_name)]  # a broken link is reported, not skipped
    if not present:
        raise CatalogError(str(folder), "", f"no rating tables found; expected one of {expected}")
    return present


def _assemble(parts: dict[str, tuple[TableInfo, tuple[Any, ...]]], source_dir: str | None) -> Catalogs:
    rows = {t.attr: parts[t.attr][1] if t.attr in parts else () for t in TABLES}  # an optional table may be absent
    return Catalogs(**rows, tables=tuple(parts[t.attr][0] for t in TABLES if t.attr in parts), source_dir=source_dir)


@functools.lru_cache(maxsize=1)
def _builtin_parts() -> dict[str, tuple[TableInfo, tuple[Any, ...]]]:
    folder = builtin_dir()
    return {t.attr: _read_table(t, folder / t.file_name) for t in TABLES}


@functools.lru_cache(maxsize=2)
def _builtin_catalogs(demo_prices: bool = False) -> Catalogs:
    return _assemble(_required_parts(demo_prices), None)


def _required_parts(demo_prices: bool) -> dict[str, tuple[TableInfo, tuple[Any, ...]]]:
    """The built-in tables a run uses: every table that is not optional, and the demo prices when asked for."""
    return {t.attr: part for t in TABLES for part in (_builtin_parts()[t.attr],)
            if not t.optional or demo_prices}


def load_catalogs(user_dir: str | Path | None = None, demo_prices: bool = False) -> Catalogs:
    """Load every rating table: the built-in ones, each replaced by the user's file of the same name.

    Parameters
    ----------
    user_dir : str, Path or None
        A folder of user tables (``catalogs:`` in the spec, ``--catalogs`` on the command line). Tables it
        does not hold fall back to the built-in ones. ``None`` loads the built-in tables only (cached).
        The optional price table is used only when the folder holds one.
    demo_prices : bool
        Use the built-in price table (invented demo prices, for ``bankbuild demo``) unless the folder has one.

    Returns
    -------
    Catalogs
        Frozen rows of every table, plus the file name, path and SHA-256 of each file used.

    Raises
    ------
    CatalogError
        The folder is missing, holds no known table or an unknown ``.csv`` file, or a table breaks its schema.

    Examples
    --------
    >>> cats = load_catalogs()
    >>> [r.rating_a for r in cats.device_ratings if (r.basis, r.device) == ("nec", "breaker")][:4]
    [15.0, 20.0, 25.0, 30.0]
    >>> [t.file_name for t in cats.tables][:2]
    ['capacitor_units.csv', 'device_ratings.csv']
    """
    if user_dir is None:
        return _builtin_catalogs(demo_prices)
    folder = _folder(user_dir)
    parts = dict(_required_parts(demo_prices))
    for schema in _known_files(folder):
        parts[schema.attr] = _read_table(schema, folder / schema.file_name)
    return _assemble(parts, str(folder))


def check_catalogs(directory: str | Path) -> tuple[TableInfo, ...]:
    """Check every known table in a folder (for ``bankbuild catalog check DIR``).

    Parameters
    ----------
    directory : str or Path
        The folder to check. Unknown ``.csv`` files in it are an error, so that a misspelt file name is not
        silently ignored.

    Returns
    -------
    tuple of TableInfo
        One per table found, in the fixed table order.

    Examples
    --------
    >>> [t.file_name for t in check_catalogs(builtin_dir())][-1]
    'prices.csv'
    """
    folder = _folder(directory)
    return tuple(_read_table(t, folder / t.file_name)[0] for t in _known_files(folder))


def copy_catalogs(dest: str | Path, force: bool = False) -> list[Path]:
    """Copy the built-in tables into ``dest`` (created if needed) to edit them there.

    Existing files are overwritten only with ``force``: otherwise, if any table file is already in ``dest``,
    nothing is copied and a :class:`CatalogError` names it. The tables go in as one set
    (:class:`bankbuild.files.FileSet`): all of them, each flushed to the disk, or none, so a full disk never
    leaves a table cut short.

    Returns
    -------
    list of Path
        The files written, in the fixed table order.
    """
    from bankbuild.errors import OptionError
    from bankbuild.files import FileSet, check_folder

    folder = Path(dest)
    # the rule-basis files (rules-*.yaml) sit beside the tables and are copied with them, to edit there
    names = tuple(t.file_name for t in TABLES) + tuple(p.name for p in sorted(builtin_dir().glob("rules-*.yaml")))
    try:
        if folder.exists() and not folder.is_dir():
            raise CatalogError(str(folder), "", "not a folder")
        for name in names:
            target = folder / name
            if target.is_dir() and not target.is_symlink():
                raise CatalogError(str(target), "", "is a folder; move it away")
            if os.path.lexists(target) and not force:
                raise CatalogError(str(target), "", "already exists; not overwritten (use --force to replace the "
                                                    "tables, or choose another folder)")
        check_folder(folder, "", names)
        with FileSet(folder, "", replace=force) as files:
            for name in names:
                files.add(name, (builtin_dir() / name).read_bytes())
            return files.commit()
    except OptionError as exc:  # the folder's own problem, in the words of this module's errors
        raise CatalogError(exc.where, exc.field, exc.problem) from None


def _self_check() -> None:
    """The registry and the Catalogs fields agree (run at import, so a half-added table fails at once)."""
    catalog_fields = [f.name for f in fields(Catalogs)][:-2]
    if catalog_fields != [t.attr for t in TABLES]:
        raise TypeError(f"Catalogs fields {catalog_fields} do not match the table registry")
    for t in TABLES:
        row_fields = t.row_type._fields
        if row_fields != (*t.names, "table", "row"):
            raise TypeError(f"{t.row_type.__name__} fields do not match the columns of {t.file_name}")
        if not re.fullmatch(r"[a-z0-9_]+\.csv", t.file_name):
            raise TypeError(f"bad table file name {t.file_name}")


_self_check()
