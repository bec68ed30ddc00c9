"""Rule bases as data: one declarative YAML file per code basis, checked against a schema on load.

A rule basis holds what a code decides for a capacitor bank: the code and edition, the multipliers and the
clauses they follow, the discharge rule, the capacitor voltage and current limits, the conductor-protection
(coordination) rule and its limits, the termination temperatures, the ampacity correction tables, which
rating tables it uses, and the sentence each document prints. The built-in files (NEC 2023, NEC 2020, IEC,
CSA C22.1) sit beside the rating tables; ``bankbuild catalog copy`` copies them with the tables, and a spec's
``rules:`` names a built-in basis (``nec``, ``iec``, ``csa``) or a rule-basis file of the user's.

Every problem is a :class:`bankbuild.errors.CatalogError` of one line naming the file, the field and the
problem. Each loaded basis carries its file's SHA-256, which every document prints.
"""

from __future__ import annotations

import hashlib
from pathlib import Path
from typing import Annotated, Literal

from pydantic import BaseModel, BeforeValidator, ConfigDict, Field, ValidationError, field_validator, model_validator

from bankbuild.errors import BankbuildError, CatalogError

MAX_RULE_BYTES = 256 * 1024
RULE_FILE_PREFIX = "rules-"
BUILTIN = {"nec-2023": "rules-nec-2023.yaml", "nec-2020": "rules-nec-2020.yaml", "iec": "rules-iec.yaml",
           "csa": "rules-csa.yaml"}
"""Built-in rule bases by the name a spec gives (``rules: nec`` takes ``nec-<nec_edition>``)."""

def _pair(value: object) -> object:
    """YAML gives ``[up_to, factor]`` as a list; take a two-item list as the pair it is."""
    return tuple(value) if isinstance(value, list) and len(value) == 2 else value


ClauseText = Annotated[str, Field(min_length=1, max_length=400)]
Factor = Annotated[float, Field(ge=1.0, le=5.0)]
Temperature = Annotated[float, Field(ge=-40, le=150)]
CorrectionTable = Annotated[list[Annotated[tuple[Annotated[float, Field(ge=-40, le=150)],
                                                 Annotated[float, Field(ge=0.0, le=2.0)]], BeforeValidator(_pair)]],
                            Field(min_length=1, max_length=60)]
GroupingTable = Annotated[list[Annotated[tuple[Annotated[int, Field(ge=1, le=100_000)],
                                               Annotated[float, Field(gt=0.0, le=1.0)]], BeforeValidator(_pair)]],
                          Field(min_length=1, max_length=60)]


class _Strict(BaseModel):
    model_config = ConfigDict(extra="forbid", strict=True, allow_inf_nan=False, frozen=True)


class Multiplier(_Strict):
    """A factor on the capacitor's rated current and the clause (or practice) it follows."""

    factor: Factor
    clause: ClauseText


class Multipliers(_Strict):
    conductor: Multiplier
    fuse: Multiplier
    breaker: Multiplier
    disconnect: Multiplier
    device_max: Multiplier | None = None  # a ceiling on the device rating (CSA 26-210: 250 %)


class DischargeRule(_Strict):
    limit_v: Annotated[float, Field(gt=0, le=1000)]
    time_s: Annotated[float, Field(gt=0, le=3600)]
    clause: ClauseText
    text: ClauseText


class ShortTimeVoltage(_Strict):
    pu: Annotated[float, Field(gt=1.0, le=3.0)]
    duration: ClauseText


class VoltageLimits(_Strict):
    """Capacitor voltage and current limits: continuous, and the short-time allowances above it."""

    continuous_pu: Annotated[float, Field(ge=0.9, le=1.5)]
    clause: ClauseText
    short_time: Annotated[list[ShortTimeVoltage], Field(max_length=20)] = []
    short_time_clause: ClauseText | None = None
    light_load_pu: Annotated[float, Field(ge=0.9, le=1.5)] | None = None
    light_load_text: ClauseText | None = None
    current_pu: Annotated[float, Field(ge=1.0, le=3.0)]
    kvar_pu: Annotated[float, Field(ge=1.0, le=3.0)] | None = None
    current_clause: ClauseText

    @field_validator("short_time")
    @classmethod
    def _ascending(cls, value: list[ShortTimeVoltage]) -> list[ShortTimeVoltage]:
        for a, b in zip(value, value[1:], strict=False):
            if b.pu <= a.pu:
                raise ValueError(f"short-time limits must rise ({b.pu:g} pu follows {a.pu:g} pu)")
        return value

    @model_validator(mode="after")
    def _above_continuous(self) -> VoltageLimits:
        if self.short_time and self.short_time[0].pu <= self.continuous_pu:
            raise ValueError(f"the first short-time limit {self.short_time[0].pu:g} pu must exceed the "
                             f"continuous limit {self.continuous_pu:g} pu")
        if (self.light_load_pu is None) != (self.light_load_text is None):
            raise ValueError("give light_load_pu and light_load_text together, or neither")
        if self.light_load_pu is not None and self.light_load_pu < self.continuous_pu:
            raise ValueError(f"light_load_pu {self.light_load_pu:g} is below the continuous limit")
        return self

    @property
    def light_load_limit_pu(self) -> float:
        """The highest voltage allowed while the plant runs light (hours a day): its own limit or the continuous."""
        return self.light_load_pu if self.light_load_pu is not None else self.continuous_pu


class Coordination(_Strict):
    """How a device must protect its conductor.

    ``next_size_up``: device ≤ ampacity, or the next standard rating above an ampacity that is not itself a
    standard rating, up to ``next_size_up_max_a`` (NEC 240.4(B)/(C)), with small-conductor ceilings.
    ``conventional_current``: I_n ≤ I_z and I_2 ≤ ``i2_ratio`` × I_z (IEC 60364-4-43 433.1).
    """

    method: Literal["next_size_up", "conventional_current"]
    clause: ClauseText
    next_size_up_clause: ClauseText | None = None
    next_size_up_max_a: Annotated[float, Field(ge=0, le=10_000)] | None = None
    above_max_clause: ClauseText | None = None
    small_conductor_max_a: dict[Annotated[str, Field(max_length=40)],
                                Annotated[float, Field(gt=0, le=1000)]] = Field(default_factory=dict, max_length=20)
    small_conductor_clause: ClauseText | None = None
    capacitor_note: ClauseText | None = None
    i2_ratio: Annotated[float, Field(ge=1.0, le=3.0)] | None = None
    fuse_i2: Annotated[list[Annotated[tuple[Annotated[float, Field(gt=0)], Annotated[float, Field(ge=1.0, le=3.0)]],
                                      BeforeValidator(_pair)]],
                       Field(max_length=20)] | None = None
    fuse_i2_clause: ClauseText | None = None
    breaker_i2: Annotated[float, Field(ge=1.0, le=3.0)] | None = None
    breaker_i2_clause: ClauseText | None = None

    @model_validator(mode="after")
    def _method_fields(self) -> Coordination:
        if self.method == "next_size_up":
            need = ("next_size_up_clause", "next_size_up_max_a", "above_max_clause")
        else:
            need = ("i2_ratio", "fuse_i2", "fuse_i2_clause", "breaker_i2", "breaker_i2_clause")
        missing = [n for n in need if getattr(self, n) is None]
        if missing:
            raise ValueError(f"method {self.method} needs {', '.join(missing)}")
        if self.fuse_i2:
            limits = [a for a, _ in self.fuse_i2]
            if limits != sorted(limits) or len(set(limits)) != len(limits):
                raise ValueError("fuse_i2 rows must be in rising order of rating")
        return self

    def fuse_i2_factor(self, rating_a: float) -> float:
        """I_2 / I_n of a fuse of ``rating_a`` [A]: the first row whose rating reaches it (the last beyond)."""
        rows = self.fuse_i2 or [(float("inf"), 1.6)]
        return next((f for up_to, f in rows if rating_a <= up_to), rows[-1][1])


class Terminations(_Strict):
    """Termination temperature rules (NEC 110.14(C)(1)): the column the final ampacity may not exceed."""

    default_c: Literal[60, 75, 90]
    clause: ClauseText
    small_circuit_max_a: Annotated[float, Field(gt=0, le=10_000)]
    small_circuit_largest_size: Annotated[str, Field(min_length=1, max_length=40)]
    small_circuit_c: Literal[60, 75, 90]
    small_circuit_text: ClauseText
    large_circuit_c: Literal[60, 75, 90]
    large_circuit_text: ClauseText
    correction_base_text: ClauseText


class Corrections(_Strict):
    """Ambient correction by insulation column and grouping adjustment by installation (``any`` for all).

    Each table is a list of ``[up_to, factor]`` rows in rising order: the first row whose ``up_to`` reaches
    the ambient (°C) or the count applies; beyond the last row the table has no factor (a flagged check).
    """

    base_ambient_c: Temperature
    ambient_clause: ClauseText
    ambient: dict[Annotated[str, Field(min_length=1, max_length=20)], CorrectionTable] = Field(max_length=10)
    grouping_counts: Literal["conductors", "circuits"]
    grouping_clause: ClauseText
    grouping: dict[Annotated[str, Field(min_length=1, max_length=20)], GroupingTable] = Field(max_length=10)

    @field_validator("ambient", "grouping")
    @classmethod
    def _rising(cls, value: dict) -> dict:
        for key, rows in value.items():
            limits = [a for a, _ in rows]
            if limits != sorted(limits) or len(set(limits)) != len(limits):
                raise ValueError(f"{key}: rows must be in rising order of their first value, each once")
            factors = [f for _, f in rows]
            if factors != sorted(factors, reverse=True):
                raise ValueError(f"{key}: factors must not rise as the temperature or count rises")
        return value


class TablesUsed(_Strict):
    conductors: Literal["conductors_nec.csv", "conductors_iec.csv"]
    conductor_edition: Annotated[int, Field(ge=1900, le=2100)] | None = None
    conductor_table_text: ClauseText
    device_basis: Literal["nec", "iec"]
    device_table_text: ClauseText


class Documents(_Strict):
    basis_line: ClauseText
    worksheet_note: ClauseText


class RuleBasisFile(_Strict):
    """The whole rule-basis file (format 1)."""

    format: Literal[1]
    id: Annotated[str, Field(pattern=r"^[a-z0-9][a-z0-9_.-]{0,39}$")]
    code: Annotated[str, Field(min_length=1, max_length=40)]
    edition: Annotated[str, Field(min_length=1, max_length=120)]
    title: ClauseText
    family: Literal["nec", "iec"]
    tables: TablesUsed
    multipliers: Multipliers
    discharge: DischargeRule
    voltage_limits: VoltageLimits
    coordination: Coordination
    terminations: Terminations | None
    corrections: Corrections
    documents: Documents

    @model_validator(mode="after")
    def _consistent(self) -> RuleBasisFile:
        nec_tables = self.tables.conductors == "conductors_nec.csv"
        if (self.family == "nec") != nec_tables:
            raise ValueError(f"family {self.family} needs the {'NEC' if self.family == 'nec' else 'IEC'} "
                             f"conductor table, not {self.tables.conductors}")
        if nec_tables and self.tables.conductor_edition is None:
            raise ValueError("tables.conductor_edition is needed with conductors_nec.csv")
        if self.family == "nec" and self.coordination.method != "next_size_up":
            pass  # a user may choose either coordination rule with AWG sizes
        if self.family == "iec" and self.terminations is not None:
            raise ValueError("terminations apply to the AWG (nec) family's 60/75/90 °C columns only")
        if nec_tables:
            for column in ("60", "75", "90"):
                if column not in self.corrections.ambient:
                    raise ValueError(f"corrections.ambient needs the '{column}' column (°C) of the conductor table")
        else:
            for insulation in ("PVC", "XLPE"):
                if insulation not in self.corrections.ambient:
                    raise ValueError(f"corrections.ambient needs '{insulation}'")
        return self


class RuleBasis(BaseModel):
    """A checked rule basis with where it came from (file name, path, SHA-256)."""

    model_config = ConfigDict(frozen=True)

    rules: RuleBasisFile
    file_name: str
    path: str
    sha256: str
    builtin: bool

    @property
    def label(self) -> str:
        """``NEC 2023`` or ``CSA C22.1 2021 (…)``: the code and edition, each once."""
        return f"{self.rules.code} {self.rules.edition}"


def builtin_rules_dir() -> Path:
    """The folder of the built-in rule-basis files: beside the rating tables, so ``catalog copy`` takes them too."""
    return Path(__file__).resolve().parents[1] / "tables" / "data"


def _fail(path: Path | str, field: str, problem: str) -> CatalogError:
    return CatalogError(where=str(path), field=field, problem=problem)


def _field(loc: tuple) -> str:
    out = ""
    for part in loc:
        if isinstance(part, int):
            out += f"[{part}]"
        elif isinstance(part, str) and part and not part[0].isupper() and not part.startswith(("tuple", "list")):
            out += ("." if out else "") + part
    return out or "(top level)"


def _message(error: dict) -> str:
    kind = error.get("type", "")
    if kind == "extra_forbidden":
        return "unknown key (check the spelling against the built-in rule-basis files)"
    if kind == "missing":
        return "required key is missing"
    msg = str(error.get("msg", "invalid value")).removeprefix("Value error, ")
    shown = repr(error.get("input"))
    shown = shown if len(shown) <= 40 else shown[:37] + "..."
    if kind.endswith("_type") or kind.startswith(("greater", "less", "literal", "int_", "float_", "string_")):
        return f"{msg[0].lower()}{msg[1:]} (got {shown})"
    return msg


def read_rule_basis(path: str | Path, builtin: bool = False) -> RuleBasis:
    """Read and check one rule-basis file.

    Parameters
    ----------
    path : str or Path
        The YAML file.
    builtin : bool
        Whether it is one of the shipped files (recorded in the provenance).

    Returns
    -------
    RuleBasis
        The checked rules with the file's name, path and SHA-256.

    Raises
    ------
    CatalogError
        One line naming the file, the field and the problem.

    Examples
    --------
    >>> basis = read_rule_basis(builtin_rules_dir() / "rules-nec-2023.yaml", builtin=True)
    >>> basis.label, basis.rules.coordination.next_size_up_max_a
    ('NEC 2023', 800.0)
    """
    from .read import parse_yaml

    path = Path(path)
    try:
        if not path.is_file():
            raise _fail(path, "", "rule-basis file not found" if not path.exists() else "not a regular file")
        with path.open("rb") as handle:
            raw = handle.read(MAX_RULE_BYTES + 1)
    except OSError as exc:
        raise _fail(path, "", f"cannot be read ({exc.strerror or exc})") from None
    if len(raw) > MAX_RULE_BYTES:
        raise _fail(path, "", f"over {MAX_RULE_BYTES:,} bytes; a rule-basis file may be at most that large")
    try:
        data = parse_yaml(raw, str(path))
    except BankbuildError as exc:
        raise _fail(path, exc.field, exc.problem) from None
    try:
        rules = RuleBasisFile.model_validate(data)
    except ValidationError as exc:
        errors = exc.errors(include_url=False)
        first = min(errors, key=lambda e: e.get("type") != "extra_forbidden")
        raise _fail(path, _field(first["loc"]), _message(first)) from None
    return RuleBasis(rules=rules, file_name=path.name, path=str(path), sha256=hashlib.sha256(raw).hexdigest(),
                     builtin=builtin)


def builtin_rule_basis(name: str, nec_edition: int = 2023) -> RuleBasis:
    """A shipped rule basis by the name a spec gives: ``nec`` (with ``nec_edition``), ``iec`` or ``csa``.

    >>> builtin_rule_basis("nec", 2020).rules.tables.conductor_edition
    2020
    >>> builtin_rule_basis("iec").rules.voltage_limits.continuous_pu
    1.0
    """
    key = f"nec-{nec_edition}" if name == "nec" else name
    return _builtin(key)


_CACHE: dict[str, RuleBasis] = {}


def _builtin(key: str) -> RuleBasis:
    if key not in BUILTIN:
        raise _fail("rules", "", f"no built-in rule basis {key!r} (built in: {', '.join(BUILTIN)})")
    if key not in _CACHE:
        _CACHE[key] = read_rule_basis(builtin_rules_dir() / BUILTIN[key], builtin=True)
    return _CACHE[key]


def rule_files(folder: str | Path) -> list[Path]:
    """The rule-basis files (``rules-*.yaml``) in a folder of tables, sorted."""
    return sorted(p for p in Path(folder).glob(f"{RULE_FILE_PREFIX}*.yaml") if not p.name.startswith("."))
