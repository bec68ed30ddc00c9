"""The body of ``bankbuild survey``: read the readings and the unit table, survey, render, write.

Kept out of :mod:`bankbuild.cli.app` so that the command there stays a few lines; pandas, numpy and reportlab are
imported here, inside the function, only when the command runs.
"""

from __future__ import annotations

from pathlib import Path


def run_survey(data: Path, out: Path | None, as_json: bool, catalogs_dir: Path | None, columns: dict[str, str],
               kvar_sign: str, **options) -> str:
    """Survey one file of readings; write spec.yaml, survey.json and the PDF into ``out`` when given; return the
    text to print (the JSON summary with ``as_json``)."""
    from bankbuild.design.survey import survey
    from bankbuild.reports.pdf_survey import survey_documents
    from bankbuild.reports.survey_out import survey_json, survey_text
    from bankbuild.reports.writer import write_rendered
    from bankbuild.spec.meter import read_meter_data
    from bankbuild.tables.load import load_catalogs

    catalogs = load_catalogs(catalogs_dir)
    readings = read_meter_data(data, columns={k: v for k, v in columns.items() if v}, kvar_sign=kvar_sign,
                               label=str(data))
    tables = [f"{t.file_name} sha256 {t.sha256}" for t in catalogs.tables if t.file_name == "capacitor_units.csv"]
    result = survey(readings, units=catalogs.capacitor_units, tables=tables, **options)
    written = write_rendered(survey_documents(result), out) if out is not None else []
    return survey_json(result) if as_json else survey_text(result, [str(p) for p in written])
