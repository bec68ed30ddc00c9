"""The rerate PDF read back: both charts with their units and source tables, every step's kvar before and after,
the capacitor voltage against its limit, the parts to change, and the cautions."""

from __future__ import annotations

import pytest
from pdf_text import pages_text, squash

from bankbuild.api import demo_spec_path, rerate
from bankbuild.reports.chart import chart_figure
from bankbuild.reports.pdf_common import num
from bankbuild.reports.pdf_rerate import rerate_pdf, step_kvar_chart, voltage_chart


@pytest.fixture(scope="module")
def moved():
    return rerate(demo_spec_path(), 415, 50)


def test_rerate_pdf_holds_the_charts_and_their_figures(moved):
    text = squash("".join(pages_text(rerate_pdf(moved))))
    for wanted in ("Re-rating report", "kvar of each step before and after the move", "Delivered at the supply [kvar]",
                   "Voltage on the capacitor units against their limit", "Capacitor voltage, rms [V]",
                   "Installed parts at the new supply", "Capacitors hold a charge"):
        assert squash(wanted) in text, wanted
    for bank in moved.banks:
        for step in bank.steps:
            assert squash(num(step.original_kvar, 1)) in text and squash(num(step.delivered_kvar, 1)) in text
        assert squash(num(bank.capacitor_voltage_limit_v, 1)) in text


def test_step_bars_are_the_results_kvar(moved):
    bank = moved.banks[0]
    before, after = step_kvar_chart(bank, 500).series
    assert [y for _, y in before.points] == [s.original_kvar for s in bank.steps]
    assert [y for _, y in after.points] == [s.delivered_kvar for s in bank.steps]


def test_voltage_chart_marks_the_continuous_limit(moved):
    for bank in moved.banks:
        # the demo is on the NEC basis: IEEE Std 18, 110 % of rated rms voltage, continuous
        assert bank.capacitor_voltage_limit_v == pytest.approx(1.10 * bank.capacitor_voltage_v)
        texts = chart_figure(voltage_chart(bank, 500)).texts()
        assert f"continuous limit {num(bank.capacitor_voltage_limit_v, 0)} V" in texts
        assert bank.light_load_voltage_v >= bank.capacitor_voltage_seen_v - 1e-9
