"""A survey on metered data: the need, percentiles, energies and billing PF checked against values computed
independently here (numpy, pandas, electricpy, hand-worked), the proposed bank and its spec taken by ``size``."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
import yaml
from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.design.survey import largest_fixed_kvar, survey
from bankbuild.errors import DataError, OptionError
from bankbuild.spec.meter import Cleaning, MeterData, read_meter_data
from bankbuild.tables.load import load_catalogs

UNITS = load_catalogs(None).capacitor_units


def run(tmp_path, frame: pd.DataFrame, **options):
    path = tmp_path / "meter.csv"
    frame.to_csv(path, index=False)
    options.setdefault("voltage_v", 480.0)
    options.setdefault("pf_target", 0.95)
    return survey(read_meter_data(path), units=UNITS, **options)


def frame(times, kw, kvar) -> pd.DataFrame:
    return pd.DataFrame({"timestamp": times.strftime("%Y-%m-%d %H:%M"), "P (kW)": kw, "Q (kvar)": kvar})


def test_constant_load_needs_exactly_p_times_the_tangent_difference(tmp_path):
    import electricpy

    times = pd.date_range("2026-05-04", periods=7 * 96, freq="15min")
    p, pf1, pf2 = 100.0, 0.80, 0.95
    q = p * math.tan(math.acos(pf1))
    result = run(tmp_path, frame(times, np.full(len(times), p), np.full(len(times), q)), pf_target=pf2)
    expected = p * (math.tan(math.acos(pf1)) - math.tan(math.acos(pf2)))  # Q_c = P·(tan φ1 − tan φ2), textbook
    assert result.need_kvar.max == pytest.approx(expected, rel=1e-12)
    assert result.need_kvar.p95 == pytest.approx(expected, rel=1e-12)
    # electricpy.pfcorrection takes apparent power in VA (oracles.md): S = P / PF1
    _, qc_var = electricpy.pfcorrection(p * 1000 / pf1, pf1, pf2, VLL=480)
    assert result.need_kvar.max == pytest.approx(qc_var / 1000, rel=1e-9)
    assert result.proposed.total_kvar >= expected
    assert result.simulation.share_meeting_target == 1.0
    assert result.simulation.leading_intervals == 0


def _profile(days: int = 61, start: str = "2026-01-01"):
    rng = np.random.default_rng(7)
    times = pd.date_range(start, periods=days * 96, freq="15min")
    day = (times.hour >= 6) & (times.hour < 22) & (times.dayofweek < 5)
    kw = 60 + 300 * day * rng.uniform(0.7, 1.0, len(times))
    kvar = 40 + 280 * day * rng.uniform(0.7, 1.0, len(times)) + rng.normal(0, 3, len(times))
    return times, np.round(kw, 2), np.round(kvar, 2)


def test_percentiles_and_monthly_energies_agree_with_numpy_and_pandas(tmp_path):
    times, kw, kvar = _profile()
    result = run(tmp_path, frame(times, kw, kvar), share=0.9)
    # independently: read the same file with pandas, need = Q − P·tan φ2, clipped at zero (P > 0 throughout)
    raw = pd.read_csv(tmp_path / "meter.csv", parse_dates=["timestamp"])
    need = np.clip(raw["Q (kvar)"] - raw["P (kW)"] * math.tan(math.acos(0.95)), 0, None).to_numpy()
    assert result.need_kvar.p95 == pytest.approx(np.percentile(need, 95), rel=1e-12)
    assert result.need_kvar.at_share == pytest.approx(np.percentile(need, 90), rel=1e-12)
    assert result.need_kvar.max == pytest.approx(need.max(), rel=1e-12)
    monthly = raw.set_index("timestamp").resample("MS").sum() * 0.25  # 15-min readings: kWh = kW × 0.25 h
    assert [m.month for m in result.monthly] == [d.strftime("%Y-%m") for d in monthly.index]
    assert [m.kwh for m in result.monthly] == pytest.approx(list(monthly["P (kW)"]), rel=1e-12)
    assert [m.kvarh_before for m in result.monthly] == pytest.approx(list(monthly["Q (kvar)"]), rel=1e-12)
    before = monthly["P (kW)"] / np.hypot(monthly["P (kW)"], monthly["Q (kvar)"])
    assert [m.billing_pf_before for m in result.monthly] == pytest.approx(list(before), rel=1e-12)
    demand = np.hypot(raw["P (kW)"], raw["Q (kvar)"]).groupby(raw["timestamp"].dt.to_period("M")).max()
    assert [m.kva_demand_before for m in result.monthly] == pytest.approx(list(demand), rel=1e-12)


def test_demand_of_one_minute_readings_is_on_15_minute_averages(tmp_path):
    times = pd.date_range("2026-03-02", periods=3 * 24 * 60, freq="1min")
    rng = np.random.default_rng(3)
    kw = np.round(100 + 50 * rng.random(len(times)), 2)
    kvar = np.round(60 + 40 * rng.random(len(times)), 2)
    result = run(tmp_path, frame(times, kw, kvar))
    raw = pd.DataFrame({"kw": kw, "kvar": kvar}, index=times).resample("15min").mean()
    assert result.monthly[0].kva_demand_before == pytest.approx(np.hypot(raw.kw, raw.kvar).max(), rel=1e-12)
    assert result.monthly[0].kwh == pytest.approx(kw.sum() / 60, rel=1e-12)


def test_billing_pf_of_a_hand_worked_month(tmp_path):
    # April 2026 (30 days): 10 days at 100 kW / 75 kvar, 20 days at 50 kW / 20 kvar, hourly readings.
    # Hand-worked: kWh = 100·240 + 50·480 = 48,000; kvarh = 75·240 + 20·480 = 27,600;
    # billing PF = 48,000 / √(48,000² + 27,600²) = 0.86691
    times = pd.date_range("2026-04-01", periods=30 * 24, freq="60min")
    first = np.arange(len(times)) < 240
    result = run(tmp_path, frame(times, np.where(first, 100.0, 50.0), np.where(first, 75.0, 20.0)))
    (april,) = result.monthly
    assert (april.kwh, april.kvarh_before) == (48_000.0, 27_600.0)
    assert april.billing_pf_before == pytest.approx(0.86691, abs=5e-6)
    assert april.coverage == 1.0
    assert april.billing_pf_after >= 0.95


def test_known_light_load_gives_that_fixed_part(tmp_path):
    # Nights and weekends draw 37 kvar at the least: the light-load kvar is 37, and the largest fixed part within
    # it from the 480 V, 60 Hz units of capacitor_units.csv (2.5 ... 50 kvar, at most 4 alike) is one 30 kvar unit.
    times = pd.date_range("2026-06-01", periods=14 * 96, freq="15min")
    day = (times.hour >= 7) & (times.hour < 19) & (times.dayofweek < 5)
    kw = np.where(day, 400.0, 50.0)
    kvar = np.where(day, 330.0, 37.0 + (times.hour % 3))
    result = run(tmp_path, frame(times, kw, kvar))
    assert result.light_load_kvar == 37.0
    assert result.proposed.fixed_kvar == 30.0
    assert result.simulation.leading_intervals == 0 or result.simulation.leading_beyond_limit_intervals == 0
    spec = result.spec["banks"][0]
    assert spec["steps"][0] == 30.0 and spec["light_load"] == {"kw": 50.0, "kvar": 37.0, "fixed_steps": 1}


def test_largest_fixed_part():
    assert largest_fixed_kvar(37.0, [2.5, 5, 10, 30, 50], 1.0) == (30.0, 1, 30.0)
    assert largest_fixed_kvar(2.0, [2.5, 5], 1.0) == (0.0, 0, 0.0)
    # at 415 V, 440 V units deliver (415/440)² = 0.8896 of nameplate: four 10 kvar units give 35.6 kvar
    assert largest_fixed_kvar(36.0, [10], (415 / 440) ** 2)[:2] == (pytest.approx(35.58, abs=0.01), 4)


def test_the_spec_is_taken_by_size(tmp_path):
    from bankbuild.api import run_spec

    times, kw, kvar = _profile(days=21)
    result = run(tmp_path, frame(times, kw, kvar))
    path = tmp_path / "spec.yaml"
    path.write_text(yaml.safe_dump(result.spec, sort_keys=False), encoding="utf-8")
    project = run_spec(path)
    (bank,) = project.banks
    planned = ([result.proposed.fixed_kvar] if result.proposed.fixed_kvar else []) + result.proposed.steps
    assert [s.kvar for s in bank.steps] == pytest.approx(planned, abs=0.01)
    assert bank.delivered_kvar == pytest.approx(result.proposed.total_kvar, abs=0.05)
    assert bank.delivered_kvar >= bank.required_kvar - 1e-6


def test_simulation_counts_are_consistent(tmp_path):
    times, kw, kvar = _profile(days=14)
    result = run(tmp_path, frame(times, kw, kvar))
    sim = result.simulation
    assert sim.operations == [d.operations for d in sim.steps]
    assert sim.switching_per_step_per_year == pytest.approx([ops / sim.years for ops in sim.operations])
    assert sim.years == pytest.approx(14 / 365.25)
    assert 0.0 <= sim.share_meeting_target <= 1.0
    assert sim.leading_beyond_limit_intervals == 0


def test_options_out_of_range(tmp_path):
    times, kw, kvar = _profile(days=2)
    with pytest.raises(OptionError, match="pf_target"):
        run(tmp_path, frame(times, kw, kvar), pf_target=1.2)
    with pytest.raises(OptionError, match="pattern"):
        run(tmp_path, frame(times, kw, kvar), pattern="1:x")


def test_no_importing_interval_is_a_data_error(tmp_path):
    times = pd.date_range("2026-01-01", periods=4, freq="15min")
    with pytest.raises(DataError, match="no interval draws active power"):
        run(tmp_path, frame(times, np.full(4, -5.0), np.full(4, 3.0)))


def test_nothing_to_correct_proposes_no_bank(tmp_path):
    times = pd.date_range("2026-01-01", periods=96, freq="15min")
    result = run(tmp_path, frame(times, np.full(96, 100.0), np.full(96, 10.0)))  # PF 0.995 throughout
    assert result.proposed.total_kvar == 0 and result.proposed.steps == [] and result.spec == {}
    assert [c.name for c in result.checks] == ["No bank needed"]


@settings(max_examples=40, deadline=None)
@given(kw=st.lists(st.floats(0.0, 800.0, allow_subnormal=False), min_size=8, max_size=200),
       pf=st.floats(0.5, 1.0), swing=st.floats(-30.0, 120.0), lead=st.sampled_from([1.0, 0.98, 0.9]),
       share=st.sampled_from([0.0, 1 / 3]))
def test_simulated_pf_never_leads_beyond_the_limit_unless_flagged(kw, pf, swing, lead, share):
    # A random profile straight into the survey (no file): the PF after the bank, from the results' own
    # monthly energies and from the simulation log, never leads beyond the limit in an interval not flagged.
    n = len(kw)
    p = np.array(kw)
    q = p * math.tan(math.acos(pf)) + swing * np.sin(np.arange(n))
    t = 1.7e9 + 900.0 * np.arange(n)
    cleaning = Cleaning(rows_read=n, rows_used=n, missing_rows=0, impossible_rows=0, duplicate_rows=0,
                        conflicting_rows=0, out_of_order_rows=0, gaps=0, gap_time_s=0.0, irregular_intervals=0,
                        exporting_intervals=0, offset_changes=0, notes=())
    data = MeterData(path="(random)", time_s=t, local_s=t, active_kw=p, reactive_kvar=q, rows=np.arange(n) + 2,
                     interval_s=900.0, columns=(), pair=("kw", "kvar"), kvar_sign="lagging-positive",
                     has_offsets=False, cleaning=cleaning)
    if not (p > 0).any():
        return
    result = survey(data, voltage_v=480.0, pf_target=0.95, units=UNITS, pf_lead_limit=lead, switch_in_share=share)
    sim = result.simulation
    # a fixed part within the light-load kvar never leads: nothing is ever flagged
    assert result.proposed.fixed_kvar <= result.light_load_kvar + 1e-9
    assert sim.leading_beyond_limit_intervals == 0
    assert sum(sim.operations) == sum(d.operations for d in sim.steps)
    assert not any(c.name == "No leading power factor beyond the limit" and not c.ok for c in result.checks)
