"""Rendering the documents of a run in memory, on several processor cores where there are several.

Each document is a pure function of the frozen results, so the documents of a plant with many banks can be
rendered side by side: the worker processes are forked from this one (they inherit the results, nothing is
pickled on the way in) and send back bytes. The heaviest documents start first. On one core, or off Linux
(where forking is not the safe default), everything renders in this process.

A document that can be rendered in pieces (a PDF: ranges of banks, see :class:`.pdf_common.PdfDocument`) is, for a
large plant, split over several workers, so that wall time approaches the CPU time divided by the cores. Each
piece lays out its banks, tells this process its page count, learns the pages before it and in all (its "page N
of M"), finishes and sends its bytes; the pieces are then joined (:mod:`.pdf_join`). Every piece but the first
starts on a new page. The light documents (JSON, CSV, a one-line SVG per bank) are rendered together by one
worker: a process each would cost more than the document (500 forks of a 500-bank plant cost ~9 s of system time).

A small plant's documents can be rendered by workers started before it is sized (:class:`WarmWorkers`): they
import the PDF and workbook libraries while this process reads the tables and sizes the banks, then receive the
results (pickled: a few hundred kB) and render. A large plant's results are not copied: those workers are
stopped and the documents rendered by workers forked after sizing, as above.

Whatever happens in a worker (an error, a crash, a worker killed for memory), that document is rendered
again here, whole, so the error a user sees is the same as in a single process. Nothing is written in this module.

Signals belong to this process: a worker ignores Ctrl-C (the terminal sends it to every process of the job; this
process stops the workers), dies on SIGTERM and SIGHUP as a plain process does, and is killed by the system when
this process ends, however it ends (``PR_SET_PDEATHSIG`` on Linux), so no worker outlives the run.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Sequence
from dataclasses import dataclass

# Measured on 2 cores: the demo (3 banks) 2.1 s -> 1.9 s, a 1-bank spec 1.8 s -> 1.5 s, 500 banks 80 s -> 48 s
# (starting a forked worker costs a few tens of ms; the workbook library's import alone is ~0.4 s).
PARALLEL_MIN_BANKS = 1
MAX_WORKERS = 4
MAX_PIECES = 8  # of one document

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


def _stop_signals() -> set:
    """The signals that stop a run (SIGINT, SIGTERM, SIGHUP, where the system has them)."""
    import signal

    return {getattr(signal, name) for name in ("SIGINT", "SIGTERM", "SIGHUP") if hasattr(signal, name)}


def _start(process) -> None:
    """Start a worker with the stop signals held back until it has set its own handling (see
    :func:`_worker_start`): one that came in between would run this process's handler in the worker."""
    import signal

    if not hasattr(signal, "pthread_sigmask"):
        process.start()
        return
    old = signal.pthread_sigmask(signal.SIG_BLOCK, _stop_signals())
    try:
        process.start()
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, old)


def _worker_start(parent: int) -> None:
    """Run first in every worker: the signal dispositions of a worker, and death with the parent."""
    import signal

    for signum in _stop_signals():  # Ctrl-C is the parent's to handle; SIGTERM and SIGHUP end the worker
        signal.signal(signum, signal.SIG_IGN if signum == signal.SIGINT else signal.SIG_DFL)
    if hasattr(signal, "pthread_sigmask"):  # held back while the worker started (see _start)
        signal.pthread_sigmask(signal.SIG_UNBLOCK, _stop_signals())
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


def render_documents(result, writers: Sequence[Writer],
                     on_document: Callable[[int, int, str], None] | None = None,
                     warm: WarmWorkers | None = None) -> list[tuple[str, bytes]]:
    """Every document as ``(file name, bytes)``, in the order of ``writers``.

    ``on_document(done, total, name)`` is called as documents start (in one process) or finish (in workers).
    ``warm``: workers started before sizing; they render a small plant's documents (see :class:`WarmWorkers`)
    and are stopped for a large one.
    """
    total = len(writers)
    report = on_document or (lambda done, count, name: None)
    banks = len(getattr(result, "banks", ()))
    done: dict[int, bytes] = {}
    if warm is not None and warm.ready and banks <= WARM_MAX_BANKS:
        report(0, total, ", ".join(name for name, _ in writers if name.endswith(".pdf")))
        rendered = warm.render(result, lambda names: [report(count, total, name) for count, name in names])
        done = {i: rendered[name] for i, (name, _) in enumerate(writers) if name in rendered}
    else:
        if warm is not None:
            warm.stop()
        workers = worker_count(banks, total)
        if workers > 1:
            done = _render_parallel(result, writers, workers, report)
    for i, (name, render) in enumerate(writers):
        if i not in done:
            report(len(done), total, name)
            done[i] = render(result)
    report(total, total, "")
    return [(writers[i][0], done[i]) for i in range(total)]


WARM_MAX_BANKS = 12
"""Up to this many banks, workers started before sizing render the documents (a pickled copy of the results is
small); above it, workers forked after sizing share the results without a copy."""


class WarmWorkers:
    """Worker processes started before a plant is sized, each preparing for its share of the documents (importing
    the libraries they need) while this process sizes; :meth:`render` sends them the results.

    ``make_writers(result)`` gives the ``(file name, renderer)`` pairs (the workers were forked before the
    results existed, so they make the renderers themselves); ``shares`` are ``(prepare, takes)`` pairs: a
    function run at once in the worker, and which file names the worker renders. Nothing starts on one core or
    off Linux (:attr:`ready` is then false). A worker that fails leaves its documents to be rendered here.
    """

    def __init__(self, make_writers: Callable[[object], Sequence[Writer]],
                 shares: Sequence[tuple[Callable[[], None], Callable[[str], bool]]]):
        self.workers: list[tuple[object, object]] = []
        if worker_count(PARALLEL_MIN_BANKS, len(shares)) < 2:
            return
        import multiprocessing

        context = multiprocessing.get_context("fork")
        try:
            for prepare, takes in shares:
                conn, child = context.Pipe()
                process = context.Process(target=_warm_main, args=(os.getpid(), prepare, make_writers, takes, child),
                                          daemon=True)
                _start(process)
                child.close()
                self.workers.append((process, conn))
        except OSError:  # no more processes to be had: the documents are rendered the usual way
            self.stop()

    @property
    def ready(self) -> bool:
        return bool(self.workers)

    def render(self, result, on_share: Callable[[list[tuple[int, str]]], None] | None = None) -> dict[str, bytes]:
        """The documents the workers rendered for ``result``, by file name (those that failed are left out);
        ``on_share`` is told of each worker's documents as they arrive (count so far, file name)."""
        rendered: dict[str, bytes] = {}
        try:
            sent = []
            for _, conn in self.workers:
                try:
                    conn.send(result)
                except (OSError, ValueError):  # this worker is gone: its share is rendered here
                    continue
                except Exception:  # noqa: BLE001 - results that cannot be sent (pickled): all rendered here
                    return rendered
                sent.append(conn)
            for conn in sent:
                try:
                    kind, value = conn.recv()
                except (EOFError, OSError, ValueError):
                    continue
                if kind == "done":
                    start = len(rendered)
                    rendered.update(value)
                    if on_share is not None:
                        on_share([(start + k, name) for k, (name, _) in enumerate(value, start=1)])
        finally:
            self.stop()
        return rendered

    def stop(self) -> None:
        """End the workers now (they are not needed, or this process is stopping). They hold nothing worth a
        clean ending (no file, no lock): killed outright, at once."""
        workers, self.workers = self.workers, []
        for process, conn in workers:
            if process.is_alive():
                process.kill()
            conn.close()
        for process, _ in workers:
            process.join(timeout=5)


def _warm_main(parent: int, prepare, make_writers, takes, conn) -> None:
    """The body of a warm worker: prepare, wait for the results, render its share, send it, end."""
    code = 0
    try:
        _worker_start(parent)
        prepare()
        result = conn.recv()
        conn.send(("done", [(name, render(result)) for name, render in make_writers(result) if takes(name)]))
    except BaseException:  # noqa: BLE001 - the parent renders these documents again and reports the error
        code = 1
    finally:
        os._exit(code)


def piece_ranges(banks: int, per_piece: int, workers: int) -> list[tuple[int, int]]:
    """Ranges ``(first, stop)`` of banks, one per piece: at least ``per_piece`` banks each, at most one piece per
    worker (a forked process repeats some work and copies the memory it touches: more pieces than cores cost
    more than they save); one range when the plant is small or there is one worker.

    >>> piece_ranges(500, 100, 2), piece_ranges(500, 100, 4)
    ([(0, 250), (250, 500)], [(0, 125), (125, 250), (250, 375), (375, 500)])
    >>> piece_ranges(150, 100, 2), piece_ranges(500, 100, 1)
    ([(0, 150)], [(0, 500)])
    """
    count = min(banks // per_piece, MAX_PIECES, workers)
    if count < 2:
        return [(0, banks)]
    bounds = [round(banks * k / count) for k in range(count + 1)]
    return list(zip(bounds, bounds[1:], strict=False))


@dataclass
class _Job:
    """One worker's share: a whole document, one piece (a range of banks) of one, or a bundle of light documents
    (``more``: a JSON file, a CSV, a one-line SVG per bank; each costs less than starting a process)."""

    writer: int
    first: int = 0
    stop: int = 0
    pieces: int = 1
    process: object = None
    conn: object = None
    pages: int | None = None
    data: bytes | None = None
    more: tuple[int, ...] = ()


def _light(name: str) -> bool:
    """A document rendered in a bundle with the other light ones rather than in a process of its own."""
    return not name.endswith((".pdf", ".xlsx"))


def _jobs(result, writers: Sequence[Writer], workers: int) -> list[_Job]:
    banks = len(getattr(result, "banks", ()))
    jobs = []
    light = [i for i in heaviest_first(writers) if _light(writers[i][0])]
    for i in heaviest_first(writers):
        if i in light:
            continue
        per_piece = getattr(writers[i][1], "banks_per_piece", None)
        ranges = piece_ranges(banks, per_piece, workers) if per_piece else [(0, banks)]
        jobs += [_Job(i, first, stop, len(ranges)) for first, stop in ranges]
    if light:
        jobs.append(_Job(light[0], more=tuple(light[1:])))
    return jobs


def _work(job: _Job, conn) -> None:
    """The body of a worker: render its share, send it, end (never returning into the parent's code)."""
    code = 0
    try:
        result, writers = _JOB
        render = writers[job.writer][1]
        if job.more:
            data = [render(result)] + [writers[i][1](result) for i in job.more]
        elif job.pieces == 1:
            data = render(result)
        else:
            def numbering(pages: int) -> tuple[int, int]:
                conn.send(("pages", pages))
                reply = conn.recv()
                if not isinstance(reply, tuple):  # another piece failed: the document is rendered again whole
                    raise InterruptedError
                return reply

            data = render.render_range(result, job.first, job.stop, numbering)
        conn.send(("done", data))
    except BaseException:  # noqa: BLE001 - the parent renders the document again and reports the error
        code = 1
    finally:
        os._exit(code)


def _render_parallel(result, writers: Sequence[Writer], workers: int, report) -> dict[int, bytes]:
    """Render in forked workers, one per whole document or piece, all started at once (the pieces of a document
    wait for each other's page counts); returns what they rendered (failures are left out, to be done here).

    If this process is interrupted (Ctrl-C, a signal), the workers are stopped at once.
    """
    import multiprocessing
    from multiprocessing.connection import wait

    global _JOB
    import gc

    context = multiprocessing.get_context("fork")
    gc.freeze()  # the results stay out of the workers' collections, so their pages stay shared with this process
    jobs = _jobs(result, writers, workers)
    done: dict[int, bytes] = {}
    failed: set[int] = set()
    _JOB = (result, writers)
    try:
        try:
            for job in jobs:
                job.conn, child = context.Pipe()
                job.process = context.Process(target=_start_and_work, args=(os.getpid(), job, child), daemon=True)
                _start(job.process)
                child.close()
        except OSError:  # no more processes to be had: what did not start is rendered here
            jobs = [job for job in jobs if job.process is not None and job.process.pid is not None]
        report(0, len(writers), ", ".join(dict.fromkeys(writers[job.writer][0] for job in jobs[:workers])))
        waiting = {job.conn: job for job in jobs}
        while waiting:
            for conn in wait(list(waiting)):
                job = waiting[conn]
                try:
                    kind, value = conn.recv()
                except (EOFError, OSError, ValueError):
                    kind, value = "failed", None
                if kind == "pages":
                    job.pages = value
                    if job.writer in failed:  # a sibling failed: the document is rendered again here
                        _send(conn, "stop")
                    else:
                        _number_pieces([j for j in jobs if j.writer == job.writer], failed)
                    continue
                del waiting[conn]
                if kind == "done" and job.more:  # a bundle: each document is done
                    for i, data in zip((job.writer, *job.more), value, strict=True):
                        done[i] = data
                    report(len(done), len(writers), writers[job.writer][0])
                    continue
                if kind == "done":
                    job.data = value
                else:
                    failed.add(job.writer)
                    for other in jobs:  # pieces waiting for a count that will never come: release them
                        if other.writer == job.writer and other.conn in waiting and other.pages is not None:
                            _send(other.conn, "stop")
                siblings = [j for j in jobs if j.writer == job.writer]
                if job.writer not in failed and all(j.data is not None for j in siblings):
                    done[job.writer] = _join(writers[job.writer][0], [j.data for j in siblings])
                    for j in siblings:
                        j.data = None
                    if done[job.writer] is None:
                        del done[job.writer]
                    else:
                        report(len(done), len(writers), writers[job.writer][0])
    except BaseException:
        _stop(jobs)
        raise
    finally:
        _JOB = None
        gc.unfreeze()
        for job in jobs:
            if job.conn is not None:
                job.conn.close()
    for job in jobs:
        if job.process is not None:
            job.process.join()
    return done


def _start_and_work(parent: int, job: _Job, conn) -> None:
    _worker_start(parent)
    _work(job, conn)


def _send(conn, message) -> None:
    try:
        conn.send(message)
    except (OSError, ValueError):
        pass


def _number_pieces(pieces: list[_Job], failed: set[int]) -> None:
    """Once every piece of a document has counted its pages, tell each the pages before it and in all."""
    if any(j.pages is None for j in pieces) or pieces[0].writer in failed:
        return
    total = sum(j.pages for j in pieces)
    before = 0
    for job in pieces:
        _send(job.conn, (before, total))
        before += job.pages


def _join(name: str, parts: list[bytes]) -> bytes | None:
    """The pieces of a document as one file (None if they cannot be joined: it is rendered again here)."""
    if len(parts) == 1:
        return parts[0]
    from bankbuild.reports.pdf_join import PieceError, join_pdfs

    try:
        return join_pdfs(parts)
    except PieceError:
        return None


def _stop(jobs: list[_Job]) -> None:
    """End the workers now (after an interruption)."""
    processes = [job.process for job in jobs if job.process is not None and job.process.pid is not None]
    for process in processes:
        if process.is_alive():
            process.terminate()
    for process in processes:
        process.join(timeout=5)
