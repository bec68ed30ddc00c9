"""Harmonic voltages at the bus with and without the bank, total harmonic distortion, and the duty of the
capacitors and the current of the branches carrying harmonics. The network and its impedances are in
:mod:`bankbuild.calc.harmonics`; per phase, wye equivalent, as there.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ._domain import finite_nonneg as _finite_nonneg
from ._domain import finite_pos as _finite_pos
from .harmonics import Branch, Network, bus_impedance


def bus_voltages(network: Network, current_a: dict[int, float], background_v: dict[int, float],
                 with_bank: bool = True) -> dict[int, float]:
    """Harmonic phase voltage at the bus at each order, with or without the bank.

    Parameters
    ----------
    network : Network
        The bus with the bank's branches in service
    current_a : dict of int to float
        Order -> harmonic current the plant injects at the bus, rms [A]
    background_v : dict of int to float
        Order -> phase voltage at the bus without the bank and without the plant's harmonic currents (the
        utility's share), rms [V]
    with_bank : bool
        False gives the bus without the bank

    Returns
    -------
    dict of int to float
        Order -> harmonic phase voltage at the bus, rms [V]

    Notes
    -----
    With the background as a source E_h behind Z_s, the bus voltage is the Norton sum
    V_h = (E_h/Z_s + I_h)·Z_bus. The stated background V_bg = E_h·Z_bus0/Z_s is measured without the bank, so
    V_h = V_bg·Z_bus/Z_bus0 + I_h·Z_bus: the background divides between the source and the bank. The phase
    angle between the two parts is not known, so their magnitudes add (the worst case):
    |V_h| = |V_bg|·|Z_bus|/|Z_bus0| + |I_h|·|Z_bus|.

    Examples
    --------
    >>> net = Network(0.0, 0.01, (Branch(0.25),))
    >>> {h: round(v, 3) for h, v in bus_voltages(net, {7: 10.0}, {7: 1.0}).items()}
    {7: 1.771}
    >>> {h: round(v, 3) for h, v in bus_voltages(net, {7: 10.0}, {7: 1.0}, with_bank=False).items()}
    {7: 1.7}
    """
    bare = network.without_bank()
    out = {}
    for h in sorted(set(current_a) | set(background_v)):
        _finite_nonneg(f"current_a[{h}]", current_a.get(h, 0.0))
        _finite_nonneg(f"background_v[{h}]", background_v.get(h, 0.0))
        z0 = abs(bus_impedance(bare, h))
        z = abs(bus_impedance(network, h)) if with_bank else z0
        out[h] = background_v.get(h, 0.0) * z / z0 + current_a.get(h, 0.0) * z
    return out


def thd_pct(harmonic_v: dict[int, float], fundamental_v: float) -> float:
    """Total harmonic distortion in percent of the fundamental.

    Parameters
    ----------
    harmonic_v : dict of int to float
        Order (≥ 2) -> harmonic rms value, any unit
    fundamental_v : float
        The fundamental (here the nominal value), same unit

    Returns
    -------
    float
        THD = 100 · √(Σ_{h≥2} V_h²) / V_1 [%]

    Examples
    --------
    >>> round(thd_pct({5: 3.0, 7: 4.0}, 100.0), 3)
    5.0

    References
    ----------
    .. [1] IEEE Std 519-2014, clause 3 (definitions), total harmonic distortion (from memory).
    """
    _finite_pos("fundamental_v", fundamental_v)
    return 100.0 * math.sqrt(sum(v * v for h, v in harmonic_v.items() if h >= 2)) / fundamental_v


@dataclass(frozen=True)
class CapacitorDuty:
    """The duty of a capacitor carrying harmonics, per unit of its rating (IEEE Std 18 definitions).

    Attributes
    ----------
    voltage_rms_pu : float
        √(Σ V_h²) / V_r [-]
    voltage_peak_pu : float
        Σ V_h / V_r: the peaks added arithmetically, the worst case [-]
    current_rms_pu : float
        √(Σ I_h²) / I_r [-]
    kvar_pu : float
        Σ V_h · I_h / Q_r [-]
    """

    voltage_rms_pu: float
    voltage_peak_pu: float
    current_rms_pu: float
    kvar_pu: float


def capacitor_duty(branch: Branch, bus_v: dict[int, float], rated_voltage_v: float,
                   frequency_ratio: float = 1.0, capacitance_pu: float = 1.0) -> CapacitorDuty:
    """Voltage, current and kvar of the capacitor in a branch, per unit of its rating.

    Parameters
    ----------
    branch : Branch
        The branch the capacitor sits in (its X_C from the actual capacitance)
    bus_v : dict of int to float
        Order -> phase voltage at the bus, rms, including the fundamental at order 1 [V]
    rated_voltage_v : float
        The capacitor's rated voltage, phase value in the same wye-equivalent system as ``bus_v`` [V]
    frequency_ratio : float
        Supply frequency / the capacitor's rated frequency [-]
    capacitance_pu : float
        Actual capacitance / rated capacitance (tolerance, ageing) [-]

    Returns
    -------
    CapacitorDuty

    Notes
    -----
    Across the capacitor V_C,h = V_h · (X_C/h) / |Z_b(h)| (V_C,h = V_h for a plain step; V/(1 − p) at the
    fundamental of a detuned step). With I_r = V_r/X_C,r the current is
    I_h / I_r = (V_C,h / V_r) · h · (f/f_r) · (C/C_r). kvar = Σ V_C,h · I_h.

    Examples
    --------
    A plain capacitor at rated voltage with 5 % of 5th-harmonic voltage: current √(1 + 0.25²) = 1.031 pu.

    >>> d = capacitor_duty(Branch(1.0), {1: 277.0, 5: 13.85}, 277.0)
    >>> round(d.voltage_rms_pu, 4), round(d.voltage_peak_pu, 3), round(d.current_rms_pu, 4), round(d.kvar_pu, 4)
    (1.0012, 1.05, 1.0308, 1.0125)

    References
    ----------
    .. [1] IEEE Std 18-2012, shunt power capacitors: continuous operating limits with harmonics (clause from
       memory); trade-facts "Capacitor duty with harmonics".
    """
    _finite_pos("rated_voltage_v", rated_voltage_v)
    _finite_pos("frequency_ratio", frequency_ratio)
    _finite_pos("capacitance_pu", capacitance_pu)
    v2 = peak = i2 = kvar = 0.0
    for h, v in bus_v.items():
        _finite_nonneg(f"bus_v[{h}]", v)
        z = abs(branch.impedance(h))
        v_c = v * (branch.x_c_ohm / h) / z / rated_voltage_v if z > 0 else math.inf
        i_c = v_c * h * frequency_ratio * capacitance_pu
        v2 += v_c * v_c
        peak += v_c
        i2 += i_c * i_c
        kvar += v_c * i_c
    return CapacitorDuty(math.sqrt(v2), peak, math.sqrt(i2), kvar)


def branch_current_rms_a(branch: Branch, bus_v: dict[int, float]) -> float:
    """RMS current through a branch (the step's line current, reactor and fuse current) [A].

    Parameters
    ----------
    branch : Branch
        The branch
    bus_v : dict of int to float
        Order -> phase voltage at the bus, rms, including the fundamental at order 1 [V]

    Returns
    -------
    float
        I_rms = √(Σ (V_h / |Z_b(h)|)²) [A]

    Examples
    --------
    >>> round(branch_current_rms_a(Branch(2.0), {1: 277.0, 5: 13.85}), 2)
    142.76
    """
    total = 0.0
    for h, v in bus_v.items():
        z = abs(branch.impedance(h))
        total += (v / z) ** 2 if z > 0 else math.inf
    return math.sqrt(total)
