"""Writing the documents of a run: every file to a temporary name first, then renamed into place."""

from __future__ import annotations

import os
import tempfile
from collections.abc import Callable
from pathlib import Path

from bankbuild.errors import OptionError
from bankbuild.results.sizing import ProjectResult

ONE_LINE_SVG = "one-line-{n}.svg"
"""File name of bank n's one-line diagram (n from 1, in the order of the spec)."""


def _writers(result: ProjectResult | None = None,
             csv_delimiter: str = ",") -> list[tuple[str, Callable[[ProjectResult], bytes]]]:
    """(file name, renderer) pairs: each renderer returns the whole file as bytes.

    The documents of every run, then, when ``result`` is given, one SVG one-line diagram per bank. ``csv_delimiter``
    separates the CSV bill of materials' cells.
    """
    from bankbuild.reports.jsonout import project_json
    from bankbuild.reports.pdf_bom import bom_pdf
    from bankbuild.reports.pdf_worksheet import worksheet_pdf
    from bankbuild.reports.tables import bom_csv, bom_json, bom_xlsx

    writers = [("results.json", lambda r: project_json(r).encode("utf-8")),
               ("bill-of-materials.pdf", bom_pdf),
               ("bill-of-materials.csv", lambda r: bom_csv(r, csv_delimiter)),
               ("bill-of-materials.xlsx", bom_xlsx),
               ("bill-of-materials.json", bom_json),
               ("protection-worksheet.pdf", worksheet_pdf)]
    if result is not None:
        writers += [(ONE_LINE_SVG.format(n=n), _svg_writer(n - 1)) for n in range(1, len(result.banks) + 1)]
    return writers


def _svg_writer(index: int) -> Callable[[ProjectResult], bytes]:
    """The renderer of one bank's one-line diagram (SVG, UTF-8)."""
    def render(result: ProjectResult) -> bytes:
        from bankbuild.reports.oneline import oneline_svg

        return oneline_svg(result.banks[index]).encode("utf-8")

    return render


def write_documents(result: ProjectResult, out_dir: Path, on_document=None, csv_delimiter: str = ",") -> list[Path]:
    """Render every document in memory, then write each atomically into ``out_dir``.

    Nothing is written unless every document rendered, and no reader ever sees a half-written file.
    ``on_document(done, total, name)``, if given, reports progress (see :mod:`bankbuild.reports.render`, which
    renders a large plant's documents on several cores). ``csv_delimiter`` separates the CSV's cells (``;`` for
    spreadsheets in locales whose decimal mark is a comma).
    """
    from bankbuild.reports.render import render_documents

    return write_rendered(render_documents(result, _writers(result, csv_delimiter), on_document), out_dir)


def write_rendered(rendered: list[tuple[str, bytes]], out_dir: Path) -> list[Path]:
    """Write documents already rendered in memory, each atomically, into ``out_dir`` (created if missing)."""
    try:
        out_dir.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OptionError(str(out_dir), "out_dir", f"cannot create the folder ({exc.strerror or exc})") from None
    if not out_dir.is_dir():
        raise OptionError(str(out_dir), "out_dir", "is not a folder")
    return [write_atomic(out_dir / name, data) for name, data in rendered]


def write_atomic(path: Path, data: bytes) -> Path:
    """Write ``data`` to ``path`` through a temporary file in the same folder and an atomic rename."""
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
        # mkstemp makes the file private (0600); a document is for sharing, so give it the mode a plain
        # open() would: 0666 less the process umask.
        os.chmod(tmp, 0o666 & ~_umask())
        os.replace(tmp, path)
    except OSError as exc:
        Path(tmp).unlink(missing_ok=True)
        raise OptionError(str(path), "out_dir", f"cannot write ({exc.strerror or exc})") from None
    return path


def _umask() -> int:
    """The process umask (read by setting it and putting it straight back)."""
    mask = os.umask(0o022)
    os.umask(mask)
    return mask
