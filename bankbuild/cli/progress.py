"""A progress bar on the terminal for long runs (many banks, many pages), and nothing anywhere else.

The bar goes to standard error, only when that is a terminal, and only once a run has lasted long enough to
be worth watching (:data:`DELAY_S`): short runs, pipes, files, CI logs and ``--json`` output never see it.
It redraws one line in place at most every :data:`INTERVAL_S` and erases itself when the run ends, so the
summary that follows starts on a clean line.

The pipeline never writes anything: it calls back (``on_bank(done, total, name)``) and this module draws.
"""

from __future__ import annotations

import sys
import time
from collections.abc import Callable
from typing import TextIO

DELAY_S = 0.7  # no bar for runs shorter than this
INTERVAL_S = 0.1  # at most ten redraws a second
WIDTH = 24  # characters of the bar itself


def bar_line(label: str, done: int, total: int, detail: str = "", columns: int = 80) -> str:
    """One line of the bar: label, ``[####....]``, count and percentage, and a detail cut to fit.

    Parameters
    ----------
    label : str
        What is being done, e.g. ``sizing banks``.
    done, total : int
        Items finished and items in all (``total`` 0 shows an empty bar).
    detail : str
        The item being worked on (a bank's name, a document's file name); shortened to fit ``columns``.
    columns : int
        Width of the terminal [characters].

    Examples
    --------
    >>> bar_line("sizing banks", 125, 500, "Bank 0125", 80)
    'sizing banks [######..................] 125/500  25%  Bank 0125'
    >>> len(bar_line("writing", 1, 3, "x" * 300, 60)) <= 59
    True
    """
    share = done / total if total else 0.0
    filled = int(WIDTH * min(max(share, 0.0), 1.0))
    head = f"{label} [{'#' * filled}{'.' * (WIDTH - filled)}] {done}/{total} {share:4.0%}"
    room = columns - 1 - len(head) - 2
    if detail and room > 3:
        shown = detail if len(detail) <= room else detail[: room - 1] + "…"
        head += "  " + shown
    return head[: max(columns - 1, 0)]


class Progress:
    """Draws :func:`bar_line` on a terminal stream for one run; silent when the stream is not a terminal.

    Use it as a context manager, and pass :meth:`step` (or :meth:`callback`) where the work reports
    progress; the line is erased on exit, whatever happened.
    """

    def __init__(self, stream: TextIO | None = None, enabled: bool = True,
                 clock: Callable[[], float] = time.monotonic, columns: int | None = None) -> None:
        self.stream = stream if stream is not None else sys.stderr
        self.enabled = enabled and _is_terminal(self.stream)
        self.clock = clock
        self.columns = columns
        self.started = clock()
        self.last_draw = float("-inf")
        self.drawn = False

    def __enter__(self) -> Progress:
        self.started = self.clock()
        return self

    def __exit__(self, *exc) -> None:
        self.clear()

    def step(self, label: str, done: int, total: int, detail: str = "") -> None:
        """Report that ``done`` of ``total`` items of ``label`` are finished; redraws when it is time."""
        if not self.enabled:
            return
        now = self.clock()
        if now - self.started < DELAY_S:
            return
        if now - self.last_draw < INTERVAL_S and done < total:
            return
        self.last_draw = now
        line = bar_line(label, done, total, _printable(detail), self._columns())
        self.stream.write("\r" + line + "\x1b[K")
        self.stream.flush()
        self.drawn = True

    def callback(self, label: str) -> Callable[[int, int, str], None]:
        """A ``(done, total, detail)`` callback for the pipeline, labelled ``label``."""
        return lambda done, total, detail="": self.step(label, done, total, detail)

    def clear(self) -> None:
        """Erase the bar's line (only if one was drawn)."""
        if self.drawn:
            self.stream.write("\r\x1b[K")
            self.stream.flush()
            self.drawn = False

    def _columns(self) -> int:
        if self.columns:
            return self.columns
        import shutil

        return shutil.get_terminal_size((80, 24)).columns


def _is_terminal(stream: TextIO) -> bool:
    try:
        return bool(stream.isatty())
    except (AttributeError, ValueError, OSError):
        return False


def _printable(text: str) -> str:
    """A name as it may appear on the terminal: control characters dropped (names are checked on input too)."""
    return "".join(ch for ch in text if ch.isprintable())
