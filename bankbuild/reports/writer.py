"""Writing the documents of a run: all or nothing, under the output folder's lock (see :mod:`bankbuild.files`).

A reader of the folder sees the previous run's documents or this run's, never a mix and never a file cut short.
Errors name the folder and the parameter that gave it (``out_dir``); the command line shows its option instead.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING

from bankbuild.files import FileSet, check_folder

if TYPE_CHECKING:
    from bankbuild.results.sizing import ProjectResult

ONE_LINE_SVG = "one-line-{n}.svg"
"""File name of bank n's one-line diagram (n from 1, in the order of the spec)."""
ONE_LINE_PATTERN = r"one-line-[0-9]+\.svg"
"""Every name a one-line diagram may have: an earlier run's diagrams of banks this run lacks are removed."""
DOCUMENTS = ("results.json", "bill-of-materials.pdf", "bill-of-materials.csv", "bill-of-materials.xlsx",
             "bill-of-materials.json", "protection-worksheet.pdf")
RERATE_DOCUMENTS = ("rerate.json", "rerate-bom-difference.csv", "rerate.txt", "rerate.pdf")



def _writers(result: ProjectResult | None = None,
             csv_delimiter: str = ",") -> list[tuple[str, Callable[[ProjectResult], bytes]]]:
    """(file name, renderer) pairs: each renderer returns the whole file as bytes.

    The documents of every run, then, when ``result`` is given, one SVG one-line diagram per bank. ``csv_delimiter``
    separates the CSV bill of materials' cells.
    """
    writers = [("results.json", lambda r: _call("jsonout", "project_json", r).encode("utf-8")),
               ("bill-of-materials.pdf", _Deferred("pdf_bom", "bom_pdf")),
               ("bill-of-materials.csv", lambda r: _call("tables", "bom_csv", r, csv_delimiter)),
               ("bill-of-materials.xlsx", lambda r: _call("tables", "bom_xlsx", r)),
               ("bill-of-materials.json", lambda r: _call("tables", "bom_json", r)),
               ("protection-worksheet.pdf", _Deferred("pdf_worksheet", "worksheet_pdf"))]
    assert tuple(name for name, _ in writers[:len(DOCUMENTS)]) == DOCUMENTS
    if result is not None:
        writers += [(ONE_LINE_SVG.format(n=n), _svg_writer(n - 1)) for n in range(1, len(result.banks) + 1)]
    return writers


def _load(module: str, name: str):
    """``bankbuild.reports.<module>.<name>``, the module imported now: a process imports only the renderers of the
    documents it renders (those of the PDFs import reportlab's parts)."""
    from importlib import import_module

    return getattr(import_module(f"bankbuild.reports.{module}"), name)


def _call(module: str, function: str, *args):
    """``bankbuild.reports.<module>.<function>(*args)``, the module imported on first use (see :func:`_load`)."""
    return _load(module, function)(*args)


class _Deferred:
    """A document renderer of ``bankbuild.reports.<module>``, imported when first used: called, or asked for an
    attribute (a PDF's ``banks_per_piece`` and ``render_range``, which split a large plant's document into
    pieces; see :class:`.pdf_common.PdfDocument`)."""

    def __init__(self, module: str, name: str):
        self._where = (module, name)

    def _target(self):
        return _load(*self._where)

    def __call__(self, *args):
        return self._target()(*args)

    def __getattr__(self, attr: str):
        if attr.startswith("_"):  # copy and pickle probe such names: not the renderer's
            raise AttributeError(attr)
        return getattr(self._target(), attr)


def _svg_writer(index: int) -> Callable[[ProjectResult], bytes]:
    """The renderer of one bank's one-line diagram (SVG, UTF-8)."""
    return lambda result: _call("oneline", "oneline_svg", result.banks[index]).encode("utf-8")


def check_out(out_dir: str | Path, names: tuple[str, ...] = DOCUMENTS) -> None:
    """Refuse an output folder the documents could not go into, before any work is done."""
    check_folder(out_dir, "out_dir", names)


def _prepare_pdfs() -> None:
    """What a worker that will draw the PDFs can do before the results exist: import and set up reportlab (the
    document modules import it inside their functions, for a light start-up elsewhere)."""
    import reportlab.pdfgen.canvas  # noqa: F401
    import reportlab.platypus  # noqa: F401

    from bankbuild.reports import bank_charts, pdf_bom, pdf_worksheet  # noqa: F401
    from bankbuild.reports.pdf_common import paragraph_class, register_fonts, styles

    register_fonts()
    styles()
    paragraph_class()


def _prepare_workbook() -> None:
    """What a worker that will write the workbook and the light documents can do first: import openpyxl and
    their modules."""
    import openpyxl  # noqa: F401
    import openpyxl.packaging.extended  # noqa: F401 - imported when a workbook is saved

    from bankbuild.reports import jsonout, oneline, tables  # noqa: F401


def prestart(csv_delimiter: str = ","):
    """Workers for a run's documents, started now, before the plant is sized (see
    :class:`bankbuild.reports.render.WarmWorkers`): the first imports reportlab; once it has, it starts the
    second, which so has reportlab too and imports openpyxl. The first draws PDFs; the second writes the workbook,
    JSON, CSV and SVGs, then draws PDFs too (the worksheet goes to whichever is ready first, the bill of materials
    to whichever is free next). Pass them to :func:`write_documents`; stop them (``.stop()``) if the run ends
    before."""
    from bankbuild.reports.render import WarmWorkers

    return WarmWorkers(lambda result: _writers(result, csv_delimiter),
                       [(_prepare_pdfs, lambda name: False),
                        (_prepare_workbook, lambda name: not name.endswith(".pdf"))],
                       pooled=("protection-worksheet.pdf", "bill-of-materials.pdf"))


def write_documents(result: ProjectResult, out_dir: Path, on_document=None, csv_delimiter: str = ",",
                    warm=None) -> list[Path]:
    """Render every document, then put the whole set into ``out_dir`` at once (created if missing).

    The folder is locked from before the first document renders until the set is in place.
    ``on_document(done, total, name)``, if given, reports progress (see :mod:`bankbuild.reports.render`, which
    renders a large plant's documents on several cores). ``csv_delimiter`` separates the CSV's cells (``;`` for
    spreadsheets in locales whose decimal mark is a comma). ``warm``: workers from :func:`prestart`.
    """
    from bankbuild.reports.render import render_documents

    check_out(out_dir, DOCUMENTS)
    with FileSet(Path(out_dir), "out_dir", DOCUMENTS, family_pattern=ONE_LINE_PATTERN) as files:
        for name, data in render_documents(result, _writers(result, csv_delimiter), on_document, warm):
            files.add(name, data)
        return files.commit()


def write_rendered(rendered: list[tuple[str, bytes]], out_dir: Path, family: tuple[str, ...] = ()) -> list[Path]:
    """Put documents already rendered in memory into ``out_dir`` as one set (created if missing); the files of
    ``family`` (every name such a set may hold) that it does not hold are removed."""
    check_out(out_dir, tuple(name for name, _ in rendered))
    with FileSet(Path(out_dir), "out_dir", family) as files:
        for name, data in rendered:
            files.add(name, data)
        return files.commit()
