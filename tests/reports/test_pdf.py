"""The PDF documents: bill of materials and protection worksheet, read back with pypdf.

The tests read each PDF back with pypdf (a reader we did not write) and look for the figures of the JSON results,
the rule references, the cautions and the provenance. Hostile text, escaping and writing are in
test_pdf_robust.py. The example plant and all names are invented.
"""

from __future__ import annotations

import io
import math
import re

import pypdf
import pytest
import yaml
from pdf_text import pages_text, size_yaml, squash, whole

from bankbuild.api import demo_spec_path, run_spec
from bankbuild.reports.pdf_bom import bom_pdf, qty_text, source_text
from bankbuild.reports.pdf_common import PDF_FILES, plain_text, register_fonts, render_pdfs
from bankbuild.reports.pdf_worksheet import worksheet_pdf
from bankbuild.reports.writer import write_documents
from bankbuild.results.sizing import BomLine


@pytest.fixture(scope="module")
def demo():
    return run_spec(demo_spec_path())


@pytest.fixture(scope="module")
def demo_pdfs(demo):
    return dict(render_pdfs(demo))


@pytest.fixture(scope="module")
def demo_text(demo_pdfs):
    return {name: whole(data) for name, data in demo_pdfs.items()}


# --- files and pages -------------------------------------------------------------------------------------------


def test_a_run_writes_both_pdfs_under_fixed_names(demo, tmp_path):
    written = write_documents(demo, tmp_path / "out")
    names = {p.name for p in written}
    assert set(PDF_FILES) <= names and "results.json" in names
    for name in PDF_FILES:
        reader = pypdf.PdfReader(tmp_path / "out" / name)
        assert len(reader.pages) >= 1
    assert not [p for p in (tmp_path / "out").iterdir() if p.name.startswith(".")], "temporary files left"


@pytest.mark.parametrize("name", PDF_FILES)
def test_every_page_says_page_n_of_m(demo_pdfs, name):
    pages = pages_text(demo_pdfs[name])
    for number, text in enumerate(pages, start=1):
        assert f"page {number} of {len(pages)}" in text


@pytest.mark.parametrize("name", PDF_FILES)
def test_text_is_drawn_only_in_the_embedded_truetype_faces(demo_pdfs, name):
    reader = pypdf.PdfReader(io.BytesIO(demo_pdfs[name]))
    for page in reader.pages:
        for font in page["/Resources"]["/Font"].values():
            font = font.get_object()
            assert font["/Subtype"] == "/TrueType", font["/BaseFont"]
            assert "BitstreamVeraSans" in font["/BaseFont"]


def test_the_fonts_cover_the_symbols_of_the_trade():
    covered = register_fonts()
    for symbol in "Ωµ√≥≤°²×−∆π≈±":
        assert ord(symbol) in covered, symbol


def test_symbols_come_out_of_the_worksheet_as_written(demo_text):
    text = demo_text["protection-worksheet.pdf"]
    for symbol in ("Ω", "µF", "√3", "≥", "≤", "°C", "²", "∆V"):
        assert symbol in text, symbol
    assert "[U+" not in text, "a character of the demo fell back to its code point"


def test_a_code_point_drawn_as_the_empty_box_counts_as_missing():
    # Vera's cmap maps U+221D (proportional to) to glyph 0, the empty box: found by rendering (regression value).
    assert 0x221D not in register_fonts()
    assert plain_text("kvar ∝ (V/V_r)²") == "kvar ~ (V/V_r)²"


def test_base_14_font_is_not_needed_for_a_character_the_font_lacks():
    # Greek capital delta (U+0394) is not in Vera; the increment sign (U+2206) looks the same and is.
    assert plain_text("ΔV") == "∆V"
    assert plain_text("中") == "[U+4E2D]"  # no look-alike: the code point is written out, never dropped


# --- bill of materials -----------------------------------------------------------------------------------------


def test_bom_title_block_comes_from_the_spec(demo, demo_text):
    text = demo_text["bill-of-materials.pdf"]
    for key in ("name", "site", "revision", "date", "prepared_by"):
        assert squash(demo.project[key]) in text, key
    assert "Billofmaterials" in text


def test_bom_summarises_every_bank_with_the_json_figures(demo, demo_text):
    text = demo_text["bill-of-materials.pdf"]
    for bank in demo.banks:
        assert squash(bank.name) in text
        assert f"{bank.required_kvar:,.1f}kvar" in text
        assert f"{bank.delivered_kvar:,.1f}kvar" in text
        assert f"rated{bank.capacitor_voltage_v:g}V" in text
        assert f"{bank.rated_current_a:,.1f}A" in text
        assert squash(" + ".join(f"{s.kvar:,.1f}" for s in bank.steps)) in text
        assert f"Connection{bank.connection}" in text
    assert "7%seriesreactorperstep" in text  # the detuned demo bank (detuning_pct: 7 in demo.yaml)


def _bom_lines(count: int) -> list[BomLine]:
    lines = []
    for i in range(1, count + 1):
        lines.append(BomLine(item=i, qty=float(i % 4 + 1) if i % 5 else 12.5, unit="pcs" if i % 5 else "m",
                             category="capacitor" if i % 2 else "fuse",
                             description=f"Part {i}: three-phase unit 50 kvar, 600 V, 60 Hz, ≥ 1.35 × I_N",
                             table="capacitor_units.csv", row=100 + i, notes=f"note {i}"))
    return lines


def test_bom_line_items_show_qty_description_and_table_row(demo):
    lines = _bom_lines(6)
    bank = demo.banks[0].model_copy(update={"bom": lines})
    result = demo.model_copy(update={"banks": [bank]})
    text = whole(bom_pdf(result))
    for line in lines:
        assert squash(line.description) in text
        assert squash(f"capacitor_units.csv, row {line.row}") in text
    assert "2pcs" in text and "12.5m" in text


def test_a_long_parts_list_repeats_its_table_header_on_every_page(demo):
    bank = demo.banks[0].model_copy(update={"bom": _bom_lines(140)})
    result = demo.model_copy(update={"banks": [bank], "bom": _bom_lines(140)})
    pages = pages_text(bom_pdf(result))
    with_items = [p for p in pages if "Part " in p]
    assert len(with_items) >= 3
    for page in with_items:
        assert "Descriptionandratings" in squash(page)
    assert "Part 140" in "".join(pages)


def test_bom_says_so_when_the_results_carry_no_line_items(demo):
    result = demo.model_copy(update={"banks": [b.model_copy(update={"bom": []}) for b in demo.banks]})
    assert "carrynolineitems" in whole(bom_pdf(result))


def test_bom_pdf_lists_every_line_the_results_carry(demo, demo_text):
    lines = [line for bank in demo.banks for line in bank.bom] + list(demo.bom)
    if not lines:
        pytest.skip("the pipeline produced no bill-of-materials lines")
    text = demo_text["bill-of-materials.pdf"]
    for line in lines:
        assert squash(line.description) in text
        assert squash(source_text(line)) in text
        assert squash(qty_text(line)) in text


# --- protection worksheet --------------------------------------------------------------------------------------


def test_worksheet_shows_every_sizing_line_of_main_and_steps(demo, demo_text):
    text = demo_text["protection-worksheet.pdf"]
    for bank in demo.banks:
        lines = list(bank.main.sizing) + [line for step in bank.steps for line in step.sizing]
        for line in lines:
            assert squash(line.formula) in text
            assert squash(line.rule) in text
            assert f"{line.required_a:,.1f}A" in text
            assert squash(line.chosen) in text
            if line.item.startswith("Conductor") and line.chosen_a > 0:  # the ampacity beside the size
                assert squash(line.chosen) + f":{line.chosen_a:,.0f}A" in text
            assert f"×{line.factor:g}" in text
        for step in bank.steps:
            assert f"{step.rated_current_a:,.1f}A" in text
            assert f"{step.capacitance_uf_per_leg:,.1f}µF" in text


def test_worksheet_shows_discharge_resonance_and_voltage_rise(demo, demo_text):
    text = demo_text["protection-worksheet.pdf"]
    for bank in demo.banks:
        dis = bank.discharge
        assert f"{dis.max_resistance_ohm:,.0f}Ωperleg" in text
        assert f"{dis.resistor_power_w:,.2f}Wperresistor" in text
        assert f"{dis.start_voltage_v:,.1f}V" in text
        assert squash(dis.rule) in text
        system = getattr(bank, "system", None)  # every step combination, where the pipeline gives them
        points = (system.resonance_combinations if system is not None and system.resonance_combinations
                  else bank.resonance)
        assert points
        for point in points:
            assert f"{point.harmonic_order:.2f}" in text
        assert f"{bank.voltage_rise_pct:.2f}%" in text
    assert "FLAG11th" in text and "FLAG13th" in text  # the demo's plain banks resonate near them (JSON checks)


def test_worksheet_detuning_rows(demo, demo_text):
    text = demo_text["protection-worksheet.pdf"]
    step = demo.banks[0].steps[0]
    assert f"{step.detuning.reactor_inductance_mh:,.3f}mH" in text
    assert f"{step.detuning.capacitor_voltage_v:,.1f}V" in text
    assert f"{step.detuning.tuning_frequency_hz:,.1f}Hz" in text


def test_worksheet_shows_reconnection_switching_and_enclosure_when_present(demo, demo_text):
    text = demo_text["protection-worksheet.pdf"]
    shown = 0
    for bank in demo.banks:
        rec = getattr(bank, "reconnection", None)
        if rec is not None:
            assert f"{rec.delay_s:,.0f}sbeforeastepisswitchedonagain" in text
            shown += 1
        for step in bank.steps:
            switching = getattr(step, "switching", None)
            if switching is not None and switching.contactor is not None:
                assert squash(switching.contactor.designation) in text
                shown += 1
            reactor = getattr(step, "reactor", None)
            if reactor is not None and reactor.reactor is not None:
                assert squash(reactor.reactor.designation) in text
        enclosure = getattr(bank, "enclosure", None)
        if enclosure is not None:
            assert f"{enclosure.total_losses_w:,.0f}W" in text
    if not shown:
        pytest.skip("the results carry no reconnection or switching figures")


def test_a_step_the_pipeline_finds_needing_damping_is_flagged_unless_damped():
    from types import SimpleNamespace as NS

    from bankbuild.reports.pdf_worksheet_assembly import switching_table

    def step(index, peak, damping):
        switching = NS(contactor=NS(designation="SWD-63A-PLAIN", table="contactors.csv", row=3), damping=damping,
                       required_current_a=58.0, contactor_current_a=63.0, contactor_voltage_v=480.0,
                       contactor_kvar=52.4, energising_peak_a=peak,
                       back_to_back_peak_a=None, capacitor_limit_a=5000.0, contactor_limit_a=2000.0,
                       damping_reactor_uh=None, damping_needed=peak > 2000.0)
        return NS(index=index, switching=switching)

    bank = NS(steps=[step(1, 1500.0, "none"), step(2, 2500.0, "none"), step(3, 2500.0, "resistors")])
    table = switching_table(bank, 500.0)
    results = [table.cell_text(r, len(table.col_widths) - 1) for r in range(1, len(table.rows))]
    assert results == ["pass", "FLAG", "pass"]
    assert isinstance(switching_table(NS(steps=[NS(index=1, switching=None)]), 500.0), type(None))


def test_worksheet_carries_cautions_rules_and_sign_off(demo, demo_text):
    text = demo_text["protection-worksheet.pdf"]
    for caution in demo.cautions:
        assert squash(caution) in text
    for ref in ("NEC460.8(A)", "NEC460.8(B)", "NEC460.8(C)", "NEC460.6(A)", "240.6(A)", "310.16"):
        assert ref in text, ref
    for role in ("Preparedby", "Checkedby", "Approvedby", "Signature", "Date"):
        assert role in text
    assert "nostatementofcompliance" in text
    assert "qualifiedpersons" in text and "lockout" in text.replace("-", "")


@pytest.mark.parametrize("name", PDF_FILES)
def test_provenance_on_every_document(demo, demo_text, name):
    text = demo_text[name]
    prov = demo.provenance
    assert f"bankbuild{prov.version}" in text
    assert squash(prov.edition) in text
    assert prov.spec_sha256 in text
    for table in prov.tables:
        assert table.file_name in text and table.sha256 in text


@pytest.mark.parametrize("name", PDF_FILES)
def test_cautions_on_every_document(demo, demo_text, name):
    assert squash(demo.cautions[0]) in demo_text[name]
    assert squash(demo.cautions[2]) in demo_text[name]


def test_worksheet_of_a_textbook_100_kvar_bank(tmp_path):
    spec = {"project": {"name": "Test plant (invented)"}, "rules": "nec",
            "banks": [{"name": "Bank A", "supply": {"voltage_v": 480, "frequency_hz": 60},
                       "need": {"kvar": 100}, "capacitor_voltage_v": 480,
                       "protection": {"device": "fuse", "conductor_ambient_c": 30}}]}
    result = size_yaml(tmp_path, spec)
    text = whole(worksheet_pdf(result))
    # Source: three-phase line current I = Q/(√3·V_LL) (trade-facts formulas): 100,000 / (√3 × 480) = 120.3 A
    assert "100kvar/(√3×480V)=120.3A" in text
    # Source: common practice 165% fuse factor: 1.65 × 120.28 = 198.5 A; NEC 240.6(A): next standard rating 200 A
    assert "1.65×120.3A(ratedcurrent)=198.5A" in text and "198.5A200A" in text
    # Source: NEC 460.8(A) 135%: 162.4 A; NEC Table 310.16 (2023) 75 °C: 1/0 = 150 A < 162.4 A ≤ 2/0 = 175 A
    assert "1.35×120.3A(ratedcurrent)=162.4A" in text and "2/0AWG(Cu75°Cinsulation" in text
    # NEC 240.4(B)(2): 175 A is itself a standard rating, so the 200 A fuse may not protect 2/0 AWG: 3/0 AWG
    # (200 A, NEC Table 310.16 (2023) 75 °C), device ≤ ampacity.
    assert "upsizedfrom2/0AWGsothat200Aprotectsit" in text
    assert "device200A≤ampacity200A" in text
    # At the stated 30 °C (the table's base) the factors are 1 (NEC Table 310.15(B)(1), from memory) and the
    # 75 °C terminations do not limit a 75 °C conductor (NEC 110.14(C)(1)(b))
    assert "200A×1(30°C,75°Ccolumn)×1(3current-carryingconductors)=200.0A" in text
    # Source: delta C per leg = Q/(3·2πf·V²) (trade-facts formulas): 100 kvar, 480 V, 60 Hz -> 383.8 µF
    assert "=383.8µF" in text
    # Source: start voltage √2 × 480 V = 678.8 V (trade-facts discharge formula)
    assert "=678.8V" in text


def test_worksheet_discharge_resistance_meets_the_rule_by_electricpy(tmp_path):
    spec = {"banks": [{"name": "Bank A", "supply": {"voltage_v": 480, "frequency_hz": 60},
                       "need": {"kvar": 100}, "capacitor_voltage_v": 480}]}
    result = size_yaml(tmp_path, spec)
    text = "".join(pages_text(worksheet_pdf(result)))
    found = re.search(r"= ([\d,]+) Ω per leg", text)
    start = re.search(r"= ([\d,.]+) V\s*\n?\s*Largest", text) or re.search(r"V₀ = √2 × [\d.]+ V.*?= ([\d,.]+) V", text)
    cap = re.search(r"/ \(([\d,.]+) µF × ln", text)
    assert found and cap
    r_ohm = float(found.group(1).replace(",", ""))
    c_uf = float(cap.group(1).replace(",", ""))
    v0 = math.sqrt(2) * 480
    if start:
        assert float(start.group(1).replace(",", "")) == pytest.approx(v0, abs=0.05)
    from electricpy import passive

    # Source: electricpy 0.3.0 passive.vcapdischarge (oracles.md), V(t) = V0·e^(−t/RC); NEC 460.6(A): 50 V in 60 s.
    residual = passive.vcapdischarge(60.0, v0, r_ohm, c_uf * 1e-6)
    assert residual == pytest.approx(50.0, abs=0.05)  # R and C printed to 0.5 Ω and 0.05 µF


def test_a_rule_the_result_cannot_meet_is_a_flag_on_the_worksheet(tmp_path):
    spec = {"banks": [{"name": "Big bank", "supply": {"voltage_v": 480, "frequency_hz": 60},
                       "need": {"kvar": 2000}, "protection": {"max_parallel_sets": 1}}]}
    result = size_yaml(tmp_path, spec)
    failed = [line for line in result.banks[0].main.sizing if not line.ok]
    # 2000 kvar / (√3 × 480 V) × 1.35 ≈ 3,248 A: more than any single conductor of NEC Table 310.16 carries
    assert failed
    text = whole(worksheet_pdf(result))
    assert "nonelargeenough" in text and "FLAG" in text


def test_size_command_writes_the_pdfs_with_markup_in_names_shown_literally(tmp_path):
    from bankbuild.cli.app import run

    spec = {"project": {"name": "Plant <b>7</b> & co &amp; ]]>", "revision": "<i>C</i>"},
            "banks": [{"name": "Bank <font size=40>A</font>", "supply": {"voltage_v": 480, "frequency_hz": 60},
                       "need": {"kvar": 120}, "steps": [40, 40, 40]}]}
    path = tmp_path / "hostile.yaml"
    path.write_text(yaml.safe_dump(spec), encoding="utf-8")
    out = tmp_path / "docs"
    assert run(["size", str(path), "--out", str(out)]) == 0
    for name in PDF_FILES:
        text = whole((out / name).read_bytes())
        assert "Plant<b>7</b>&co&amp;]]>" in text
        assert "Bank<fontsize=40>A</font>" in text
        assert "rev.<i>C</i>" in text


def test_iec_worksheet_is_a4_with_iec_rules(tmp_path):
    spec = {"rules": "iec", "banks": [{"name": "Bank B", "supply": {"voltage_v": 400, "frequency_hz": 50},
                                        "need": {"kvar": 120}, "steps": [40, 40, 40]}]}
    result = size_yaml(tmp_path, spec)
    data = worksheet_pdf(result)
    page = pypdf.PdfReader(io.BytesIO(data)).pages[0]
    # Source: ISO 216, A4 = 210 × 297 mm = 595.3 × 841.9 pt
    assert float(page.mediabox.width) == pytest.approx(595.3, abs=0.5)
    assert float(page.mediabox.height) == pytest.approx(841.9, abs=0.5)
    text = whole(data)
    assert "IEC60831-1" in text and "mm²" in text
    assert "Notransformerwasgiven" in text


def test_letter_size_for_the_nec_basis(demo_pdfs):
    page = pypdf.PdfReader(io.BytesIO(demo_pdfs["bill-of-materials.pdf"])).pages[0]
    # Source: ANSI US Letter, 8.5 × 11 in = 612 × 792 pt
    assert (float(page.mediabox.width), float(page.mediabox.height)) == (612.0, 792.0)
