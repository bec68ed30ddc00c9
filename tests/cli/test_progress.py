"""The progress bar: on a terminal's stderr for long runs only; never in pipes, files or ``--json`` output."""

from __future__ import annotations

import io
import json
import subprocess
import sys
from pathlib import Path

import pytest

from bankbuild.cli import progress as progress_mod
from bankbuild.cli.app import run
from bankbuild.cli.progress import DELAY_S, INTERVAL_S, Progress, bar_line
from bankbuild.errors import BankbuildError
from bankbuild.reports import render as render_mod

sys.path.insert(0, str(Path(__file__).parents[2] / "benchmarks"))
from plant import write_plant_spec  # noqa: E402


class FakeTerminal(io.StringIO):
    def isatty(self) -> bool:
        return True


class Clock:
    def __init__(self) -> None:
        self.now = 100.0

    def __call__(self) -> float:
        return self.now


def test_bar_line_fits_and_counts() -> None:
    line = bar_line("sizing banks", 250, 500, "Bank 0250 line 11", 70)
    assert line.startswith("sizing banks [############............] 250/500  50%")
    assert len(line) <= 69
    assert bar_line("x", 0, 0) == "x [........................] 0/0   0%"
    assert bar_line("x", 7, 7).startswith("x [########################] 7/7 100%")


def test_nothing_before_the_delay_then_throttled_redraws_then_erased() -> None:
    stream, clock = FakeTerminal(), Clock()
    with Progress(stream, clock=clock, columns=80) as bar:
        bar.step("sizing banks", 1, 500, "Bank 1")
        assert stream.getvalue() == ""  # a short run never shows a bar
        clock.now += DELAY_S
        bar.step("sizing banks", 2, 500, "Bank 2")
        first = stream.getvalue()
        assert first.startswith("\rsizing banks [") and "2/500" in first and "Bank 2" in first
        clock.now += INTERVAL_S / 2
        bar.step("sizing banks", 3, 500, "Bank 3")
        assert stream.getvalue() == first  # not redrawn within the interval
        bar.step("sizing banks", 500, 500, "Bank 500")
        assert "500/500" in stream.getvalue()  # the last item is always drawn
    assert stream.getvalue().endswith("\r\x1b[K")


@pytest.mark.parametrize(("stream", "enabled"), [(io.StringIO(), True), (FakeTerminal(), False)],
                         ids=["not-a-terminal", "switched-off"])
def test_silent_off_a_terminal_or_when_switched_off(stream, enabled: bool) -> None:
    clock = Clock()
    with Progress(stream, enabled=enabled, clock=clock) as bar:
        clock.now += 10
        bar.step("sizing banks", 1, 2, "x")
    assert stream.getvalue() == ""


def test_control_characters_never_reach_the_terminal() -> None:
    stream, clock = FakeTerminal(), Clock()
    with Progress(stream, clock=clock, columns=80) as bar:
        clock.now += 10
        bar.step("sizing banks", 1, 2, "evil\x1b]0;title\x07name")
    assert "\x07" not in stream.getvalue() and "]0;" in stream.getvalue()
    assert stream.getvalue().count("\x1b") == 2  # only the bar's own erase-line sequences


def _plant(tmp_path: Path, banks: int = 4) -> Path:
    return write_plant_spec(tmp_path, banks)


def test_size_shows_banks_and_documents_on_a_terminal(tmp_path: Path, monkeypatch, capsys) -> None:
    fake = FakeTerminal()
    monkeypatch.setattr(progress_mod, "DELAY_S", 0.0)
    monkeypatch.setattr(progress_mod, "INTERVAL_S", 0.0)
    monkeypatch.setattr(sys, "stderr", fake)
    spec = _plant(tmp_path)
    assert run(["size", str(spec), "--out", str(tmp_path / "out")]) == 0
    drawn = fake.getvalue()
    assert "sizing banks [" in drawn and "4/4" in drawn and "Bank 0003" in drawn
    assert "writing documents [" in drawn and "results.json" in drawn
    assert drawn.endswith("\r\x1b[K")
    assert "\r" not in capsys.readouterr().out  # the summary on stdout is untouched


def test_json_output_never_has_a_bar(tmp_path: Path, monkeypatch, capsys) -> None:
    fake = FakeTerminal()
    monkeypatch.setattr(progress_mod, "DELAY_S", 0.0)
    monkeypatch.setattr(sys, "stderr", fake)
    spec = _plant(tmp_path)
    assert run(["size", str(spec), "--out", str(tmp_path / "out"), "--json"]) == 0
    assert fake.getvalue() == ""
    assert len(json.loads(capsys.readouterr().out)["banks"]) == 4


def test_error_erases_the_bar_before_the_message(tmp_path: Path, monkeypatch) -> None:
    fake = FakeTerminal()
    monkeypatch.setattr(progress_mod, "DELAY_S", 0.0)
    monkeypatch.setattr(progress_mod, "INTERVAL_S", 0.0)
    monkeypatch.setattr(sys, "stderr", fake)
    spec = _plant(tmp_path)

    def fails_while_writing(result, writers, on_document=None, warm=None):
        on_document(0, 6, "results.json")
        raise BankbuildError("results.json", "", "cannot be rendered")

    monkeypatch.setattr(render_mod, "render_documents", fails_while_writing)
    assert run(["size", str(spec), "--out", str(tmp_path / "out")]) == 2
    text = fake.getvalue()
    assert "sizing banks [" in text
    erase = text.rindex("\r\x1b[K")
    assert text.index("bankbuild: error:") > erase  # the message starts on a clean line


def test_piped_stderr_of_a_real_run_has_no_bar(tmp_path: Path) -> None:
    spec = _plant(tmp_path, 6)
    done = subprocess.run([sys.executable, "-c", "from bankbuild.cli.app import main; main()", "size", str(spec),
                           "--out", str(tmp_path / "o")], capture_output=True, text=True, timeout=300, check=False)
    assert done.returncode == 0, done.stderr
    assert done.stderr == ""
