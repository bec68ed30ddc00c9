"""Fuzzing the spec and the rating tables (hypothesis): either a clean refusal or a result whose invariants hold.

For every generated spec (mostly valid, some broken on purpose) and every generated rating table, the tool
either refuses it with a :class:`~bankbuild.errors.BankbuildError` whose message is one line naming the file,
or returns results in which:

* the bank delivers at least what it must (delivered ≥ required);
* every protective device is a standard rating from the table in use and not below factor × current;
* every conductor reaches factor × current (or its failure is a flagged check);
* the discharge meets its rule, or a failed "Discharge" check says it does not;
* the JSON document holds no NaN or infinity.

The factors are the spec's (or the documented defaults: conductor 135 %, NEC 460.8(A); device 165 % fuse /
135 % breaker, common practice (no single source)). The currents are recomputed here from the step's kvar
and voltages (I = Q / (√3·V), textbook), not read from the tool's own sizing lines.

About 2,950 examples in all (counts set per test): about a minute of one core.
Strategies and invariants live in ``tests/fuzz_support.py``.
"""

from __future__ import annotations

import csv
import io
import json
import tempfile
from pathlib import Path

from fuzz_support import BUILTIN, broken_spec, check_invariants, run_spec_data, spec
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bankbuild.errors import SpecError
from bankbuild.reports.jsonout import project_json
from bankbuild.spec.read import parse_yaml
from bankbuild.tables.load import builtin_dir, load_catalogs

FUZZ = settings(deadline=None, derandomize=True, database=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])

# -- the fuzz tests ------------------------------------------------------------------------------------------


@settings(FUZZ, max_examples=700)
@given(data=spec())
def test_valid_looking_specs_size_with_invariants(data: dict) -> None:
    result = run_spec_data(data)
    if result is not None:
        check_invariants(data, result, BUILTIN)


@settings(FUZZ, max_examples=1300)
@given(data=broken_spec())
def test_broken_specs_are_refused_or_sized_correctly(data: dict) -> None:
    result = run_spec_data(data)
    if result is not None:
        check_invariants(data, result, BUILTIN)


@settings(FUZZ, max_examples=350)
@given(data=st.one_of(spec(), broken_spec()))
def test_spec_through_yaml_text(data: dict) -> None:
    """The same, through YAML text and the safe reader (as a file would arrive)."""
    import yaml

    try:
        text = yaml.safe_dump(data, allow_unicode=True, sort_keys=False)
    except yaml.YAMLError:
        return
    try:
        parsed = parse_yaml(text.encode("utf-8"), "fuzz.yaml")
    except SpecError as exc:
        assert "\n" not in exc.line() and exc.line().startswith("fuzz.yaml")
        return
    result = run_spec_data(parsed)
    if result is not None:
        check_invariants(parsed, result, BUILTIN)


# -- rating tables ---------------------------------------------------------------------------------------------

UNIT_HEADER = ["unit_id", "rated_kvar", "rated_voltage_v", "rated_frequency_hz", "connection",
               "discharge_voltage_v", "discharge_time_s", "losses_w_per_kvar", "description"]
CELL_JUNK = st.sampled_from(["nan", "inf", "-inf", "", "-5", "0", "abc", "1e309", "12,5", "=1+1", " 7 ", "1_0",
                             "0x10", "１２"])


@st.composite
def unit_rows(draw):
    """A capacitor-unit table: mostly sane rows, sometimes a junk cell, a duplicate or a shuffled order."""
    keys = draw(st.lists(st.tuples(st.sampled_from([50, 60]), st.sampled_from([240, 400, 415, 440, 480, 525, 600]),
                                   st.floats(min_value=0.5, max_value=120).map(lambda k: round(k, 1))),
                         min_size=1, max_size=25, unique=True))
    if draw(st.booleans()):
        keys.sort()
    rows = [[f"U{i}-{v}-{f}-{k}", f"{k:g}", str(v), str(f), "delta", "50" if f == 60 else "75",
             "60" if f == 60 else "180", "0.5", draw(st.text(alphabet="abc <>&=+-@\"',", max_size=15))]
            for i, (f, v, k) in enumerate(keys)]
    for _ in range(draw(st.integers(0, 2))):
        row = draw(st.integers(0, len(rows) - 1))
        action = draw(st.sampled_from(["junk", "duplicate", "none"]))
        if action == "junk":
            rows[row][draw(st.integers(0, len(UNIT_HEADER) - 2))] = draw(CELL_JUNK)
        elif action == "duplicate":
            rows.insert(row, list(rows[row]))
    return rows


@st.composite
def device_rows(draw):
    """A fuse/breaker rating table for both bases, sometimes with a gap, a junk cell or a swapped pair."""
    rows = []
    for basis in ("iec", "nec"):
        for device in ("breaker", "fuse"):
            ratings = draw(st.lists(st.integers(1, 8000), min_size=1, max_size=40, unique=True))
            rows += [[basis, device, str(r)] for r in sorted(ratings)]
    if draw(st.booleans()) and len(rows) > 2:
        i = draw(st.integers(0, len(rows) - 2))
        rows[i], rows[i + 1] = rows[i + 1], rows[i]
    if draw(st.integers(0, 3)) == 0:
        rows[draw(st.integers(0, len(rows) - 1))][2] = draw(CELL_JUNK)
    return rows


def _write_table(folder: Path, name: str, header: list[str], rows: list[list[str]]) -> None:
    buffer = io.StringIO()
    buffer.write("# fuzz table\n")
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(header)
    writer.writerows(rows)
    (folder / name).write_text(buffer.getvalue(), encoding="utf-8")


TABLE_SPECS = [
    {"rules": "nec", "banks": [
        {"name": "A", "supply": {"voltage_v": 480, "frequency_hz": 60}, "need": {"kvar": 310},
         "steps": {"count": 5, "pattern": "1:2:2"}},
        {"name": "B", "supply": {"voltage_v": 400, "frequency_hz": 50}, "need": {"kvar": 95}, "detuning_pct": 7,
         "protection": {"device": "breaker"}}]},
    {"rules": "iec", "banks": [
        {"name": "C", "supply": {"voltage_v": 415, "frequency_hz": 50}, "need": {"kw": 600, "pf_present": 0.75,
                                                                             "pf_target": 0.96},
         "steps": [25, 50, 50, 100]}]},
]


def _run_tables(folder: Path):
    """Load the folder's tables; on success size the fixed specs and check the invariants."""
    from bankbuild.errors import CatalogError

    try:
        catalogs = load_catalogs(folder)
    except CatalogError as exc:
        line = exc.line()
        assert "\n" not in line and str(folder) in line, line
        assert "row" in exc.field or "empty" in line or "no data rows" in line, line
        return
    for data in TABLE_SPECS:
        result = run_spec_data(data, catalogs)
        if result is not None:
            check_invariants(data, result, catalogs)


@settings(FUZZ, max_examples=300)
@given(rows=unit_rows())
def test_unit_tables(rows: list[list[str]]) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        _write_table(Path(tmp), "capacitor_units.csv", UNIT_HEADER, rows)
        _run_tables(Path(tmp))


@settings(FUZZ, max_examples=300)
@given(rows=device_rows())
def test_device_rating_tables(rows: list[list[str]]) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        _write_table(Path(tmp), "device_ratings.csv", ["basis", "device", "rating_a"], rows)
        _run_tables(Path(tmp))


def test_builtin_tables_meet_the_invariants_on_the_fixed_specs() -> None:
    """The fixed specs of the table fuzzing size cleanly with the built-in tables (a baseline that must hold)."""
    for data in TABLE_SPECS:
        result = run_spec_data(data)
        assert result is not None
        check_invariants(data, result, BUILTIN)
    assert (builtin_dir() / "capacitor_units.csv").exists()


def test_json_document_writes_infinity_and_nan_as_null() -> None:
    """JSON has no infinity or NaN (RFC 8259, section 6): an unbounded figure is written as null."""
    result = run_spec_data(TABLE_SPECS[0])
    bank = result.banks[0]
    odd = bank.model_copy(update={"discharge": bank.discharge.model_copy(
        update={"builtin_time_s": float("inf"), "resistor_power_w": float("nan")})})
    text = project_json(result.model_copy(update={"banks": [odd, *result.banks[1:]]}))
    doc = json.loads(text, parse_constant=lambda c: (_ for _ in ()).throw(ValueError(c)))
    assert doc["banks"][0]["discharge"]["builtin_time_s"] is None
    assert doc["banks"][0]["discharge"]["resistor_power_w"] is None
