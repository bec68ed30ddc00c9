"""Tests for bankbuild.calc.system: published inrush constants, electricpy back-to-back, identities."""

import math

import pytest
from electricpy import passive  # outside oracle, imported once (slow)
from hypothesis import given
from hypothesis import strategies as st

from bankbuild.calc import capacitor, system

# --- published values -------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("frequency_hz", "constant"),
    [
        (60.0, 1747.0),  # Source: trade-facts — IEEE C37.012 back-to-back formula, 60 Hz constant 1747
        (50.0, 1917.0),  # Source: trade-facts — same formula, 50 Hz constant ≈ 1917
    ],
)
def test_back_to_back_matches_published_constants(frequency_hz, constant):
    # I_pk = K · √(V_kV · I1 · I2 / (L_µH · (I1 + I2))); the general form gives K ≈ 1750 at 60 Hz.
    v_kv, i1, i2, l_uh = 0.48, 120.0, 360.0, 15.0
    general = system.back_to_back_inrush_peak_a(v_kv * 1000.0, i1, i2, l_uh, frequency_hz)
    published = constant * math.sqrt(v_kv * i1 * i2 / (l_uh * (i1 + i2)))
    assert general == pytest.approx(published, rel=0.005)


def test_resonance_order_textbook_form():
    # Source: trade-facts — h_r = √(S_sc/Q_c) ≈ √(kVA_tx·100/(Z%·kvar)).
    kva, z, q = 1500.0, 5.75, 400.0
    s_sc = system.short_circuit_mva(kva, z)
    assert system.resonance_order(s_sc, q) == pytest.approx(math.sqrt(kva * 100.0 / (z * q)), rel=1e-12)


def test_voltage_rise_textbook_form():
    # Source: trade-facts — ΔV% ≈ kvar·Z%/kVA_tx: 300 kvar on a 1000 kVA, 5.75 % transformer -> 1.725 %.
    assert system.voltage_rise_pct(300.0, 1000.0, 5.75) == pytest.approx(1.725, abs=1e-9)


# --- electricpy 0.3.0 as an outside oracle ----------------------------------------------------------------


@pytest.mark.parametrize(
    ("v", "i1", "i2", "l_uh", "f"),
    [(480.0, 120.3, 240.6, 10.0, 60.0), (400.0, 72.2, 288.7, 20.0, 50.0), (690.0, 50.0, 50.0, 5.0, 50.0)],
)
def test_back_to_back_matches_electricpy(v, i1, i2, l_uh, f):
    # Source: electricpy 0.3.0 passive.capbacktoback(C1, C2, Lm, VLL=...) (VLN-only form is known-broken).
    # Per-phase (wye equivalent) capacitance of each step from its line current: C = I / (ω·V_ph).
    omega = 2.0 * math.pi * f
    v_ph = v / math.sqrt(3.0)
    c1, c2 = i1 / (omega * v_ph), i2 / (omega * v_ph)
    imax, ifreq = passive.capbacktoback(c1, c2, l_uh * 1e-6, VLL=v)
    assert system.back_to_back_inrush_peak_a(v, i1, i2, l_uh, f) == pytest.approx(imax, rel=1e-9)
    c_eq_uf = c1 * c2 / (c1 + c2) * 1e6
    assert system.inrush_frequency_hz(l_uh, c_eq_uf) == pytest.approx(ifreq, rel=1e-9)


# --- circuit identities -----------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("kva", "z", "q", "v", "f"), [(1000.0, 5.75, 300.0, 480.0, 60.0), (630.0, 4.0, 200.0, 400.0, 50.0)]
)
def test_resonance_order_from_l_and_c(kva, z, q, v, f):
    # Supply inductance from the short-circuit power, bank capacitance per phase (wye): their LC resonance
    # divided by f1 is the resonance order.
    omega = 2.0 * math.pi * f
    s_sc = system.short_circuit_mva(kva, z)
    l_uh = (v**2 / (s_sc * 1e6)) / omega * 1e6
    c_uf = capacitor.capacitance_uf_per_leg(q, v, f, "wye")
    lc_order = system.inrush_frequency_hz(l_uh, c_uf) / f
    assert system.resonance_order(s_sc, q) == pytest.approx(lc_order, rel=1e-12)


@pytest.mark.parametrize(("kva", "z", "q", "v"), [(1000.0, 5.75, 300.0, 480.0), (630.0, 4.0, 200.0, 400.0)])
def test_voltage_rise_from_reactance(kva, z, q, v):
    # ΔV = X_s · I_c with X_s = Z%/100 · V²/S_tx (all reactance) and I_c = Q/(√3·V).
    x_s = z / 100.0 * v**2 / (kva * 1000.0)
    i_c = capacitor.line_current_a(q, v)
    rise_pct = 100.0 * x_s * i_c / (v / math.sqrt(3.0))
    assert system.voltage_rise_pct(q, kva, z) == pytest.approx(rise_pct, rel=1e-12)


def test_energising_inrush_from_l_and_c():
    # Source: trade-facts — I_pk ≈ √2·√(I_sc·I_1) (from memory, C37.012-style). Identity check: a source of
    # inductance L_s = V_ph/(ω·I_sc) charging C = I_1/(ω·V_ph) from the crest: I_pk = √2·V_ph·√(C/L_s).
    v, f, i_sc, i1 = 480.0, 60.0, 20917.0, 360.8
    omega, v_ph = 2.0 * math.pi * f, v / math.sqrt(3.0)
    l_s, c = v_ph / (omega * i_sc), i1 / (omega * v_ph)
    expected = math.sqrt(2) * v_ph * math.sqrt(c / l_s)
    assert system.energising_inrush_peak_a(i_sc, i1) == pytest.approx(expected)


def test_short_circuit_series_combination():
    s_tx = system.transformer_sc_mva(1000.0, 5.75)
    assert s_tx == pytest.approx(1000.0 / 0.0575 / 1000.0)
    assert system.short_circuit_mva(1000.0, 5.75) == s_tx
    both = system.short_circuit_mva(1000.0, 5.75, 250.0)
    assert both == pytest.approx(1.0 / (1.0 / s_tx + 1.0 / 250.0))
    assert both < s_tx
    # I_sc of a 1000 kVA, 5.75 % transformer at 480 V: I_rated / Z = 1202.8 A / 0.0575.
    i_rated = 1000e3 / (math.sqrt(3.0) * 480.0)
    assert system.short_circuit_current_a(s_tx, 480.0) == pytest.approx(i_rated / 0.0575)


@given(s_sc=st.floats(min_value=1.0, max_value=500.0), q=st.floats(min_value=5.0, max_value=5000.0))
def test_more_kvar_lowers_resonance(s_sc, q):
    assert system.resonance_order(s_sc, 2.0 * q) < system.resonance_order(s_sc, q)


# --- near_harmonic ----------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("order", "expected"),
    [
        (4.5, 5),
        (5.5, 5),
        (4.49, None),
        (5.51, None),
        (6.0, None),
        (6.3, 7),
        (7.7, 7),
        (12.0, 13),  # 11th and 13th bands overlap (11.7–12.1); the relatively closer one wins
        (11.5, 11),
        (2.0, None),
    ],
)
def test_near_harmonic_default_band(order, expected):
    assert system.near_harmonic(order) == expected


def test_near_harmonic_custom_set():
    assert system.near_harmonic(3.1, harmonics=(3, 5), band=0.05) == 3
    assert system.near_harmonic(3.2, harmonics=(3, 5), band=0.05) is None


@pytest.mark.parametrize(
    "call",
    [
        lambda: system.transformer_sc_mva(0.0, 5.75),
        lambda: system.transformer_sc_mva(1000.0, -5.0),
        lambda: system.short_circuit_mva(1000.0, 5.75, 0.0),
        lambda: system.resonance_order(17.0, 0.0),
        lambda: system.short_circuit_current_a(17.0, -480.0),
        lambda: system.back_to_back_inrush_peak_a(480.0, 100.0, 100.0, 0.0, 60.0),
        lambda: system.inrush_frequency_hz(10.0, 0.0),
        lambda: system.near_harmonic(5.0, band=1.5),
        lambda: system.near_harmonic(float("nan")),
    ],
)
def test_impossible_input_raises(call):
    with pytest.raises(ValueError):
        call()
