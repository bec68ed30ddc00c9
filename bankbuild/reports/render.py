"""Rendering the documents of a run in memory, on several processor cores where there are several.

Each document is a pure function of the frozen results, so the documents of a plant with many banks can be
rendered side by side: the worker processes are forked from this one (they inherit the results, nothing is
pickled on the way in) and send back bytes. The heaviest documents start first. On one core, or off Linux
(where forking is not the safe default), everything renders in this process.

Whatever happens in a worker (an error, a crash, a worker killed for memory), that document is rendered
again here, so the error a user sees is the same as in a single process. Nothing is written in this module.

Signals belong to this process: a worker ignores Ctrl-C (the terminal sends it to every process of the job; this
process stops the workers), dies on SIGTERM and SIGHUP as a plain process does, and is killed by the system when
this process ends, however it ends (``PR_SET_PDEATHSIG`` on Linux), so no worker outlives the run.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Sequence

# Measured on 2 cores: the demo (3 banks) 2.1 s -> 1.9 s, a 1-bank spec 1.8 s -> 1.5 s, 500 banks 80 s -> 48 s
# (starting a forked worker costs a few tens of ms; the workbook library's import alone is ~0.4 s).
PARALLEL_MIN_BANKS = 1
MAX_WORKERS = 4

Writer = tuple[str, Callable[[object], bytes]]
_JOB: tuple[object, Sequence[Writer]] | None = None  # set before forking; read by the workers


def cores() -> int:
    """Processor cores this process may use."""
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        return os.cpu_count() or 1


def worker_count(banks: int, documents: int) -> int:
    """How many worker processes to render with; 1 means render here.

    >>> worker_count(0, 6) == 1 and worker_count(500, 1) == 1
    True
    """
    if banks < PARALLEL_MIN_BANKS or documents < 2:
        return 1
    import multiprocessing
    import sys

    # fork only where it is the system's own default (Linux): on macOS forking after some system libraries have
    # loaded can crash the child, and Windows has no fork.
    if not sys.platform.startswith("linux") or "fork" not in multiprocessing.get_all_start_methods():
        return 1
    return max(1, min(cores(), documents, MAX_WORKERS))


def heaviest_first(writers: Sequence[Writer]) -> list[int]:
    """Indexes of ``writers`` in the order to start them: the PDFs (the worksheet first), then workbooks.

    >>> heaviest_first([("a.json", None), ("b.xlsx", None), ("c.pdf", None), ("protection-worksheet.pdf", None)])
    [3, 2, 1, 0]
    """
    def cost(i: int) -> int:
        name = writers[i][0]
        return 3 if "worksheet" in name else 2 if name.endswith(".pdf") else 1 if name.endswith(".xlsx") else 0

    return sorted(range(len(writers)), key=lambda i: (-cost(i), i))


def _worker_start(parent: int) -> None:
    """Run first in every worker: the signal dispositions of a worker, and death with the parent."""
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)
    for name in ("SIGTERM", "SIGHUP"):
        if hasattr(signal, name):
            signal.signal(getattr(signal, name), signal.SIG_DFL)
    _die_with_parent()
    if os.getppid() != parent:  # the parent ended before the request above took effect
        os._exit(1)


def _die_with_parent() -> None:
    """Ask Linux to kill this process when its parent ends (a no-op elsewhere or without libc)."""
    try:
        import ctypes
        import signal

        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(1, int(signal.SIGKILL), 0, 0, 0)  # PR_SET_PDEATHSIG = 1
    except (OSError, AttributeError, ImportError):
        pass


def _render_in_worker(index: int) -> bytes | None:
    """Render one document in a forked worker; None on any failure (the parent renders it again)."""
    try:
        result, writers = _JOB
        return writers[index][1](result)
    except BaseException:  # noqa: BLE001 - reported by rendering again in the parent
        return None


def render_documents(result, writers: Sequence[Writer],
                     on_document: Callable[[int, int, str], None] | None = None) -> list[tuple[str, bytes]]:
    """Every document as ``(file name, bytes)``, in the order of ``writers``.

    ``on_document(done, total, name)`` is called as documents start (in one process) or finish (in workers).
    """
    total = len(writers)
    report = on_document or (lambda done, count, name: None)
    workers = worker_count(len(getattr(result, "banks", ())), total)
    done: dict[int, bytes] = {}
    if workers > 1:
        done = _render_parallel(result, writers, workers, report)
    for i, (name, render) in enumerate(writers):
        if i not in done:
            report(len(done), total, name)
            done[i] = render(result)
    report(total, total, "")
    return [(writers[i][0], done[i]) for i in range(total)]


def _render_parallel(result, writers: Sequence[Writer], workers: int, report) -> dict[int, bytes]:
    """Render in forked workers; returns what they rendered (failures are left out, to be done here).

    If this process is interrupted (Ctrl-C, a signal), the workers are stopped at once rather than left to
    finish every queued document.
    """
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor, as_completed
    from concurrent.futures.process import BrokenProcessPool

    global _JOB
    done: dict[int, bytes] = {}
    _JOB = (result, writers)
    pool = None
    try:
        pool = ProcessPoolExecutor(max_workers=workers, mp_context=multiprocessing.get_context("fork"),
                                   initializer=_worker_start, initargs=(os.getpid(),))
        futures = {pool.submit(_render_in_worker, i): i for i in heaviest_first(writers)}
        report(0, len(writers), ", ".join(writers[i][0] for i in heaviest_first(writers)[:workers]))
        for future in as_completed(futures):
            index = futures[future]
            try:
                data = future.result()
            except BrokenProcessPool:
                break
            if data is not None:
                done[index] = data
                report(len(done), len(writers), writers[index][0])
    except (OSError, BrokenProcessPool):  # no workers to be had: render everything here
        pass
    except BaseException:
        _stop(pool)
        raise
    finally:
        _JOB = None
    if pool is not None:
        pool.shutdown(wait=True, cancel_futures=True)
    return done


def _stop(pool) -> None:
    """Cancel what is queued and end the workers now (after an interruption)."""
    if pool is None:
        return
    processes = list((getattr(pool, "_processes", None) or {}).values())
    pool.shutdown(wait=False, cancel_futures=True)
    for process in processes:
        if process.is_alive():
            process.terminate()
    for process in processes:
        process.join(timeout=5)
