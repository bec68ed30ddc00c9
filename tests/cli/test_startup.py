"""Start-up stays light: importing the CLI and asking for help load none of the heavy libraries.

pandas, reportlab and openpyxl are imported inside the functions that need them (DEVELOPERS.md), so that
``bankbuild --help`` answers at once. Each check runs in a fresh interpreter, since this test process has long
imported them.
"""

from __future__ import annotations

import json
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

HEAVY = ("pandas", "reportlab", "openpyxl")
SCRIPT = shutil.which("bankbuild", path=str(Path(sys.executable).parent))

PROBE = """\
import json, sys
{body}
print(json.dumps(sorted(m for m in sys.modules if m.split(".")[0] in {heavy!r})))
"""


def heavy_modules_after(body: str) -> list[str]:
    code = PROBE.format(body=body, heavy=HEAVY)
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr
    return json.loads(proc.stdout.strip().splitlines()[-1])


def test_import_cli_is_light():
    assert heavy_modules_after("import bankbuild.cli.app") == []


@pytest.mark.parametrize("argv", [["--help"], ["size", "--help"], ["kvar", "--help"], ["catalog", "--help"]],
                         ids=" ".join)
def test_help_is_light(argv):
    body = f"from bankbuild.cli.app import run\nrun({argv!r})"
    assert heavy_modules_after(body) == []


def test_probe_can_see_a_heavy_import():
    # The probe itself works: a heavy import is seen.
    assert "pandas" in heavy_modules_after("import pandas")


@pytest.mark.skipif(SCRIPT is None, reason="the bankbuild console script is not installed")
def test_console_script_help_imports_no_heavy_library():
    # -X importtime lists every module the interpreter imports, on stderr, one line each: "... | name".
    proc = subprocess.run([sys.executable, "-X", "importtime", SCRIPT, "--help"], capture_output=True, text=True,
                          timeout=120)
    assert proc.returncode == 0
    assert proc.stdout.startswith("Usage: bankbuild ")
    imported = {line.rsplit("|", 1)[-1].strip().split(".")[0] for line in proc.stderr.splitlines() if "|" in line}
    assert "bankbuild" in imported
    assert imported.isdisjoint(HEAVY)


def test_help_does_not_load_the_api_and_the_api_loads_on_first_use():
    code = ("import sys\nfrom bankbuild.cli.app import run\nrun(['--help'])\nbefore = 'bankbuild.api' in sys.modules\n"
            "import bankbuild\nsize = bankbuild.size\nprint(before, 'bankbuild.api' in sys.modules, size.__name__)")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.strip().splitlines()[-1] == "False True size"


def test_the_command_line_annotations_are_objects_not_text():
    """typer reads every command's parameters from its annotations; postponed (text) annotations must be
    evaluated on every start, which tripled the time of ``--help`` spent in typer."""
    import bankbuild.cli.app as app

    assert not isinstance(app.size.__annotations__["spec"], str)


END_PROBE = """
import atexit, sys
from pathlib import Path
marker = Path(sys.argv[1])
atexit.register(lambda: marker.write_text("exit handlers ran"))
from bankbuild.cli.app import main
sys.argv = ["bankbuild", *sys.argv[2:]]
main()
print("not reached")
"""


KVAR = ["kvar", "--kw", "250", "--pf-target", "0.96"]


@pytest.mark.parametrize(("argv", "code", "out"), [(["--version"], 0, "bankbuild "),
                                                   ([*KVAR, "--pf-present", "0.72", "--json"], 0, "{"),
                                                   ([*KVAR, "--pf-present", "2"], 2, "")])
def test_the_entry_point_ends_the_process_with_exit_handlers_run_and_output_flushed(tmp_path, argv, code, out):
    """``main`` ends the process without tearing down the interpreter, but as a normal exit does for the user:
    the exit code, every line written, the exit handlers (a coverage tool's) run."""
    marker = tmp_path / "atexit"
    done = subprocess.run([sys.executable, "-c", END_PROBE, str(marker), *argv], capture_output=True, text=True,
                          timeout=60)
    assert done.returncode == code, done.stderr
    assert done.stdout.startswith(out) and "not reached" not in done.stdout
    assert marker.read_text() == "exit handlers ran"
    assert "Traceback" not in done.stderr
