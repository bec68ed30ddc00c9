"""Table cells laid out without reportlab's Paragraph must break and stand exactly as a Paragraph would.

:func:`bankbuild.reports.pdf_blocks.wrap_lines` breaks plain cell text into lines itself (much faster than a
Paragraph per cell); where it answers, its lines must be the Paragraph's lines, word for word, and where a
Paragraph would draw a line differently from a plain string (a split word, narrowed spaces) it must decline.
"""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.reports.pdf_blocks import C, grid, wrap_lines
from bankbuild.reports.pdf_common import FONT, FONT_BOLD, para_text, paragraph_class, register_fonts, styles

WORDS = st.sampled_from(["kvar", "A", "×", "1.35", "=", "155.9", "NEC", "460.8(A);", "typical", "practice:",
                         "verify", "with", "the", "local", "code", "(240.4(G)", "2/0", "AWG", "√3", "µF",
                         "conservatively", "Drumvantle", "—", "≤", "WWWWWWWWWWWW"])


def paragraph_lines(text: str, style_name: str, width: float) -> tuple[list[str], bool]:
    """The lines a Paragraph breaks ``text`` into at ``width``, and whether any line is drawn narrowed."""
    para = paragraph_class()(para_text(text), styles()[style_name])
    para.wrap(width, 10_000)
    lines = para.blPara.lines
    words = [" ".join(line[1]) for line in lines]
    return words, any(line[0] < 0 for line in lines) or bool(para._splitLongWordCount)


@settings(max_examples=300, deadline=None)
@given(words=st.lists(WORDS, min_size=1, max_size=30), width=st.floats(30, 300),
       style_name=st.sampled_from(["cell", "cell_bold", "small"]))
def test_lines_are_the_paragraphs_lines(words, width, style_name):
    register_fonts()
    text = " ".join(words)
    style = styles()[style_name]
    ours = wrap_lines(text, style.fontName, style.fontSize, width)
    theirs, drawn_otherwise = paragraph_lines(text, style_name, width)
    if ours is None:
        assert drawn_otherwise  # declined only where a Paragraph would not draw plain lines
    else:
        assert ours == theirs and not drawn_otherwise


def test_a_word_wider_than_the_column_is_left_to_the_paragraph():
    register_fonts()
    assert wrap_lines("W" * 60, FONT, 7.4, 50) is None
    assert wrap_lines("short words", FONT_BOLD, 7.4, 200) == ["short words"]


def test_grid_draws_wrapped_text_as_plain_lines():
    register_fonts()
    long = "NEC 240.4(B)/(D) applied conservatively (240.4(G) refers capacitor circuits to 460.8(B): verify)"
    table = grid([[C("Head", "head"), C("Text", "head")], [C("Fuse", "cell_bold"), C(long)]], [60, 120])
    cell = table.cell_text(1, 1)
    assert isinstance(cell, str) and "\n" in cell  # broken here, not a Paragraph
    assert cell.replace("\n", " ") == long
