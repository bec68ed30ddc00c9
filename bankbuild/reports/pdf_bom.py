"""The bill of materials as a PDF: title block, a summary of each bank, its line items, provenance.

It reads :class:`~bankbuild.results.sizing.BomLine` rows only (the pipeline merges identical parts and names the table
row each came from); it does not invent items. reportlab is imported inside the functions.
"""

from __future__ import annotations

from bankbuild.reports.pdf_blocks import (
    C,
    cautions_box,
    gap,
    grid,
    key_values,
    provenance_block,
    section_break,
    title_block,
)
from bankbuild.reports.pdf_common import (
    FLAG_RED,
    Deferred,
    Numbering,
    P,
    PdfDocument,
    build_pdf,
    frame_for,
    gnum,
    num,
)
from bankbuild.reports.tables import total_text
from bankbuild.results.sizing import BankResult, BomLine, BomTotal, ProjectResult

DOC_TITLE = "Bill of materials"


def need_text(bank: BankResult) -> str:
    """How the need was stated, in one line."""
    need = bank.need
    if need.form == "kvar":
        return f"{num(need.required_kvar, 1, 'kvar')} (given)"
    source = "load list" if need.form == "loads" else "stated load"
    text = (f"{num(need.required_kvar, 1, 'kvar')}: {num(need.active_kw, 1, 'kW')} ({source}) from PF "
            f"{need.pf_present:.3f} to {need.pf_target:.3f}")
    if need.pf_corrected is not None:
        text += f"; PF with the bank {need.pf_corrected:.3f}"
    return text


def supply_text(bank: BankResult) -> str:
    """Supply voltage, frequency and transformer, in one line."""
    text = f"{gnum(bank.supply_voltage_v)} V, {gnum(bank.frequency_hz)} Hz, three-phase"
    if bank.transformer_kva:
        text += f"; transformer {gnum(bank.transformer_kva)} kVA, {gnum(bank.transformer_z_pct)}% Z"
    return text


def steps_text(bank: BankResult) -> str:
    """Step count and the kvar each step delivers at the supply."""
    sizes = [num(s.kvar, 1) for s in bank.steps]
    if len(bank.steps) == 1:
        return f"fixed bank, one step of {sizes[0]} kvar"
    return f"{len(bank.steps)} switched steps: " + " + ".join(sizes) + " kvar"


def detuning_text(bank: BankResult) -> str:
    """The detuning of the steps, or 'none'."""
    if not bank.detuning_pct:
        return "none (plain capacitor steps)"
    first = next((s.detuning for s in bank.steps if s.detuning is not None), None)
    text = f"{gnum(bank.detuning_pct)}% series reactor per step"
    if first is not None:
        text += f", tuned to {num(first.tuning_frequency_hz, 0, 'Hz')} (order {first.tuning_order:.2f})"
    return text


def bank_summary(bank: BankResult, width: float):
    """The key figures of one bank as a label/value table."""
    pairs = [
        ("Supply", supply_text(bank)),
        ("Need at the supply", need_text(bank)),
        ("Delivered at the supply", f"{num(bank.delivered_kvar, 1, 'kvar')}"),
        ("Capacitor units", f"rated {gnum(bank.capacitor_voltage_v)} V; nameplate total "
                            f"{num(bank.rated_kvar, 1, 'kvar')}"),
        ("Steps", steps_text(bank)),
        ("Connection", bank.connection),
        ("Detuning", detuning_text(bank)),
        ("Currents", f"rated {num(bank.rated_current_a, 1, 'A')} (protection is sized on it); operating "
                     f"{num(bank.line_current_a, 1, 'A')}"),
        ("Capacitance", f"{num(bank.capacitance_uf_per_phase, 1, 'µF')} per leg ({bank.connection})"),
        ("Main protection", f"{bank.main.device} {gnum(bank.main.device_rating_a)} A, disconnect "
                            f"{gnum(bank.main.disconnect_rating_a)} A, conductor {bank.main.conductor}"),
    ]
    return key_values(pairs, width, key_share=0.24)


def qty_text(line: BomLine) -> str:
    """A quantity as counted (whole pieces) or measured (metres).

    >>> qty_text(BomLine(item=1, qty=3.0, unit="pcs", category="c", description="d"))
    '3 pcs'
    >>> qty_text(BomLine(item=2, qty=12.5, unit="m", category="c", description="d"))
    '12.5 m'
    """
    value = f"{line.qty:,.0f}" if float(line.qty).is_integer() else f"{line.qty:,.1f}"
    return f"{value} {line.unit}"


def source_text(line: BomLine) -> str:
    """Where the line came from: table file and row, or '—' for items not picked from a table."""
    if not line.table:
        return "—"
    return f"{line.table}, row {line.row}" if line.row is not None else line.table


NOTES_MAX = 600  # characters of a line's notes in a cell: a table row cannot run over a page


def cell_notes(notes: str, limit: int = NOTES_MAX) -> str:
    """The notes as shown in a cell; a list too long for one page (the banks of a large plant) is cut, and
    the reader is sent to the CSV/JSON bill of materials, which hold it whole.

    >>> cell_notes("A: 1; B: 2; C: 3", 10)
    'A: 1; B: 2; … (in full in bill-of-materials.csv)'
    """
    if len(notes) <= limit:
        return notes
    kept, size = [], 0
    for part in notes.split("; "):
        if size + len(part) > limit:
            break
        kept.append(part)
        size += len(part) + 2
    return "; ".join(kept + ["… (in full in bill-of-materials.csv)"])


NOTE_GREY = (0x4A / 255, 0x50 / 255, 0x58 / 255)


def description_cell(line: BomLine):
    """Description and ratings, with the line's notes beneath in small italics."""
    return C(line.description, note=cell_notes(line.notes) if line.notes else "", note_colour=NOTE_GREY)


def money(value: float | None) -> str:
    """A price with two decimals and thousands separators.

    >>> money(1234.5), money(None)
    ('1,234.50', '')
    """
    return "" if value is None else f"{value:,.2f}"


def items_table(lines: list[BomLine], width: float, total: BomTotal | None = None):
    """The line items, with a header that repeats on every page; with prices, unit and extended prices, lines
    without a price flagged, and a total row."""
    if total is None:
        shares = (0.05, 0.08, 0.13, 0.53, 0.21)
        head = ("Item", "Qty", "Category", "Description and ratings (notes in italics)", "Table / row")
    else:
        shares = (0.05, 0.075, 0.115, 0.43, 0.095, 0.105, 0.13)
        head = ("Item", "Qty", "Category", "Description and ratings (notes in italics)",
                f"Unit price {total.currency}", f"Extended {total.currency}", "Table / row")
    rows = [[C(h, "head") for h in head]]
    for line in lines:
        row = [C(str(line.item)), C(qty_text(line)), C(line.category), description_cell(line)]
        if total is not None:
            if line.extended_price is None:
                row += [C("no price", "cell_bold", FLAG_RED), C("—")]
            else:
                row += [C(money(line.unit_price)), C(money(line.extended_price), "cell_bold")]
        rows.append(row + [C(source_text(line), "small")])
    if total is not None:
        rows.append([C(""), C(""), C("Total", "cell_bold"), C(total_text(total)), C(""),
                     C(money(total.total), "cell_bold"), C("")])
    return grid(rows, [width * s for s in shares])


def bank_section(index: int, total: int, bank: BankResult, width: float) -> list:
    """Heading, summary and line items of one bank."""
    from bankbuild.reports.pdf_pictures import oneline_block

    diagram, first_height = oneline_block(bank, width)
    story = [section_break(first_height + 40), P(f"Bank {index} of {total}: {bank.name}", "h1"), *diagram,
             section_break(190), bank_summary(bank, width), gap(6), P("Line items", "h2")]
    if bank.bom:
        story.append(items_table(list(bank.bom), width, bank.bom_total))
    else:
        story.append(P("The results carry no line items for this bank: the parts list was not produced by this "
                       "run. The step and protection figures above are in the protection worksheet.", "note"))
    return story


def bom_story(result: ProjectResult, width: float, first: int = 0, stop: int | None = None) -> list:
    """The flowables of the bill of materials, in order: the title block and price note (with bank ``first`` =
    0), each bank's section from ``first`` to ``stop - 1`` (made as layout reaches it), the project list and
    closing blocks (with the last)."""
    count = len(result.banks)
    stop = count if stop is None else stop
    story = []
    if first == 0:
        story += title_block(result, DOC_TITLE, "Parts for quotation, with ratings and the table row each came from. "
                                                "Generic descriptions: choose makes and models to these ratings.",
                             width)
        total = result.bom_total
        if total is not None:
            note = (f"Prices from {total.source}: unit prices per the line's unit, in {total.currency}, before tax "
                    "and freight; lines marked 'no price' are not in the total.")
            if total.invented:
                note = ("DEMO PRICES: every price here is invented (no supplier, catalogue or price list); this is "
                        "not a quotation. " + note)
            story += [P(note, "note"), gap(4)]
    for i in range(first, stop):
        story.append(Deferred(lambda i=i: bank_section(i + 1, count, result.banks[i], width)))
    if stop == count:
        if result.bom and count > 1:
            story += [section_break(160), P("All banks together", "h1"),
                      P("Identical parts of every bank merged into one list.", "note"),
                      items_table(list(result.bom), width, result.bom_total)]
        story += [gap(10), cautions_box(result.cautions, width), gap(8)]
        story += provenance_block(result, width)
    return story


def _bom_range(result: ProjectResult, first: int, stop: int, numbering: Numbering) -> bytes:
    author = result.project.get("prepared_by", "") or "bankbuild"
    return build_pdf(lambda width: bom_story(result, width, first, stop), frame_for(result, DOC_TITLE),
                     result.provenance.rules, "Bill of materials for capacitor banks", author, numbering)


# ~30 ms of layout per bank: a piece of fewer banks costs more to start and join than it saves
bom_pdf = PdfDocument(_bom_range, banks_per_piece=100)
"""The bill of materials of a result as PDF bytes (US Letter for NEC, A4 for IEC): ``bom_pdf(result)``."""
