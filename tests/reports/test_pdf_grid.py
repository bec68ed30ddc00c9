"""Our own table routine against reportlab's: the same rows, the same text at the same places, the same splits.

The oracle is reportlab's own Table with a Paragraph in every cell and the style commands the documents used
before :mod:`bankbuild.reports.pdf_grid` existed (paddings 3/3/2/2.5, header rows repeated). The text each draws
is read back with pypdf, with its position on the page.
"""

from __future__ import annotations

import io

import pypdf
from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.reports.pdf_blocks import C, grid
from bankbuild.reports.pdf_common import (
    INK,
    PageFrame,
    build_pdf,
    para_text,
    paragraph_class,
    register_fonts,
    styles,
)

WORDS = st.sampled_from(["kvar", "A", "×", "1.35", "=", "155.9", "NEC", "460.8(A);", "typical", "practice:",
                         "verify", "with", "the", "local", "code", "(240.4(G)", "2/0", "AWG", "√3", "µF",
                         "conservatively", "Drumvantle", "—", "≤"])
TEXT = st.lists(WORDS, min_size=1, max_size=14).map(" ".join)
STYLE = st.sampled_from(["cell", "cell_bold", "cell_right", "small"])
FRAME = PageFrame("Grid test", "Invented project", "A", "0", "0" * 64)


def reference_table(rows, widths, header_rows: int):
    """reportlab's Table of Paragraphs, styled as the documents' tables were."""
    from reportlab.lib.colors import Color
    from reportlab.platypus import Table, TableStyle

    data = [[paragraph_class()(para_text(cell.text), styles()[cell.style]) for cell in row] for row in rows]
    table = Table(data, colWidths=list(widths), repeatRows=header_rows, hAlign="LEFT")
    table.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"),
                               ("LEFTPADDING", (0, 0), (-1, -1), 3), ("RIGHTPADDING", (0, 0), (-1, -1), 3),
                               ("TOPPADDING", (0, 0), (-1, -1), 2), ("BOTTOMPADDING", (0, 0), (-1, -1), 2.5),
                               ("BOX", (0, 0), (-1, -1), 0.6, Color(*INK))]))
    return table


def placed_text(pdf: bytes) -> list[tuple[int, float, float, str]]:
    """(page, x, y, text) of every string drawn, in page coordinates, sorted."""
    out = []
    for number, page in enumerate(pypdf.PdfReader(io.BytesIO(pdf)).pages):
        def visit(text, cm, tm, font, size, number=number):
            if text.strip():
                x = tm[4] * cm[0] + tm[5] * cm[2] + cm[4]
                y = tm[4] * cm[1] + tm[5] * cm[3] + cm[5]
                out.append((number, round(x, 1), round(y, 1), text.strip()))
        page.extract_text(visitor_text=visit)
    return sorted(out)


def story_pdf(flowable) -> bytes:
    return build_pdf(lambda width: [flowable], FRAME, "nec", "grid test", "test")


@settings(max_examples=25, deadline=None)
@given(cells=st.lists(st.lists(st.tuples(TEXT, STYLE), min_size=3, max_size=3), min_size=2, max_size=70),
       shares=st.tuples(st.floats(0.15, 0.5), st.floats(0.15, 0.5)), header_rows=st.integers(0, 1))
def test_same_text_at_the_same_places_as_reportlabs_table(cells, shares, header_rows):
    register_fonts()
    rows = [[C(text, style) for text, style in row] for row in cells]
    widths = [400 * shares[0], 400 * shares[1], 400 * (1 - shares[0] - shares[1]) + 60]
    ours = story_pdf(grid(rows, widths, header_rows=header_rows, zebra=False))
    theirs = story_pdf(reference_table(rows, widths, header_rows))
    assert placed_text(ours) == placed_text(theirs)


@settings(max_examples=60, deadline=None)
@given(cells=st.lists(st.lists(st.tuples(TEXT, STYLE), min_size=2, max_size=2), min_size=2, max_size=30),
       avail=st.floats(20, 400), header_rows=st.integers(0, 2))
def test_rows_and_splits_are_reportlabs(cells, avail, header_rows):
    register_fonts()
    rows = [[C(text, style) for text, style in row] for row in cells]
    widths = [120.0, 180.0]
    ours = grid(rows, widths, header_rows=header_rows, zebra=False)
    theirs = reference_table(rows, widths, header_rows)
    assert abs(ours.wrap(300, 10_000)[1] - theirs.wrap(300, 10_000)[1]) < 1e-6
    assert [round(r.height, 6) for r in ours.rows] == [round(h, 6) for h in theirs._rowHeights]
    our_parts, their_parts = ours.split(300, avail), theirs.split(300, avail)
    assert len(our_parts) == len(their_parts)
    assert [len(p.rows) for p in our_parts] == [len(p._cellvalues) for p in their_parts]


def test_a_bold_lead_in_and_a_note_beneath_stand_where_the_markup_put_them():
    """The band rows (bold name, then the text) and the cells with a note in small italics beneath, drawn as
    plain lines, against the Paragraph of the same markup."""
    register_fonts()
    cells = [C(" — design current 150.3 A = the larger of rated 150.3 A and operating 145.2 A", lead="Main incomer"),
             C("125 A fuse, class J", note="the ampacity is not itself a standard rating and the device is ≤ 800 A"),
             C("CU-480-60-25.0: three-phase unit", note="steps 1–2", note_colour=(0.29, 0.31, 0.35))]
    ours = story_pdf(grid([[cell] for cell in cells], [220.0], header_rows=0, zebra=False))
    from reportlab.platypus import Table, TableStyle

    table = Table([[paragraph_class()(cell.markup(), styles()["cell"])] for cell in cells], colWidths=[220.0],
                  hAlign="LEFT")
    table.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("LEFTPADDING", (0, 0), (-1, -1), 3),
                               ("RIGHTPADDING", (0, 0), (-1, -1), 3), ("TOPPADDING", (0, 0), (-1, -1), 2),
                               ("BOTTOMPADDING", (0, 0), (-1, -1), 2.5)]))
    assert grid([[cell] for cell in cells], [220.0], header_rows=0).cell_text(1, 0) is not None  # plain lines
    assert placed_text(ours) == placed_text(story_pdf(table))


@settings(max_examples=40, deadline=None)
@given(text=st.lists(WORDS, min_size=1, max_size=60).map(" ".join),
       style=st.sampled_from(["body", "note", "h1", "h2", "small", "title"]))
def test_a_plain_paragraph_is_drawn_as_reportlabs(text, style):
    from bankbuild.reports.pdf_common import P

    register_fonts()
    ours = story_pdf(P(text, style))
    theirs = story_pdf(paragraph_class()(para_text(text), styles()[style]))
    assert placed_text(ours) == placed_text(theirs)


def word_spacings(pdf: bytes) -> list[str]:
    """The word spacings (``Tw`` operands) set in the page content, in order."""
    import re

    reader = pypdf.PdfReader(io.BytesIO(pdf))
    data = b"".join(page.get_contents().get_data() for page in reader.pages)
    return [value.decode() for value in re.findall(rb"(-?[0-9.]+) Tw", data) if value not in (b"0",)]


def test_a_line_that_fits_only_with_narrowed_spaces_is_set_as_a_paragraph_sets_it():
    """Where a line fits only within reportlab's space shrinkage, a Paragraph narrows its word spacing: the cell
    and the plain paragraph drawn here must do the same, to the same value."""
    from bankbuild.reports.pdf_blocks import wrap_spaced
    from bankbuild.reports.pdf_common import FONT, P

    register_fonts()
    text = "NEC 240.6(A) standard ampere ratings; NEC 460.8(B); 1.65 for time-delay fuses is common practice"
    width = next(w / 10 for w in range(600, 1500) if (lines := wrap_spaced(text, FONT, 7.4, w / 10)) is not None
                 and any(spare < -1e-6 for _, spare in lines))
    ours = story_pdf(grid([[C(text)]], [width + 6], header_rows=0))
    theirs = story_pdf(reference_table([[C(text)]], [width + 6], 0))
    assert word_spacings(ours) and word_spacings(ours) == word_spacings(theirs)
    assert placed_text(ours) == placed_text(theirs)
    def squeezed(w: float, size: float) -> bool:
        lines = wrap_spaced(text, FONT, size, w)
        return lines is not None and any(spare < -1e-6 for _, spare in lines)

    body = next(w / 10 for w in range(600, 3000) if squeezed(w / 10, 8.5))

    def narrow(flowable):
        from reportlab.platypus import Table

        return Table([[flowable]], colWidths=[body], style=[("LEFTPADDING", (0, 0), (-1, -1), 0),
                                                            ("RIGHTPADDING", (0, 0), (-1, -1), 0)])

    ours = story_pdf(narrow(P(text, "body")))
    theirs = story_pdf(narrow(paragraph_class()(para_text(text), styles()["body"])))
    assert word_spacings(ours) and word_spacings(ours) == word_spacings(theirs)
    assert placed_text(ours) == placed_text(theirs)


def test_a_part_that_ends_above_a_band_row_draws_its_rule_at_the_foot():
    """reportlab's Table gives a band row's heavy rule to the part before a split as well (at its foot): a page
    that ends just above 'Step 2 …' shows the rule there, and the next page shows it under the header."""
    register_fonts()
    rows = [[C("Head", "head")], [C("a")], [C("b")], [C(" — band", lead="Step 2")], [C("c")]]
    table = grid(rows, [200.0], spans=[3])
    heights = [r.height for r in (table.wrap(200, 1000) and table.rows)]
    first, rest = table.split(200, sum(heights[:3]) + 1)
    assert len(first.rows) == 3 and first.tail_rule == 0.8 and not first.bottom
    assert rest.rows[1].rule_above == 0.8 and rest.tail_rule == 0.0
    whole, other = grid(rows, [200.0], spans=[3]).split(200, sum(heights[:2]) + 1)
    assert whole.tail_rule == 0.0  # the row after the split is no band
