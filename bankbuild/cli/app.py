"""The command line: parse, call the library, write reports, map the library's errors to exit code 2.

Heavy libraries (pandas, reportlab, openpyxl) are imported inside the commands that need them, so that
``bankbuild --help`` starts fast. No ``from __future__ import annotations`` here: typer reads each command's
parameters from its annotations, and string annotations must be evaluated again (``--help`` took 16 ms in typer
with them, 6 ms without).
"""

import os
import sys
from pathlib import Path
from typing import Annotated

import typer

from bankbuild.errors import BankbuildError, OptionError

app = typer.Typer(
    name="bankbuild", add_completion=True, no_args_is_help=True, rich_markup_mode=None,
    pretty_exceptions_enable=False,
    help="Size, protect and document low-voltage power-factor-correction capacitor banks.\n\n"
         "Start with 'bankbuild demo' or 'bankbuild init my-bank.yaml', then 'bankbuild size my-bank.yaml'.",
)
catalog_app = typer.Typer(no_args_is_help=True, rich_markup_mode=None,
                          help="Check the rating tables, or copy the built-in ones to edit.")
app.add_typer(catalog_app, name="catalog")

def _number(name: str):
    """A parser for a number option that says what to write when the text is not one ('480V', '95%')."""

    def parse(text: str) -> float:
        try:
            return float(text)
        except ValueError:
            from bankbuild.spec.read import number_hint

            hint = number_hint(text, name, "option")
            raise typer.BadParameter(f"got {text!r}" + (f": {hint}" if hint else "")) from None

    return parse


def _number_option(flag: str, help: str):
    """A number option whose bad values are explained (see :func:`_number`)."""
    return typer.Option(flag, parser=_number(flag[2:].replace("-", "_")), help=help)


OutOpt = Annotated[Path | None, typer.Option("--out", help="Folder for the documents (created if missing); "
                                                          "default bankbuild-out, or none with --json.")]
JsonOpt = Annotated[bool, typer.Option("--json", help="Print the results as one JSON document on stdout.")]
StrictOpt = Annotated[bool, typer.Option("--strict", help="Exit with code 1 when any check is flagged (bad input "
                                                           "still exits with 2).")]
CSV_DELIMITERS = {",": ",", ";": ";", "comma": ",", "semicolon": ";", "tab": "\t"}
CsvOpt = Annotated[str, typer.Option("--csv-delimiter", help="Cell separator of the CSV bill of materials: ',' "
                                                             "(default), ';' for spreadsheets set to a locale with a "
                                                             "decimal comma, or 'tab'.")]


def _csv_delimiter(value: str) -> str:
    if value not in CSV_DELIMITERS:
        raise OptionError("", "csv_delimiter", f"must be ',', ';' or tab (got {value!r})")
    return CSV_DELIMITERS[value]


CatOpt = Annotated[Path | None, typer.Option("--catalogs", help="Folder of rating tables that replace the "
                                                                "built-in ones (overrides the spec's).")]


def _show_version(value: bool) -> None:
    if value:
        from bankbuild._version import __version__

        typer.echo(f"bankbuild {__version__}")
        raise typer.Exit()


@app.callback()
def _root(version: Annotated[bool, typer.Option("--version", callback=_show_version, is_eager=True,
                                                help="Print the version and stop.")] = False) -> None:
    pass


def _flagged(banks) -> list[str]:
    """``bank: check`` for every check that is not met (``ok`` false), in the results' order."""
    return [f"{bank.name}: {check.name}" for bank in banks for check in bank.checks if not check.ok]


def _strict_exit(banks, strict: bool) -> None:
    """With ``--strict``, a flagged check ends the run with exit code 1 (after the output is complete)."""
    flagged = _flagged(banks) if strict else []
    if flagged:
        more = f" (and {len(flagged) - 1} more)" if len(flagged) > 1 else ""
        typer.echo(f"bankbuild: {len(flagged)} check{'s' if len(flagged) > 1 else ''} flagged (--strict): "
                   f"{_one_line(flagged[0], 200)}{more}", err=True)
        raise typer.Exit(code=1)


def _run_size(spec_path: Path, out: Path | None, as_json: bool, catalogs_dir: Path | None, label: str,
              strict: bool = False, csv_delimiter: str = ",", demo_prices: bool = False) -> None:
    """Size, then write the documents: into ``out``, or ``bankbuild-out``; with ``--json`` only when ``--out``
    is given, so that the JSON of a large plant comes in seconds without rendering every PDF page."""
    from bankbuild.api import run_spec
    from bankbuild.cli.progress import Progress
    from bankbuild.reports.jsonout import project_json
    from bankbuild.reports.terminal import project_summary
    from bankbuild.reports.writer import check_out, prestart, write_documents

    if out is None and not as_json:
        out = Path("bankbuild-out")
    delimiter = _csv_delimiter(csv_delimiter)
    warm = None
    if out is not None:
        check_out(out)  # a folder the documents cannot go into is refused before the work, not after it
        # The workbook library imports numpy (to know its number types), whose linear-algebra library starts a
        # thread per core that spins a while: ~80 ms of CPU taken from the PDFs drawn beside. No algebra is done.
        os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
        warm = prestart(delimiter)  # workers that get ready to render while the banks are sized
    try:
        with Progress(enabled=not as_json) as progress:  # stderr, on a terminal, for long runs only
            result = run_spec(spec_path, catalogs_dir, label=label, on_bank=progress.callback("sizing banks"),
                              demo_prices=demo_prices)
            written = [] if out is None else write_documents(result, out, csv_delimiter=delimiter, warm=warm,
                                                               on_document=progress.callback("writing documents"))
    finally:
        if warm is not None:
            warm.stop()
    if as_json:
        typer.echo(project_json(result))
    else:
        typer.echo(project_summary(result, [str(p) for p in written]))
    _strict_exit(result.banks, strict)


@app.command()
def size(spec: Annotated[Path, typer.Argument(help="The bank spec (YAML).")],
         out: OutOpt = None, json: JsonOpt = False, catalogs: CatOpt = None, strict: StrictOpt = False,
         csv_delimiter: CsvOpt = ",") -> None:
    """Size every bank in SPEC and write its documents.

    Exit codes: 0 done; 1 with --strict when a check is flagged; 2 bad input (nothing written).

    Example: bankbuild size plant.yaml --out quote-2041
    """
    _run_size(spec, out, json, catalogs, str(spec), strict, csv_delimiter)


@app.command()
def demo(out: OutOpt = None, json: JsonOpt = False, strict: StrictOpt = False, csv_delimiter: CsvOpt = ",") -> None:
    """Run the built-in demo plant (an invented site) and write its documents.

    Its bill of materials is priced from the built-in price table: invented demo prices, marked so.

    Example: bankbuild demo --out demo-docs
    """
    from bankbuild.api import demo_spec_path

    _run_size(demo_spec_path(), out, json, None, "demo.yaml (built-in)", strict, csv_delimiter, demo_prices=True)


@app.command()
def init(path: Annotated[Path, typer.Argument(help="Where to write the starter spec.")] = Path("bank.yaml"),
         force: Annotated[bool, typer.Option("--force", help="Replace an existing file.")] = False) -> None:
    """Write a commented starter spec to edit.

    Example: bankbuild init line3.yaml
    """
    from bankbuild.api import SPEC_SCHEMA_FILE, spec_schema, starter_spec_text
    from bankbuild.files import write_atomic

    if path.exists() and not force:
        raise OptionError(str(path), "", "already exists; use --force to replace it")
    if path.exists() and path.is_dir():
        raise OptionError(str(path), "", "is a folder; give a file name")
    schema_path = path.parent / SPEC_SCHEMA_FILE
    write_atomic(path, starter_spec_text().encode("utf-8"))  # whole or not at all, even on a full disk
    wrote_schema = force or not schema_path.exists()
    if wrote_schema:
        write_atomic(schema_path, (_dumps(spec_schema()) + "\n").encode("utf-8"))
    typer.echo(f"wrote {path}: edit it, then run 'bankbuild size {path}'")
    if wrote_schema:
        typer.echo(f"wrote {schema_path}: editors with YAML language support complete keys and underline typos "
                   "from it (the spec's first line points to it)")


@app.command()
def schema(what: Annotated[str, typer.Argument(
        help="spec (what you write), results (what 'size --json' prints) or rerate (what 'rerate --json' "
             "prints).")] = "spec") -> None:
    """Print a JSON Schema: of the spec (for editors), or of the results JSON.

    Example: bankbuild schema > bankbuild.schema.json
    """
    from bankbuild.api import results_schema, spec_schema

    if what == "spec":
        typer.echo(_dumps(spec_schema()))
    elif what in ("results", "rerate"):
        typer.echo(_dumps(results_schema("size" if what == "results" else "rerate")))
    else:
        raise OptionError("", "WHAT", f"must be spec, results or rerate (got {what!r})")


@app.command()
def kvar(kw: Annotated[float | None, _number_option("--kw", help="Active power of the load [kW].")] = None,
         pf_present: Annotated[float | None, _number_option("--pf-present", help="Present power factor.")] = None,
         pf_target: Annotated[float | None, _number_option("--pf-target", help="Target power factor.")] = None,
         loads: Annotated[Path | None, typer.Option("--loads", help="YAML file with 'pf_target' and 'loads'.")]
         = None,
         voltage_v: Annotated[float | None, _number_option(
             "--voltage-v", help="Supply line-to-line voltage [V]; 480 when not given (the output says so).")] = None,
         frequency_hz: Annotated[float | None, _number_option(
             "--frequency-hz", help="Supply frequency [Hz]; 60 when not given (the output says so).")] = None,
         json: JsonOpt = False) -> None:
    """Quick figure: kvar to correct a load, µF per leg, and line currents before and after.

    Example: bankbuild kvar --kw 250 --pf-present 0.72 --pf-target 0.96 --voltage-v 480
    """
    from bankbuild.api import kvar as quick_kvar
    from bankbuild.design.quick import kvar_text

    figures = quick_kvar(kw, pf_present, pf_target, loads=loads, voltage_v=voltage_v, frequency_hz=frequency_hz)
    if json:
        typer.echo(_dumps(figures))
        return
    units = {"voltage_v": "V", "frequency_hz": "Hz"}
    assumed = [f"{figures[name]:g} {units[name]} (no --{name.replace('_', '-')} given)" for name in figures["assumed"]]
    typer.echo(kvar_text(figures) + (f"\nassumed         {', '.join(assumed)}" if assumed else ""))


@app.command()
def rerate(spec: Annotated[Path, typer.Argument(help="The spec of the existing bank(s) (YAML).")],
           voltage_v: Annotated[float, _number_option("--voltage-v", help="New supply line-to-line voltage [V].")],
           frequency_hz: Annotated[float | None, _number_option(
               "--frequency-hz", help="New supply frequency [Hz]; default: each bank's own.")] = None,
           out: Annotated[Path | None, typer.Option(
               "--out", help="Folder for rerate.pdf, rerate.json, rerate.txt and rerate-bom-difference.csv "
                             "(created if missing); default bankbuild-out, or none with --json.")] = None,
           json: JsonOpt = False, catalogs: CatOpt = None, strict: StrictOpt = False,
           transformer_kva: Annotated[float | None, _number_option(
               "--transformer-kva", help="Transformer at the new supply [kVA]; default: the spec's.")] = None,
           transformer_z_pct: Annotated[float | None, _number_option(
               "--transformer-z-pct", help="Its impedance [%].")] = None,
           source_sc_mva: Annotated[float | None, _number_option(
               "--source-sc-mva", help="Utility short-circuit level in series with it [MVA].")] = None) -> None:
    """Move each bank of SPEC to another supply: kvar (∝ V²·f), currents, capacitor voltage, system checks,
    which installed parts still fit, and a re-sized bank with the bill-of-materials difference.

    A bank's units are those listed under its 'units' key (an existing bank), else the ones 'size' selects.

    Example: bankbuild rerate line3.yaml --voltage-v 415 --frequency-hz 50 --out moved
    """
    from bankbuild.cli.rerate import run_rerate

    site = {"transformer_kva": transformer_kva, "transformer_z_pct": transformer_z_pct,
            "source_sc_mva": source_sc_mva}
    result, text = run_rerate(spec, voltage_v, frequency_hz, out, json, catalogs, site)
    if frequency_hz is None and not json:
        text += "\nassumed: each bank keeps its own supply frequency (no --frequency-hz given)"
    typer.echo(text)
    _strict_exit(result.banks, strict)


@app.command()
def survey(
    data: Annotated[Path, typer.Argument(help="Metered readings (CSV or XLSX): a time column and two of kW, kvar, "
                                              "kVA, PF named in the header with their unit.")],
    voltage_v: Annotated[float, typer.Option("--voltage-v", help="Supply line-to-line voltage [V].")],
    pf_target: Annotated[float, typer.Option("--pf-target", help="Target power factor (lagging).")],
    out: Annotated[Path | None, typer.Option(
        "--out", help="Folder for spec.yaml, survey.json and survey-report.pdf (created if missing).")] = None,
    json: JsonOpt = False,
    frequency_hz: Annotated[float, typer.Option("--frequency-hz", help="Supply frequency [Hz].")] = 60.0,
    share: Annotated[float, typer.Option("--share", help="Share of intervals the bank must meet the target in; "
                                                         "it sizes the total.")] = 0.95,
    pf_lead_limit: Annotated[float, typer.Option("--pf-lead-limit", help="Leading PF the controller must not "
                                                                         "pass (1 = never lead).")] = 0.98,
    steps: Annotated[int | None, typer.Option("--steps", help="Switched steps; default 6, fewer for a small "
                                                              "bank.")] = None,
    pattern: Annotated[str, typer.Option("--pattern", help="Step weights: 'equal' or like 1:2:2.")] = "1:2:2",
    switch_in_share: Annotated[float, typer.Option(
        "--switch-in-share", help="Missing kvar that switches a step in, as a share of the smallest step.")] = 0.0,
    demand_interval_min: Annotated[float, typer.Option(
        "--demand-interval-min", help="Tariff demand interval for the kVA demand [min].")] = 15.0,
    rules: Annotated[str, typer.Option("--rules", help="Rule basis written into the spec: nec or iec.")] = "nec",
    name: Annotated[str, typer.Option("--name", help="The bank's name in the spec.")] = "Surveyed bank",
    kvar_sign: Annotated[str, typer.Option("--kvar-sign", help="lagging-positive or lagging-negative (how the "
                                                               "meter signs inductive kvar).")] = "lagging-positive",
    time_column: Annotated[str | None, typer.Option("--time-column", help="Header of the time column.")] = None,
    kw_column: Annotated[str | None, typer.Option("--kw-column", help="Header of the kW column.")] = None,
    kvar_column: Annotated[str | None, typer.Option("--kvar-column", help="Header of the kvar column.")] = None,
    kva_column: Annotated[str | None, typer.Option("--kva-column", help="Header of the kVA column.")] = None,
    pf_column: Annotated[str | None, typer.Option("--pf-column", help="Header of the PF column.")] = None,
    catalogs: CatOpt = None,
) -> None:
    """Size a bank from metered readings: need per interval, a proposed bank and spec, and that bank proven on the
    data by a simulated step controller (PF, leading intervals, switching duty, monthly billing PF and kVA demand).

    Example: bankbuild survey meter.csv --voltage-v 480 --pf-target 0.95 --out survey
    """
    from bankbuild.cli.survey import run_survey

    columns = {"time": time_column, "kw": kw_column, "kvar": kvar_column, "kva": kva_column, "pf": pf_column}
    typer.echo(run_survey(data, out, json, catalogs, columns, kvar_sign, voltage_v=voltage_v, pf_target=pf_target,
                          frequency_hz=frequency_hz, share=share, pf_lead_limit=pf_lead_limit, steps=steps,
                          pattern=pattern, switch_in_share=switch_in_share,
                          demand_interval_min=demand_interval_min, rules=rules, name=name))


@catalog_app.command("check")
def catalog_check(folder: Annotated[Path | None, typer.Argument(help="Folder of tables (default: built-in).")]
                  = None) -> None:
    """Validate every rating table in FOLDER and print its file name and SHA-256.

    Example: bankbuild catalog check my-tables
    """
    from bankbuild.tables.load import builtin_dir, check_catalogs

    folder = folder or builtin_dir()
    for info in check_catalogs(folder):
        typer.echo(f"ok  {info.file_name:<28} sha256 {info.sha256[:16]}…")
    from bankbuild.spec.rulebasis import read_rule_basis, rule_files

    for path in rule_files(folder):  # rule-basis files beside the tables, checked against their schema
        basis = read_rule_basis(path)
        typer.echo(f"ok  {basis.file_name:<28} sha256 {basis.sha256[:16]}…  rule basis {basis.label}")


@catalog_app.command("copy")
def catalog_copy(folder: Annotated[Path, typer.Argument(help="Folder to copy the built-in tables into.")],
                 force: Annotated[bool, typer.Option("--force", help="Replace tables already in FOLDER.")]
                 = False) -> None:
    """Copy the built-in rating tables into FOLDER so you can edit them.

    Example: bankbuild catalog copy my-tables
    """
    from bankbuild.api import copy_tables

    for path in copy_tables(folder, force=force):
        typer.echo(f"wrote {path}")
    typer.echo(f"point a spec at it with 'catalogs: {folder}' or use --catalogs {folder}")


def _dumps(data) -> str:
    import json as _json

    return _json.dumps(data, indent=2, ensure_ascii=False)


def _one_line(message: str, limit: int = 600) -> str:
    """An error message made safe to print: control characters escaped, one line, bounded length.

    The message may quote a file name or a value from a hostile file; it must not move the cursor, recolour
    the terminal or spill over many lines. An over-long message loses its middle (a long path), not its end,
    where the problem is said.

    >>> _one_line("spec.yaml: name: bad\\x1b[31m\\nnext")
    'spec.yaml: name: bad\\\\x1b[31m\\\\nnext'
    >>> _one_line("/" + "x" * 900 + ": out: is a file", 60)
    '/xxxxxxxxxxxxxxxxxxx…xxxxxxxxxxxxxxxxxxxxxxx: out: is a file'
    """
    import unicodedata

    out = "".join(char if char == " " or unicodedata.category(char)[0] not in "CZ" or char == "\u00a0"
                  else char.encode("unicode_escape").decode("ascii") for char in message)
    if len(out) <= limit:
        return out
    tail = (limit - 1) * 2 // 3 if limit >= 30 else 0
    return out[: limit - 1 - tail] + "…" + (out[-tail:] if tail else "")


class OptionNames(dict):
    """The library's parameter names written as this command line's options: ``voltage_v`` -> ``--voltage-v``.

    >>> names = OptionNames()
    >>> names["voltage_v"], names["out_dir"], names["catalogs_dir"]
    ('--voltage-v', '--out', '--catalogs')
    """

    SPECIAL = {"out_dir": "--out", "catalogs_dir": "--catalogs"}

    def get(self, key, default=None):
        return self[key] if key else default

    def __missing__(self, key: str) -> str:
        return self.SPECIAL.get(key, "--" + key.replace("_", "-"))


def _say(line: str) -> None:
    typer.echo(f"bankbuild: {_one_line(line)}", err=True)


def run(argv: list[str] | None = None) -> int:
    """Run the app: every expected failure is one line on stderr and exit code 2; a signal stops the run
    cleanly (exit 128 + its number); anything unexpected is one line and exit code 1 (``--debug``: the
    traceback)."""
    from bankbuild.cli.guard import debug_requested, empty_path, run_guarded

    args = list(sys.argv[1:] if argv is None else argv)
    debug, args = debug_requested(args)

    def body() -> int:
        try:
            empty = empty_path(args)
            if empty is not None:  # an empty path would mean the current folder: refused, not guessed
                raise OptionError("", empty, "an empty path; give a name (. for the current folder)")
            return _run_app(args)
        except BankbuildError as exc:
            for problem in (exc, *exc.also):  # a spec's every problem, one line each
                _say(f"error: {problem.line(OptionNames())}")
            return 2

    return run_guarded(body, _say, debug)


def _run_app(argv: list[str]) -> int:
    from typer.exceptions import Abort, TyperException

    command = typer.main.get_command(app)
    try:
        code = command.main(args=argv, prog_name="bankbuild", standalone_mode=False)
    except TyperException as exc:  # usage errors of the command line (bad option, missing argument, …)
        ctx = getattr(exc, "ctx", None)
        if type(exc).__name__ == "NoArgsIsHelpError" and ctx is not None:
            typer.echo(ctx.get_help())
            return 0
        sub = ctx.command_path if ctx is not None else "bankbuild"
        from bankbuild.cli.usage import usage_line

        _say(f"error: {usage_line(exc)} (see '{sub} --help')")
        return getattr(exc, "exit_code", 2)
    except Abort:
        _say("stopped")
        return 1
    return code if isinstance(code, int) else 0


def main() -> None:
    """Console-script entry point: run, then end the process (see :func:`_end`)."""
    _end(run())


def _end(code: int) -> None:
    """End the process with ``code`` once its work is done: the exit handlers run (a coverage tool's, the
    multiprocessing module's) and the output streams are flushed, as at a normal exit, but the interpreter is not
    torn down module by module. Freeing every object of the libraries loaded (numpy's among them) took longer
    than some commands (~50 ms of the demo's 0.8 s); the system reclaims the memory at once."""
    import atexit

    atexit._run_exitfuncs()
    for stream in (sys.stdout, sys.stderr):
        try:
            if stream is not None:
                stream.flush()
        except (OSError, ValueError):  # a closed or broken stream: the exit code already says what happened
            pass
    os._exit(code)
