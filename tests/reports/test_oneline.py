"""The one-line diagram read back: every step's device rating, contactor, reactor and unit ids, exactly as the
results hold them, in the SVG (parsed as XML) and in the PDF text; steps fold onto rows without loss; the
layout stays inside its width."""

from __future__ import annotations

import io
import xml.etree.ElementTree as ET

import pytest
from fuzz_support import run_spec_data, spec
from hypothesis import HealthCheck, given, settings
from pdf_text import pages_text, size_yaml, squash

from bankbuild.api import demo_spec_path, run_spec
from bankbuild.reports.figure import Text, text_width, to_drawing
from bankbuild.reports.oneline import oneline_figure, oneline_rows, oneline_svg
from bankbuild.reports.pdf_common import gnum, num

SVG = "{http://www.w3.org/2000/svg}"


@pytest.fixture(scope="module")
def demo():
    return run_spec(demo_spec_path())


def expected_labels(bank) -> list[str]:
    """What the diagram must show of each step, written from the results' own fields."""
    labels = [f"{gnum(bank.main.device_rating_a)} A", f"{gnum(bank.main.disconnect_rating_a)} A",
              bank.main.conductor]
    for step in bank.steps:
        labels += [f"Step {step.index}", f"{gnum(step.device_rating_a)} A", step.conductor]
        if step.switching is not None and step.switching.contactor is not None:
            labels.append(step.switching.contactor.designation)
        if step.reactor is not None and step.reactor.reactor is not None:
            labels.append(step.reactor.reactor.designation)
        labels += [u.id for u in step.units]
    if bank.control is not None and bank.control.controller is not None:
        labels.append(bank.control.controller.designation)
    return labels


def svg_texts(svg: str) -> list[str]:
    root = ET.fromstring(svg.encode("utf-8"))
    return ["".join(el.itertext()) for el in root.iter(f"{SVG}text")]


def contains(texts: list[str], label: str) -> bool:
    return any(label in text for text in texts)


def diagram_pdf_text(bank) -> str:
    from reportlab.platypus import SimpleDocTemplate

    buffer = io.BytesIO()
    SimpleDocTemplate(buffer, leftMargin=40, rightMargin=40).build(
        [to_drawing(fig) for fig in oneline_rows(bank, 515)])
    return squash("".join(pages_text(buffer.getvalue())))


def test_demo_svg_holds_every_rating_and_id(demo):
    for bank in demo.banks:
        texts = svg_texts(oneline_svg(bank))
        for label in expected_labels(bank):
            assert contains(texts, label), (bank.name, label)


def test_demo_pdfs_hold_the_diagram_labels_at_the_head_of_each_bank(demo):
    from bankbuild.reports.pdf_bom import bom_pdf
    from bankbuild.reports.pdf_worksheet import worksheet_pdf

    for render in (worksheet_pdf, bom_pdf):
        text = squash("".join(pages_text(render(demo))))
        for bank in demo.banks:
            for label in expected_labels(bank):
                assert squash(label) in text, (render.__name__, label)
        # the diagram of bank 1 comes before its inputs (worksheet) or summary (bill of materials)
        first = text.index(squash(demo.banks[0].steps[0].units[0].id))
        assert first < text.index(squash("Need at the supply" if render is bom_pdf else "1. Inputs"))


def test_contactor_with_damping_and_reactor_figures_are_labelled(demo):
    damped = next(s for b in demo.banks for s in b.steps if s.switching and s.switching.damping != "none")
    detuned = next(s for b in demo.banks for s in b.steps if s.reactor is not None)
    bank_d = next(b for b in demo.banks if damped in b.steps)
    bank_r = next(b for b in demo.banks if detuned in b.steps)
    assert contains(svg_texts(oneline_svg(bank_d)), f"damping {damped.switching.damping}")
    texts = svg_texts(oneline_svg(bank_r))
    r = detuned.reactor
    assert contains(texts, f"L {num(r.inductance_mh, 3)} mH, p {gnum(r.tuning_pct)}%")
    assert contains(texts, num(r.current_rating_a, 1, "A"))


def test_sixteen_steps_fold_onto_rows_each_step_once(tmp_path):
    result = size_yaml(tmp_path, {"rules": "nec", "banks": [{
        "name": "Sixteen", "supply": {"voltage_v": 480, "frequency_hz": 60}, "need": {"kvar": 800},
        "steps": {"count": 16, "pattern": "equal"}}]})
    bank = result.banks[0]
    rows = oneline_rows(bank, 532)
    assert len(rows) >= 2
    heads = [t for fig in rows for t in fig.texts() if t.startswith("Step ")]
    assert heads == [f"Step {i}" for i in range(1, 17)]
    assert "busbar continued from above" in rows[1].texts()
    text = diagram_pdf_text(bank)
    for label in expected_labels(bank):
        assert squash(label) in text


def texts_inside(fig) -> bool:
    for item in fig.items:
        if isinstance(item, Text) and item.anchor == "start" and not item.angle:
            if item.x + text_width(item.text, item.size, item.bold) > fig.width + 0.5:
                return False
    return True


@settings(deadline=None, derandomize=True, database=None, max_examples=40,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large, HealthCheck.filter_too_much])
@given(data=spec())
def test_random_specs_diagram_holds_the_results_labels(data):
    result = run_spec_data(data)
    if result is None:
        return
    for bank in result.banks:
        texts = svg_texts(oneline_svg(bank))
        for label in expected_labels(bank):
            assert contains(texts, label), label
        for fig in oneline_rows(bank, 532):
            assert texts_inside(fig)
    text = diagram_pdf_text(result.banks[0])
    for label in expected_labels(result.banks[0]):
        assert squash(label) in text, label


def test_svg_file_is_written_beside_the_documents(tmp_path, demo):
    from bankbuild.reports.writer import write_documents

    written = {p.name for p in write_documents(demo, tmp_path / "out")}
    assert {f"one-line-{n}.svg" for n in range(1, len(demo.banks) + 1)} <= written
    svg = (tmp_path / "out" / "one-line-1.svg").read_text(encoding="utf-8")
    assert svg == oneline_svg(demo.banks[0])
    assert svg_texts(svg)[0] == f"One-line diagram: {demo.banks[0].name}"
    assert oneline_figure(demo.banks[0]).width == 532.0


def test_svg_shapes_lie_inside_the_picture(demo):
    for bank in demo.banks:
        root = ET.fromstring(oneline_svg(bank).encode("utf-8"))
        _, _, width, height = (float(v) for v in root.get("viewBox").split())
        for el in root.iter():
            for x_attr, y_attr in (("x", "y"), ("x1", "y1"), ("x2", "y2"), ("cx", "cy")):
                if el.get(x_attr) is not None and el.get(y_attr) is not None:
                    assert -1 <= float(el.get(x_attr)) <= width + 1, (el.tag, el.attrib)
                    assert -1 <= float(el.get(y_attr)) <= height + 1, (el.tag, el.attrib)
