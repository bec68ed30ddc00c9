"""The one-line diagram of a bank, drawn from its results: incomer, busbar, control, and one branch per step.

From the top: the plant's main feeder with the controller's current transformer, the bank's incomer (its
conductor, disconnect and main fuses or breaker), the busbar, then one branch per step: its conductor, fuse or
breaker, capacitor-duty contactor (damping resistors where chosen), detuning reactor (L, p, current) where
detuned, and the capacitor units (qty × id, kvar). One line stands for the three phases. Symbols follow the
forms of IEC 60617 (fuse, switch-disconnector, circuit-breaker, contactor, inductor, capacitor, current
transformer); the layout is this program's own.

Every label is a rating or id the results hold, written as the other documents write it; nothing is sized
here. Steps that do not fit across the page fold onto further rows, each with the busbar carried on, and each
row is its own figure so that a PDF can put rows on separate pages (:func:`oneline_rows`); the SVG stacks them
(:func:`oneline_svg`).
"""

from __future__ import annotations

import math

from bankbuild.reports.figure import (
    GREY,
    INK,
    PALE,
    WHITE,
    Circle,
    Figure,
    Item,
    Line,
    Poly,
    Rect,
    Text,
    stack,
    text_width,
    to_drawing,
    to_svg,
)
from bankbuild.reports.pdf_common import gnum, num
from bankbuild.results.sizing import BankResult, Step

SIZE = 6.2  # label text [pt]
LEAD = 7.8  # label line spacing [pt]
WIRE = 1.1  # conductor line width [pt]
BUS = 3.2  # busbar line width [pt]
MAX_PER_ROW = 8
LABEL_DX = 14.0  # from a branch's conductor to its labels [pt]
DAMPED_INDENT = 6.0  # contactor labels moved right of the damping resistors [pt]
INCOMER_H = 150.0
SVG_WIDTH = 532.0  # the US Letter content width: an SVG on its own is laid out as on the page


def device_text(device: str, rating_a: float) -> str:
    """A protective device and its rating as the diagram labels it.

    >>> device_text("fuse", 100.0), device_text("breaker", 175.0)
    ('fuses 100 A', 'breaker 175 A')
    """
    return f"{'fuses' if device == 'fuse' else device} {gnum(rating_a)} A"


def step_labels(step: Step) -> dict[str, list[str]]:
    """The label lines of each part of a step's branch, keyed by part.

    Device rating, contactor designation, reactor designation and unit ids are written exactly as the results
    hold them (a test reads them back from the PDF and the SVG).
    """
    labels: dict[str, list[str]] = {"conductor": [step.conductor],
                                     "device": [device_text(step.device, step.device_rating_a)]}
    sw = step.switching
    if sw is not None:
        lines = [sw.contactor.designation if sw.contactor is not None else "contactor: none in the table"]
        lines.append(f"{gnum(sw.contactor_current_a)} A cap. duty" if sw.contactor is not None else
                     f"needs {num(sw.required_current_a, 0, 'A')}")
        if sw.damping != "none":
            lines.append(f"damping {sw.damping}")
        labels["contactor"] = lines
    reactor = step.reactor
    if reactor is not None:
        name = reactor.reactor.designation if reactor.reactor is not None else "reactor made to order"
        labels["reactor"] = [name, f"L {num(reactor.inductance_mh, 3)} mH, p {gnum(reactor.tuning_pct)}%",
                             num(reactor.current_rating_a, 1, "A")]
    labels["units"] = [f"{u.qty} × {u.id}" for u in step.units] or ["no units"]
    labels["kvar"] = [f"{num(step.kvar, 1)} kvar"]
    return labels


def branch_width(bank: BankResult) -> float:
    """Width of one step's branch: the symbol column and its widest label [pt]."""
    widest = 0.0
    for step in bank.steps:
        for part, lines in step_labels(step).items():
            indent = DAMPED_INDENT if part == "contactor" and _damped(step) else 0.0
            widest = max(widest, indent + max(text_width(t, SIZE) for t in lines))
        widest = max(widest, text_width(f"Step {step.index}", SIZE + 0.6, bold=True))
    return LABEL_DX + widest + 7


def _damped(step: Step) -> bool:
    return step.switching is not None and step.switching.damping != "none"


def rows_of(count: int, per_row: int) -> list[range]:
    """Step positions split into balanced rows of at most ``per_row``.

    >>> [list(r) for r in rows_of(7, 6)]
    [[0, 1, 2, 3], [4, 5, 6]]
    >>> [len(r) for r in rows_of(16, 6)]
    [6, 5, 5]
    """
    per_row = max(1, per_row)
    rows = max(1, math.ceil(count / per_row))
    base, extra = divmod(count, rows)
    out, start = [], 0
    for r in range(rows):  # the first rows take one more where the count does not divide evenly
        take = base + (1 if r < extra else 0)
        out.append(range(start, start + take))
        start += take
    return [r for r in out if len(r)]


# --- symbols (IEC 60617 forms, for a vertical conductor running from top to bottom) ---------------------------

def _fuse(x: float, y: float) -> list[Item]:
    """Fuse: a rectangle with the conductor through it; ``y`` its centre."""
    return [Rect(x - 3.5, y - 8, 7, 16, width=0.9, fill=WHITE), Line(x, y - 8, x, y + 8, width=WIRE)]


def _switch(x: float, y: float, kind: str) -> list[Item]:
    """A make contact drawn open, blade to the left; ``kind`` adds the function at the fixed contact:
    ``disconnector`` (a bar), ``breaker`` (a cross), ``contactor`` (a half circle)."""
    top, bottom = y + 9, y - 9
    items: list[Item] = [Line(x, top + 4, x, top, width=WIRE), Line(x, bottom, x, bottom - 4, width=WIRE),
                         Line(x, bottom, x - 7, top - 1, width=WIRE)]
    if kind == "disconnector":
        items.append(Line(x - 3, top, x + 3, top, width=WIRE))
    elif kind == "breaker":
        items += [Line(x - 2.5, top - 2.5, x + 2.5, top + 2.5, width=0.9),
                  Line(x - 2.5, top + 2.5, x + 2.5, top - 2.5, width=0.9)]
    elif kind == "contactor":
        arc = [(x + 2.6 * math.cos(a), top - 2.6 + 2.6 * math.sin(a)) for a in
               [math.pi / 2 + k * math.pi / 8 for k in range(9)]]
        items.append(Poly(tuple(arc), width=0.8))
    return items


def _reactor(x: float, y: float) -> list[Item]:
    """Inductor with a core: four half-loops along the conductor and a line beside them; ``y`` its centre."""
    items: list[Item] = []
    r = 3.2
    top = y + 4 * r
    for k in range(4):
        cy = top - r - 2 * r * k
        arc = [(x + r * math.cos(a), cy + r * math.sin(a)) for a in
               [math.pi / 2 - j * math.pi / 10 for j in range(11)]]
        items.append(Poly(tuple(arc), width=WIRE))
    items.append(Line(x + r + 2.5, top, x + r + 2.5, top - 8 * r, width=0.8))
    return items


def _capacitor(x: float, y: float) -> list[Item]:
    """Capacitor: two plates across the conductor, the gap at ``y``."""
    return [Line(x - 6, y + 2, x + 6, y + 2, width=1.6), Line(x - 6, y - 2, x + 6, y - 2, width=1.6)]


def _connection(x: float, y: float, connection: str) -> list[Item]:
    """A small delta or wye sign for the connection of the units."""
    if connection == "wye":
        return [Line(x, y, x, y - 4), Line(x, y, x - 3.5, y + 3), Line(x, y, x + 3.5, y + 3)]
    return [Poly(((x - 3.5, y - 3), (x + 3.5, y - 3), (x, y + 3.5)), width=0.8, closed=True)]


def _three(x: float, y: float) -> list[Item]:
    """Three short strokes across a conductor: it stands for three phases."""
    return [Line(x - 3, y - 4 + 3 * k, x + 3, y - 1 + 3 * k, width=0.7) for k in range(3)]


def _labels(x: float, y: float, lines: list[str], bold_first: bool = False) -> list[Item]:
    """Label lines, the first on the baseline ``y`` + a third of a line, the rest below."""
    top = y + (len(lines) - 1) * LEAD / 2 - SIZE / 3
    return [Text(x, top - k * LEAD, t, SIZE, bold=bold_first and k == 0) for k, t in enumerate(lines)]


# --- layout --------------------------------------------------------------------------------------------------

def branch_height(bank: BankResult) -> float:
    """Height of one row of branches, from the busbar down [pt]."""
    units = max((len(s.units) for s in bank.steps), default=1)
    height = 48.0  # conductor, fuse
    if any(s.switching is not None for s in bank.steps):
        height += 42
    if any(s.reactor is not None for s in bank.steps):
        height += 52
    return height + 24 + LEAD * (units + 1) + 4


def _branch(bank: BankResult, step: Step, x: float, bus_y: float) -> list[Item]:
    """One step's branch hanging from the busbar at (x, bus_y)."""
    labels = step_labels(step)
    lx = x + LABEL_DX
    items: list[Item] = [Circle(x, bus_y, 1.8, width=0.6, fill=INK),
                         Text(x + 4, bus_y - 10, f"Step {step.index}", SIZE + 0.6, bold=True)]
    y = bus_y - 22
    items += _labels(lx, y, labels["conductor"])
    y_fuse = bus_y - 40
    items += [Line(x, bus_y, x, y_fuse + 8, width=WIRE)]
    items += _fuse(x, y_fuse) if step.device == "fuse" else _switch(x, y_fuse, "breaker")
    items += _labels(lx, y_fuse, labels["device"])
    y = y_fuse - (8 if step.device == "fuse" else 13)
    if "contactor" in labels:
        y_k = y - 22
        items.append(Line(x, y, x, y_k + 13, width=WIRE))
        items += _switch(x, y_k, "contactor")
        indent = 0.0
        if _damped(step):  # resistors across the contacts (switched in ahead of them)
            r = x + 9
            items += [Poly(((x, y_k + 11), (r, y_k + 11), (r, y_k + 5)), width=0.7),
                      Rect(r - 2, y_k - 5, 4, 10, width=0.7, fill=WHITE),
                      Poly(((r, y_k - 5), (r, y_k - 11), (x, y_k - 11)), width=0.7)]
            indent = DAMPED_INDENT
        items += _labels(lx + indent, y_k, labels["contactor"])
        y = y_k - 13
    if "reactor" in labels:
        y_l = y - 26
        items.append(Line(x, y, x, y_l + 12.8, width=WIRE))
        items += _reactor(x, y_l)
        items += _labels(lx, y_l, labels["reactor"])
        y = y_l - 12.8
    y_c = y - 20
    items.append(Line(x, y, x, y_c + 2, width=WIRE))
    items += _capacitor(x, y_c)
    items += _connection(x, y_c - 9, bank.connection)
    unit_lines = labels["units"] + labels["kvar"]
    items += [Text(lx, y_c + 2 - k * LEAD, t, SIZE, italic=(k == len(unit_lines) - 1))
              for k, t in enumerate(unit_lines)]
    return items


def _busbar(bank: BankResult, x0: float, x1: float, y: float, first: bool, last: bool) -> list[Item]:
    items: list[Item] = [Line(x0, y, x1, y, width=BUS)]
    if not last:
        items += [Poly(((x1, y + 4), (x1 + 6, y), (x1, y - 4)), width=0.8, closed=True, fill=INK),
                  Text(x1 + 1, y + 6, "continues below", SIZE - 0.6, anchor="end", italic=True, colour=GREY)]
    if not first:
        items += [Poly(((x0 - 6, y + 4), (x0, y), (x0 - 6, y - 4)), width=0.8, closed=True, fill=INK),
                  Text(x0 - 6, y + 6, "busbar continued from above", SIZE - 0.6, italic=True, colour=GREY)]
    return items


def _incomer(bank: BankResult, width: float, height: float, bus_x0: float) -> list[Item]:
    """The plant feeder with the CT, the incomer down to the busbar, the controller; busbar at y = 0."""
    main = bank.main
    control = bank.control
    x = bus_x0 + 24
    lx = x + 16
    texts = (f"incomer {main.conductor}", f"disconnect {gnum(main.disconnect_rating_a)} A",
             f"main {device_text(main.device, main.device_rating_a)}")
    ct_x = lx + max(text_width(t, SIZE) for t in texts) + 22
    items: list[Item] = []
    top = height - 22
    # the plant's main feeder, the bank tapped from it
    feeder_end = min(width - 4, ct_x + 120)
    items += [Line(0, top, feeder_end, top, width=WIRE + 0.4), Circle(x, top, 1.8, width=0.6, fill=INK),
              Text(0, top + 9, f"Plant main feeder: {gnum(bank.supply_voltage_v)} V, {gnum(bank.frequency_hz)} Hz, "
                               f"three-phase; bank connected in {bank.connection}", SIZE + 0.4, bold=True)]
    items += _three(feeder_end - 14, top)
    y = top - 10
    items += _three(x, y - 6)
    items += [Line(x, top, x, y - 24, width=WIRE)]
    items += _labels(lx, y - 10, [texts[0]])
    y_q = y - 36
    items += _switch(x, y_q, "disconnector") + _labels(lx, y_q, [texts[1]])
    y_f = y_q - 30
    items.append(Line(x, y_q - 13, x, y_f + 8 if main.device == "fuse" else y_f + 13, width=WIRE))
    items += _fuse(x, y_f) if main.device == "fuse" else _switch(x, y_f, "breaker")
    items += _labels(lx, y_f, [texts[2]])
    y_end = y_f - (8 if main.device == "fuse" else 13)
    items.append(Line(x, y_end, x, 0, width=WIRE))
    bus = bank.enclosure.busbar if bank.enclosure is not None else None
    items.append(Text(x + 5, 5, f"busbar {bus.designation}" if bus is not None else "busbar", SIZE, italic=True))
    if control is None or (control.controller is None and control.ct is None):  # a fixed bank
        return items
    if control.ct is not None:
        items += [Circle(ct_x, top, 5.5, width=0.9),
                  Text(ct_x + 9, top - 12, f"CT {control.ct.designation}", SIZE),
                  Text(ct_x + 9, top - 12 - LEAD, "the plant's load current,", SIZE, italic=True, colour=GREY),
                  Text(ct_x + 9, top - 12 - 2 * LEAD, "supply side of the bank's tap", SIZE, italic=True,
                       colour=GREY)]
    name = control.controller.designation if control.controller is not None else "controller: none in the table"
    box_w = max(text_width(name, SIZE + 0.6, bold=True), text_width("power-factor controller", SIZE)) + 12
    box_x, box_y = ct_x - 10, y_f - 10
    items += [Rect(box_x, box_y, box_w, 34, width=0.9, fill=PALE),
              Text(box_x + 6, box_y + 23, name, SIZE + 0.6, bold=True),
              Text(box_x + 6, box_y + 13, "power-factor controller", SIZE),
              Text(box_x + 6, box_y + 4, f"{control.outputs_needed} step outputs", SIZE),
              Line(ct_x, top - 5.5, ct_x, box_y + 34, width=0.6, dash="dashed"),
              Line(box_x + box_w / 2, box_y, box_x + box_w / 2, 10, width=0.6, dash="dashed"),
              Text(box_x + box_w / 2 - 4, 12, "control to each step's contactor", SIZE - 0.6, italic=True,
                   colour=GREY, anchor="end")]
    return items


def oneline_rows(bank: BankResult, width: float) -> list[Figure]:
    """The diagram as figures of ``width`` points: the incomer with the first row of steps, then one figure
    per further row."""
    bw = branch_width(bank)
    # the last branch's labels must end inside the width: first conductor at 34 pt, labels up to bw − 7 wide
    per_row = min(MAX_PER_ROW, max(1, int((width - 34 - (bw - 7)) // bw) + 1))
    rows = rows_of(len(bank.steps), per_row)
    row_h = branch_height(bank)
    figures = []
    title = f"One-line diagram: {bank.name}"
    for r, positions in enumerate(rows):
        first, last = r == 0, r == len(rows) - 1
        head = INCOMER_H if first else 22.0
        height = head + row_h
        bus_y = row_h
        bus_x0 = 10.0
        x_end = bus_x0 + 14 + len(positions) * bw
        items: list[Item] = []
        if first:
            items += [_shift_all(i, 0, bus_y) for i in _incomer(bank, width, head, bus_x0)]
        items += _busbar(bank, bus_x0 if first else bus_x0 + 8, min(x_end, width - 8), bus_y, first, last)
        for k, index in enumerate(positions):
            items += _branch(bank, bank.steps[index], bus_x0 + 24 + k * bw, bus_y)
        figures.append(Figure(width, height, tuple(items), title))
    return figures


def _shift_all(item: Item, dx: float, dy: float) -> Item:
    from bankbuild.reports.figure import shift

    return shift(item, dx, dy)


def oneline_notes(bank: BankResult) -> list[str]:
    """What the diagram shows and the cautions that go with it (beneath it in the PDFs and the SVG)."""
    return [
        "One line stands for three phases. Symbols after IEC 60617; ratings and ids as in the worksheet and the bill "
        "of materials. A sketch for orientation, not a construction or wiring drawing.",
        f"Capacitors hold a charge after switch-off: lock out, wait the discharge time ({gnum(bank.discharge.time_s)}"
        " s rule), prove zero voltage. Work by qualified persons only; the local code and licensed practice govern.",
    ]


def oneline_figure(bank: BankResult, width: float = SVG_WIDTH) -> Figure:
    """The whole diagram as one figure (rows stacked), with its notes beneath."""
    # italic sets a little wider than the upright widths measured, and a viewer may substitute its own font
    notes = [line for note in oneline_notes(bank) for line in wrap(note, SIZE - 0.6, width * 0.9)]
    foot = Figure(width, 8 + LEAD * len(notes),
                  tuple(Text(0, 4 + LEAD * (len(notes) - 1 - k), t, SIZE - 0.6, italic=True, colour=GREY)
                        for k, t in enumerate(notes)))
    title = f"One-line diagram: {bank.name}"
    lines = wrap(title, 9, width * 0.9)  # bold sets wider than measured
    head = Figure(width, 4 + 11 * len(lines), tuple(Text(0, 4 + 11 * (len(lines) - 1 - k), t, 9, bold=True)
                                                    for k, t in enumerate(lines)))
    return stack([head, *oneline_rows(bank, width), foot], gap=6, title=title)


def wrap(text: str, size: float, width: float) -> list[str]:
    """``text`` broken at spaces into lines no wider than ``width`` points at ``size``.

    >>> wrap("one two three", 7, 40)
    ['one two', 'three']
    """
    lines: list[str] = []
    used, space = 0.0, text_width(" ", size)
    for word in text.split(" "):
        w = text_width(word, size)
        if lines and used + space + w <= width:
            lines[-1] = f"{lines[-1]} {word}"
            used += space + w
        else:
            lines.append(word)
            used = w
    return lines


def oneline_svg(bank: BankResult) -> str:
    """The bank's one-line diagram as a standalone SVG document."""
    return to_svg(oneline_figure(bank))


def oneline_drawings(bank: BankResult, width: float) -> list:
    """The diagram as reportlab Drawings, one per row of steps (a PDF may put each on its own page)."""
    return [to_drawing(fig) for fig in oneline_rows(bank, width)]


__all__ = ["oneline_drawings", "oneline_figure", "oneline_rows", "oneline_svg", "step_labels", "INK"]
