"""The command line's last guard: signals stop a run cleanly, and any failure ends as one line and an exit code.

* SIGINT (Ctrl-C), SIGTERM and SIGHUP raise :class:`Stopped` in the main thread: the ``with`` blocks on the
  way out stop the rendering workers, remove temporary files and release the output folder's lock; then one
  line says what stopped the run and the exit code is 128 + the signal's number (130, 143, 129), as a shell
  reports a process a signal ended. A second signal while the first is being handled ends the process at once.
* The standard output going away is no crash: a reader that closed the pipe early (``| head``) ends the run
  quietly (exit 1); a full disk or another write error is one line (exit 2).
* Anything unexpected (a bug, running out of memory) is one line with exit code 1 and a pointer to
  ``--debug``, which lets the traceback through instead.
"""

from __future__ import annotations

import errno
import io
import os
import signal
import sys
import threading
from collections.abc import Callable
from contextlib import contextmanager

EXIT_FAILURE = 1
EXIT_BAD_INPUT = 2
EXIT_BROKEN_PIPE = 1  # as the command-line library itself answers a closed pipe
DEBUG_FLAG = "--debug"
_SIGNAL_NAMES = ("SIGINT", "SIGTERM", "SIGHUP")


class Stopped(BaseException):  # noqa: N818 - not an error: the user (or the system) stopped the run
    """A signal asked the run to stop. A BaseException, so that no ``except Exception`` swallows it."""

    def __init__(self, signum: int) -> None:
        self.signum = signum
        super().__init__(signal.Signals(signum).name)

    @property
    def exit_code(self) -> int:
        return 128 + self.signum


@contextmanager
def stop_on_signals():
    """Within the block, SIGINT, SIGTERM and SIGHUP raise :class:`Stopped`; the old handlers come back after."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    wanted = [getattr(signal, name) for name in _SIGNAL_NAMES if hasattr(signal, name)]
    previous = {signum: signal.getsignal(signum) for signum in wanted}
    stopping = []

    def handler(signum, frame):
        if stopping:  # a second signal: the user insists; end now, as the signal would by default
            for sig in wanted:
                signal.signal(sig, signal.SIG_DFL)
            os.kill(os.getpid(), signum)
            return
        stopping.append(signum)
        raise Stopped(signum)

    for signum in wanted:
        if previous[signum] is not signal.SIG_IGN:  # a run started with a signal ignored (nohup) keeps it so
            signal.signal(signum, handler)
    try:
        yield
    finally:
        for signum, old in previous.items():
            signal.signal(signum, old if old is not None else signal.SIG_DFL)


def debug_requested(argv: list[str]) -> tuple[bool, list[str]]:
    """Whether ``--debug`` is among the options (before any ``--``), and the arguments without it.

    >>> debug_requested(["size", "a.yaml", "--debug"])
    (True, ['size', 'a.yaml'])
    >>> debug_requested(["size", "--", "--debug"])
    (False, ['size', '--', '--debug'])
    """
    end = argv.index("--") if "--" in argv else len(argv)
    if DEBUG_FLAG not in argv[:end]:
        return False, argv
    return True, [a for i, a in enumerate(argv) if not (i < end and a == DEBUG_FLAG)]


def _quiet_stdout() -> None:
    """Point the standard output at the null device, so that the interpreter's last flush cannot fail."""
    try:
        null = os.open(os.devnull, os.O_WRONLY)
        os.dup2(null, sys.stdout.fileno())
        os.close(null)
    except (OSError, ValueError, AttributeError):
        pass


class _WholeWrites(io.RawIOBase):
    """The standard output's file descriptor, written whole or with an error.

    Python's own buffered stream keeps quiet when the system takes part of a write (a disk that fills up
    mid-write): the rest stays in its buffer and is lost at exit with exit code 0. Here a short write is
    followed by another, which then fails with the disk's error.
    """

    def __init__(self, fd: int) -> None:
        super().__init__()
        self._fd = fd

    def writable(self) -> bool:
        return True

    def fileno(self) -> int:
        return self._fd

    def write(self, data) -> int:
        view = memoryview(data).cast("B")
        total = 0
        while total < len(view):
            total += os.write(self._fd, view[total:])
        return total


@contextmanager
def whole_stdout():
    """Within the block, the process's standard output (when it is one) reports a short write as an error."""
    stream = sys.stdout
    try:
        usable = stream is not None and stream is sys.__stdout__ and stream.fileno() >= 0
    except (OSError, ValueError, AttributeError):
        usable = False
    if not usable:
        yield
        return
    stream.flush()
    wrapper = io.TextIOWrapper(io.BufferedWriter(_WholeWrites(stream.fileno())), encoding=stream.encoding,
                               errors=stream.errors, line_buffering=stream.line_buffering, write_through=False)
    sys.stdout = wrapper
    try:
        yield
        wrapper.flush()
    finally:
        sys.stdout = stream
        try:
            wrapper.detach()  # the descriptor stays open: it is the process's
        except (OSError, ValueError):
            pass


def _flush_stdout() -> None:
    stream = sys.stdout
    if stream is not None:
        stream.flush()


def run_guarded(body: Callable[[], int], say: Callable[[str], None], debug: bool = False) -> int:
    """Run ``body`` (the command line) and return its exit code, whatever happens.

    ``say`` prints one line on the standard error (made safe by the caller). With ``debug``, an unexpected
    error propagates with its traceback.
    """
    try:
        with stop_on_signals(), whole_stdout():
            code = body()
            _flush_stdout()
        return code
    except Stopped as stop:
        say(f"stopped ({signal.Signals(stop.signum).name}); temporary files removed, the output folder holds the "
            "previous documents or the new ones, whole")
        return stop.exit_code
    except SystemExit as leave:  # raised by the command-line library itself
        code = leave.code
        return code if isinstance(code, int) else (0 if code is None else EXIT_FAILURE)
    except OSError as exc:
        if exc.errno == errno.EPIPE:
            _quiet_stdout()
            return EXIT_BROKEN_PIPE
        if _is_stdout_error(exc):
            _quiet_stdout()
            say(f"error: cannot write to the standard output ({exc.strerror or exc})")
            return EXIT_BAD_INPUT
        if debug:
            raise
        say(f"error: unexpected failure ({_describe(exc)}); run again with --debug to see where it happened")
        return EXIT_FAILURE
    except MemoryError:
        if debug:
            raise
        say("error: out of memory; the input asks for more than this machine has (run again with --debug to see "
            "where it happened)")
        return EXIT_FAILURE
    except Exception as exc:  # noqa: BLE001 - the last guard: one line, never a traceback
        if debug:
            raise
        say(f"error: unexpected failure ({_describe(exc)}); this is a bug; run again with --debug to see where "
            "it happened")
        return EXIT_FAILURE


def _describe(exc: BaseException) -> str:
    text = str(exc)
    return f"{type(exc).__name__}: {text}" if text else type(exc).__name__


def _is_stdout_error(exc: OSError) -> bool:
    """Whether ``exc`` is a failed write of the standard output: a disk error naming no file (every file the
    tool writes itself is written by :mod:`bankbuild.files`, whose errors name the file)."""
    return exc.errno in (errno.ENOSPC, errno.EIO, errno.EDQUOT, errno.EFBIG) and exc.filename is None


PATH_OPTIONS = {"--out": "out_dir", "--catalogs": "catalogs_dir", "--loads": "loads"}


def empty_path(argv: list[str]) -> str | None:
    """The parameter given an empty path (which would mean the current folder), or None.

    An empty argument (a spec, a folder) is ``""``: no parameter name to show, the problem says it all.

    >>> empty_path(["size", "a.yaml", "--out", ""]), empty_path(["size", "--out=", "a.yaml"])
    ('out_dir', 'out_dir')
    >>> empty_path(["size", ""]), empty_path(["kvar", "--kw", ""]), empty_path(["size", "a.yaml"])
    ('', None, None)
    """
    end = argv.index("--") if "--" in argv else len(argv)
    for i, arg in enumerate(argv[:end]):
        if arg.endswith("=") and arg[:-1] in PATH_OPTIONS:
            return PATH_OPTIONS[arg[:-1]]
        if arg != "":
            continue
        before = argv[i - 1] if i else ""
        if before in PATH_OPTIONS:
            return PATH_OPTIONS[before]
        if not before.startswith("-"):
            return ""
    return None
