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
    from reportlab.platypus import KeepTogether, Spacer

    figure = chart_figure(chart)
    shares = [1 / len(head)] * len(head)
    table = grid([[C(h, "head") for h in head], *[[C(v) for v in row] for row in rows]],
                 [width * s for s in shares])
    parts = [Spacer(1, 8), to_drawing(figure), table]
    if note:
        parts.append(P(note, "note"))
    return [KeepTogether(parts)]


def triangle_block(bank: BankResult, width: float) -> list:
    """The power triangle with its figures; empty when the need was given as kvar alone."""
    from bankbuild.reports.bank_charts import triangle_chart, triangle_rows

    t = bank.power_triangle
    if t is None:
        return []
    head, rows = triangle_rows(t)
    return chart_block(triangle_chart(t, width * 0.7), head, rows, width,
                       "Both axes to one scale. The bank's kvar shortens the vertical side; the line current falls "
                       "with the apparent power.")


def staircase_block(bank: BankResult, width: float) -> list:
    """The reachable kvar staircase with its values; empty for a fixed bank."""
    from bankbuild.reports.bank_charts import staircase_chart, staircase_rows

    chart = staircase_chart(bank, width)
    if chart is None:
        plan = bank.step_plan
        if plan is not None and len(bank.steps) > 1 and not plan.reachable_kvar:
            return [P(f"Reachable kvar: {plan.reachable_count:,} values, too many to draw one by one; the largest "
                      f"gap between two is {plan.largest_gap_kvar:,.1f} kvar.", "note")]
        return []
    table = staircase_rows(bank)
    note = ("Each stair is one value the controller can switch to (every sum of whole steps, delivered at the "
            "supply). Lines: the need and, where given, the light-load kvar.")
    if table is None:
        return [to_drawing(chart_figure(chart)), P(note + " The values are listed in results.json "
                                                   "(step_plan.reachable_kvar).", "note")]
    head, rows = table
    return chart_block(chart, head, rows, width, note)


def discharge_block(bank: BankResult, width: float) -> list:
    """The discharge curve of the largest step with its samples; empty when there is none."""
    from bankbuild.reports.bank_charts import discharge_chart, discharge_rows

    curve = bank.discharge_curve
    if curve is None:
        return []
    head, rows = discharge_rows(curve)
    return chart_block(discharge_chart(curve, width), head, rows, width,
                       "Samples of V(t) = V₀·e^(−t/RC) from the peak of the rated leg voltage. Wait the full time "
                       "and prove zero voltage before touching: a curve is no substitute for a test.")
