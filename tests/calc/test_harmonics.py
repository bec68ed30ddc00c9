"""calc.harmonics against an independent nodal-admittance solution (numpy), analytic resonance orders,
published worked examples and the standards' limit values.

The nodal solution below is written separately from the module: every reactor-capacitor branch gets its own
internal node, the source is a Norton equivalent, and numpy solves Y·V = I at each order. Nothing of
calc.harmonics is used to build it.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bankbuild.calc import harmonic_duty as hd
from bankbuild.calc import harmonics as hm
from bankbuild.calc import system as sysc
from bankbuild.spec.spectra import SPECTRA

# ---------------------------------------------------------------- the independent formulation


def nodal_solve(r_s, x_s, branches, damping_r, h, inject_a, source_emf_v):
    """Solve the network at order h by nodal analysis; return (bus voltage, capacitor voltages) as complex.

    branches: list of (x_c, x_l, r) at the fundamental. Node 0 is the bus; a detuned branch adds a node between
    its reactor and its capacitor.
    """
    nodes = 1 + sum(1 for _, x_l, _ in branches if x_l > 0)
    y = np.zeros((nodes, nodes), dtype=complex)
    i = np.zeros(nodes, dtype=complex)
    y_src = 1.0 / (r_s + 1j * h * x_s)
    y[0, 0] += y_src
    i[0] += source_emf_v * y_src + inject_a
    if damping_r is not None:
        y[0, 0] += 1.0 / damping_r
    cap_node = []
    k = 1
    for x_c, x_l, r in branches:
        y_cap = 1j * h / x_c  # capacitor: 1 / (−j X_C / h)
        if x_l > 0:
            y_l = 1.0 / (r + 1j * h * x_l)
            y[0, 0] += y_l
            y[k, k] += y_l + y_cap
            y[0, k] -= y_l
            y[k, 0] -= y_l
            cap_node.append(k)
            k += 1
        else:
            y[0, 0] += y_cap
            cap_node.append(0)
    v = np.linalg.solve(y, i)
    return v[0], [v[n] for n in cap_node]


# ---------------------------------------------------------------- random networks

tuning = st.sampled_from([0.0, 0.0567, 0.07, 0.14]) | st.floats(0.02, 0.25)


@st.composite
def networks(draw, lossless=False):
    voltage = draw(st.floats(208.0, 690.0))
    s_sc = draw(st.floats(2.0, 80.0))  # MVA
    x_r = 1e9 if lossless else draw(st.floats(3.0, 20.0))
    r_s, x_s = hm.source_impedance_ohm(voltage, s_sc, x_r)
    n = draw(st.integers(1, 4))
    branches = []
    for _ in range(n):
        kvar = draw(st.floats(10.0, 600.0))
        p = draw(tuning)
        x_c = hm.capacitor_reactance_ohm(kvar, voltage)
        q = draw(st.none() | st.floats(20.0, 200.0)) if not lossless else None
        r = 0.0 if (p == 0 or q is None) else p * x_c / q
        branches.append(hm.Branch(x_c, p * x_c, r))
    damping = None if lossless else draw(st.none() | st.floats(0.2, 20.0))
    return voltage, s_sc, hm.Network(r_s, x_s, tuple(branches), damping)


PROPERTY = settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])


@PROPERTY
@given(networks(), st.integers(2, 49), st.floats(0.0, 500.0), st.floats(0.0, 20.0))
def test_bus_voltage_agrees_with_nodal_solution(case, h, inject_a, background_v):
    """Current injection and background voltage: both formulations give the same bus and capacitor voltages."""
    _, _, net = case
    branches = [(b.x_c_ohm, b.x_l_ohm, b.r_ohm) for b in net.branches]
    if any(abs(h * x_l - x_c / h) < 1e-9 and r == 0 for x_c, x_l, r in branches):
        return  # exact series resonance: no finite solution to compare
    # the bus without the bank, to turn the stated background into the source's EMF
    v_bare, _ = nodal_solve(net.source_r_ohm, net.source_x_ohm, [], net.damping_r_ohm, h, 0.0, 1.0)
    emf = background_v / abs(v_bare)
    v_i, _ = nodal_solve(net.source_r_ohm, net.source_x_ohm, branches, net.damping_r_ohm, h, inject_a, 0.0)
    v_e, caps = nodal_solve(net.source_r_ohm, net.source_x_ohm, branches, net.damping_r_ohm, h, 0.0, emf)
    ours = hd.bus_voltages(net, {h: inject_a}, {h: background_v})[h]
    assert ours == pytest.approx(abs(v_i) + abs(v_e), rel=1e-9, abs=1e-12)
    # the bank's own divider: the background alone, and the capacitor voltage it leaves on each branch
    ours_bg = hd.bus_voltages(net, {}, {h: background_v})[h]
    assert ours_bg == pytest.approx(abs(v_e), rel=1e-9, abs=1e-12)
    for branch, v_cap in zip(net.branches, caps, strict=True):
        duty = hd.capacitor_duty(branch, {h: abs(v_e)}, 1.0)
        assert duty.voltage_rms_pu == pytest.approx(abs(v_cap), rel=1e-9, abs=1e-12)
    bare_ours = hd.bus_voltages(net, {h: inject_a}, {h: background_v}, with_bank=False)[h]
    v_i0, _ = nodal_solve(net.source_r_ohm, net.source_x_ohm, [], net.damping_r_ohm, h, inject_a, 0.0)
    assert bare_ours == pytest.approx(background_v + abs(v_i0), rel=1e-9, abs=1e-12)


@PROPERTY
@given(networks(lossless=True))
def test_scan_resonance_matches_analytic_order(case):
    """Lossless: the scan's highest peak sits where 1/√(p + Q_C/S_sc) (one branch) puts it, within 0.01."""
    voltage, s_sc, net = case
    single = hm.Network(net.source_r_ohm, net.source_x_ohm, net.branches[:1])
    branch = single.branches[0]
    p = branch.x_l_ohm / branch.x_c_ohm
    q_c = voltage**2 / branch.x_c_ohm / 1000.0  # kvar of the capacitor at the supply voltage
    analytic = 1.0 / math.sqrt(p + q_c / (1000.0 * s_sc))
    if p == 0:
        assert analytic == pytest.approx(sysc.resonance_order(s_sc, q_c))  # √(S_sc/Q)
    if analytic > hm.SCAN_MAX_ORDER - 0.02:
        return
    orders = hm.scan_orders()
    peaks = hm.resonance_peaks(orders, hm.frequency_scan(single, orders))
    assert len(peaks) == 1
    assert abs(peaks[0][0] - analytic) <= hm.SCAN_STEP  # within the resolution (the grid point of larger |Z|)


@PROPERTY
@given(networks())
def test_scan_agrees_with_nodal_impedance(case):
    """|Z_bus| over the whole scan equals the nodal solution's bus voltage for 1 A injected, point by point."""
    _, _, net = case
    orders = hm.scan_orders(h_max=50.0, step=0.37)  # a coarse grid keeps the numpy loop short
    ours = hm.frequency_scan(net, orders)
    branches = [(b.x_c_ohm, b.x_l_ohm, b.r_ohm) for b in net.branches]
    for h, z in zip(orders, ours, strict=True):
        if any(abs(h * x_l - x_c / h) < 1e-9 and r == 0 for x_c, x_l, r in branches):
            continue
        v, _ = nodal_solve(net.source_r_ohm, net.source_x_ohm, branches, net.damping_r_ohm, h, 1.0, 0.0)
        assert z == pytest.approx(abs(v), rel=1e-9)


@PROPERTY
@given(networks(), st.floats(0.2, 5.0))
def test_scaled_scan_is_the_parallel_branches(case, scale):
    """k identical branches in parallel = the reference branch's admittance times k."""
    _, _, net = case
    ref = net.branches[0]
    scaled = hm.Branch(ref.x_c_ohm / scale, ref.x_l_ohm / scale, ref.r_ohm / scale)
    orders = hm.scan_orders(step=0.5)
    direct = hm.frequency_scan(hm.Network(net.source_r_ohm, net.source_x_ohm, (scaled,), net.damping_r_ohm),
                               orders)
    fast = hm.scaled_scan(hm.shunt_admittances(net, orders), hm.branch_admittances(ref, orders), scale)
    assert fast == pytest.approx(direct, rel=1e-9)


@PROPERTY
@given(networks(), st.floats(0.1, 10.0))
def test_coarse_to_fine_peaks_equal_the_full_scan(case, scale):
    """One branch (what a study scans per combination): the coarse-to-fine search finds the full scan's peaks."""
    _, _, net = case
    orders = hm.scan_orders()
    y0 = hm.shunt_admittances(net, orders)
    y1 = hm.branch_admittances(net.branches[0], orders)
    series = net.branches[0].series_resonance_order
    assert hm.scaled_peaks(y0, y1, scale, orders, series_order=series) == hm.resonance_peaks(
        orders, hm.scaled_scan(y0, y1, scale))


@PROPERTY
@given(networks())
def test_peak_with_losses_is_the_nodal_maximum(case):
    """With resistance, the scan's peaks are the local maxima of the nodal |Z| on the same 0.01 grid."""
    _, _, net = case
    orders = hm.scan_orders()
    ours = hm.resonance_peaks(orders, hm.frequency_scan(net, orders))
    h = np.array(orders)
    y = np.full(h.shape, 1.0, dtype=complex) / (net.source_r_ohm + 1j * h * net.source_x_ohm)
    if net.damping_r_ohm is not None:
        y += 1.0 / net.damping_r_ohm
    for b in net.branches:
        z_b = b.r_ohm + 1j * (h * b.x_l_ohm - b.x_c_ohm / h)
        with np.errstate(divide="ignore", invalid="ignore"):
            y += np.where(z_b == 0, np.inf, 1.0 / z_b)
    z = 1.0 / np.abs(y)
    interior = np.nonzero((z[1:-1] > z[:-2]) & (z[1:-1] > z[2:]))[0] + 1
    assert [round(o, 2) for o, _ in ours] == [round(float(h[i]), 2) for i in interior]


# ---------------------------------------------------------------- worked examples


def test_apogee_service_entrance_example():
    """1,500 kVA, 5.5 % transformer, utility 48,000 kVA short circuit, 350 kvar: the system's short-circuit
    kVA is 17,391 and h is about 7.05, "right on the 7th" (Apogee Interactive, "Capacitor banks &
    transformers cause resonance", fundamentals library, 1995-99; the site does not print h itself:
    √(17,391/350) = 7.05)."""
    s_sc = sysc.short_circuit_mva(1500.0, 5.5, 48.0)
    assert s_sc * 1000.0 == pytest.approx(17391.0, abs=1.0)  # published: 17,391 kVA
    r, x = hm.source_impedance_ohm(480.0, s_sc, 1e9)
    net = hm.Network(r, x, (hm.Branch(hm.capacitor_reactance_ohm(350.0, 480.0)),))
    orders = hm.scan_orders()
    (peak, _), = hm.resonance_peaks(orders, hm.frequency_scan(net, orders))
    assert peak == pytest.approx(7.05, abs=0.01)


def test_thirteenth_harmonic_example_1000kva():
    """1,000 kVA, 5.3 %, 480 V transformer with 100 kvar: resonance at h = 13.7; X_trf = 0.01221 Ω, X_C at 60 Hz
    2.30 Ω (Industrial Monitor Direct knowledge base, "Predicting harmonic amplification from PF capacitor
    banks", steps 1-3; a vendor's worked example, not a standard)."""
    s_sc = sysc.transformer_sc_mva(1000.0, 5.3)
    r, x = hm.source_impedance_ohm(480.0, s_sc, 1e9)
    assert x == pytest.approx(0.01221, abs=5e-6)  # published: 0.01221 Ω
    x_c = hm.capacitor_reactance_ohm(100.0, 480.0)
    assert x_c == pytest.approx(2.30, abs=0.005)  # published: 2.30 Ω
    net = hm.Network(r, x, (hm.Branch(x_c),))
    orders = hm.scan_orders()
    (peak, _), = hm.resonance_peaks(orders, hm.frequency_scan(net, orders))
    assert peak == pytest.approx(13.7, abs=0.05)  # published: 13.7 (rounded to 0.1)


def test_detuned_resonance_orders():
    """A 7 % detuned step: series resonance 1/√0.07 = 3.78 (IEC 61642 tuning, from memory; 189 Hz at 50 Hz),
    and its parallel resonance with the source below it at 1/√(p + Q_C/S_sc)."""
    branch = hm.Branch(hm.capacitor_reactance_ohm(400.0, 400.0), 0.07 * hm.capacitor_reactance_ohm(400.0, 400.0))
    assert branch.series_resonance_order == pytest.approx(3.780, abs=0.001)
    r, x = hm.source_impedance_ohm(400.0, 26.09, 1e9)
    orders = hm.scan_orders()
    z = hm.frequency_scan(hm.Network(r, x, (branch,)), orders)
    (peak, _), = hm.resonance_peaks(orders, z)
    assert peak == pytest.approx(1.0 / math.sqrt(0.07 + 400.0 / 26090.0), abs=0.005)
    # the minimum of |Z_bus| is the branch's series resonance
    assert orders[min(range(len(z)), key=z.__getitem__)] == pytest.approx(3.78, abs=0.005)


# ---------------------------------------------------------------- duty and distortion against the limits


def test_ieee18_limits_reached_exactly():
    """IEEE Std 18 (2002 and later) continuous limits: 110 % rms voltage, 120 % peak, 135 % current, 135 % kvar.
    A plain capacitor at 1.0 pu with 20 % of 5th-harmonic voltage sits at the 120 % peak limit exactly
    (1 + 0.2) and at √(1 + 1²) = 1.414 pu current (5·0.2 = 1.0 pu at the 5th): over 135 %."""
    duty = hd.capacitor_duty(hm.Branch(1.0), {1: 1.0, 5: 0.2}, 1.0)
    assert duty.voltage_peak_pu == pytest.approx(1.20)  # IEEE 18 peak limit 120 %
    assert duty.voltage_rms_pu == pytest.approx(math.sqrt(1.04))
    assert duty.current_rms_pu == pytest.approx(math.sqrt(2.0))
    assert duty.kvar_pu == pytest.approx(1.0 + 0.2 * 1.0)


def test_detuned_capacitor_sees_raised_fundamental():
    """A 7 % detuned step: the capacitor sees U/(1 − p) at the fundamental (IEC 61642, from memory):
    400 V → 430.1 V."""
    branch = hm.Branch(1.0, 0.07)
    duty = hd.capacitor_duty(branch, {1: 400.0}, 400.0)
    assert duty.voltage_rms_pu * 400.0 == pytest.approx(430.1, abs=0.05)


def test_thd_of_ieee519_limit_spectrum():
    """IEEE 519-2014 Table 1 (from memory), bus ≤ 1 kV: 5 % individual, 8 % THD. Five orders at 3.58 % each
    make 8.0 % THD while each stays under the 5 % individual limit."""
    spectrum = {h: 8.0 / math.sqrt(5) for h in (5, 7, 11, 13, 17)}
    assert hd.thd_pct(spectrum, 100.0) == pytest.approx(8.0)
    assert max(spectrum.values()) < 5.0


def test_damping_load_lowers_the_peak():
    """A resistive load at the bus damps the resonance: the peak |Z| falls, the order barely moves."""
    r, x = hm.source_impedance_ohm(480.0, 20.0, 8.0)
    branch = hm.Branch(hm.capacitor_reactance_ohm(400.0, 480.0))
    orders = hm.scan_orders()
    (h0, z0), = hm.resonance_peaks(orders, hm.frequency_scan(hm.Network(r, x, (branch,)), orders))
    damped = hm.Network(r, x, (branch,), hm.damping_resistance_ohm(300.0, 480.0))
    (h1, z1), = hm.resonance_peaks(orders, hm.frequency_scan(damped, orders))
    assert z1 < z0 / 2
    assert h1 == pytest.approx(h0, abs=0.2)


def test_amplification_below_and_above_resonance():
    """Below the parallel resonance the bank amplifies (> 1), well above it it shunts harmonics (< 1)."""
    r, x = hm.source_impedance_ohm(480.0, 20.0, 8.0)
    net = hm.Network(r, x, (hm.Branch(hm.capacitor_reactance_ohm(400.0, 480.0)),))  # h_r = √50 = 7.07
    assert hm.amplification(net, 5.0) > 1.5
    assert hm.amplification(net, 13.0) < 0.5


def test_spectra_are_declared_with_basis():
    """Every typical spectrum names its basis, lists ascending non-triplen orders and sane percentages."""
    assert set(SPECTRA) == {"six_pulse", "six_pulse_choke", "twelve_pulse", "switch_mode"}
    for spectrum in SPECTRA.values():
        assert "common practice" in spectrum.basis or "from memory" in spectrum.basis
        orders = [h for h, _ in spectrum.current_pct]
        assert orders == sorted(orders) and all(h % 3 for h in orders)
        assert all(0 < pct <= 100 for _, pct in spectrum.current_pct)
    # trade-facts.md, Harmonics: six-pulse with a DC choke, h5 30-40 % (common practice)
    assert 30.0 <= SPECTRA["six_pulse_choke"].orders_pct()[5] <= 40.0


def test_bad_input_is_refused():
    with pytest.raises(ValueError, match="x_c_ohm"):
        hm.Branch(0.0)
    with pytest.raises(ValueError, match="x_r"):
        hm.source_impedance_ohm(480.0, 20.0, float("nan"))
    with pytest.raises(ValueError, match="scale"):
        hm.scaled_scan([1j], [1j], -1.0)
