"""The pictures of the PDF documents as flowables: a bank's one-line diagram, and a chart with its source data
in a table beside or beneath it. reportlab is imported inside the functions (through :mod:`.figure`)."""

from __future__ import annotations

from collections.abc import Sequence

from bankbuild.reports.chart import Chart, chart_figure
from bankbuild.reports.figure import to_drawing
from bankbuild.reports.oneline import oneline_notes, oneline_rows
from bankbuild.reports.pdf_blocks import C, grid
from bankbuild.reports.pdf_common import P
from bankbuild.results.sizing import BankResult


def oneline_block(bank: BankResult, width: float) -> tuple[list, float]:
    """The bank's one-line diagram (one drawing per row of steps) and its notes; with the height of the first
    drawing, so that the heading above can keep it company on the page [pt]."""
    figures = oneline_rows(bank, width)
    story: list = [to_drawing(fig) for fig in figures]
    story += [P(note, "note") for note in oneline_notes(bank)]
    return story, figures[0].height


def chart_block(chart: Chart, head: Sequence[str], rows: Sequence[Sequence[str]], width: float,
                note: str = "") -> list:
    """A chart, then the data it was drawn from as a table (the figure's source data beside it).

    Kept together on one page when it fits: a chart without its numbers, or numbers without their chart,
    read badly.
    """
    from reportlab.platypus import KeepTogether

    figure = chart_figure(chart)
    shares = [1 / len(head)] * len(head)
    table = grid([[C(h, "head") for h in head], *[[C(v) for v in row] for row in rows]],
                 [width * s for s in shares])
    parts = [to_drawing(figure), table]
    if note:
        parts.append(P(note, "note"))
    return [KeepTogether(parts)]
