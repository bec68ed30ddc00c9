"""Valid but enormous input for the limits benchmark and the fault tests: a long unit table, a huge derived need.

The built-in tables are copied and the unit table grown with 1000 V 60 Hz units, after the real rows in the
table's order, so that a 480 V bank's search has to look past every one of them.
"""

from __future__ import annotations

import shutil
from pathlib import Path

from bankbuild.tables.load import builtin_dir

HUGE_NEED = "need: {kw: 1000, pf_present: 0.000001, pf_target: 0.95}"
"""A need worked out from kW and a present PF so small that it comes to about a million MVA."""


def big_units_table(folder: Path, rows: int) -> Path:
    """The built-in tables in ``folder``, the unit table grown to ``rows`` data rows; returns the folder."""
    shutil.copytree(builtin_dir(), folder)
    path = folder / "capacitor_units.csv"
    lines = path.read_text(encoding="utf-8").splitlines()
    header_at = next(i for i, line in enumerate(lines) if line and not line.startswith("#"))
    header, data = lines[header_at].split(","), lines[header_at + 1:]
    template = data[0].split(",")
    extra = []
    for k in range(rows - len(data)):
        cells = dict(zip(header, template, strict=True))
        cells.update({"unit_id": f"FILL-{k:06d}", "rated_voltage_v": "1000", "rated_frequency_hz": "60",
                      "rated_kvar": f"{0.1 + k * 0.02:.2f}", "description": "filler"})
        extra.append(",".join(cells[h] for h in header))
    path.write_text("\n".join(lines[:header_at + 1] + data + extra) + "\n", encoding="utf-8")
    return folder
