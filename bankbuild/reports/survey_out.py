"""A survey's text outputs: the JSON summary, the spec that ``size`` takes, and the terminal summary.

They print what :class:`~bankbuild.results.survey.SurveyResult` holds; the PDF is in :mod:`.pdf_survey`.
"""

from __future__ import annotations

from bankbuild.results.survey import SurveyResult

SPEC_FILE = "spec.yaml"
JSON_FILE = "survey.json"
PDF_FILE = "survey-report.pdf"


def survey_json(result: SurveyResult) -> str:
    """The JSON summary: every field of the result except the chart series and the spec (written beside it).

    Stable keys (product design): ``intervals``, ``interval_s``, ``need_kvar.max``/``p95``, ``light_load_kvar``,
    ``proposed.total_kvar``/``fixed_kvar``/``steps``, ``simulation.share_meeting_target``/``leading_intervals``/
    ``switching_per_step_per_year``, ``monthly[].month``/``billing_pf_before``/``billing_pf_after``/``kwh``/
    ``kvarh_before``.
    """
    return result.model_dump_json(indent=2, exclude={"charts", "spec"})


def spec_yaml(result: SurveyResult) -> str:
    """The proposed bank as a spec for ``bankbuild size`` (empty when there is nothing to correct)."""
    import yaml

    if not result.spec:
        return ""
    head = [
        f"# Proposed by 'bankbuild survey' {result.version} from {result.data.file} (sha256 {result.data.sha256}).",
        f"# Need met in {result.need_kvar.share:.0%} of intervals: {result.need_kvar.at_share:,.1f} kvar; peak "
        f"{result.need_kvar.max:,.1f} kvar. The first step is the fixed part when light_load.fixed_steps is 1.",
        "# Review it, then run: bankbuild size spec.yaml",
    ]
    body = yaml.safe_dump(result.spec, sort_keys=False, allow_unicode=True, default_flow_style=None, width=110)
    return "\n".join(head) + "\n" + body


def _pct(x: float) -> str:
    return f"{x:.1%}"


def survey_text(result: SurveyResult, written: list[str] | None = None) -> str:
    """The terminal summary: data, need, proposed bank, simulation, months, flags, files written."""
    d, n, b, s = result.data, result.need_kvar, result.proposed, result.simulation
    lines = [
        f"survey  {d.file}: {result.intervals:,} readings every {result.interval_s / 60:g} min, {d.first} to "
        f"{d.last} ({d.span_days:,.1f} days)",
        f"  supply        {result.supply_voltage_v:g} V, {result.frequency_hz:g} Hz; target PF {result.pf_target:g}",
    ]
    lines += [f"  cleaning      {note}" for note in d.notes] or ["  cleaning      nothing to clean"]
    lines += [
        f"  need          peak {n.max:,.1f} kvar ({n.max_at}); 95th percentile {n.p95:,.1f} kvar; "
        f"met in {n.share:.0%} of intervals by {n.at_share:,.1f} kvar",
        f"  light load    {result.light_load_kvar:,.1f} kvar at the least ({result.light_load_at}): the largest fixed "
        "part that never leads",
        f"  proposed      {b.total_kvar:,.1f} kvar: fixed {b.fixed_kvar:,.1f} + steps "
        + (" + ".join(f"{q:g}" for q in b.steps) if b.steps else "none")
        + (f" (pattern {b.pattern})" if b.pattern else "") + f"; units {b.unit_voltage_v:g} V",
        f"  simulated     target met in {_pct(s.share_meeting_target)} of intervals (before "
        f"{_pct(s.share_meeting_target_before)}); {s.leading_intervals:,} leading, "
        f"{s.leading_beyond_limit_intervals:,} beyond PF {s.pf_lead_limit:g} leading; delay {s.delay_s:g} s",
        "  switching     " + ("; ".join(f"step {d.step} {d.per_year:,.0f}/year" for d in s.steps) or "no steps"),
        "  month      kWh         kvarh     PF before  PF after  kVA demand before/after",
    ]
    for m in result.monthly:
        lines.append(f"  {m.month}  {m.kwh:>11,.0f} {m.kvarh_before:>11,.0f}   {m.billing_pf_before:>7.3f}   "
                     f"{m.billing_pf_after:>7.3f}   {m.kva_demand_before:>8,.0f} / {m.kva_demand_after:,.0f}"
                     + (f"  ({m.coverage:.0%} of the month)" if m.coverage < 0.999 else ""))
    flags = [c for c in result.checks if not c.ok]
    lines += [f"  FLAG          {c.name}: {c.detail}" for c in flags]
    if written:
        lines.append("  wrote         " + ", ".join(written))
    lines.append("  caution       " + result.cautions[0])
    return "\n".join(lines)
