"""The body of ``bankbuild rerate``: re-rate through the API, render, write.

Kept out of :mod:`bankbuild.cli.app` so that the command there stays a few lines; heavy imports happen here, inside
the function, only when the command runs. The option checks live in :func:`bankbuild.api.rerate`, which names
its parameters as in Python; the command line shows them as its options.
"""

from __future__ import annotations

from pathlib import Path


def run_rerate(spec_path: Path, voltage_v: float, frequency_hz: float | None, out: Path | None, as_json: bool,
               catalogs_dir: Path | None, transformer: dict):
    """Re-rate every bank of the spec; write the documents (into ``out``, or ``bankbuild-out`` unless ``--json``
    is given without ``--out``, as ``size`` does); return the result and the text to print."""
    from bankbuild.api import rerate
    from bankbuild.reports.pdf_rerate import rerate_pdf
    from bankbuild.reports.rerate_text import bom_difference_csv, rerate_json, rerate_text
    from bankbuild.reports.writer import RERATE_DOCUMENTS, check_out, write_rendered

    if out is None and not as_json:
        out = Path("bankbuild-out")
    if out is not None:
        check_out(out, RERATE_DOCUMENTS)  # a folder the documents cannot go into is refused before the work
    result = rerate(spec_path, voltage_v, frequency_hz, catalogs_dir=catalogs_dir, **transformer)
    as_text = rerate_json(result)
    written = []
    if out is not None:
        rendered = [("rerate.json", as_text.encode("utf-8")),
                    ("rerate-bom-difference.csv", bom_difference_csv(result).encode("utf-8")),
                    ("rerate.txt", (rerate_text(result) + "\n").encode("utf-8")),
                    ("rerate.pdf", rerate_pdf(result))]
        written = write_rendered(rendered, out, RERATE_DOCUMENTS)
    return result, (as_text if as_json else rerate_text(result, [str(p) for p in written]))
