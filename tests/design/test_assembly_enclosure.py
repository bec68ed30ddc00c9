"""The enclosure: losses, the ventilation airflow from the heat balance of air, fans and busbars.

Sources beside each value: the heat balance of an air stream P = ρ·c_p·V̇·ΔT (common practice), handbook air
properties, and the generic tables' own notes.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.calc.thermal import air_density_kg_m3, airflow_m3_per_h
from bankbuild.design.enclosure import device_loss_w, enclosure, pick_fans
from bankbuild.results.sizing import LossLine


def test_air_density():
    # Source: handbook value - dry air at 20 °C and 101.325 kPa: 1.204 kg/m³; at 0 °C: 1.293 kg/m³.
    assert air_density_kg_m3(20.0) == pytest.approx(1.204, abs=0.001)
    assert air_density_kg_m3(0.0) == pytest.approx(1.293, abs=0.001)


def test_airflow_from_the_heat_balance():
    # Source: common practice - heat balance of air: 1 kW with a 10 K rise and ρ·c_p = 1.2 × 1005 J/(m³·K)
    # needs 1000 / (1206 × 10) m³/s = 0.0829 m³/s = 298.5 m³/h.
    assert airflow_m3_per_h(1000.0, 10.0, 1.2) == pytest.approx(298.5, abs=0.1)


def test_airflow_rule_of_thumb():
    # Source: from memory - enclosure climate guides quote V̇ ≈ 3.1 · P / ΔT m³/h (P in W, ΔT in K) for air
    # near 35 °C; the heat balance at 35 °C gives the same within 1 %.
    flow = airflow_m3_per_h(2000.0, 10.0, air_density_kg_m3(35.0))
    assert flow == pytest.approx(3.1 * 2000.0 / 10.0, rel=0.01)


@settings(max_examples=100, deadline=None)
@given(p=st.floats(min_value=1, max_value=50000), dt=st.floats(min_value=1, max_value=40),
       t=st.floats(min_value=-20, max_value=60))
def test_airflow_carries_the_heat(p, dt, t):
    rho = air_density_kg_m3(t)
    flow_m3_s = airflow_m3_per_h(p, dt, rho) / 3600
    assert rho * 1005.0 * flow_m3_s * dt == pytest.approx(p, rel=1e-9)


def test_device_losses_by_rating(catalogs):
    # Source: device_losses.csv (from memory) - a 200 A fuse-link 14 W, a 175 A breaker pole 12 W.
    assert device_loss_w(catalogs.device_losses, "fuse", 200) == 14
    assert device_loss_w(catalogs.device_losses, "breaker", 175) == 12


def test_fans_cover_the_airflow(catalogs):
    fan, qty = pick_fans(catalogs.fans, 1500.0)
    assert qty * fan.airflow_m3_per_h >= 1500.0
    fan, qty = pick_fans(catalogs.fans, 90.0)
    assert (fan.airflow_m3_per_h, qty) == (100.0, 1)
    assert pick_fans(catalogs.fans, 0.0) == (None, 0)


def test_enclosure_sums_losses_and_sizes_busbars(catalogs):
    lines = [LossLine(item="Capacitor units", qty=10, each_w=25.0, total_w=250.0, source="t"),
             LossLine(item="Reactors", qty=2, each_w=375.0, total_w=750.0, source="t")]
    result, checks = enclosure(lines, 10.0, 35.0, 10.0, 800.0, 0.8, catalogs)
    assert result.total_losses_w == pytest.approx(1100.0)  # 1000 W + 10 % wiring allowance
    assert result.losses[-1].item.startswith("Wiring")
    assert result.airflow_m3_per_h == pytest.approx(airflow_m3_per_h(1100.0, 10.0, air_density_kg_m3(35.0)))
    # Source: busbars.csv (DIN 43671 style, from memory) - 800 A / 0.8 = 1000 A of table rating: 50 × 10 mm
    # (1020 A) is the first bar at or above it.
    assert result.busbar.designation == "BB-Cu-1x50x10"
    assert result.busbar_rating_a == pytest.approx(816.0)
    assert all(c.ok for c in checks)


def test_hot_site_is_flagged_and_huge_current_has_no_busbar(catalogs):
    result, checks = enclosure([], 10.0, 45.0, 10.0, 20000.0, 0.8, catalogs)
    failed = {c.name for c in checks if not c.ok}
    # Source: IEC 60831-1 temperature category D, 45 °C 24-hour mean (from memory).
    assert failed == {"Enclosure air temperature", "Main busbars"}
    assert result.busbar is None and result.fan is None
