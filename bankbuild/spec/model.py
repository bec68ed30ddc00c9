"""The spec: what a user writes in YAML, validated strictly (pydantic).

Every model forbids unknown keys, refuses NaN and infinity, and takes numbers as numbers (a quoted "480" is an
error, not a guess). The need and each load take exactly one of their documented forms; the form is named by
the keys the user gives, and giving two forms at once is an error that names both.

Results (what the tool computes) live in :mod:`bankbuild.results.sizing`.
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import (
    BaseModel,
    BeforeValidator,
    ConfigDict,
    Discriminator,
    Field,
    Tag,
    ValidationError,
    field_validator,
    model_validator,
)
from pydantic_core import InitErrorDetails, PydanticCustomError

from bankbuild.spec.harmonics import IEC_61000_2_4_CLASS2_PCT, Harmonics

TEXT_MAX = 200
BUILTIN_RULES = ("nec", "iec", "csa")  # built-in rule bases; ``nec`` takes its edition from ``nec_edition``

def _as_text(value: object) -> object:
    """YAML reads ``2026-12-01`` as a date and ``2`` as a number: in a text field take them as written."""
    import datetime

    if isinstance(value, (datetime.date, int, float)) and not isinstance(value, bool):
        return str(value)
    return value


Text = Annotated[str, BeforeValidator(_as_text), Field(max_length=TEXT_MAX)]
NEED_KVAR_MAX = 100_000.0  # the most a spec may ask for, given as need.kvar or worked out from kW or loads
UNITS_OF_A_KIND_MAX = 1000  # units of one rating in one step, as a spec's `units` may list them
Kvar = Annotated[float, Field(gt=0, le=NEED_KVAR_MAX)]
PowerFactor = Annotated[float, Field(gt=0, le=1)]
Efficiency = Annotated[float, Field(gt=0, le=1)]


def _text_choices(model: type[BaseModel]) -> dict[str, tuple[str, ...]]:
    """The fields of ``model`` that take one of a few words (a ``Literal`` of text), with those words."""
    import typing

    choices = {}
    for name, info in model.model_fields.items():
        words = []
        for arg in (info.annotation, *typing.get_args(info.annotation)):
            if typing.get_origin(arg) is Literal:
                words += [w for w in typing.get_args(arg) if isinstance(w, str)]
        if words:
            choices[name] = tuple(words)
    return choices


class _Strict(BaseModel):
    model_config = ConfigDict(extra="forbid", strict=True, allow_inf_nan=False, frozen=True)

    @model_validator(mode="before")
    @classmethod
    def _choices_in_any_case(cls, data: object) -> object:
        """A choice may be written in any case (``NEC``, ``Fuse``, ``pvc``): it is read as the listed word."""
        if not isinstance(data, dict):
            return data
        fixed = None
        for name, words in _text_choices(cls).items():
            value = data.get(name)
            if isinstance(value, str) and value not in words:
                same = [w for w in words if w.lower() == value.strip().lower()]
                if same:
                    fixed = dict(data) if fixed is None else fixed
                    fixed[name] = same[0]
        return data if fixed is None else fixed


class Project(_Strict):
    """Free-text title-block fields, all optional."""

    name: Text = "Unnamed project"
    site: Text = ""
    prepared_by: Text = ""
    checked_by: Text = ""
    revision: Text = ""
    date: Text = ""


class Supply(_Strict):
    """The supply the bank connects to (line-to-line voltage) and, optionally, its transformer."""

    voltage_v: Annotated[float, Field(ge=100, le=1000)]
    frequency_hz: Annotated[float, Field(ge=45, le=65)]
    transformer_kva: Annotated[float, Field(gt=0, le=100_000)] | None = None
    transformer_z_pct: Annotated[float, Field(gt=0, le=25)] | None = None
    source_sc_mva: Annotated[float, Field(gt=0, le=100_000)] | None = None

    @model_validator(mode="after")
    def _transformer_pair(self) -> Supply:
        if (self.transformer_kva is None) != (self.transformer_z_pct is None):
            raise ValueError("give transformer_kva and transformer_z_pct together, or neither")
        if self.source_sc_mva is not None and self.transformer_kva is None:
            raise ValueError("source_sc_mva needs transformer_kva and transformer_z_pct")
        return self

    @property
    def has_transformer(self) -> bool:
        return self.transformer_kva is not None


LOAD_FORMS: dict[str, tuple[str, ...]] = {
    "motor_kw": ("output_kw", "efficiency", "pf"),
    "motor_hp": ("output_hp", "efficiency", "pf"),
    "input_kw": ("input_kw", "pf"),
    "kva": ("kva", "pf"),
    "current": ("line_current_a", "pf"),
}


def _one_form(given: set[str], forms: dict[str, tuple[str, ...]], what: str) -> str:
    """Name the single form whose keys are all given; refuse none, several, or stray keys."""
    leading = {keys[0]: name for name, keys in forms.items()}
    chosen = [leading[k] for k in leading if k in given]
    options = "; ".join("{" + ", ".join(keys) + "}" for keys in forms.values())
    if not chosen:
        raise ValueError(f"{what} needs one of these forms: {options}")
    if len(chosen) > 1:
        keys = ", ".join(forms[c][0] for c in chosen)
        raise ValueError(f"{what} gives two forms at once ({keys}); give exactly one of: {options}")
    form = chosen[0]
    missing = [k for k in forms[form] if k not in given]
    if missing:
        raise ValueError(f"{what} form {{{', '.join(forms[form])}}} is missing {', '.join(missing)}")
    stray = sorted(k for k in given if k not in forms[form])
    if stray:
        raise ValueError(f"{what} form {{{', '.join(forms[form])}}} does not take {', '.join(stray)}")
    return form


class Load(_Strict):
    """One line of a load list; ``quantity`` identical loads."""

    name: Text = ""
    quantity: Annotated[int, Field(ge=1, le=10_000)] = 1
    output_kw: Annotated[float, Field(gt=0, le=100_000)] | None = None
    output_hp: Annotated[float, Field(gt=0, le=100_000)] | None = None
    efficiency: Efficiency | None = None
    input_kw: Annotated[float, Field(gt=0, le=100_000)] | None = None
    kva: Annotated[float, Field(gt=0, le=100_000)] | None = None
    line_current_a: Annotated[float, Field(gt=0, le=100_000)] | None = None
    pf: PowerFactor | None = None

    @model_validator(mode="after")
    def _check_form(self) -> Load:
        given = {k for k in self.model_fields_set if k not in ("name", "quantity") and getattr(self, k) is not None}
        _one_form(given, LOAD_FORMS, "load")
        return self

    @property
    def form(self) -> str:
        given = {k for k in self.model_fields_set if k not in ("name", "quantity") and getattr(self, k) is not None}
        return _one_form(given, LOAD_FORMS, "load")


NEED_FORMS: dict[str, tuple[str, ...]] = {
    "kvar": ("kvar",),
    "power": ("kw", "pf_present", "pf_target"),
    "loads": ("loads", "pf_target"),
}


class Need(_Strict):
    """What the bank must supply: kvar, or kW with present and target PF, or a load list and target PF."""

    kvar: Kvar | None = None
    kw: Annotated[float, Field(gt=0, le=1_000_000)] | None = None
    pf_present: PowerFactor | None = None
    pf_target: PowerFactor | None = None
    loads: Annotated[list[Load], Field(min_length=1, max_length=2000)] | None = None

    @model_validator(mode="after")
    def _check_form(self) -> Need:
        form = _one_form({k for k in self.model_fields_set if getattr(self, k) is not None}, NEED_FORMS, "need")
        if form == "power" and self.pf_target < self.pf_present:
            raise ValueError(
                f"pf_target {self.pf_target} is below pf_present {self.pf_present}: a capacitor bank raises "
                "the power factor"
            )
        return self

    @property
    def form(self) -> str:
        return _one_form({k for k in self.model_fields_set if getattr(self, k) is not None}, NEED_FORMS, "need")


class StepPlan(_Strict):
    """An automatic bank given as a step count and a pattern instead of explicit step sizes."""

    count: Annotated[int, Field(ge=1, le=32)]
    pattern: Annotated[str, Field(max_length=80)] = "equal"

    @field_validator("pattern")
    @classmethod
    def _pattern(cls, value: str) -> str:
        if value == "equal":
            return value
        parts = value.split(":")
        try:
            weights = [int(p) for p in parts]
        except ValueError:
            raise ValueError(f"pattern {value!r} must be 'equal' or weights like 1:2:2 or 1:2:4") from None
        if any(w <= 0 for w in weights) or len(weights) < 2:
            raise ValueError(f"pattern {value!r} needs two or more positive whole weights, like 1:2:2")
        return value

    def weights(self) -> list[int]:
        """Weights for each of ``count`` steps: the pattern's last weight repeats to fill the count."""
        if self.pattern == "equal":
            return [1] * self.count
        given = [int(p) for p in self.pattern.split(":")]
        return (given + [given[-1]] * self.count)[: self.count]


class Protection(_Strict):
    """Protective device choice, the multipliers on the capacitor's rated current, and the conductor's conditions.

    A multiplier left out takes the rule basis's default (its file names the clause). ``conductor_temp_c`` is the
    insulation column of the ampacity table; ``termination_temp_c`` the temperature the equipment terminals are
    listed and marked for (left out: the rule basis's default, stated on the worksheet). ``conductor_ambient_c``
    is the air around the conductors (left out: the enclosure air, ``assembly.ambient_c`` +
    ``assembly.temperature_rise_k``); ``grouped_circuits`` how many circuits a step circuit runs with in one duct
    or tray (itself included; default 1: apart), ``main_grouped_circuits`` the same for the incomer.
    """

    device: Literal["fuse", "breaker"] = "fuse"
    conductor_factor: Annotated[float, Field(ge=1.0, le=3.0)] | None = None
    device_factor: Annotated[float, Field(ge=1.0, le=3.0)] | None = None
    disconnect_factor: Annotated[float, Field(ge=1.0, le=3.0)] | None = None
    conductor_temp_c: Literal[60, 75, 90] = 75
    termination_temp_c: Literal[60, 75, 90] | None = None
    conductor_ambient_c: Annotated[float, Field(ge=-20, le=90)] | None = None
    grouped_circuits: Annotated[int, Field(ge=1, le=100)] = 1
    main_grouped_circuits: Annotated[int, Field(ge=1, le=100)] = 1
    installation_method: Literal["B1", "C", "E"] = "C"
    insulation: Literal["PVC", "XLPE"] = "PVC"
    max_parallel_sets: Annotated[int, Field(ge=1, le=12)] = 6


class DischargeRule(_Strict):
    """Override of the discharge rule: residual ``limit_v`` within ``time_s`` after disconnection."""

    limit_v: Annotated[float, Field(gt=0, le=1000)]
    time_s: Annotated[float, Field(gt=0, le=3600)]


HARMONIC_VOLTAGE_PCT = {f"h{h}": pct for h, pct in IEC_61000_2_4_CLASS2_PCT.items() if h <= 13}
"""Default harmonic voltages a detuned step is rated for [% of the fundamental], keyed ``h<order>``: the class 2
compatibility levels of IEC 61000-2-4 (and the public LV levels of IEC 61000-2-2) for orders 5, 7, 11, 13 - from
memory. Triplen orders are left out: they do not flow in a three-wire delta bank."""
HarmonicKey = Annotated[str, Field(pattern=r"^h([2-9]|[1-4][0-9]|50)$")]


class Assembly(_Strict):
    """Assumptions the orderable assembly rests on; the results state each one.

    ``inter_step_inductance_uh``: inductance per phase between two steps (cables and bars in one enclosure,
    about 0.5-1 µH per metre) for back-to-back inrush. ``harmonic_voltage_pct``: supply harmonic voltages that
    detuned steps are rated for, keyed by order as ``h5``, ``h7`` ... (``h2`` to ``h50``). ``ambient_c`` and
    ``temperature_rise_k``: air around the enclosure and the rise allowed inside it. ``busbar_derating``: share
    of the busbar table rating kept inside the enclosure. ``wiring_loss_pct``: allowance for wiring and busbar
    losses on top of the parts' losses. ``contactor_factor``: multiplier on the step current a contactor's
    capacitor-duty rating must reach. ``control_voltage_v``: the control circuit (default 120 V under nec,
    230 V under iec). ``ct_secondary_a``, ``ct_load_current_a`` (the load current the CT carries; default from
    the transformer or the need) and ``ct_lead_length_m`` (one way, 2.5 mm² copper). ``reactor_tolerance_pct``:
    how far a table reactor's inductance may be from the step's required inductance.
    """

    inter_step_inductance_uh: Annotated[float, Field(gt=0, le=10_000)] = 5.0
    harmonic_voltage_pct: dict[HarmonicKey, Annotated[float, Field(ge=0, le=30)]] = Field(
        default_factory=lambda: dict(HARMONIC_VOLTAGE_PCT), max_length=49)
    ambient_c: Annotated[float, Field(ge=-20, le=60)] = 35.0
    temperature_rise_k: Annotated[float, Field(ge=1, le=40)] = 10.0
    busbar_derating: Annotated[float, Field(gt=0, le=1)] = 0.8
    wiring_loss_pct: Annotated[float, Field(ge=0, le=100)] = 10.0
    contactor_factor: Annotated[float, Field(ge=1, le=3)] = 1.0
    control_voltage_v: Annotated[float, Field(ge=12, le=690)] | None = None
    ct_secondary_a: Literal[1, 5] = 5
    ct_load_current_a: Annotated[float, Field(gt=0, le=100_000)] | None = None
    ct_lead_length_m: Annotated[float, Field(ge=0, le=1000)] = 5.0
    reactor_tolerance_pct: Annotated[float, Field(ge=0, le=20)] = 5.0

    def harmonic_orders_pct(self) -> dict[int, float]:
        """``harmonic_voltage_pct`` keyed by the order as a number: ``{"h5": 6.0}`` -> ``{5: 6.0}``."""
        orders = {int(key[1:]): pct for key, pct in self.harmonic_voltage_pct.items()}
        return dict(sorted(orders.items()))


class UnitCount(_Strict):
    """Identical capacitor units in one step of an existing bank: a ``unit_id`` of the unit table and how many."""

    id: Annotated[str, Field(min_length=1, max_length=80)]
    qty: Annotated[int, Field(ge=1, le=UNITS_OF_A_KIND_MAX)] = 1


class LightLoad(_Strict):
    """The plant's load when it runs light (nights, weekends), for the over-correction check.

    ``fixed_steps`` counts the steps (from the first) that stay on whatever the load; absent, it is every step of
    a fixed bank (no ``steps`` key) and none of an automatic one.
    """

    kw: Annotated[float, Field(ge=0, le=1_000_000)]
    kvar: Annotated[float, Field(ge=0, le=1_000_000)]
    fixed_steps: Annotated[int, Field(ge=0, le=32)] | None = None


MOTOR_DUTIES = ("jogging", "plugging", "reversing", "multi_speed")


class Motor(_Strict):
    """A motor whose terminals the bank connects to (the bank is switched with the motor).

    Give the no-load current (optionally with the no-load power factor) or the magnetising kvar, the full-load
    current and power factor, and the ampacity of the motor circuit conductors.
    """

    name: Text = ""
    no_load_current_a: Annotated[float, Field(gt=0, le=100_000)] | None = None
    no_load_pf: Annotated[float, Field(ge=0, lt=1)] | None = None
    magnetising_kvar: Annotated[float, Field(gt=0, le=100_000)] | None = None
    full_load_current_a: Annotated[float, Field(gt=0, le=100_000)]
    full_load_pf: PowerFactor
    conductor_ampacity_a: Annotated[float, Field(gt=0, le=100_000)]
    starting: Literal["direct", "wye_delta", "soft_starter", "drive", "autotransformer", "part_winding"] = "direct"
    duty: Annotated[list[Literal[MOTOR_DUTIES]], Field(max_length=4)] = []
    capacitor_after_overload: bool = True

    @model_validator(mode="after")
    def _magnetising_form(self) -> Motor:
        if (self.no_load_current_a is None) == (self.magnetising_kvar is None):
            raise ValueError("give no_load_current_a or magnetising_kvar (one of them)")
        if self.no_load_pf is not None and self.no_load_current_a is None:
            raise ValueError("no_load_pf goes with no_load_current_a")
        if self.no_load_current_a is not None and self.no_load_current_a >= self.full_load_current_a:
            raise ValueError(f"no_load_current_a {self.no_load_current_a:g} A must be below full_load_current_a "
                             f"{self.full_load_current_a:g} A")
        return self


def _steps_form(value: object) -> str | None:
    """Which form ``steps`` takes, from the value's type (so an error names the form the user chose)."""
    if isinstance(value, list):
        return "List"
    if isinstance(value, (dict, StepPlan)):
        return "StepPlan"
    return None


Steps = Annotated[
    Annotated[list[Kvar], Field(min_length=1, max_length=32), Tag("List")] | Annotated[StepPlan, Tag("StepPlan")],
    Discriminator(_steps_form, custom_error_type="steps_form",
                  custom_error_message="steps must be a list of kvar per step, like [50, 50, 100], or a plan "
                                       "like {count: 5, pattern: '1:2:2'}"),
]


class Bank(_Strict):
    """One capacitor bank."""

    name: Text
    supply: Supply
    need: Need
    connection: Literal["delta", "wye"] = "delta"
    steps: Steps | None = None
    capacitor_voltage_v: Annotated[float, Field(ge=100, le=1000)] | None = None
    voltage_margin_pct: Annotated[float, Field(ge=0, le=30)] = 0.0
    detuning_pct: Annotated[float, Field(gt=0, lt=20)] | None = None
    protection: Protection = Protection()
    discharge: DischargeRule | None = None
    assembly: Assembly = Assembly()
    units: Annotated[list[Annotated[list[UnitCount], Field(min_length=1, max_length=50)]],
                     Field(min_length=1, max_length=32)] | None = None
    light_load: LightLoad | None = None
    motor: Motor | None = None
    harmonics: Harmonics | None = None

    @field_validator("name")
    @classmethod
    def _name_has_text(cls, value: str) -> str:
        if not value.strip():
            raise ValueError("a bank needs a name (it heads the bank's results and documents)")
        return value

    @field_validator("connection", mode="before")
    @classmethod
    def _star_is_wye(cls, value: object) -> object:
        if isinstance(value, str) and value.strip().lower() in ("star", "wye", "y"):
            return "wye"
        if isinstance(value, str) and value.strip().lower() in ("delta", "d"):
            return "delta"
        return value

    @property
    def tuning_factor(self) -> float:
        """Detuning as a fraction p (0 when the bank is not detuned)."""
        return (self.detuning_pct or 0.0) / 100.0

    @model_validator(mode="after")
    def _existing_units(self) -> Bank:
        if self.units is not None and self.steps is not None:
            raise ValueError("give steps (to size a new bank) or units (an existing bank's units per step), not both")
        if self.light_load is not None and (self.light_load.fixed_steps or 0) > self.step_count:
            raise ValueError(f"light_load.fixed_steps {self.light_load.fixed_steps} is more than the bank's "
                             f"{self.step_count} steps")
        if self.harmonics is not None and not self.supply.has_transformer:
            raise ValueError("harmonics needs supply.transformer_kva and transformer_z_pct (the source impedance "
                             "the study works with)")
        return self

    @property
    def step_count(self) -> int:
        """How many steps the bank has: its units, its step list or plan, or one fixed step."""
        if self.units is not None:
            return len(self.units)
        if isinstance(self.steps, list):
            return len(self.steps)
        return 1 if self.steps is None else self.steps.count

    @property
    def fixed_step_count(self) -> int:
        """Steps that stay on at light load: as given, else the one step of a fixed bank (no ``steps`` key and
        at most one step of units) and none of an automatic bank."""
        if self.light_load is not None and self.light_load.fixed_steps is not None:
            return self.light_load.fixed_steps
        return 1 if self.steps is None and self.step_count == 1 else 0

class Spec(_Strict):
    """A whole spec file: project fields, the rule basis, one or more banks, optional user tables."""

    project: Project = Project()
    rules: Annotated[str, Field(min_length=1, max_length=4096)] = "nec"
    nec_edition: Literal[2023, 2020] = 2023
    banks: Annotated[list[Bank], Field(min_length=1, max_length=5000)]
    catalogs: Annotated[str, Field(min_length=1, max_length=4096)] | None = None

    @field_validator("rules")
    @classmethod
    def _rule_basis(cls, value: str) -> str:
        """A built-in rule basis by name (in any case: ``NEC`` is ``nec``), or a rule-basis file (YAML) beside the
        spec."""
        if value.strip().lower() in BUILTIN_RULES:
            return value.strip().lower()
        if value.lower().endswith((".yaml", ".yml")):
            return value
        raise ValueError(f"must be {', '.join(BUILTIN_RULES)} or a rule-basis file ending in .yaml "
                         f"(got {value[:40]!r})")

    @property
    def rules_file(self) -> str | None:
        """The rule-basis file the spec names, or ``None`` for a built-in basis."""
        return None if self.rules in BUILTIN_RULES else self.rules

    @field_validator("banks", mode="wrap")
    @classmethod
    def _unique_names(cls, value: object, handler) -> list[Bank]:
        """Each bank's name is its key in the results: the second bank with a name is refused at its name."""
        banks = handler(value)
        first: dict[str, int] = {}
        for index, bank in enumerate(banks):
            if bank.name in first:
                problem = PydanticCustomError(
                    "duplicate_name", "banks[{first}] has the same name '{name}': give each bank its own name",
                    {"first": first[bank.name], "name": bank.name})
                raise ValidationError.from_exception_data(
                    "Spec", [InitErrorDetails(type=problem, loc=(index, "name"), input=bank.name)])
            first[bank.name] = index
        return banks


def field_bounds(model: type[BaseModel], name: str) -> tuple[float, float]:
    """The lowest and highest value a number field of a spec model accepts (its ``ge``/``gt`` and ``le``).

    One statement of each range: a command-line option that sets the same quantity checks against this.

    Examples
    --------
    >>> field_bounds(Supply, "voltage_v"), field_bounds(Supply, "frequency_hz")
    ((100, 1000), (45, 65))
    """
    import typing

    info = model.model_fields[name]
    metadata = list(info.metadata)
    for arg in typing.get_args(info.annotation):  # an optional field: the bounds sit on the Annotated member
        for item in getattr(arg, "__metadata__", ()):
            metadata += [item, *getattr(item, "metadata", ())]
    low, high = float("-inf"), float("inf")
    for meta in metadata:
        for attr in ("ge", "gt"):
            if getattr(meta, attr, None) is not None:
                low = getattr(meta, attr)
        if getattr(meta, "le", None) is not None:
            high = meta.le
    return low, high
