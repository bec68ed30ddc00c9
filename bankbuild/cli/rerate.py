"""The body of ``bankbuild rerate``: check the options, read the spec and tables, re-rate, render, write.

Kept out of :mod:`bankbuild.cli.app` so that the command there stays a few lines; heavy imports happen here, inside
the function, only when the command runs.
"""

from __future__ import annotations

import math
from pathlib import Path

from bankbuild.errors import OptionError
from bankbuild.spec.model import Supply, field_bounds


def _in_range(option: str, value: float | None, unit: str) -> None:
    """The option's value within the range the spec's ``supply`` accepts for the same field."""
    if value is None:
        return
    low, high = field_bounds(Supply, option.removeprefix("--").replace("-", "_"))
    if not math.isfinite(value) or not low <= value <= high or value == 0 == low:
        raise OptionError("", option, f"must be between {low:g} and {high:g} {unit} (got {value:g})")


def transformer_option(kva: float | None, z_pct: float | None, source_sc_mva: float | None) -> dict | None:
    """The new site's transformer from the options, or None to keep each bank's own."""
    _in_range("--transformer-kva", kva, "kVA")
    _in_range("--transformer-z-pct", z_pct, "%")
    _in_range("--source-sc-mva", source_sc_mva, "MVA")
    if (kva is None) != (z_pct is None):
        raise OptionError("", "--transformer-kva" if kva is None else "--transformer-z-pct",
                          "give --transformer-kva and --transformer-z-pct together")
    if source_sc_mva is not None and kva is None:
        raise OptionError("", "--source-sc-mva", "needs --transformer-kva and --transformer-z-pct")
    if kva is None:
        return None
    return {"transformer_kva": kva, "transformer_z_pct": z_pct, "source_sc_mva": source_sc_mva}


def run_rerate(spec_path: Path, voltage_v: float, frequency_hz: float | None, out: Path | None, as_json: bool,
               catalogs_dir: Path | None, transformer: dict | None) -> str:
    """Re-rate every bank of the spec; write the documents when ``out`` is given; return the text to print."""
    from bankbuild.api import spec_catalogs_dir
    from bankbuild.design.rerate import rerate_project
    from bankbuild.reports.rerate_text import bom_difference_csv, rerate_json, rerate_text
    from bankbuild.reports.writer import write_rendered
    from bankbuild.spec.read import read_spec
    from bankbuild.tables.load import load_catalogs

    _in_range("--voltage-v", voltage_v, "V")
    _in_range("--frequency-hz", frequency_hz, "Hz")
    spec_file = read_spec(spec_path)
    tables = catalogs_dir if catalogs_dir is not None else spec_catalogs_dir(spec_file)
    catalogs = load_catalogs(tables)
    result = rerate_project(spec_file.spec, catalogs, voltage_v, frequency_hz, transformer,
                            spec_path=spec_file.path, spec_sha256=spec_file.sha256)
    as_text = rerate_json(result)
    written = []
    if out is not None:
        rendered = [("rerate.json", as_text.encode("utf-8")),
                    ("rerate-bom-difference.csv", bom_difference_csv(result).encode("utf-8")),
                    ("rerate.txt", (rerate_text(result) + "\n").encode("utf-8"))]
        written = write_rendered(rendered, out)
    return as_text if as_json else rerate_text(result, [str(p) for p in written])
