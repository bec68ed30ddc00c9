"""Harmonic study arithmetic: the bus's driving-point impedance against harmonic order and its resonances (the
harmonic voltages, THD and capacitor duty are in :mod:`bankbuild.calc.harmonic_duty`).

The network is one phase of the balanced three-phase system, wye equivalent, with every reactance given at the
fundamental frequency f1 [Ω]:

- the source (transformer, plus the utility source when known): Z_s(h) = R_s + j·h·X_s, R_s constant with h;
- each capacitor branch (a step): Z_b(h) = R_b + j·(h·X_L − X_C/h) (X_L = 0 and R_b = 0 for a plain step);
- an optional resistive load R_d that damps resonance (constant with h);
- the plant's harmonic currents injected at the bus, the background voltage as a source behind Z_s.

Balanced triplen orders are zero-sequence: a three-wire bank (delta, or ungrounded wye) neither carries nor
amplifies them, so studies feed this module positive- and negative-sequence orders only.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ._domain import finite_nonneg as _finite_nonneg
from ._domain import finite_pos as _finite_pos

SCAN_MAX_ORDER = 50.0
"""Highest harmonic order of a frequency scan [-] (IEEE 519 sums distortion to the 50th)."""
SCAN_STEP = 0.01
"""Resolution of a frequency scan in harmonic order [-]."""


@dataclass(frozen=True)
class Branch:
    """One capacitor branch (a step, or several identical steps in parallel), per phase, wye equivalent.

    Attributes
    ----------
    x_c_ohm : float
        Capacitor reactance at the fundamental [Ω]
    x_l_ohm : float
        Series reactor reactance at the fundamental; 0 for a plain step [Ω]
    r_ohm : float
        Series resistance (the reactor's losses); 0 when neglected [Ω]
    """

    x_c_ohm: float
    x_l_ohm: float = 0.0
    r_ohm: float = 0.0

    def __post_init__(self) -> None:
        _finite_pos("x_c_ohm", self.x_c_ohm)
        _finite_nonneg("x_l_ohm", self.x_l_ohm)
        _finite_nonneg("r_ohm", self.r_ohm)

    def impedance(self, h: float) -> complex:
        """Z_b(h) = R_b + j·(h·X_L − X_C/h) [Ω] at harmonic order ``h``.

        >>> Branch(10.0, 0.7).impedance(5.0)
        1.5j
        """
        return complex(self.r_ohm, h * self.x_l_ohm - self.x_c_ohm / h)

    @property
    def series_resonance_order(self) -> float | None:
        """Order at which the branch is in series resonance, √(X_C/X_L) = 1/√p; None for a plain step.

        >>> round(Branch(1.0, 0.07).series_resonance_order, 3)
        3.78
        """
        return math.sqrt(self.x_c_ohm / self.x_l_ohm) if self.x_l_ohm > 0 else None


@dataclass(frozen=True)
class Network:
    """The bus seen from the harmonic sources: source, capacitor branches in service, optional damping load.

    Attributes
    ----------
    source_r_ohm, source_x_ohm : float
        Source resistance and reactance at the fundamental, per phase [Ω]
    branches : tuple of Branch
        Capacitor branches in service (empty: the bus without the bank)
    damping_r_ohm : float or None
        Resistive load at the bus, per phase wye equivalent; None for none [Ω]
    """

    source_r_ohm: float
    source_x_ohm: float
    branches: tuple[Branch, ...] = ()
    damping_r_ohm: float | None = None

    def __post_init__(self) -> None:
        _finite_nonneg("source_r_ohm", self.source_r_ohm)
        _finite_pos("source_x_ohm", self.source_x_ohm)
        if self.damping_r_ohm is not None:
            _finite_pos("damping_r_ohm", self.damping_r_ohm)

    def without_bank(self) -> Network:
        """The same bus with no capacitor branch in service."""
        return Network(self.source_r_ohm, self.source_x_ohm, (), self.damping_r_ohm)


def source_impedance_ohm(voltage_v: float, short_circuit_mva: float, x_r: float) -> tuple[float, float]:
    """Resistance and reactance of a source from its short-circuit power and X/R ratio.

    Parameters
    ----------
    voltage_v : float
        Line-to-line voltage of the bus [V]
    short_circuit_mva : float
        Short-circuit power of the source at the bus [MVA]
    x_r : float
        Ratio of reactance to resistance [-]

    Returns
    -------
    tuple of float
        (R_s, X_s) per phase at the fundamental [Ω]

    Notes
    -----
    X_s = V² / S_sc and R_s = X_s / (X/R). Taking the whole short-circuit impedance as reactance keeps the
    parallel resonance at √(S_sc/Q) exactly, the textbook estimate; the error is below 1 % for X/R ≥ 7.

    Examples
    --------
    >>> [round(v * 1000, 3) for v in source_impedance_ohm(480.0, 26.09, 8.0)]
    [1.104, 8.831]

    References
    ----------
    .. [1] IEEE Std 399-1997 (Brown Book), harmonic analysis: source impedance from the short-circuit level
       (clause from memory).
    """
    _finite_pos("voltage_v", voltage_v)
    _finite_pos("short_circuit_mva", short_circuit_mva)
    _finite_pos("x_r", x_r)
    x_ohm = voltage_v**2 / (short_circuit_mva * 1e6)
    return x_ohm / x_r, x_ohm


def capacitor_reactance_ohm(reactive_kvar: float, voltage_v: float) -> float:
    """Per-phase (wye-equivalent) reactance of a three-phase capacitor bank at the fundamental.

    Parameters
    ----------
    reactive_kvar : float
        Capacitor output at ``voltage_v``, three-phase [kvar]
    voltage_v : float
        Line-to-line voltage [V]

    Returns
    -------
    float
        X_C [Ω]

    Notes
    -----
    X_C = V² / (1000 · Q)

    Examples
    --------
    >>> round(capacitor_reactance_ohm(300.0, 480.0), 3)
    0.768
    """
    _finite_pos("reactive_kvar", reactive_kvar)
    _finite_pos("voltage_v", voltage_v)
    return voltage_v**2 / (1000.0 * reactive_kvar)


def damping_resistance_ohm(power_kw: float, voltage_v: float) -> float:
    """Per-phase (wye-equivalent) resistance of a resistive load that damps resonance.

    Parameters
    ----------
    power_kw : float
        Active power of the resistive load, three-phase [kW]
    voltage_v : float
        Line-to-line voltage [V]

    Returns
    -------
    float
        R_d = V² / (1000 · P) [Ω]

    Examples
    --------
    >>> round(damping_resistance_ohm(200.0, 480.0), 3)
    1.152
    """
    _finite_pos("power_kw", power_kw)
    _finite_pos("voltage_v", voltage_v)
    return voltage_v**2 / (1000.0 * power_kw)


def source_impedance(network: Network, h: float) -> complex:
    """Z_s(h) = R_s + j·h·X_s [Ω].

    >>> source_impedance(Network(0.001, 0.008), 5.0)
    (0.001+0.04j)
    """
    return complex(network.source_r_ohm, h * network.source_x_ohm)


def bus_impedance(network: Network, h: float) -> complex:
    """Driving-point impedance of the bus at order ``h``: source, branches and damping load in parallel [Ω].

    Parameters
    ----------
    network : Network
        The bus
    h : float
        Harmonic order, > 0 [-]

    Returns
    -------
    complex
        Z_bus(h) [Ω]; 0 at a branch's exact series resonance with R_b = 0

    Notes
    -----
    Y_bus = 1/Z_s(h) + Σ 1/Z_b(h) + 1/R_d; Z_bus = 1/Y_bus.

    Examples
    --------
    Plain 300 kvar at 480 V on a 26.09 MVA source (X/R 8): the resonance sits at √(26090/300) = 9.33, where
    the bus impedance is about h·X/R = 75 times the source's (R_s constant with h).

    >>> r, x = source_impedance_ohm(480.0, 26.09, 8.0)
    >>> net = Network(r, x, (Branch(capacitor_reactance_ohm(300.0, 480.0)),))
    >>> round(abs(bus_impedance(net, 9.33)) / abs(source_impedance(net, 9.33)), 1)
    74.4
    """
    _finite_pos("h", h)
    y = 1.0 / complex(network.source_r_ohm, h * network.source_x_ohm)
    for branch in network.branches:
        z = complex(branch.r_ohm, h * branch.x_l_ohm - branch.x_c_ohm / h)
        if z == 0:
            return 0j
        y += 1.0 / z
    if network.damping_r_ohm is not None:
        y += 1.0 / network.damping_r_ohm
    return 1.0 / y


def amplification(network: Network, h: float) -> float:
    """How much the bank raises the bus impedance at order ``h``: |Z_bus(h)| / |Z_bus without bank(h)| [-].

    Without a damping load the denominator is |Z_s(h)|. Above 1 the bank amplifies both the plant's harmonic
    voltage drop and the background voltage at that order.

    >>> net = Network(0.0, 0.01, (Branch(0.25),))
    >>> round(amplification(net, 3.0), 3), round(amplification(net, 7.0), 3)
    (1.562, 1.042)
    """
    return abs(bus_impedance(network, h)) / abs(bus_impedance(network.without_bank(), h))


def scan_orders(h_max: float = SCAN_MAX_ORDER, step: float = SCAN_STEP) -> list[float]:
    """The harmonic orders of a frequency scan: 1, 1 + step, … h_max.

    >>> o = scan_orders(); len(o), o[1], o[-1]
    (4901, 1.01, 50.0)
    """
    _finite_pos("step", step)
    if not (math.isfinite(h_max) and h_max > 1.0):
        raise ValueError(f"h_max must be a finite number > 1, got {h_max!r}")
    n = int(round((h_max - 1.0) / step))
    return [round(1.0 + i * step, 10) for i in range(n + 1)]


def frequency_scan(network: Network, orders: list[float]) -> list[float]:
    """|Z_bus(h)| at each order of ``orders`` [Ω]; ``inf`` at an exact lossless parallel resonance.

    >>> net = Network(0.0, 0.01, (Branch(0.25),))
    >>> [round(z, 4) for z in frequency_scan(net, [1.0, 5.0])]
    [0.0104, inf]
    """
    total = shunt_admittances(network, orders)
    for branch in network.branches:
        total = [a + b for a, b in zip(total, branch_admittances(branch, orders), strict=True)]
    return [1.0 / abs(y) if y != 0 else math.inf for y in total]


def shunt_admittances(network: Network, orders: list[float]) -> list[complex]:
    """Admittance of the bus without the bank at each order: 1/Z_s(h) + 1/R_d [S].

    >>> shunt_admittances(Network(0.0, 0.5, (), 2.0), [1.0, 2.0])
    [(0.5-2j), (0.5-1j)]
    """
    r_s, x_s = network.source_r_ohm, network.source_x_ohm
    g_d = 0.0 if network.damping_r_ohm is None else 1.0 / network.damping_r_ohm
    return [1.0 / complex(r_s, h * x_s) + g_d for h in orders]


def branch_admittances(branch: Branch, orders: list[float]) -> list[complex]:
    """Admittance of a branch at each order, 1/Z_b(h) [S]; ``inf`` at its exact lossless series resonance.

    >>> [abs(y) for y in branch_admittances(Branch(4.0, 1.0), [1.0, 2.0])]
    [0.3333333333333333, inf]
    """
    r_b, x_l, x_c = branch.r_ohm, branch.x_l_ohm, branch.x_c_ohm
    out = []
    for h in orders:
        z = complex(r_b, h * x_l - x_c / h)
        out.append(1.0 / z if z != 0 else complex(math.inf, 0.0))
    return out


def scaled_scan(shunt_y: list[complex], unit_y: list[complex], scale: float) -> list[float]:
    """|Z_bus| over a scan for ``scale`` identical branches in parallel: 1 / |Y_0 + scale·Y_1| [Ω].

    Parameters
    ----------
    shunt_y : list of complex
        The bus without the bank, from :func:`shunt_admittances` [S]
    unit_y : list of complex
        One reference branch, from :func:`branch_admittances` [S]
    scale : float
        How many reference branches are in service (a fraction is fine: kvar in service / reference kvar) [-]

    Returns
    -------
    list of float
        |Z_bus(h)| at each order [Ω]

    Notes
    -----
    Branches of one tuning factor p and one reactor quality X_L/R scale together: k times the kvar is the
    reference branch's impedance divided by k, so its admittance is k·Y_1. A study then builds Y_0 and Y_1 once
    per bank and costs one multiply-add per point and combination.

    Examples
    --------
    >>> net = Network(0.0, 0.01, (Branch(0.125),))
    >>> orders = [2.0, 3.0]
    >>> [round(z, 5) for z in scaled_scan(shunt_admittances(net, orders), branch_admittances(Branch(0.25), orders),
    ...                                   2.0)]
    [0.02941, 0.10714]
    >>> [round(z, 5) for z in frequency_scan(net, orders)]
    [0.02941, 0.10714]
    """
    if not (math.isfinite(scale) and scale >= 0.0):
        raise ValueError(f"scale must be a finite number >= 0, got {scale!r}")
    try:  # the common case in one comprehension (a study runs this for every combination)
        return [1.0 / abs(a + scale * b) for a, b in zip(shunt_y, unit_y, strict=True)]
    except ZeroDivisionError:  # an exact lossless resonance on a scan point
        out = []
        for a, b in zip(shunt_y, unit_y, strict=True):
            y = a + scale * b
            out.append(1.0 / abs(y) if y != 0 else math.inf)
        return out


def resonance_peaks(orders: list[float], magnitudes: list[float]) -> list[tuple[float, float]]:
    """The parallel resonances of a scan: each interior local maximum of |Z| as (order, |Z|).

    A flat top of equal points counts once, at its first point. A rise that runs into the end of the scan is
    not a resonance within it.

    >>> resonance_peaks([1, 2, 3, 4, 5], [1.0, 3.0, 2.0, 2.5, 4.0])
    [(2, 3.0)]
    """
    if len(orders) != len(magnitudes):
        raise ValueError("orders and magnitudes must have the same length")
    z = magnitudes
    n = len(z)
    # candidates in one pass (a rise onto a point not lower than the next), then each checked along its flat top
    starts = [i for i, (a, b, c) in enumerate(zip(z, z[1:], z[2:], strict=False), start=1) if a < b >= c]
    peaks = []
    for i in starts:
        j = i
        while j < n - 1 and z[j + 1] == z[i]:
            j += 1
        if j < n - 1 and z[j + 1] < z[i]:
            peaks.append((orders[i], z[i]))
    return peaks


def scaled_peaks(shunt_y: list[complex], unit_y: list[complex], scale: float, orders: list[float],
                 stride: int = 10, series_order: float | None = None) -> list[tuple[float, float]]:
    """The resonance peaks of :func:`scaled_scan` found coarse-to-fine, without evaluating every point.

    Parameters
    ----------
    shunt_y, unit_y : list of complex
        As for :func:`scaled_scan`, over ``orders`` [S]
    scale : float
        Reference branches in service [-]
    orders : list of float
        The fine scan's orders, evenly spaced (:func:`scan_orders`) [-]
    stride : int
        Coarse step in fine points [-]
    series_order : float, optional
        The branch's series resonance 1/√p, searched around always: a parallel resonance can sit closer to it
        than a stride, both between two coarse points [-]

    Returns
    -------
    list of (float, float)
        (order, |Z|) of each peak on the fine grid, as :func:`resonance_peaks` gives for the full scan

    Notes
    -----
    |Z| is evaluated at every ``stride``-th order; around each coarse local maximum or minimum (and a coarse end
    that is higher than its neighbour) the fine points within one stride are evaluated and their local maxima
    kept, and so around ``series_order``. The result is the full scan's as long as two peaks are more than a
    stride apart, which holds for a source with one capacitor branch: one parallel resonance, and a tuned
    branch's series resonance next to it.

    Examples
    --------
    >>> net = Network(0.0001, 0.01)
    >>> orders = scan_orders()
    >>> y0, y1 = shunt_admittances(net, orders), branch_admittances(Branch(0.25), orders)
    >>> scaled_peaks(y0, y1, 1.0, orders) == resonance_peaks(orders, scaled_scan(y0, y1, 1.0))
    True
    """
    if not (math.isfinite(scale) and scale >= 0.0):
        raise ValueError(f"scale must be a finite number >= 0, got {scale!r}")
    if stride < 1:
        raise ValueError(f"stride must be >= 1, got {stride!r}")
    n = len(orders)

    def z_at(i: int) -> float:
        y = shunt_y[i] + scale * unit_y[i]
        return 1.0 / abs(y) if y != 0 else math.inf

    coarse = list(range(0, n, stride))
    if coarse[-1] != n - 1:
        coarse.append(n - 1)
    try:
        zc = [1.0 / abs(shunt_y[i] + scale * unit_y[i]) for i in coarse]
    except ZeroDivisionError:
        zc = [z_at(i) for i in coarse]
    # coarse maxima, and coarse minima: a tuned branch's series resonance (a notch) can hide a peak just below it
    spots = [k for k in range(1, len(zc) - 1) if zc[k - 1] < zc[k] >= zc[k + 1] or zc[k - 1] > zc[k] <= zc[k + 1]]
    if len(zc) > 1 and zc[0] >= zc[1]:
        spots.append(0)
    if len(zc) > 1 and zc[-1] >= zc[-2]:
        spots.append(len(zc) - 1)
    centres = [coarse[k] for k in spots]
    if series_order is not None and orders[0] <= series_order <= orders[-1]:
        centres.append(round((series_order - orders[0]) / (orders[1] - orders[0])))  # evenly spaced orders
    found: dict[int, float] = {}
    for centre in centres:
        lo = max(0, centre - stride - 1)
        hi = min(n - 1, centre + stride + 1)
        z = [z_at(i) for i in range(lo, hi + 1)]
        for j in range(1, len(z) - 1):
            if z[j - 1] < z[j] >= z[j + 1] and 0 < lo + j < n - 1:
                m = j
                while m < len(z) - 1 and z[m + 1] == z[j]:
                    m += 1
                if m < len(z) - 1 and z[m + 1] < z[j]:
                    found[lo + j] = z[j]
    return [(orders[i], found[i]) for i in sorted(found)]
