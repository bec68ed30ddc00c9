"""Results of the harmonic study of a bank: frozen, read by the reports and dumped as the bank's ``harmonics`` key.

Percentages are of the nominal phase voltage; per-unit values are on the capacitor units' ratings. Orders in
mappings are keyed ``h5``, ``h7`` … as in the spec.
"""

from __future__ import annotations

from bankbuild.results.base import Frozen as _Frozen


class HarmonicCombination(_Frozen):
    """One distinct step combination the controller can switch in, studied at the nominal values."""

    steps: list[int]
    kvar: float  # delivered at the supply
    resonance_order: float | None  # the highest parallel-resonance peak of |Z_bus| in 1-50; None: none there
    resonance_orders: list[float]  # every peak in 1-50
    peak_impedance_ohm: float | None  # |Z_bus| at resonance_order, per phase
    resonance_order_range: list[float] | None  # [lowest, highest] over the reactor and capacitor tolerances
    series_resonance_order: float | None  # of the detuned branches, 1/√p
    bus_voltage_pct: dict[str, float]  # the worst tolerance corner per order
    bus_voltage_without_bank_pct: dict[str, float]
    amplification: dict[str, float]  # |Z_bus| / |Z_bus without the bank| per order
    bus_thd_pct: float
    bus_thd_without_bank_pct: float
    capacitor_voltage_rms_pu: float  # the duty at the nominal values; ``worst`` takes the tolerance corners in
    capacitor_voltage_peak_pu: float
    capacitor_current_rms_pu: float
    capacitor_kvar_pu: float
    current_per_kvar_a: float  # rms line current of the combination's steps per kvar delivered (worst corner)


class HarmonicDuty(_Frozen):
    """The worst combination's capacitor duty against the limits of the rule basis."""

    steps: list[int]
    kvar: float
    corner: str  # which tolerance corner gave it: nominal | low tuning | high tuning
    capacitor_voltage_rms_pu: float
    capacitor_voltage_peak_pu: float
    capacitor_current_rms_pu: float
    capacitor_kvar_pu: float
    limit_voltage_rms_pu: float
    limit_voltage_peak_pu: float | None  # None: the rule basis sets no peak limit
    limit_current_rms_pu: float
    limit_kvar_pu: float | None
    rule: str
    ok: bool


class HarmonicStepCurrent(_Frozen):
    """A step's rms line current with harmonics (worst combination) against its parts' ratings."""

    index: int
    fundamental_a: float
    current_rms_a: float
    device_rating_a: float
    conductor_ampacity_a: float
    reactor_rating_a: float | None
    ok: bool


class ScanCurve(_Frozen):
    """|Z_bus| over the scan's orders for one combination (or the bus without the bank)."""

    label: str
    kvar: float | None  # None: the bus without the bank
    impedance_ohm: list[float]


class HarmonicScan(_Frozen):
    """The frequency scan the chart draws: shared orders, a few curves, the characteristic orders to mark."""

    orders: list[float]
    curves: list[ScanCurve]
    marked_orders: list[int]
    resolution: float  # of the study's own scan (the chart's points are thinned)


class DistortionLimit(_Frozen):
    """A distortion limit the study checks against."""

    rule: str
    thd_pct: float
    individual_pct: dict[str, float]  # per order; orders not listed have no individual limit here
    ok: bool
    worst_thd_pct: float
    worst_kvar: float
    detail: str


class TuningCandidate(_Frozen):
    """One tuning tried for a plain bank that fails."""

    tuning_pct: float
    tuning_order: float
    unit_voltage_v: float | None  # the lowest rated voltage in the unit table that passes; None: none
    overrating_pu: float | None  # unit_voltage_v / supply voltage
    worst_thd_pct: float
    passes: bool
    reason: str


class HarmonicRecommendation(_Frozen):
    """What to do: detune a failing plain bank, or how much margin a detuned bank's tuning keeps."""

    kind: str  # detune | keep | margin
    tuning_pct: float | None
    unit_voltage_v: float | None
    lowest_harmonic: int | None
    tuning_order_high: float | None  # highest tuning order over the tolerances (detuned)
    margin_pct: float | None  # (lowest harmonic − tuning_order_high) / lowest harmonic
    candidates: list[TuningCandidate]
    text: str


class HarmonicStudy(_Frozen):
    """The harmonic study of one bank in its network."""

    spectrum: str  # "stated", or the name of the typical spectrum used
    spectrum_basis: str
    load_current_a: float  # fundamental of the harmonic-producing load
    current_pct: dict[str, float]
    background_voltage_pct: dict[str, float]
    transformer_x_r: float
    source_x_r: float | None  # None: no utility source given (infinite bus behind the transformer)
    source_r_ohm: float
    source_x_ohm: float
    damping_kw: float | None
    reactor_q: float | None
    reactor_tolerance_pct: float
    capacitance_tolerance_pct: list[float]  # [minus, plus]
    combinations: list[HarmonicCombination]
    combinations_complete: bool
    worst: HarmonicDuty
    steps: list[HarmonicStepCurrent]
    current_corner: str  # the tolerance corner that gave the highest current per kvar
    main_current_rms_a: float
    main_device_rating_a: float
    main_conductor_ampacity_a: float
    limits: list[DistortionLimit]
    scan: HarmonicScan
    recommendation: HarmonicRecommendation
    assumptions: list[str]
