"""The survey report (PDF): the data and its cleaning, the need and its duration curve, the proposed bank, the
simulated controller with its switching duty, the months before and after, the checks, formulas and provenance."""

from __future__ import annotations

import hashlib

from bankbuild.reports.pdf_blocks import C, cautions_box, gap, grid, heading, key_values, verdict
from bankbuild.reports.pdf_common import P, PageFrame, build_pdf, num
from bankbuild.reports.survey_out import JSON_FILE, PDF_FILE, SPEC_FILE, spec_yaml, survey_json
from bankbuild.results.survey import SurveyResult

DOC_TITLE = "Survey from metered data"


def survey_documents(result: SurveyResult) -> list[tuple[str, bytes]]:
    """Every file of a survey, rendered in memory: the spec, the JSON summary and the PDF report."""
    spec = spec_yaml(result).encode("utf-8")
    files = [(JSON_FILE, survey_json(result).encode("utf-8")), (PDF_FILE, survey_pdf(result, spec))]
    return ([(SPEC_FILE, spec)] if spec else []) + files


def survey_pdf(result: SurveyResult, spec_bytes: bytes = b"") -> bytes:
    """The survey report as PDF bytes."""
    frame = PageFrame(doc_title=DOC_TITLE, project_name=result.name, revision="", version=result.version,
                      spec_sha256=hashlib.sha256(spec_bytes).hexdigest() if spec_bytes else "")
    return build_pdf(lambda width: _story(result, width), frame, result.rules, subject="capacitor bank survey",
                     author="bankbuild")


def _story(r: SurveyResult, width: float) -> list:
    d, n, b, s = r.data, r.need_kvar, r.proposed, r.simulation
    story = [P(DOC_TITLE, "title"),
             P(f"{r.name}: the kvar a plant needs, read from its interval readings, a bank proposed for it and that "
               "bank proven on the same readings by a simulated step controller.", "subtitle"),
             key_values([
                 ("Data file", f"{d.file} (sha256 {d.sha256[:16]}…)"),
                 ("Readings", f"{r.intervals:,} used of {d.rows_read:,} rows, every {r.interval_s / 60:g} min, "
                              f"{d.first} to {d.last} ({d.span_days:,.1f} days)"),
                 ("Columns", "; ".join(d.columns) + f"; kvar {d.kvar_sign.replace('-', ' ')}"
                  + ("; times with UTC offsets" if d.utc_offsets else "; times as written (no UTC offset)")),
                 ("Supply and target", f"{r.supply_voltage_v:g} V, {r.frequency_hz:g} Hz; target PF "
                                       f"{r.pf_target:g} lagging"),
             ], width), gap(6), cautions_box(r.cautions, width)]

    story += heading("1. Cleaning")
    story.append(P("; ".join(d.notes) if d.notes else "Nothing to clean: no empty cells, impossible values, "
                   "repeats, gaps or irregular intervals.", "body"))

    story += heading("2. Need")
    story.append(key_values([
        ("Peak need", f"{num(n.max, 1, 'kvar')} at {n.max_at}"),
        ("95th percentile", num(n.p95, 1, "kvar")),
        (f"Met in {n.share:.0%} of intervals", num(n.at_share, 1, "kvar") + " (sizes the total)"),
        ("Mean need", num(n.mean, 1, "kvar")),
        ("Light-load kvar", f"{num(r.light_load_kvar, 1, 'kvar')} at {r.light_load_at}: the largest fixed part "
                            "that never makes the PF leading"),
    ], width))
    story += [gap(4), _need_chart(r, width)]

    story += heading("3. Proposed bank")
    story.append(key_values([
        ("Total", f"{num(b.total_kvar, 1, 'kvar')} (need met in {n.share:.0%} of intervals: "
                  f"{num(b.sized_on_kvar, 1, 'kvar')})"),
        ("Fixed part", f"{num(b.fixed_kvar, 1, 'kvar')}: {b.fixed_rule}"),
        ("Switched steps", (" + ".join(f"{q:g}" for q in b.steps) + f" kvar, pattern {b.pattern}; resolution "
                            f"{b.resolution_kvar:g} kvar, largest gap {b.largest_gap_kvar:g} kvar")
         if b.steps else "none"),
        ("How the steps were chosen", b.rule),
        ("Units", f"{b.unit_voltage_v:g} V, {b.unit_frequency_hz:g} Hz; each nameplate kvar delivers "
                  f"{b.delivered_per_rated:.4g} kvar at the supply"),
        ("Spec for 'size'", f"{SPEC_FILE}: the steps (the fixed part first), the need, the light load"),
    ], width))

    story += heading("4. The bank on the data: simulated controller")
    story.append(key_values([
        ("Controller", s.controller_rule),
        ("Reconnection delay", s.delay_rule),
        ("Intervals meeting the target", f"{s.share_meeting_target:.1%} with the bank; "
                                         f"{s.share_meeting_target_before:.1%} as metered"),
        ("Leading intervals", f"{s.leading_intervals:,} leading, {s.leading_beyond_limit_intervals:,} beyond PF "
                              f"{s.pf_lead_limit:g} leading" + (" (FLAG: the fixed part alone)"
                                                                 if s.leading_beyond_limit_intervals else "")),
    ], width))
    rows = [[C("Step", "head"), C("kvar", "head"), C("Closings", "head"), C("Per year", "head"),
             C(f"Contactor life at {s.contactor_endurance_operations:,} ops", "head"),
             C(f"Within {s.capacitor_switchings_per_year:,} a year", "head")]]
    for duty in s.steps:
        rows.append([C(str(duty.step)), C(f"{duty.kvar:g}"), C(f"{duty.operations:,}"), C(f"{duty.per_year:,.0f}"),
                     C(f"{duty.contactor_life_years:,.0f} years" if duty.contactor_life_years else "—"),
                     verdict(duty.per_year <= s.capacitor_switchings_per_year)])
    if s.steps:
        story += [gap(4), grid(rows, [width * f for f in (0.08, 0.1, 0.14, 0.14, 0.3, 0.24)]),
                  P(f"Contactor: {s.contactor_endurance_source}. Capacitor units: {s.capacitor_switchings_source}. "
                    f"Over {s.years:.2f} years of data.", "note")]
    story += [gap(4), _pf_chart(r, width)]

    story += heading("5. Months: billing power factor and kVA demand")
    rows = [[C(h, "head") for h in ("Month", "kWh", "kvarh before", "kvarh after", "PF before", "PF after",
                                    "kVA demand before", "kVA demand after", "Coverage")]]
    for m in r.monthly:
        rows.append([C(m.month), C(f"{m.kwh:,.0f}"), C(f"{m.kvarh_before:,.0f}"), C(f"{m.kvarh_after:,.0f}"),
                     C(f"{m.billing_pf_before:.3f}"), C(f"{m.billing_pf_after:.3f}"), C(f"{m.kva_demand_before:,.0f}"),
                     C(f"{m.kva_demand_after:,.0f}"), C(f"{m.coverage:.0%}")])
    story.append(grid(rows, [width * f for f in (0.1, 0.12, 0.12, 0.12, 0.09, 0.09, 0.13, 0.13, 0.1)]))
    story += [gap(4), _monthly_chart(r, width)]

    story += heading("6. Checks")
    rows = [[C("Check", "head"), C("Result", "head"), C("Detail", "head"), C("Rule", "head")]]
    rows += [[C(c.name), verdict(c.ok, "info" if c.level == "info" else "pass"), C(c.detail), C(c.rule)]
             for c in r.checks]
    story.append(grid(rows, [width * f for f in (0.22, 0.08, 0.34, 0.36)]))

    story += heading("7. Formulas and assumptions")
    story += [P("• " + f, "body") for f in r.formulas]
    story += [gap(3)] + [P("• " + a, "body") for a in r.assumptions]

    story += heading("8. Provenance")
    story.append(key_values([("Program", f"bankbuild {r.version}"), ("Rule basis written", r.rules.upper()),
                             ("Data file SHA-256", d.sha256)]
                            + [("Rating table", t) for t in r.tables], width))
    return story


def _need_chart(r: SurveyResult, width: float):
    """kvar duration curve with the bank's total, fixed part and each cumulative step level."""
    from bankbuild.reports.chart import Axis, Chart, Mark, Series, chart_drawing

    b, n = r.proposed, r.need_kvar
    curve = tuple(zip(r.charts.need_duration.x, r.charts.need_duration.y, strict=True))
    marks = [Mark("hline", y=b.fixed_kvar + sum(b.steps[:k]), style="dotted") for k in range(1, len(b.steps))]
    if b.fixed_kvar:
        marks.append(Mark("hline", y=b.fixed_kvar, label=f"fixed part {b.fixed_kvar:g} kvar", style="dashdot"))
    marks.append(Mark("hline", y=b.total_kvar, label=f"bank {b.total_kvar:g} kvar", style="dashed"))
    marks.append(Mark("point", x=n.share * 100, y=n.at_share, label=f"{n.share:.0%}: {n.at_share:,.1f} kvar"))
    top = max(n.max, b.total_kvar) * 1.08 or 1.0
    return chart_drawing(Chart(
        "kvar duration curve: need at or above, with the bank's total, fixed part and steps (dotted)",
        Axis("share of importing intervals", "%", 0, 100), Axis("need", "kvar", 0, top),
        (Series("need per interval", curve),), tuple(marks), width=width, height=210))


def _pf_chart(r: SurveyResult, width: float):
    """Power factor at or above, before and after."""
    from bankbuild.reports.chart import Axis, Chart, Mark, Series, chart_drawing

    before = tuple(zip(r.charts.pf_before.x, r.charts.pf_before.y, strict=True))
    after = tuple(zip(r.charts.pf_after.x, r.charts.pf_after.y, strict=True))
    low = min(min(r.charts.pf_before.y), min(r.charts.pf_after.y), r.pf_target)
    return chart_drawing(Chart(
        "Power factor at or above, share of importing intervals",
        Axis("share of importing intervals", "%", 0, 100), Axis("power factor", "", max(0.0, round(low - 0.05, 1)),
                                                                 1.0),
        (Series("as metered", before), Series("with the bank (simulated)", after, style="dashed", weight=1.6)),
        (Mark("hline", y=r.pf_target, label=f"target {r.pf_target:g}", style="dotted"),), width=width, height=200))


def _monthly_chart(r: SurveyResult, width: float):
    """Monthly billing PF, before and after, as paired bars."""
    from bankbuild.reports.chart import Axis, Chart, Mark, Series, chart_drawing

    months = r.monthly
    xs = tuple(float(i + 1) for i in range(len(months)))
    low = min([m.billing_pf_before for m in months] + [r.pf_target])
    return chart_drawing(Chart(
        "Monthly billing power factor, before and after",
        Axis("month", "", ticks=xs, labels=tuple(m.month[2:] for m in months)),
        Axis("billing power factor", "", max(0.0, round(low - 0.1, 1)), 1.0),
        (Series("before (metered)", tuple(zip(xs, [m.billing_pf_before for m in months], strict=True)),
                draw="bars"),
         Series("after (simulated)", tuple(zip(xs, [m.billing_pf_after for m in months], strict=True)),
                draw="bars")),
        (Mark("hline", y=r.pf_target, label=f"target {r.pf_target:g}", style="dotted"),), width=width, height=190))
