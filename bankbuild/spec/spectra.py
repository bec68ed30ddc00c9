"""Typical harmonic current spectra of common plant loads, selectable by name in a spec's ``harmonics.spectrum``.

A declared table: each row is a frozen :class:`Spectrum` with its name, what it describes, its basis and the
current per order in percent of the load's fundamental current. These are *common practice* figures, not
measurements: the real spectrum depends on the DC-link or line reactor, the source impedance and the loading.
Where a site has measured values, give them as ``current_pct`` instead.

Only positive- and negative-sequence orders are listed: balanced triplen currents (3, 9, 15 …) are
zero-sequence and do not flow into a three-wire capacitor bank.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Spectrum:
    """One typical spectrum.

    Attributes
    ----------
    name : str
        The name a spec uses
    title : str
        What load it describes
    basis : str
        Where the figures come from
    current_pct : tuple of (int, float)
        Harmonic order -> current [% of the load's fundamental current], ascending orders
    """

    name: str
    title: str
    basis: str
    current_pct: tuple[tuple[int, float], ...]

    def orders_pct(self) -> dict[int, float]:
        """The spectrum as ``{order: percent}``.

        >>> SPECTRA["twelve_pulse"].orders_pct()
        {5: 3.0, 7: 2.0, 11: 9.0, 13: 6.0}
        """
        return dict(self.current_pct)


_TABLE = (
    Spectrum("six_pulse", "six-pulse drive or rectifier, no DC choke or line reactor",
             "common practice (no single source): middle of the usual ranges h5 60-80, h7 35-50, h11 8-15, "
             "h13 5-10 %", ((5, 70.0), (7, 42.0), (11, 11.0), (13, 7.0))),
    Spectrum("six_pulse_choke", "six-pulse drive with a DC choke or a 3-5 % line reactor",
             "common practice (no single source): middle of the usual ranges h5 30-40, h7 10-20, h11 6-9, "
             "h13 4-7 %", ((5, 35.0), (7, 15.0), (11, 7.5), (13, 5.5))),
    Spectrum("twelve_pulse", "twelve-pulse drive or rectifier",
             "common practice (no single source): h11 about 9, h13 about 6 %; residual h5 3 and h7 2 % from "
             "imperfect cancellation (from memory)", ((5, 3.0), (7, 2.0), (11, 9.0), (13, 6.0))),
    Spectrum("switch_mode", "single-phase switch-mode power supplies (computers, LED drivers), balanced over "
             "the phases", "from memory (no single source): capacitor-input rectifiers without power-factor "
             "correction; triplen orders left out", ((5, 60.0), (7, 35.0), (11, 10.0), (13, 6.0))),
)

SPECTRA: dict[str, Spectrum] = {s.name: s for s in _TABLE}
"""The typical spectra by name."""
