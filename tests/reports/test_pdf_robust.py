"""The PDF documents under stress: hostile and long text, big banks, any text through the escaping, layouts
that cannot fit, failed and repeated writes. All names are invented.
"""

from __future__ import annotations

import html
import io
import subprocess
import sys

import pypdf
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pdf_text import pages_text, size_yaml, squash, whole

from bankbuild.api import demo_spec_path, run_spec
from bankbuild.reports import pdf_worksheet
from bankbuild.reports.pdf_bom import bom_pdf
from bankbuild.reports.pdf_common import PDF_FILES, para_text, plain_text, register_fonts
from bankbuild.reports.pdf_worksheet import worksheet_pdf
from bankbuild.reports.writer import write_documents
from bankbuild.results.sizing import BomLine

HOSTILE = ("<b>bold</b>", "&amp;", "<font color='red'>", "]]>", "</para>", "&#60;", "<br/>")


@pytest.fixture(scope="module")
def demo():
    return run_spec(demo_spec_path())


def test_hostile_and_long_names_are_shown_literally(demo):
    long_name = " ".join(HOSTILE) + " " + "Drumvantle north extension feeder " * 8 + "Z" * 60
    assert len(long_name) > 300
    project = {**demo.project, "name": long_name, "site": "Unit <7> & yard ]]>", "prepared_by": "A. <i>N</i>"}
    banks = [b.model_copy(update={"name": f"{h} bank {i}"})
             for i, (b, h) in enumerate(zip(demo.banks, HOSTILE[:len(demo.banks)], strict=True))]
    result = demo.model_copy(update={"project": project, "banks": banks})
    for data in (bom_pdf(result), worksheet_pdf(result)):
        text = whole(data)
        assert squash(long_name) in text
        assert "Unit<7>&yard]]>" in text and "A.<i>N</i>" in text
        for bank in banks:
            assert squash(bank.name) in text
        assert "Drumvantle" in pypdf.PdfReader(io.BytesIO(data)).metadata.title  # the information dictionary parses


def test_a_bank_of_16_steps_renders_every_step(tmp_path):
    spec = {"project": {"name": "<b>Sixteen</b> & steps"},
            "banks": [{"name": "Bank <16>", "supply": {"voltage_v": 480, "frequency_hz": 60,
                                                        "transformer_kva": 2000, "transformer_z_pct": 6},
                       "need": {"kvar": 800}, "steps": {"count": 16, "pattern": "equal"}}]}
    result = size_yaml(tmp_path, spec)
    assert len(result.banks[0].steps) == 16
    data = worksheet_pdf(result)
    pages = pages_text(data)
    text = squash("".join(pages))
    for step in result.banks[0].steps:
        assert f"Step{step.index}({step.kvar:,.1f}kvar)" in text
    sizing_pages = [p for p in pages if "Whatissized" in squash(p)]
    assert len(sizing_pages) >= 2  # the sizing table runs over pages with its header repeated
    assert "<b>Sixteen</b>&steps" in text
    assert len(pypdf.PdfReader(io.BytesIO(bom_pdf(result))).pages) >= 1


@settings(max_examples=150, deadline=None)
@given(st.text(max_size=80))
def test_escaping_is_lossless_for_any_text(text):
    # Property: the Paragraph markup of any text reads back to exactly the drawable text, and parses.
    from reportlab.platypus import Paragraph

    from bankbuild.reports.pdf_common import styles

    escaped = para_text(text)
    assert "<" not in escaped and ">" not in escaped
    assert html.unescape(escaped) == plain_text(text)
    para = Paragraph(escaped, styles()["cell"])
    drawn = "".join(getattr(f, "text", "") for f in para.frags)
    assert squash(drawn) == squash(plain_text(text))


@settings(max_examples=150, deadline=None)
@given(st.text(max_size=60))
def test_drawable_text_uses_only_covered_glyphs(text):
    covered = register_fonts()
    assert all(ord(ch) in covered for ch in plain_text(text))


def test_a_row_taller_than_a_page_is_one_error_line_not_a_traceback(demo):
    from bankbuild.errors import BankbuildError

    # (long notes are cut to fit a cell, see pdf_bom.cell_notes; a description is printed whole)
    line = BomLine(item=1, qty=1.0, unit="pcs", category="c", description="very long description " * 3000)
    bank = demo.banks[0].model_copy(update={"bom": [line]})
    with pytest.raises(BankbuildError, match="Bill of materials: layout: cannot lay out"):
        bom_pdf(demo.model_copy(update={"banks": [bank]}))


# --- writing -----------------------------------------------------------------------------------------------------


def test_a_failed_render_writes_nothing_and_keeps_the_old_set(demo, tmp_path, monkeypatch):
    out = tmp_path / "out"
    write_documents(demo, out)
    before = {p.name: p.read_bytes() for p in out.iterdir()}

    def broken(result):
        raise RuntimeError("layout failed")

    monkeypatch.setattr(pdf_worksheet, "worksheet_pdf", broken)
    changed = demo.model_copy(update={"project": {**demo.project, "revision": "B"}})
    with pytest.raises(RuntimeError):
        write_documents(changed, out)
    assert {p.name: p.read_bytes() for p in out.iterdir()} == before


def test_a_rerun_replaces_the_old_set(demo, tmp_path):
    out = tmp_path / "out"
    write_documents(demo, out)
    changed = demo.model_copy(update={"project": {**demo.project, "revision": "Q7"}})
    write_documents(changed, out)
    text = whole((out / "protection-worksheet.pdf").read_bytes())
    assert "rev.Q7" in text
    assert set(PDF_FILES) <= {p.name for p in out.iterdir()}
    assert not [p for p in out.iterdir() if p.name.startswith(".")], "temporary files left"


def test_pdf_modules_do_not_import_reportlab_until_drawing():
    code = ("import sys; import bankbuild.cli.app, bankbuild.reports.writer, bankbuild.reports.pdf_bom, "
            "bankbuild.reports.pdf_worksheet; print('reportlab' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
