"""Reading metered readings: columns from the header, units, signs, cleaning said in words, bad files named."""

from __future__ import annotations

import math

import pytest

from bankbuild.errors import DataError, OptionError
from bankbuild.spec.meter import header_role, read_meter_data


def write(tmp_path, text: str, name: str = "m.csv"):
    path = tmp_path / name
    path.write_text(text.strip() + "\n", encoding="utf-8")
    return path


@pytest.mark.parametrize(("header", "role"), [
    ("P (kW)", ("kw", 1.0)), ("Active power [W]", ("kw", 0.001)), ("P_MW", ("kw", 1000.0)),
    ("Q (kvar)", ("kvar", 1.0)), ("reactive var", ("kvar", 0.001)), ("S kVA", ("kva", 1.0)),
    ("PF", ("pf", 1.0)), ("cos φ", ("pf", 1.0)), ("Timestamp", ("time", 1.0)), ("Date/time", ("time", 1.0)),
    ("Energy (kWh)", None), ("Comment", None),
])
def test_header_roles(header, role):
    assert header_role(header) == role


def test_kw_and_kvar_read_as_given(tmp_path):
    data = read_meter_data(write(tmp_path, """
time,P (kW),Q (kvar)
2026-01-01 00:00,100,75
2026-01-01 00:15,90,-10
"""))
    assert list(data.active_kw) == [100, 90]
    assert list(data.reactive_kvar) == [75, -10]
    assert data.interval_s == 900
    assert data.cleaning.notes == ()


def test_watts_and_a_lagging_negative_meter(tmp_path):
    data = read_meter_data(write(tmp_path, """
time,P [W],Q [var]
2026-01-01 00:00,100000,-75000
2026-01-01 00:15,100000,-75000
"""), kvar_sign="lagging-negative")
    assert list(data.active_kw) == [100, 100]
    assert list(data.reactive_kvar) == [75, 75]


def test_kw_and_pf_give_lagging_kvar(tmp_path):
    data = read_meter_data(write(tmp_path, """
time,kW,PF
2026-01-01 00:00,100,0.8
2026-01-01 00:15,100,1.0
"""))
    # Q = P·tan(arccos PF): 100 kW at 0.8 -> 75 kvar (power triangle 3-4-5)
    assert data.reactive_kvar[0] == pytest.approx(75.0)
    assert data.reactive_kvar[1] == 0.0


def test_kva_and_pf(tmp_path):
    data = read_meter_data(write(tmp_path, """
time,S (kVA),PF
2026-01-01 00:00,125,0.8
2026-01-01 00:15,125,0.8
"""))
    assert data.active_kw[0] == pytest.approx(100.0)
    assert data.reactive_kvar[0] == pytest.approx(75.0)


def test_columns_mapped_by_name(tmp_path):
    data = read_meter_data(write(tmp_path, """
when,real,imag
2026-01-01 00:00,100,75
2026-01-01 00:15,100,75
"""), columns={"time": "when", "kw": "real", "kvar": "imag"})
    assert list(data.reactive_kvar) == [75, 75]


def test_cleaning_is_counted_and_said(tmp_path):
    data = read_meter_data(write(tmp_path, """
time,kW,kvar
2026-01-01 00:00,100,75
2026-01-01 00:15,100,75
2026-01-01 00:15,100,75
2026-01-01 00:30,,75
2026-01-01 01:30,90,60
2026-01-01 01:15,80,50
2026-01-01 01:45,-20,10
2026-01-01 02:00,100,70
2026-01-01 02:00,101,70
"""))
    c = data.cleaning
    assert (c.rows_read, c.rows_used) == (9, 6)
    assert (c.missing_rows, c.duplicate_rows, c.conflicting_rows, c.out_of_order_rows) == (1, 1, 1, 1)
    assert c.gaps == 1 and c.gap_time_s == pytest.approx(45 * 60)  # 00:15 -> 01:15: three readings missing
    assert c.exporting_intervals == 1
    assert list(data.rows) == [2, 3, 7, 6, 8, 9]  # file rows kept, in time order (header = row 1)
    text = " ".join(c.notes)
    for fragment in ("empty cell", "row 5", "sorted by time", "repeated rows", "other values", "not filled",
                     "export"):
        assert fragment in text


def test_impossible_values_are_dropped_and_named(tmp_path):
    data = read_meter_data(write(tmp_path, """
time,kW,PF
2026-01-01 00:00,100,0.8
2026-01-01 00:15,100,1.2
2026-01-01 00:30,100,-0.5
2026-01-01 00:45,100,0.9
"""))
    assert data.cleaning.impossible_rows == 2
    assert "PF outside" in data.cleaning.notes[0] and "row 3" in data.cleaning.notes[0]


def test_negative_kva_is_impossible(tmp_path):
    data = read_meter_data(write(tmp_path, """
time,kW,kVA
2026-01-01 00:00,100,125
2026-01-01 00:15,100,-125
2026-01-01 00:30,100,125
"""))
    assert data.cleaning.impossible_rows == 1
    assert data.reactive_kvar[0] == pytest.approx(75.0)


def test_utc_offsets_and_a_daylight_saving_change(tmp_path):
    # 2026-03-29 01:45+01:00 is 00:45 UTC; 03:00+02:00 is 01:00 UTC: one regular quarter hour apart
    data = read_meter_data(write(tmp_path, """
time,kW,kvar
2026-03-29T01:30+01:00,100,50
2026-03-29T01:45+01:00,100,50
2026-03-29T03:00+02:00,100,50
2026-03-29T03:15+02:00,100,50
"""))
    assert data.has_offsets and data.cleaning.gaps == 0 and data.cleaning.irregular_intervals == 0
    assert data.cleaning.offset_changes == 1
    assert data.local_s[2] - data.time_s[2] == 7200
    assert "daylight saving" in data.cleaning.notes[0]


def test_local_times_with_a_skipped_hour_are_reported(tmp_path):
    data = read_meter_data(write(tmp_path, """
time,kW,kvar
2026-03-29 01:30,100,50
2026-03-29 01:45,100,50
2026-03-29 03:00,100,50
2026-03-29 03:15,100,50
"""))
    assert data.cleaning.gaps == 1
    assert any("daylight-saving" in n for n in data.cleaning.notes)


def test_irregular_intervals(tmp_path):
    data = read_meter_data(write(tmp_path, """
time,kW,kvar
2026-01-01 00:00,1,1
2026-01-01 00:15,1,1
2026-01-01 00:30,1,1
2026-01-01 00:37,1,1
2026-01-01 00:45,1,1
"""))
    assert data.interval_s == 900
    assert data.cleaning.irregular_intervals == 2


def test_xlsx(tmp_path):
    import pandas as pd

    frame = pd.DataFrame({"Timestamp": pd.date_range("2026-01-01", periods=4, freq="15min"),
                          "P (kW)": [100.0, 110.0, 120.0, 130.0], "Q (kvar)": [75.0, 80.0, 85.0, 90.0]})
    path = tmp_path / "m.xlsx"
    frame.to_excel(path, index=False)
    data = read_meter_data(path)
    assert list(data.active_kw) == [100, 110, 120, 130]
    assert data.interval_s == 900


@pytest.mark.parametrize(("text", "fragments"), [
    ("time,kW,kvar\n2026-01-01 00:00,100,75\n2026-01-01 00:15,abc,75\n", ["row 3", "'kW'", "not a number"]),
    ("time,kW,kvar\n2026-01-01 00:00,100,75\nyesterday,100,75\n", ["row 3", "'time'", "not a time"]),
    ("time,kW\n2026-01-01 00:00,100\n2026-01-01 00:15,100\n", ["row 1", "two of kW, kvar, kVA and PF"]),
    ("kW,kvar\n100,75\n", ["row 1", "no time column"]),
    ("time,kW,P (kW),kvar\n2026-01-01 00:00,1,1,1\n", ["row 1", "both read as kW", "kw_column"]),
    ("time,kW,kvar\n", ["no readings"]),
    ("time,kWh,kvarh\n2026-01-01 00:00,1,1\n", ["energy columns"]),
    ("time,kW,kvar\n2026-01-01 00:00,100,75\n", ["fewer than two"]),
    ("time,kW,kvar\n2026-01-01T00:00+01:00,100,75\n2026-01-01 00:15,100,75\n", ["row 3", "no UTC offset"]),
])
def test_bad_files_name_row_and_column(tmp_path, text, fragments):
    path = tmp_path / "bad.csv"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(DataError) as info:
        read_meter_data(path)
    line = info.value.line()
    assert "\n" not in line and line.startswith(str(path))
    for fragment in fragments:
        assert fragment in line


def test_unknown_type_and_missing_file(tmp_path):
    with pytest.raises(DataError, match="unknown file type"):
        read_meter_data(write(tmp_path, "x", name="m.dat"))
    with pytest.raises(DataError, match="not found"):
        read_meter_data(tmp_path / "none.csv")
    bad = tmp_path / "bin.xlsx"
    bad.write_bytes(b"not a zip")
    with pytest.raises(DataError, match="cannot be read"):
        read_meter_data(bad)


def test_mapped_column_missing(tmp_path):
    with pytest.raises(OptionError, match="kw_column: no column 'real'"):
        read_meter_data(write(tmp_path, "time,kW,kvar\n2026-01-01 00:00,1,1\n"), columns={"kw": "real"})


def test_not_utf8(tmp_path):
    path = tmp_path / "m.csv"
    path.write_bytes("time,kW,kvar\n2026-01-01 00:00,1,1\n".encode("utf-16"))
    with pytest.raises(DataError):
        read_meter_data(path)


def test_pf_of_zero_with_kva_is_pure_reactive(tmp_path):
    data = read_meter_data(write(tmp_path, """
time,kVA,PF
2026-01-01 00:00,10,0
2026-01-01 00:15,10,0
"""))
    assert data.active_kw[0] == 0 and data.reactive_kvar[0] == pytest.approx(10.0)
    assert not math.isnan(data.reactive_kvar[1])
