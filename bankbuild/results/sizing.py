"""Results: what the pipeline computes, frozen, read by the reports and dumped as JSON.

Field names carry their units. The keys listed as stable in the product design (``name``, ``required_kvar``,
``delivered_kvar``, ``steps``, ``main``, ``discharge``, ``resonance``, ``checks`` …) keep their meaning.
"""

from __future__ import annotations

from pydantic import model_serializer

from bankbuild._version import __version__
from bankbuild.results import frames
from bankbuild.results.base import Frozen
from bankbuild.results.harmonics import HarmonicStudy


class Check(Frozen):
    """One rule check or flag. ``ok`` False means the result does not meet it as computed."""

    name: str
    ok: bool
    detail: str
    rule: str = ""
    level: str = "check"  # check | caution | info


class Pick(Frozen):
    """A rating picked from a table: its designation, value, and where it came from."""

    designation: str
    value: float
    table: str
    row: int


class SizingLine(Frozen):
    """One row of the protection worksheet: what is sized, how, by which rule, and what was picked."""

    item: str
    formula: str
    basis_a: float
    factor: float
    required_a: float
    rule: str
    chosen: str
    chosen_a: float
    ok: bool
    note: str = ""


class UnitLine(Frozen):
    """Identical capacitor units within one step."""

    id: str
    qty: int
    rated_kvar: float
    rated_voltage_v: float
    rated_frequency_hz: float
    delivered_kvar_each: float
    table: str
    row: int


class Detuning(Frozen):
    """Detuning reactor figures for one step."""

    tuning_pct: float
    tuning_frequency_hz: float
    tuning_order: float
    capacitor_voltage_v: float
    capacitor_kvar_at_supply: float
    capacitor_kvar_at_capacitor_voltage: float = 0.0  # the same capacitors at U/(1 − p), the voltage they carry
    reactor_inductance_mh: float
    reactor_current_a: float


class CurvePoint(Frozen):
    """One sample of a curve in time."""

    time_s: float
    voltage_v: float


class DischargeCurve(Frozen):
    """The leg voltage of the largest step after switch-off, sampled for a chart (see design.figures)."""

    start_voltage_v: float  # the peak of the rated leg voltage
    limit_v: float  # the rule's limit …
    time_s: float  # … and its time
    end_time_s: float
    rule_resistance_ohm: float  # the largest resistance per leg that meets the rule
    rule_curve: list[CurvePoint]  # through it: reaches the limit at the rule's time
    builtin_resistance_ohm: float | None  # the units' own resistors, from their rated discharge time
    builtin_curve: list[CurvePoint]  # empty when the table gives no discharge time
    reconnection_delay_s: float | None  # automatic steps only


class PowerTriangle(Frozen):
    """The load's power triangle before and after the bank, with the line currents (see design.figures)."""

    active_kw: float
    kvar_before: float
    kvar_after: float  # negative: leading
    bank_kvar: float  # delivered at the supply
    kva_before: float
    kva_after: float
    pf_before: float
    pf_after: float
    angle_before_deg: float
    angle_after_deg: float
    current_before_a: float
    current_after_a: float
    leading_after: bool


class StepPlanResult(Frozen):
    """How the step sizes were chosen, and every kvar value the controller can reach with them."""

    form: str  # fixed | list | plan | existing (the units a spec lists per step)
    pattern: str  # the weights per step, e.g. "1:2:2:2:2:2"; "" for a fixed bank
    rule: str  # how the sizes were chosen, with the numbers
    step_kvar: list[float]  # delivered at the supply, per step
    resolution_kvar: float  # the smallest step
    reachable_kvar: list[float]  # every sum of steps, 0 included (empty when there are too many to list)
    reachable_count: int
    largest_gap_kvar: float  # the widest jump between two reachable values
    largest_gap_from_kvar: float | None = None  # the reachable value it starts from (the lowest such gap)
    note: str = ""


class StepReactor(Frozen):
    """The detuning reactor of one step: what it must be, what was picked, and the voltage the units see."""

    tuning_pct: float
    tuning_frequency_hz: float
    required_inductance_mh: float  # per phase, wye equivalent
    fundamental_current_a: float
    harmonic_voltage_pct: dict[int, float]  # the stated supply distortion the rating allows for
    harmonic_current_pct: dict[int, float]  # what that drives through the step, % of the fundamental
    required_current_a: float  # rms: fundamental and harmonics
    capacitor_voltage_v: float  # fundamental, V / (1 − p)
    capacitor_voltage_rms_v: float  # with the harmonic voltages, rms
    capacitor_voltage_sum_v: float  # fundamental plus harmonics added arithmetically (peak, as rms equivalent)
    unit_voltage_v: float
    voltage_margin_pct: float  # unit rated voltage over the fundamental capacitor voltage, − 1
    voltage_ok: bool
    reactor: Pick | None  # None: no table reactor fits; one is made to order
    inductance_mh: float  # of the reactor used
    current_rating_a: float
    actual_tuning_frequency_hz: float  # with the inductance used
    losses_w: float
    made_to_order: bool


class StepSwitching(Frozen):
    """The contactor of one automatic step and the inrush it must make."""

    contactor: Pick | None
    damping: str  # none | resistors
    required_current_a: float
    contactor_current_a: float  # AC-6b current of the contactor at the table voltage that covers the supply
    contactor_voltage_v: float  # that table voltage (0 without a contactor)
    contactor_kvar: float  # kvar the contactor may switch there: √3 · U · I_e
    energising_peak_a: float | None  # the step switched alone (needs the transformer)
    back_to_back_peak_a: float | None  # the step switched with every other step on
    loop_inductance_uh: float | None
    inrush_frequency_hz: float | None
    capacitor_limit_a: float  # 100 × the step's rated current
    contactor_limit_a: float
    damping_needed: bool
    damping_reactor_uh: float | None  # added inductance per phase still needed, if any
    coil_sealed_va: float
    coil_inrush_va: float
    losses_w: float


class InrushSummary(Frozen):
    """Inrush of the bank: the worst step energised alone and the worst step switched against the others."""

    inter_step_inductance_uh: float  # assumed (spec assembly.inter_step_inductance_uh)
    source_inductance_uh: float | None
    short_circuit_current_a: float | None
    energising_peak_a: float | None  # the highest of any step switched on alone
    back_to_back_peak_a: float | None  # the highest of any step switched on with every other step on
    back_to_back_frequency_hz: float | None  # of that worst back-to-back case
    energising_step: int | None = None  # which step gives energising_peak_a
    back_to_back_step: int | None = None  # which step gives back_to_back_peak_a
    damping_needed: bool
    damping: str


class Reconnection(Frozen):
    """How long an automatic step must stay off before it is switched on again."""

    start_voltage_v: float
    limit_10pct_v: float
    time_to_10pct_s: float
    time_to_50v_s: float
    delay_s: float
    rule: str


class ControlResult(Frozen):
    """Controller, current transformer and control circuit of an automatic bank."""

    controller: Pick | None
    outputs_needed: int
    ct: Pick | None
    ct_basis_a: float | None  # the load current the CT must carry
    ct_basis: str  # where that figure comes from
    ct_burden_needed_va: float
    smallest_step_secondary_a: float | None  # the smallest step's current seen on the CT secondary
    control_voltage_v: float
    control_load_va: float
    control_transformer: Pick | None
    primary_fuse: Pick | None
    secondary_fuse: Pick | None
    measuring_fuse: Pick | None
    losses_w: float


class LossLine(Frozen):
    """One group of heat sources inside the enclosure."""

    item: str
    qty: int
    each_w: float
    total_w: float
    source: str


class EnclosureResult(Frozen):
    """Heat in the enclosure, the ventilation it needs, and the main busbars."""

    losses: list[LossLine]
    total_losses_w: float
    ambient_c: float
    temperature_rise_k: float
    air_density_kg_m3: float
    airflow_m3_per_h: float
    fan: Pick | None
    fan_qty: int
    busbar: Pick | None
    busbar_required_a: float
    busbar_derating: float
    busbar_rating_a: float  # the picked bars' rating times the derating


class Step(Frozen):
    index: int
    target_kvar: float
    kvar: float
    rated_kvar: float
    rated_current_a: float
    line_current_a: float
    capacitance_uf_per_leg: float
    units: list[UnitLine]
    device: str
    device_rating_a: float
    conductor: str
    conductor_ampacity_a: float
    sizing: list[SizingLine]
    detuning: Detuning | None = None
    reactor: StepReactor | None = None
    switching: StepSwitching | None = None


class Main(Frozen):
    rated_current_a: float
    design_current_a: float
    device: str
    conductor: str
    conductor_ampacity_a: float
    device_rating_a: float
    disconnect_rating_a: float
    sizing: list[SizingLine]


class Discharge(Frozen):
    step_index: int
    capacitance_uf_per_leg: float
    leg_voltage_v: float  # rated rms voltage across one leg (the start voltage is its peak, √2 times)
    start_voltage_v: float
    limit_v: float
    time_s: float
    rule: str
    max_resistance_ohm: float
    resistor_power_w: float
    builtin_time_s: float
    builtin_ok: bool
    ok: bool


class ResonancePoint(Frozen):
    steps: list[int]
    kvar: float
    capacitor_kvar: float  # Q_C: the capacitors' kvar at the supply voltage (kvar·(1 − p) behind reactors)
    harmonic_order: float
    near_harmonic: int | None
    position: str  # where the order lies against the characteristic harmonics, e.g. "11th (+6%)"


class NeedSummary(Frozen):
    """How the need was stated and what it works out to at the supply."""

    form: str
    active_kw: float | None
    reactive_kvar: float | None
    pf_present: float | None
    pf_target: float | None
    pf_corrected: float | None
    required_kvar: float


class BomLine(Frozen):
    """One line of a bill of materials: identical parts merged, with the table row they came from.

    ``part_id`` is the table row's id (empty for a part described by its rating only). With a price table,
    ``unit_price`` (per ``unit``), ``extended_price`` (× ``qty``), ``currency``, ``lead_time_days`` and
    ``supplier_note`` come from the price row ``price_row``; ``price_status`` is ``priced`` or ``no price``
    (empty without a price table).
    """

    item: int
    qty: float
    unit: str  # pcs | set | m
    category: str
    description: str
    table: str = ""
    row: int | None = None
    notes: str = ""
    part_id: str = ""
    unit_price: float | None = None
    extended_price: float | None = None
    currency: str = ""
    lead_time_days: int | None = None
    supplier_note: str = ""
    price_row: int | None = None
    price_status: str = ""


class BomTotal(Frozen):
    """The priced total of a bill of materials, and what it leaves out."""

    currency: str
    total: float  # the priced lines only
    priced_lines: int
    unpriced_lines: int
    unpriced_items: list[int]  # the item numbers without a price
    longest_lead_time_days: int | None
    complete: bool  # every line has a price
    source: str  # the price table's file name
    invented: bool  # the price table says its prices are invented (the built-in demo prices)


class VoltageStress(Frozen):
    """What the capacitor units see against their rating (IEEE 18, IEC 60831-1), fundamental only."""

    rated_voltage_v: float
    rated_frequency_hz: float
    capacitor_voltage_v: float  # at the supply, with the detuning rise V/(1 − p)
    light_load_voltage_v: float  # plus the light-load rise with every step on (equal without a transformer)
    voltage_pu: float  # light_load_voltage_v / rated_voltage_v
    current_pu: float  # voltage_pu · f / f_r
    kvar_pu: float  # voltage_pu² · f / f_r
    utilisation_pu: float  # delivered kvar / nameplate kvar
    iec_duration: str  # the IEC 60831-1 duration class the light-load voltage falls in
    continuous_limit_pu: float = 1.10  # the rule basis's continuous limit
    short_time_pu: float | None = None  # the short-time allowance the light-load voltage falls in, if any
    short_time_duration: str = ""  # how long that allowance lasts
    continuous_ok: bool = True  # the capacitor voltage at the supply within the continuous limit
    light_load_ok: bool = True  # the light-load voltage within the continuous limit or a short-time allowance
    ok: bool  # continuous_ok and light_load_ok: the one verdict every output uses


class TuningCheck(Frozen):
    """A detuned bank's series tuning against the supply frequency."""

    tuning_pct: float
    tuning_frequency_hz: float
    tuning_order: float
    ok: bool


class DetuningAdvice(Frozen):
    """The detuned alternative offered when a plain bank resonates near a characteristic harmonic."""

    tuning_pct: float
    tuning_frequency_hz: float
    tuning_order: float
    capacitor_voltage_v: float  # what the units would see, V/(1 − p)
    unit_voltage_v: float | None  # the next rated voltage in the unit table (None: none high enough)


class LightLoadCheck(Frozen):
    """Fixed steps against the light load: leading power factor and the largest fixed kvar that avoids it."""

    kw: float
    kvar: float
    fixed_steps: list[int]
    fixed_kvar: float
    net_kvar: float  # load kvar − fixed kvar; negative is leading
    power_factor: float
    leading: bool
    max_fixed_kvar: float
    suggested_kvar: float
    suggested_units: list[UnitLine]


class MotorCheck(Frozen):
    """A bank at a motor's terminals: self-excitation limit, overload relay setting, conductor rule."""

    name: str
    magnetising_kvar: float
    capacitor_kvar: float
    full_load_current_a: float
    reduced_current_a: float
    improved_pf: float
    overload_setting_basis_a: float
    min_conductor_ampacity_a: float
    conductor: str
    conductor_ampacity_a: float
    suggested_kvar: float
    suggested_units: list[UnitLine]


class SystemResult(Frozen):
    """The bank in its system: voltage stress, resonance for every step combination, light load, motor."""

    voltage: VoltageStress
    short_circuit_mva: float | None  # the source the resonance orders are worked out with
    transformer_short_circuit_mva: float | None  # the transformer alone: kVA × 100 / Z% / 1000
    resonance_combinations: list[ResonancePoint]
    combinations_complete: bool
    tuning: TuningCheck | None
    detuning_advice: DetuningAdvice | None
    light_load: LightLoadCheck | None
    motor: MotorCheck | None


class BankResult(Frozen):
    name: str
    rules: str
    connection: str
    unit_connection: str = "delta"  # how the units are connected inside: the legs of the parts ordered
    supply_voltage_v: float
    frequency_hz: float
    transformer_kva: float | None
    transformer_z_pct: float | None
    need: NeedSummary
    required_kvar: float
    delivered_kvar: float
    capacitor_voltage_v: float
    rated_kvar: float
    rated_current_a: float
    line_current_a: float
    capacitance_uf_per_phase: float
    detuning_pct: float | None
    steps: list[Step]
    main: Main
    discharge: Discharge
    resonance: list[ResonancePoint]
    voltage_rise_pct: float | None
    checks: list[Check]
    bom: list[BomLine] = []
    bom_total: BomTotal | None = None  # with a price table only
    system: SystemResult | None = None
    step_plan: StepPlanResult | None = None
    inrush: InrushSummary | None = None
    reconnection: Reconnection | None = None
    control: ControlResult | None = None
    enclosure: EnclosureResult | None = None
    assumptions: list[str] = []  # every assumption the figures rest on, stated on the worksheet
    discharge_curve: DischargeCurve | None = None  # sampled for the documents' chart
    power_triangle: PowerTriangle | None = None  # None when the need is given as kvar alone
    harmonics: HarmonicStudy | None = None  # only when the spec gives the bank a harmonics block

    @model_serializer(mode="wrap")
    def _absent_study(self, handler):
        """A bank without a ``harmonics`` block has no ``harmonics`` key at all (not null)."""
        data = handler(self)
        if self.harmonics is None and isinstance(data, dict):
            data.pop("harmonics", None)
        return data

    def to_frame(self, view: str = "steps"):
        """A pandas DataFrame of this bank: ``steps``, ``checks``, ``protection`` (the worksheet's sizing lines of
        every circuit) or ``bom`` (the bank's bill of materials). pandas is imported on the first call."""
        return frames.to_frame(frames.bank_rows(self, view), view)


class TableUsed(Frozen):
    file_name: str
    sha256: str
    notes: list[str]


class Provenance(Frozen):
    version: str
    rules: str  # the rule family: nec (AWG, 240.6(A) ladder) or iec (mm², gG)
    edition: str  # the rule basis named once: "NEC 2023", "IEC …", "CSA C22.1 …"
    rule_basis_id: str = ""
    rule_basis_file: str = ""
    rule_basis_sha256: str = ""
    rule_basis_text: str = ""  # the sentence the rule basis has every document print
    rule_basis_note: str = ""
    spec_file: str
    spec_sha256: str
    tables: list[TableUsed]


class ProjectResult(Frozen):
    """Every bank of a spec sized, with the project's merged bill of materials and the provenance.

    ``version`` is the bankbuild version that wrote the results (the JSON's first key).
    """

    version: str = __version__
    project: dict[str, str]
    provenance: Provenance
    banks: list[BankResult]
    cautions: list[str]
    bom: list[BomLine] = []
    bom_total: BomTotal | None = None  # with a price table only

    def to_frame(self, view: str = "steps"):
        """A pandas DataFrame over every bank (a ``bank`` column first): ``steps``, ``checks``, ``protection``;
        or ``bom``, the project's merged bill of materials."""
        return frames.to_frame(frames.project_rows(self, view), view)
