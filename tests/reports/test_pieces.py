"""A large plant's PDFs rendered in pieces (ranges of banks) on several cores and joined: the same pages, read
back by pypdf (a reader we did not write), numbered 'page N of M' across the whole document."""

from __future__ import annotations

import io
import os
import re
import sys
from pathlib import Path

import pypdf
import pytest
from pdf_text import pages_text

from bankbuild.api import run_spec
from bankbuild.reports import render
from bankbuild.reports.pdf_bom import bom_pdf
from bankbuild.reports.pdf_join import PieceError, join_pdfs
from bankbuild.reports.pdf_worksheet import worksheet_pdf

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "benchmarks"))
from plant import write_plant_spec  # noqa: E402

needs_workers = pytest.mark.skipif(render.worker_count(render.PARALLEL_MIN_BANKS, 4) < 2,
                                   reason="one core, or no fork on this system: nothing runs in parallel")
FOOTER = re.compile(r"page (\d+) of (\d+)")


@pytest.fixture(scope="module")
def plant(tmp_path_factory):
    """An invented plant of 9 banks of every kind."""
    return run_spec(write_plant_spec(tmp_path_factory.mktemp("plant"), 9))


def numbers(data: bytes) -> list[tuple[int, int]]:
    return [tuple(int(n) for n in FOOTER.findall(text)[-1]) for text in pages_text(data)]


def pieces_of(document, result, ranges) -> list[bytes]:
    """Render ``ranges`` of banks one by one, numbered as the render module numbers them (counts first)."""
    counts = [len(pypdf.PdfReader(io.BytesIO(document.render_range(result, a, b, lambda n: (0, n)))).pages)
              for a, b in ranges]
    before = [sum(counts[:i]) for i in range(len(counts))]
    return [document.render_range(result, a, b, lambda n, i=i: (before[i], sum(counts)))
            for i, (a, b) in enumerate(ranges)]


def unnumbered(data: bytes) -> list[str]:
    return [FOOTER.sub("", text) for text in pages_text(data)]


def headings(data: bytes) -> list[str]:
    return re.findall(r"Bank (\d+) of 9:", "".join(pages_text(data)))


@pytest.mark.parametrize("document", [worksheet_pdf, bom_pdf], ids=["worksheet", "bom"])
def test_joined_pieces_are_the_pieces_pages_numbered_throughout(plant, document):
    pieces = pieces_of(document, plant, [(0, 3), (3, 4), (4, 9)])
    joined = join_pdfs(pieces)
    reader = pypdf.PdfReader(io.BytesIO(joined), strict=True)
    total = len(reader.pages)
    assert numbers(joined) == [(n, total) for n in range(1, total + 1)]
    assert unnumbered(joined) == [page for piece in pieces for page in unnumbered(piece)]
    assert headings(joined) == [str(n) for n in range(1, 10)]  # every bank once, in order
    whole = document(plant)
    first = len(pages_text(pieces[0]))  # up to the first piece's end, the pages are the whole document's
    assert unnumbered(joined)[:first - 1] == unnumbered(whole)[:first - 1]
    assert reader.metadata.title == pypdf.PdfReader(io.BytesIO(whole)).metadata.title


def test_each_piece_keeps_fonts_of_its_own(plant):
    joined = join_pdfs(pieces_of(bom_pdf, plant, [(0, 4), (4, 9)]))
    subsets = re.findall(rb"/BaseFont /([A-Z]{6}\+[\w-]+)", joined)
    assert len(subsets) == len(set(subsets)) >= 2  # two pieces' subsets of one face are named apart


def test_what_is_not_a_piece_is_refused():
    with pytest.raises(PieceError):
        join_pdfs([b"%PDF-1.4\nnot a document", b"%PDF-1.4\n"])


@needs_workers
def test_a_large_plant_is_rendered_in_pieces_the_same(plant, monkeypatch):
    monkeypatch.setattr(worksheet_pdf, "banks_per_piece", 3)
    monkeypatch.setattr(bom_pdf, "banks_per_piece", 4)
    workers = render.worker_count(9, 2)
    assert len(render.piece_ranges(9, 3, workers)) >= 2
    out = dict(render.render_documents(plant, [("protection-worksheet.pdf", worksheet_pdf),
                                               ("bill-of-materials.pdf", bom_pdf)]))
    for name, document in (("protection-worksheet.pdf", worksheet_pdf), ("bill-of-materials.pdf", bom_pdf)):
        ranges = render.piece_ranges(9, document.banks_per_piece, workers)
        assert unnumbered(out[name]) == unnumbered(join_pdfs(pieces_of(document, plant, ranges)))
        total = len(pages_text(out[name]))
        assert numbers(out[name]) == [(n, total) for n in range(1, total + 1)]


@needs_workers
def test_a_piece_that_fails_leaves_the_document_to_this_process(plant, monkeypatch):
    parent = os.getpid()
    monkeypatch.setattr(worksheet_pdf, "banks_per_piece", 3)
    real = worksheet_pdf.render_range

    def fails_in_the_second_piece(result, first, stop, numbering):
        if os.getpid() != parent and first > 0:
            os._exit(3)
        return real(result, first, stop, numbering)

    monkeypatch.setattr(worksheet_pdf, "render_range", fails_in_the_second_piece)
    out = dict(render.render_documents(plant, [("protection-worksheet.pdf", worksheet_pdf),
                                               ("results.json", lambda r: b"{}")]))
    assert unnumbered(out["protection-worksheet.pdf"]) == unnumbered(real(plant, 0, 9, lambda n: (0, n)))
    assert out["results.json"] == b"{}"


@needs_workers
def test_the_command_lines_writers_split_a_large_plants_pdfs_into_pieces(plant, monkeypatch):
    """The writers the command line renders with import their modules on first use, but still say how a PDF
    splits: each PDF of a large plant is more than one job."""
    from bankbuild.reports.writer import _writers

    monkeypatch.setattr(worksheet_pdf, "banks_per_piece", 3)
    monkeypatch.setattr(bom_pdf, "banks_per_piece", 4)
    writers = _writers(plant)
    jobs = render._jobs(plant, writers, render.worker_count(9, len(writers)))
    for name in ("protection-worksheet.pdf", "bill-of-materials.pdf"):
        index = [n for n, _ in writers].index(name)
        assert sum(job.writer == index for job in jobs) >= 2, name
