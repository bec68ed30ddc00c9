"""The benchmark (``make bench``): each figure measured side by side with its reference, median of several runs.

1. start-up: ``bankbuild --help`` against a bare ``python -c "import typer"`` (goal: at most 1.25 times);
2. the demo with all its documents against importing the libraries it uses (goal: at most 1.5 times);
3. selecting a 5,000 kvar bank of 25 steps (goal: under 100 ms);
4. a survey of one year of one-minute readings (525,600 rows): read, analysed and simulated (goal: a few
   seconds; peak memory bounded, under 500 MB), beside a plain ``pandas.read_csv`` of the same file;
5. an invented plant of 500 banks: ``size --json`` (goal: a few seconds) and ``size`` with every document
   (goal: at most 15 s on 2 cores, the largest process at most 250 MB), and how the cost of each grows from
   125 to 250 to 500 banks (goal: linear);
6. the harmonic study of a 12-step bank, every distinct step combination, plain (with the search for a tuning
   that passes) and detuned (three tolerance corners): CPU time of the study alone (goal: under 200 ms);
7. limits: a need worked out to about a million MVA refused (goal: no slower than sizing 300 kvar), a bank sized
   from a 20,000-row unit table (goal: within 2 s of sizing it from the built-in table; peak memory under
   300 MB).

The commands under test and their references run in alternation (A, B, A, B, ...), so that a machine that
slows down or speeds up during the run affects both alike; each figure is the median of the runs. The machine
(CPU, cores, Python, load average before and after) is printed with the results, and ``--markdown`` prints the
results table for the README.

Usage: ``.venv/bin/python benchmarks/run.py [--runs 5] [--quick] [--markdown]``
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(ROOT))

from plant import write_plant_spec  # noqa: E402

PYTHON = sys.executable
_SCRIPT = Path(PYTHON).parent / "bankbuild"  # the installed command, as a user runs it
BANKBUILD = [str(_SCRIPT)] if _SCRIPT.exists() else [PYTHON, "-c", "from bankbuild.cli.app import main; main()"]
# Which library modules a demo run loads: everything imported from outside the standard library and bankbuild.
_LIST_MODULES = """
import contextlib, io, sys
from bankbuild.cli.app import run
from bankbuild.reports import render
render.cores = lambda: 1  # render here, so that the modules the document workers import are seen too
with contextlib.redirect_stdout(io.StringIO()):
    run(["demo", "--out", sys.argv[1]])
names = sorted(n for n, m in list(sys.modules.items())
               if getattr(m, "__file__", None) and not n.startswith("bankbuild")
               and "site-packages" in m.__file__ and not n.split(".")[-1].startswith("_"))
print(" ".join(names))
"""


@dataclass
class Row:
    what: str
    measured: str
    reference: str
    result: str
    goal: str
    met: bool | None


def timed(command: list[str], cwd: Path | None = None) -> float:
    """Wall time of one run of ``command`` [s]; it must succeed."""
    start = time.perf_counter()
    done = subprocess.run(command, cwd=cwd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, check=False)
    elapsed = time.perf_counter() - start
    if done.returncode != 0:
        raise SystemExit(f"benchmark command failed ({done.returncode}): {' '.join(command)}\n"
                         f"{done.stderr.decode(errors='replace')}")
    return elapsed


def side_by_side(a: list[str], b: list[str], runs: int, warmup: int = 1) -> tuple[float, float]:
    """Medians [s] of ``a`` and ``b`` run in alternation ``runs`` times each, after ``warmup`` unmeasured pairs."""
    for _ in range(warmup):
        timed(a)
        timed(b)
    times_a, times_b = [], []
    for _ in range(runs):
        times_a.append(timed(a))
        times_b.append(timed(b))
    return statistics.median(times_a), statistics.median(times_b)


def median_of(command_for_run, runs: int) -> float:
    """Median [s] of ``runs`` runs; ``command_for_run(i)`` gives the command of run ``i``."""
    return statistics.median(timed(command_for_run(i)) for i in range(runs))


def machine() -> str:
    cpu = platform.processor() or platform.machine()
    try:
        for line in Path("/proc/cpuinfo").read_text(encoding="utf-8").splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    load = " / ".join(f"{x:.1f}" for x in os.getloadavg()) if hasattr(os, "getloadavg") else "n/a"
    return (f"{cpu}, {os.cpu_count()} cores, {platform.system()} {platform.release()}, Python "
            f"{platform.python_version()}; load average {load}")


def compile_package() -> None:
    """Write the package's bytecode first, as installing it from a wheel does: otherwise, in an editable install
    under ``PYTHONDONTWRITEBYTECODE`` (set on some machines), every run compiles every module from source and the
    figures measure the compiler (the demo +0.2 s, ``--help`` +6 ms)."""
    import compileall

    compileall.compile_dir(str(ROOT / "bankbuild"), quiet=1)


def bench_startup(runs: int) -> Row:
    cli, bare = side_by_side([*BANKBUILD, "--help"], [PYTHON, "-c", "import typer"], runs)
    ratio = cli / bare
    return Row("`bankbuild --help`", f"{cli * 1000:.0f} ms", f"`import typer` {bare * 1000:.0f} ms",
               f"{ratio:.2f} ×", "≤ 1.25 ×", ratio <= 1.25)


def demo_libraries(work: Path) -> list[str]:
    """The library modules (outside the standard library and bankbuild) that a demo run imports."""
    done = subprocess.run([PYTHON, "-c", _LIST_MODULES, str(work / "demo-modules")], capture_output=True,
                          text=True, check=True)
    return done.stdout.split()


def _demo_banks() -> int:
    import yaml

    from bankbuild.api import demo_spec_path

    return len(yaml.safe_load(demo_spec_path().read_text(encoding="utf-8"))["banks"])


def _document_names() -> list[str]:
    from bankbuild.reports.writer import ONE_LINE_SVG, _writers

    return [name for name, _ in _writers()] + [ONE_LINE_SVG.format(n=n) for n in range(1, _demo_banks() + 1)]


def bench_demo(runs: int, work: Path) -> Row:
    modules = demo_libraries(work)
    script = work / "import_libraries.py"
    script.write_text(f"import importlib\nfor name in {modules!r}:\n    importlib.import_module(name)\n",
                      encoding="utf-8")
    tops = sorted({m.split(".")[0] for m in modules})
    run_s, import_s = side_by_side([*BANKBUILD, "demo", "--out", str(work / "demo")], [PYTHON, str(script)], runs)
    ratio = run_s / import_s
    return Row(f"`bankbuild demo` ({_demo_banks()} banks, {len(_document_names())} documents)", f"{run_s:.2f} s",
               f"importing the {len(modules)} library modules it loads ({', '.join(tops)}) {import_s:.2f} s",
               f"{ratio:.2f} ×", "≤ 1.5 ×", ratio <= 1.5)


def bench_selection() -> list[Row]:
    rows = []
    try:
        import select_bench
    except ImportError:  # the assembly's own timing function is not there: time the exact search directly
        select_bench = None
    if select_bench is not None:
        for label, weights in (("25 equal steps", (1,) * 25), ("25 steps 1:2:2…", (1,) + (2,) * 24)):
            ms = select_bench.bench_select(weights=weights)
            rows.append(Row(f"select 5,000 kvar, {label}", f"{ms:.1f} ms", "median of 21 runs, cache cleared",
                            f"{ms:.1f} ms", "< 100 ms", ms < 100.0))
        return rows
    from bankbuild.design.select import _best, build_step
    from bankbuild.tables.load import load_catalogs

    units = [u for u in load_catalogs().capacitor_units if (u.rated_voltage_v, u.rated_frequency_hz) == (480, 60)]
    times = []
    for _ in range(21):
        _best.cache_clear()
        start = time.perf_counter()
        for _step in range(25):
            build_step(units, 200.0, 1.0)
        times.append((time.perf_counter() - start) * 1000)
    ms = statistics.median(times)
    return [Row("select 5,000 kvar, 25 equal steps", f"{ms:.1f} ms", "median of 21 runs", f"{ms:.1f} ms",
                "< 100 ms", ms < 100.0)]


def bench_harmonics(runs: int) -> list[Row]:
    """CPU time of the harmonic study of a sized 12-step bank (1:2:2…, 23 distinct totals), median of the runs."""
    from bankbuild.design.harmonics import study
    from bankbuild.design.select import unit_voltages
    from bankbuild.design.sizing import size_project
    from bankbuild.spec.model import Spec
    from bankbuild.spec.rulebasis import builtin_rule_basis
    from bankbuild.tables.load import load_catalogs

    catalogs = load_catalogs()
    basis = builtin_rule_basis("nec").rules
    supply = {"voltage_v": 480, "frequency_hz": 60, "transformer_kva": 2000, "transformer_z_pct": 6}
    drives = {"load_current_a": 1200, "spectrum": "six_pulse_choke", "background_voltage_pct": {"h5": 1.5, "h7": 1}}
    rows = []
    for label, extra in (("plain, with the tuning search", {}), ("detuned 7 %, 3 tolerance corners",
                                                                {"detuning_pct": 7})):
        bank = {"name": "Bench", "supply": supply, "need": {"kvar": 600}, "steps": {"count": 12, "pattern": "1:2:2"},
                "harmonics": drives} | extra
        spec = Spec.model_validate({"banks": [bank]})
        sized = size_project(spec, catalogs).banks[0]
        voltages = unit_voltages(catalogs.capacitor_units, 60.0)
        times = []
        for _ in range(max(7, runs)):
            start = time.process_time()
            result, _checks = study(spec.banks[0], sized, basis, voltages)
            times.append((time.process_time() - start) * 1000)
        ms = statistics.median(times)
        rows.append(Row(f"harmonic study, 12 steps ({len(result.combinations)} combinations), {label}",
                        f"{ms:.0f} ms", f"CPU time, median of {len(times)} runs", f"{ms:.0f} ms", "< 200 ms",
                        ms < 200.0))
    return rows


def bench_plant(runs: int, work: Path, with_documents: bool) -> list[Row]:
    specs = {n: write_plant_spec(work, n) for n in (1, 125, 250, 500)}
    json_s = {}
    for n, spec in specs.items():
        json_s[n] = median_of(lambda i, spec=spec: [*BANKBUILD, "size", str(spec), "--json"], runs)
    rows = [Row("500 banks: `size --json`", f"{json_s[500]:.2f} s", f"1 bank {json_s[1]:.2f} s",
                f"{json_s[500]:.2f} s", "a few seconds (≤ 5 s)", json_s[500] <= 5.0)]
    # Linear growth, timed inside one process (no start-up noise): read, size and write the JSON of each plant.
    work_s = _growth(specs, runs)
    growth = (work_s[250] / work_s[125], work_s[500] / work_s[250])
    per_bank = work_s[500] / 500 * 1000
    rows.append(Row("cost growth 125 → 250 → 500 banks", f"{work_s[125]:.2f} / {work_s[250]:.2f} / "
                    f"{work_s[500]:.2f} s (best of {runs})", f"{per_bank:.1f} ms per bank at 500",
                    f"× {growth[0]:.2f}, × {growth[1]:.2f}", "× 2 per doubling (linear; < 2.4)", max(growth) < 2.4))
    if with_documents:
        rows += _bench_documents(specs, max(1, min(runs, 3)), work)
    return rows


def timed_peak(command: list[str]) -> tuple[float, float]:
    """Wall time [s] of one run of ``command`` and the peak memory of its largest process [MB] (the command or
    any worker it waited for: the kernel's maximum resident set size over the process and its children)."""
    start = time.perf_counter()
    process = subprocess.Popen(command, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    _, status, usage = os.wait4(process.pid, 0)
    elapsed = time.perf_counter() - start
    process.returncode = os.waitstatus_to_exitcode(status)
    if process.returncode != 0:
        raise SystemExit(f"benchmark command failed ({process.returncode}): {' '.join(command)}")
    return elapsed, usage.ru_maxrss / 1024  # Linux reports kB


def _bench_documents(specs: dict[int, Path], runs: int, work: Path) -> list[Row]:
    """Every document of 125, 250 and 500 banks, each beside ``size --json`` of the same plant (A, B, A, B…)."""
    docs, peaks, sizing = {}, {}, {}
    for n in (125, 250, 500):
        times, json_times, mem = [], [], []
        for i in range(runs if n == 500 else 1):
            elapsed, peak = timed_peak([*BANKBUILD, "size", str(specs[n]), "--out", str(work / f"docs-{n}-{i}")])
            times.append(elapsed)
            mem.append(peak)
            json_times.append(timed([*BANKBUILD, "size", str(specs[n]), "--json"]))
        docs[n], peaks[n], sizing[n] = statistics.median(times), max(mem), statistics.median(json_times)
    growth = (docs[250] / docs[125], docs[500] / docs[250])
    return [Row("500 banks: `size` with all documents", f"{docs[500]:.1f} s", f"`size --json` {sizing[500]:.1f} s; "
                f"median of {runs}, {cores_text()}", f"{docs[500]:.1f} s", "≤ 15 s on 2 cores", docs[500] <= 15.0),
            Row("documents' growth 125 → 250 → 500 banks", f"{docs[125]:.1f} / {docs[250]:.1f} / {docs[500]:.1f} s",
                "one run each at 125 and 250", f"× {growth[0]:.2f}, × {growth[1]:.2f}",
                "× 2 per doubling (linear; < 2.4)", max(growth) < 2.4),
            Row("500 banks with documents: peak memory", f"{peaks[500]:.0f} MB", "the largest process (kernel's "
                "max RSS)", f"{peaks[500]:.0f} MB", "≤ 250 MB", peaks[500] <= 250.0)]


def cores_text() -> str:
    try:
        return f"{len(os.sched_getaffinity(0))} cores"
    except (AttributeError, OSError):
        return f"{os.cpu_count()} cores"


_GROWTH = """
import json, statistics, sys, time
from bankbuild.design.sizing import size_project
from bankbuild.tables.load import load_catalogs
from bankbuild.reports.jsonout import project_json
from bankbuild.spec.read import read_spec
catalogs = load_catalogs()
runs, out = int(sys.argv[1]), {}
for path in sys.argv[2:]:
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        spec = read_spec(path)
        project_json(size_project(spec.spec, catalogs))
        times.append(time.perf_counter() - start)
    out[path] = min(times)  # best of the runs: the cost of the work itself, least disturbed by other load
print(json.dumps(out))
"""


def _growth(specs: dict[int, Path], runs: int) -> dict[int, float]:
    """Best time of ``runs`` [s] to read, size and serialise each plant, in one fresh process."""
    import json

    sizes = [n for n in sorted(specs) if n > 1]
    done = subprocess.run([PYTHON, "-c", _GROWTH, str(runs), *(str(specs[n]) for n in sizes)],
                          capture_output=True, text=True, check=True)
    by_path = json.loads(done.stdout)
    return {n: by_path[str(specs[n])] for n in sizes}


def bench_survey(runs: int, work: Path) -> list[Row]:
    """A year of one-minute readings through the survey in a child process (its own peak memory)."""
    import json

    sys.path.insert(0, str(ROOT))
    from bankbuild.spec.demo_meter import write_demo_csv

    data = work / "meter-1min.csv"
    rows = write_demo_csv(data, minutes=1)
    script = [PYTHON, str(HERE / "survey_bench.py"), str(data)]

    def child(extra: list[str]) -> dict:
        done = subprocess.run(script + extra, capture_output=True, text=True, check=False)
        if done.returncode != 0:
            raise SystemExit(f"survey benchmark failed: {done.stderr}")
        return json.loads(done.stdout)

    child([])  # warm the file cache
    measured, reference = [], []
    for _ in range(runs):
        measured.append(child([]))
        reference.append(child(["--reference"]))
    read = statistics.median(m["read_s"] for m in measured)
    work_s = statistics.median(m["survey_s"] for m in measured)
    peak = max(m["peak_mb"] for m in measured)
    plain = statistics.median(r["read_s"] for r in reference)
    total = read + work_s
    return [Row(f"survey: {rows:,} one-minute readings, read + analysed + simulated", f"{total:.2f} s",
                f"`pandas.read_csv` alone {plain:.2f} s", f"read {read:.2f} s + survey {work_s:.2f} s",
                "a few seconds (≤ 5 s)", total <= 5.0),
            Row("survey: peak memory of that process", f"{peak:,.0f} MB",
                f"`pandas.read_csv` alone {max(r['peak_mb'] for r in reference):,.0f} MB", "",
                "bounded (≤ 500 MB)", peak <= 500.0)]


def bench_limits(runs: int, work: Path) -> list[Row]:
    from bigtable import HUGE_NEED, big_units_table

    spec = Path(__file__).parents[1] / "tests" / "data" / "specs" / "line3_300kvar.yaml"
    huge = work / "huge-need.yaml"
    huge.write_text(spec.read_text(encoding="utf-8").replace("need: {kvar: 300}", HUGE_NEED), encoding="utf-8")

    def refused(command: list[str]) -> float:
        start = time.perf_counter()
        done = subprocess.run(command, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, check=False)
        if done.returncode != 2:
            raise SystemExit(f"expected a refusal (exit 2), got {done.returncode}: {done.stderr.decode()}")
        return time.perf_counter() - start

    # the refusal and the plain run in alternation, judged by the median of the paired differences: the refusal
    # does less work than the plain run, and pairing keeps a machine that slows down from deciding it
    pairs = [(refused([*BANKBUILD, "size", str(huge), "--json"]), timed([*BANKBUILD, "size", str(spec), "--json"]))
             for _ in range(max(runs, 5))]
    refusal = statistics.median(r for r, _ in pairs)
    extra = statistics.median(r - p for r, p in pairs)
    tables = big_units_table(work / "big-tables", 20_000)
    plain, big = side_by_side([*BANKBUILD, "size", str(spec), "--json"],
                              [*BANKBUILD, "size", str(spec), "--json", "--catalogs", str(tables)], runs, warmup=0)
    probe = ("import resource, subprocess, sys; subprocess.run(sys.argv[1:], stdout=subprocess.DEVNULL, check=True); "
             "print(resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss)")  # the run's own peak (Linux: kB)
    peak_mb = int(subprocess.run([PYTHON, "-c", probe, *BANKBUILD, "size", str(spec), "--json", "--catalogs",
                                  str(tables)], capture_output=True, text=True, check=True).stdout) / 1024
    return [Row("huge derived need refused", f"{refusal * 1000:.0f} ms", f"300 kvar sized {plain * 1000:.0f} ms",
                f"{extra * 1000:+.0f} ms (paired)", "≤ +0 ms (no work done)", extra <= 0),
            Row("`size --json`, 20,000-row unit table", f"{big * 1000:.0f} ms", f"built-in table {plain * 1000:.0f} ms",
                f"+{(big - plain) * 1000:.0f} ms", "≤ +2000 ms", big - plain <= 2.0),
            Row("peak memory, 20,000-row unit table", f"{peak_mb:.0f} MB", "", "", "< 300 MB", peak_mb < 300)]


def markdown(rows: list[Row], where: str) -> str:
    lines = ["| what | measured | beside it | result | goal | met |", "|---|---|---|---|---|---|"]
    for r in rows:
        met = "—" if r.met is None else ("yes" if r.met else "**no**")
        lines.append(f"| {r.what} | {r.measured} | {r.reference} | {r.result} | {r.goal} | {met} |")
    return "\n".join(lines) + f"\n\nMachine: {where}."


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5, help="runs per figure (median); default 5")
    parser.add_argument("--quick", action="store_true", help="3 runs, no 500-bank documents")
    parser.add_argument("--markdown", action="store_true", help="print the results as a Markdown table")
    args = parser.parse_args(argv)
    runs = 3 if args.quick else max(1, args.runs)
    compile_package()
    before = machine()
    rows: list[Row] = []
    with tempfile.TemporaryDirectory(prefix="bankbuild-bench-") as tmp:
        work = Path(tmp)
        steps = [("start-up", lambda: [bench_startup(runs)]), ("demo", lambda: [bench_demo(runs, work)]),
                 ("selection", bench_selection), ("harmonic study", lambda: bench_harmonics(runs)),
                 ("survey", lambda: bench_survey(min(runs, 3), work)),
                 ("plant", lambda: bench_plant(runs, work, with_documents=not args.quick)),
                 ("limits", lambda: bench_limits(runs, work))]
        for label, step in steps:
            print(f"… {label}", file=sys.stderr, flush=True)
            rows += step()
    after = machine().rsplit("load average ", 1)[1]
    where = f"{before} (after: {after})"
    if args.markdown:
        print(markdown(rows, where))
    else:
        width = max(len(r.what) for r in rows)
        for r in rows:
            met = "" if r.met is None else ("met" if r.met else "NOT MET")
            print(f"{r.what:<{width}}  {r.measured:>18}  {r.reference:<40} {r.result:>12}  goal {r.goal:<28} {met}")
        print(f"machine: {where}")
    return 0 if all(r.met is not False for r in rows) else 1


if __name__ == "__main__":
    sys.exit(main())
