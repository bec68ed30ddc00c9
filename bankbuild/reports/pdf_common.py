"""What the PDF documents share: fonts, text escaping, number formats, styles, and the page frame with
"page N of M" (the title, provenance and cautions blocks are in :mod:`.pdf_blocks`).

reportlab is imported inside the functions, so importing this module costs nothing until a PDF is drawn.

Fonts: the Bitstream Vera TrueType faces that ship inside reportlab's own package. They cover Latin-1 and the
symbols the documents use (Ω µ √ ≤ ≥ ° ² × − ∆ π ≈); the base-14 PDF fonts do not. A character the font lacks is
replaced by a look-alike it has (Δ → ∆, μ → µ) or by its base letter, and failing both is written out as
``[U+XXXX]`` so that nothing a user typed silently disappears.
"""

from __future__ import annotations

import io
import math
import os
import unicodedata
from collections.abc import Callable
from dataclasses import dataclass
from functools import lru_cache

from bankbuild.errors import BankbuildError
from bankbuild.results.sizing import ProjectResult

FONT = "BankbuildSans"
FONT_BOLD = "BankbuildSans-Bold"
FONT_ITALIC = "BankbuildSans-Italic"
FONT_BOLD_ITALIC = "BankbuildSans-BoldItalic"
_FONT_FILES = {FONT: "Vera.ttf", FONT_BOLD: "VeraBd.ttf", FONT_ITALIC: "VeraIt.ttf", FONT_BOLD_ITALIC: "VeraBI.ttf"}

# Look-alikes for characters the Vera faces lack (their code points differ, the reader sees the same sign).
_LOOK_ALIKE = {
    "\u0394": "\u2206",  # Greek capital delta -> increment sign
    "\u03bc": "\u00b5",  # Greek small mu -> micro sign
    "\u2126": "\u03a9",  # ohm sign -> Greek capital omega
    "\u03c6": "phi",
    "\u03d5": "phi",
    "\u2192": "->",
    "\u2190": "<-",
    "\u2713": "ok",
    "\u2714": "ok",
    "\u2717": "x",
    "\u221d": "~",  # proportional to: in Vera's cmap, but drawn as the empty box
    "\u2217": "*",
    "\u2218": "°",
    "\u2261": "=",
    "\u2015": "—",
    "\u2024": ".",
    "\u2025": "..",
    "\u201b": "'",
    "\u201f": '"',
    "\u00a0": " ",
    "\u202f": " ",
    "\u2009": " ",
    "\t": " ",
    "\n": " ",
    "\r": " ",
}

INK = (0.12, 0.14, 0.17)
RULE_GREY = (0.55, 0.58, 0.62)
SHADE = (0.91, 0.93, 0.95)
FLAG_RED = (0.70, 0.08, 0.08)
PASS_GREEN = (0.10, 0.42, 0.18)
CAUTION_EDGE = (0.75, 0.45, 0.0)
CAUTION_FILL = (1.0, 0.97, 0.88)

PDF_FILES = ("bill-of-materials.pdf", "protection-worksheet.pdf")


def fonts_dir() -> str:
    """The folder of TrueType fonts inside the installed reportlab package."""
    import reportlab

    return os.path.join(os.path.dirname(reportlab.__file__), "fonts")


@lru_cache(maxsize=1)
def register_fonts() -> frozenset[int]:
    """Register the four Vera faces as one family (once per process); return the code points all four draw."""
    from reportlab.lib.fonts import addMapping
    from reportlab.pdfbase import pdfmetrics
    from reportlab.pdfbase.ttfonts import TTFont

    covered: set[int] | None = None
    for name, file_name in _FONT_FILES.items():
        font = TTFont(name, os.path.join(fonts_dir(), file_name))
        _cache_widths(font)
        pdfmetrics.registerFont(font)
        # A code point mapped to glyph 0 draws the empty box (.notdef): it is not covered.
        drawn = {code for code, glyph in font.face.charToGlyph.items() if glyph != 0}
        covered = drawn if covered is None else covered & drawn
    pdfmetrics.registerFontFamily(FONT, normal=FONT, bold=FONT_BOLD, italic=FONT_ITALIC, boldItalic=FONT_BOLD_ITALIC)
    for bold, italic, name in ((0, 0, FONT), (1, 0, FONT_BOLD), (0, 1, FONT_ITALIC), (1, 1, FONT_BOLD_ITALIC)):
        addMapping(FONT, bold, italic, name)
    return frozenset(covered or ())


def _cache_widths(font) -> None:
    """Send reportlab's own measuring of ``font`` through :func:`text_width` (it measures TrueType text in pure
    Python, word by word, and a Table or Paragraph measures the same words again and again)."""
    name = font.fontName
    _MEASURES[name] = font.stringWidth
    font.stringWidth = lambda text, size, encoding="utf8": text_width(text, name, size)

    # Drawing maps each character to its code in the document's font subsets, again in pure Python for every
    # string drawn. A character keeps its code once given, so the codes of a whole string are remembered, per
    # document (each has its own subsets).
    split = font.splitString

    def split_cached(text, doc, encoding="utf-8"):
        state = font.state.get(doc)
        known = getattr(state, "bankbuild_split", None)
        if known is None:
            parts = split(text, doc, encoding)
            font.state[doc].bankbuild_split = {text: parts}
            return parts
        parts = known.get(text)
        if parts is None:
            if len(known) >= 1 << 14:  # bounded memory: start again
                known.clear()
            parts = known[text] = split(text, doc, encoding)
        return parts

    font.splitString = split_cached


_WIDTHS: dict[tuple[str, str], float] = {}
_MEASURES: dict[str, Callable] = {}  # reportlab's own measure of each of our fonts, before _cache_widths


def text_width(text: str, font: str, size: float) -> float:
    """The width of ``text`` in ``font`` at ``size`` [pt], remembered per font and text (a document measures the
    same words thousands of times; the width scales with the size exactly). The one width cache of the PDFs:
    reportlab's own measuring of our fonts comes here too (:func:`_cache_widths`)."""
    key = (font, text)
    per_point = _WIDTHS.get(key)
    if per_point is None:
        measure = _MEASURES.get(font)
        if measure is not None:
            per_point = measure(text, 1.0, "utf8")
        else:
            from reportlab.pdfbase.pdfmetrics import stringWidth

            per_point = stringWidth(text, font, 1.0)
        if len(_WIDTHS) >= 1 << 17:  # bounded memory: start again
            _WIDTHS.clear()
        _WIDTHS[key] = per_point
    return per_point * size


@lru_cache(maxsize=1)
def paragraph_class():
    """A reportlab Paragraph that lays itself out once per width: tables wrap each cell to measure the row and
    again to draw it, and the second layout is the first one's."""
    from reportlab.platypus import Paragraph

    class LaidOnceParagraph(Paragraph):
        _laid_out: tuple | None = None

        def wrap(self, avail_width, avail_height):
            # split() drops the layout when the paragraph moves on: lay it out again then.
            if self._laid_out is not None and self._laid_out[0] == avail_width and "blPara" in self.__dict__:
                return self._laid_out[1]
            size = super().wrap(avail_width, avail_height)
            self._laid_out = (avail_width, size)
            return size

    return LaidOnceParagraph


def plain_text(text: object) -> str:
    """Text as the fonts can draw it: look-alikes for missing glyphs, control characters dropped.

    Markup characters are kept as they are (for the canvas, which draws text literally).

    >>> plain_text("ΔV% ≈ Q·Z%/kVA")
    '∆V% ≈ Q·Z%/kVA'
    >>> plain_text("Line\\n3 <b>&amp;</b>")
    'Line 3 <b>&amp;</b>'
    >>> plain_text("\u4e2d")
    '[U+4E2D]'
    """
    text = str(text)
    if text.isascii() and text.isprintable():  # the common case: nothing to replace
        return text
    if _drawn_as_is().issuperset(text):  # every character drawn as it is (a set test, not a loop in Python)
        return text
    covered = register_fonts()
    out = []
    for ch in text:
        ch = _LOOK_ALIKE.get(ch, ch)
        if len(ch) > 1 or ord(ch) in covered:
            out.append(ch)
            continue
        if unicodedata.category(ch)[0] == "C":  # control, format, surrogate, unassigned
            continue
        base = "".join(c for c in unicodedata.normalize("NFKD", ch) if not unicodedata.combining(c))
        if base and all(ord(c) in covered for c in base):
            out.append(base)
        else:
            out.append(f"[U+{ord(ch):04X}]")
    return "".join(out)


@lru_cache(maxsize=1)
def _drawn_as_is() -> frozenset[str]:
    """The characters :func:`plain_text` keeps unchanged: drawn by every face, and no look-alike replaces them."""
    return frozenset(chr(code) for code in register_fonts()) - set(_LOOK_ALIKE)


def para_text(text: object) -> str:
    """Text for a reportlab Paragraph: drawable glyphs, and every markup character shown literally.

    >>> para_text("<b>Bank</b> & ]]> &amp;")
    '&lt;b&gt;Bank&lt;/b&gt; &amp; ]]&gt; &amp;amp;'
    """
    return plain_text(text).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def num(value: float | None, digits: int = 1, unit: str = "") -> str:
    """A number for the documents: thousands separators, fixed decimals, an optional unit; '—' for none.

    >>> num(1418.43, 1, "µF")
    '1,418.4 µF'
    >>> num(float("inf"), 0, "s")
    'unbounded'
    >>> num(None)
    '—'
    """
    if value is None:
        return "—"
    if isinstance(value, float) and math.isinf(value):
        return "unbounded"
    text = f"{value:,.{digits}f}"
    return f"{text} {unit}" if unit else text


def gnum(value: float) -> str:
    """A rating as written on a nameplate: no trailing zeros (``600``, ``52.5``, ``0.07``).

    >>> gnum(600.0), gnum(52.5), gnum(0.07)
    ('600', '52.5', '0.07')
    """
    return f"{value:g}"


@lru_cache(maxsize=1)
def styles() -> dict:
    """Paragraph styles of the documents, keyed by short names."""
    from reportlab.lib.colors import Color
    from reportlab.lib.styles import ParagraphStyle

    register_fonts()
    ink = Color(*INK)
    base = ParagraphStyle("bb-body", fontName=FONT, fontSize=8.5, leading=10.6, textColor=ink)
    return {
        "body": base,
        "small": ParagraphStyle("bb-small", parent=base, fontSize=7.2, leading=8.8),
        "cell": ParagraphStyle("bb-cell", parent=base, fontSize=7.4, leading=8.9),
        "cell_bold": ParagraphStyle("bb-cell-b", parent=base, fontName=FONT_BOLD, fontSize=7.4, leading=8.9),
        "cell_right": ParagraphStyle("bb-cell-r", parent=base, fontSize=7.4, leading=8.9, alignment=2),
        "head": ParagraphStyle("bb-head", parent=base, fontName=FONT_BOLD, fontSize=7.4, leading=8.9),
        "title": ParagraphStyle("bb-title", parent=base, fontName=FONT_BOLD, fontSize=15, leading=18,
                                spaceAfter=2),
        "subtitle": ParagraphStyle("bb-subtitle", parent=base, fontSize=9, leading=11.5, spaceAfter=6),
        "h1": ParagraphStyle("bb-h1", parent=base, fontName=FONT_BOLD, fontSize=11.5, leading=14, spaceBefore=8,
                             spaceAfter=4),
        "h2": ParagraphStyle("bb-h2", parent=base, fontName=FONT_BOLD, fontSize=9.2, leading=11.5, spaceBefore=7,
                             spaceAfter=3),
        "note": ParagraphStyle("bb-note", parent=base, fontName=FONT_ITALIC, fontSize=7.2, leading=8.8,
                               spaceBefore=2, spaceAfter=2),
        "caution": ParagraphStyle("bb-caution", parent=base, fontSize=8, leading=10, leftIndent=9,
                                  bulletIndent=0, bulletFontName=FONT, spaceAfter=2),
    }


def P(text: object, style: str = "cell"):  # noqa: N802 - reads like the flowable it makes
    """A paragraph of literal ``text`` in one of :func:`styles`: drawn as plain lines (a Paragraph only where
    those would be drawn differently; see :func:`.pdf_grid.text_block`)."""
    from bankbuild.reports.pdf_grid import text_block

    return text_block(plain_text(text), style)


def PM(markup: str, style: str = "cell"):  # noqa: N802
    """A Paragraph of trusted markup built by this package (user text inside must go through para_text)."""
    return paragraph_class()(markup, styles()[style])


@dataclass(frozen=True)
class PageFrame:
    """What the running header and footer show on every page."""

    doc_title: str
    project_name: str
    revision: str
    version: str
    spec_sha256: str


def _fit(text: str, font: str, size: float, width: float) -> str:
    """``text`` cut with an ellipsis so that it fits ``width`` points."""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    if stringWidth(text, font, size) <= width:
        return text
    while text and stringWidth(text + "…", font, size) > width:
        text = text[:-1]
    return text + "…"


Numbering = Callable[[int], tuple[int, int]]
"""Given the pages of a piece of a document, the pages before it and the pages of the whole document."""

_NUMBER_MARK = "% bankbuild: page number"  # a PDF comment, replaced on every page once the count is known


def whole_document(pages: int) -> tuple[int, int]:
    """The numbering of a document rendered in one piece: no pages before it, ``pages`` in all."""
    return 0, pages


def _canvas_class(frame: PageFrame, numbering: Numbering):
    """A canvas that draws the running header and footer on each page as it closes, and writes each 'page N of
    M' into the pages once the count is known (when the document is saved: after this piece is laid out and,
    for a document rendered in pieces, after every piece is)."""
    from reportlab.lib.colors import Color
    from reportlab.pdfgen.canvas import Canvas

    class FramedCanvas(Canvas):
        def showPage(self):
            self._draw_frame()
            super().showPage()

        def save(self):
            pages = self._doc.Pages.pages
            before, total = numbering(len(pages))
            width = self._pagesize[0]
            for number, page in enumerate(pages, start=before + 1):
                code, self._code = self._code, []
                self.setFont(FONT_BOLD, 7.5)
                self.drawRightString(width - 40, 22, f"page {number} of {total}")
                page.stream = page.stream.replace(_NUMBER_MARK, "\n".join(self._code), 1)
                self._code = code
            super().save()

        def _draw_frame(self) -> None:
            width, height = self._pagesize
            left, right = 40, width - 40
            self.saveState()
            self.setStrokeColor(Color(*RULE_GREY))
            self.setLineWidth(0.5)
            self.line(left, height - 30, right, height - 30)
            self.line(left, 32, right, 32)
            self.setFillColor(Color(*INK))
            self.setFont(FONT_BOLD, 7.5)
            self.drawString(left, height - 26, frame.doc_title)
            title_w = self.stringWidth(frame.doc_title, FONT_BOLD, 7.5)
            self.setFont(FONT, 7.5)
            name = _fit(plain_text(frame.project_name), FONT, 7.5, right - left - title_w - 20)
            self.drawRightString(right, height - 26, name)
            rev = f"rev. {plain_text(frame.revision)}" if frame.revision else "no revision given"
            left_text = _fit(f"bankbuild {frame.version} · spec sha256 {frame.spec_sha256[:12]}… · {rev}",
                             FONT, 7, (right - left) * 0.7)
            self.setFont(FONT, 7)
            self.drawString(left, 22, left_text)
            self._code.append(_NUMBER_MARK)
            self.restoreState()

    return FramedCanvas


class Deferred:
    """Flowables made only when layout reaches them (a bank's section of a plant of hundreds), so the whole
    story never sits in memory at once: ``make()`` returns the list."""

    def __init__(self, make: Callable[[], list]):
        self.make = make


def _doc_class():
    from reportlab.platypus import SimpleDocTemplate

    class Document(SimpleDocTemplate):
        def filterFlowables(self, flowables):
            while flowables and isinstance(flowables[0], Deferred):
                flowables[0:1] = flowables[0].make()

    return Document


def page_size(rules: str) -> tuple[float, float]:
    """US Letter for the NEC basis, A4 for the IEC basis [pt]."""
    from reportlab.lib.pagesizes import A4, letter

    return letter if rules == "nec" else A4


def content_width(rules: str) -> float:
    """Width between the margins [pt]."""
    return page_size(rules)[0] - 2 * 40


def build_pdf(story_for: Callable[[float], list], frame: PageFrame, rules: str, subject: str, author: str,
              numbering: Numbering = whole_document) -> bytes:
    """Lay out the flowables that ``story_for(width)`` returns and give back the whole PDF as bytes.

    The story may hold :class:`Deferred` parts, made as layout reaches them. ``numbering`` says how the pages
    are numbered (see :data:`Numbering`; a piece of a document rendered in pieces learns it from the others).
    The document is built in memory, so a failure leaves nothing behind. Streams are deflated but not also
    ASCII85-encoded (reportlab's default): smaller files, and that encoder is slow in pure Python.
    """
    from reportlab import rl_config
    from reportlab.platypus.doctemplate import LayoutError

    register_fonts()
    buffer = io.BytesIO()
    doc = _doc_class()(
        buffer, pagesize=page_size(rules), leftMargin=40, rightMargin=40, topMargin=44, bottomMargin=46,
        title=plain_text(f"{frame.doc_title} — {frame.project_name}")[:300], author=plain_text(author)[:200],
        subject=subject, creator=f"bankbuild {frame.version}", pageCompression=1, initialFontName=FONT,
        initialFontSize=8)
    story = story_for(doc.width)
    use_a85, rl_config.useA85 = rl_config.useA85, 0
    try:
        doc.build(story, canvasmaker=_canvas_class(frame, numbering))
    except LayoutError as exc:  # e.g. one table row taller than a page: a line, not a traceback
        detail = str(exc).splitlines()[0][:160]
        raise BankbuildError(frame.doc_title, "layout", f"cannot lay out the document ({detail})") from None
    finally:
        rl_config.useA85 = use_a85
    return buffer.getvalue()


class PdfDocument:
    """A PDF of a run that can be rendered whole (call it with the results) or in pieces, each a range of banks
    (:mod:`.render` splits a large plant's documents over the processor cores and joins the pieces).

    ``render_range(result, first, stop, numbering)`` renders banks ``first`` to ``stop - 1``, with the opening
    blocks when ``first`` is 0 and the closing ones when ``stop`` is the last bank; ``banks_per_piece`` is the
    least number of banks worth a piece of its own.
    """

    def __init__(self, render_range: Callable[[ProjectResult, int, int, Numbering], bytes], banks_per_piece: int):
        self.render_range = render_range
        self.banks_per_piece = banks_per_piece

    def __call__(self, result: ProjectResult) -> bytes:
        return self.render_range(result, 0, len(result.banks), whole_document)


def frame_for(result: ProjectResult, doc_title: str) -> PageFrame:
    """The running header/footer content of one document of ``result``."""
    project = result.project
    return PageFrame(doc_title=doc_title, project_name=project.get("name", ""),
                     revision=project.get("revision", ""), version=result.provenance.version,
                     spec_sha256=result.provenance.spec_sha256)


def render_pdfs(result: ProjectResult) -> list[tuple[str, bytes]]:
    """Both PDF documents of a run, rendered in memory: ``[(file name, bytes), …]``.

    This is the call a benchmark can time for 'all PDF documents of a run'.
    """
    from bankbuild.reports.pdf_bom import bom_pdf
    from bankbuild.reports.pdf_worksheet import worksheet_pdf

    return [(PDF_FILES[0], bom_pdf(result)), (PDF_FILES[1], worksheet_pdf(result))]
