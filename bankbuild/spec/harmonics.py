"""The spec's ``harmonics`` block of a bank: the plant's harmonic currents, the background voltage distortion and
the source's resistance, for the harmonic study.

Strict like the rest of the spec: unknown keys, NaN, quoted numbers and contradictory forms are errors that name
the field. Orders are keyed ``h2`` … ``h50``; triplen orders (3, 9, 15 …) are refused, because balanced triplen
currents are zero-sequence and a three-wire bank neither carries nor amplifies them.
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import BaseModel, ConfigDict, Field, field_validator, model_validator

from bankbuild.spec.spectra import SPECTRA

DEFAULT_TRANSFORMER_X_R = 6.0
"""X/R of a distribution transformer when none is given [-]: common practice (no single source) for
500-2500 kVA units, whose X/R is about 5-8 (from memory)."""
DEFAULT_SOURCE_X_R = 10.0
"""X/R of the utility source when none is given [-]: common practice (no single source), from memory."""
DEFAULT_LOAD_PF = 0.95
"""Displacement power factor of a drive's input when ``load_kw`` is given without ``load_pf`` [-]: common
practice (no single source) for diode-front drives, from memory."""

IEC_61000_2_4_CLASS2_PCT = {5: 6.0, 7: 5.0, 11: 3.5, 13: 3.0, 17: 2.0, 19: 1.5, 23: 1.5, 25: 1.5}
"""IEC 61000-2-4 class 2 compatibility levels of harmonic voltage, by order [% of the fundamental]; from memory
(trade-facts, Harmonics). THD 8 %."""

OrderKey = Annotated[str, Field(pattern=r"^h([2-9]|[1-4][0-9]|50)$")]
SpectrumName = Literal[tuple(SPECTRA)]


def _no_triplens(field: str, values: dict[str, float]) -> dict[str, float]:
    triplen = sorted((k for k in values if int(k[1:]) % 3 == 0), key=lambda k: int(k[1:]))
    if triplen:
        raise ValueError(f"{field} gives {', '.join(triplen)}: triplen orders are zero-sequence and do not flow "
                         "into a three-wire bank; leave them out")
    return dict(sorted(values.items(), key=lambda kv: int(kv[0][1:])))


class Harmonics(BaseModel):
    """What the harmonic study of a bank needs besides the bank and its supply.

    Give the harmonic-producing load's fundamental current (``load_current_a``, or ``load_kw`` with an optional
    ``load_pf``) with its spectrum (``current_pct`` in percent of that current, or ``spectrum``: a typical one by
    name), and/or the ``background_voltage_pct`` at the bus without the bank (the utility's share, percent of
    the nominal phase voltage). ``transformer_x_r`` and ``source_x_r`` set the source's resistance;
    ``damping_kw`` a resistive load at the bus that damps resonance (none unless stated); ``reactor_q`` the
    detuning reactors' quality X_L/R at the fundamental (losses neglected unless stated).
    """

    model_config = ConfigDict(extra="forbid", strict=True, allow_inf_nan=False, frozen=True)

    load_current_a: Annotated[float, Field(gt=0, le=100_000)] | None = None
    load_kw: Annotated[float, Field(gt=0, le=1_000_000)] | None = None
    load_pf: Annotated[float, Field(gt=0, le=1)] | None = None
    current_pct: dict[OrderKey, Annotated[float, Field(ge=0, le=100)]] | None = Field(default=None, max_length=49)
    spectrum: SpectrumName | None = None
    background_voltage_pct: dict[OrderKey, Annotated[float, Field(ge=0, le=20)]] = Field(default_factory=dict,
                                                                                         max_length=49)
    transformer_x_r: Annotated[float, Field(ge=0.5, le=100)] = DEFAULT_TRANSFORMER_X_R
    source_x_r: Annotated[float, Field(ge=0.5, le=100)] = DEFAULT_SOURCE_X_R
    damping_kw: Annotated[float, Field(gt=0, le=1_000_000)] | None = None
    reactor_q: Annotated[float, Field(ge=1, le=1000)] | None = None

    @field_validator("current_pct")
    @classmethod
    def _current_orders(cls, value: dict[str, float] | None) -> dict[str, float] | None:
        return None if value is None else _no_triplens("current_pct", value)

    @field_validator("background_voltage_pct")
    @classmethod
    def _background_orders(cls, value: dict[str, float]) -> dict[str, float]:
        return _no_triplens("background_voltage_pct", value)

    @model_validator(mode="after")
    def _forms(self) -> Harmonics:
        if self.current_pct is not None and self.spectrum is not None:
            raise ValueError("give current_pct (a measured spectrum) or spectrum (a typical one by name), not both")
        has_spectrum = self.current_pct is not None or self.spectrum is not None
        has_load = self.load_current_a is not None or self.load_kw is not None
        if self.load_current_a is not None and self.load_kw is not None:
            raise ValueError("give load_current_a or load_kw (the harmonic-producing load), not both")
        if self.load_pf is not None and self.load_kw is None:
            raise ValueError("load_pf goes with load_kw")
        if has_spectrum and not has_load:
            raise ValueError("a current spectrum needs the load it is a percentage of: give load_current_a or "
                             "load_kw")
        if has_load and not has_spectrum:
            raise ValueError("load_current_a or load_kw needs its spectrum: give current_pct or spectrum (one of "
                             f"{', '.join(SPECTRA)})")
        if not has_spectrum and not any(self.background_voltage_pct.values()):
            raise ValueError("the study needs the plant's harmonic currents (load_current_a with current_pct or "
                             "spectrum) or a background_voltage_pct, or both")
        return self

    def current_orders_pct(self) -> dict[int, float]:
        """The current spectrum by order, stated or typical: ``{5: 30.0, …}`` [% of the load's fundamental]."""
        if self.spectrum is not None:
            return SPECTRA[self.spectrum].orders_pct()
        return {int(k[1:]): v for k, v in (self.current_pct or {}).items()}

    def background_orders_pct(self) -> dict[int, float]:
        """The background voltage by order: ``{5: 1.5, …}`` [% of the nominal phase voltage]."""
        return {int(k[1:]): v for k, v in self.background_voltage_pct.items()}

    def load_fundamental_a(self, voltage_v: float) -> float:
        """The harmonic-producing load's fundamental line current [A]; 0 without a current spectrum.

        From ``load_kw``: I = 1000·P / (√3·V·PF), PF = ``load_pf`` or 0.95.
        """
        if self.load_current_a is not None:
            return self.load_current_a
        if self.load_kw is None:
            return 0.0
        pf = self.load_pf if self.load_pf is not None else DEFAULT_LOAD_PF
        return 1000.0 * self.load_kw / (3**0.5 * voltage_v * pf)
