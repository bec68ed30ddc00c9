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
results (pickled: a few hundred kB) and render, the heaviest documents going to whichever worker is free. A large
plant's results are not copied: those workers are stopped and the documents rendered by workers forked after
sizing, as above.

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
        index = {name: i for i, (name, _) in enumerate(writers)}

        def here(taken: Callable[[str], bool]) -> None:  # this process's share, while the workers render theirs
            for i, (name, render) in enumerate(writers):
                if not taken(name):
                    report(len(done), total, name)
                    done[i] = render(result)

        def arrived(name: str, data: bytes) -> None:
            if name in index:
                done[index[name]] = data
                report(len(done), total, name)

        warm.render(result, arrived, here)
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
    """Worker processes started before a plant is sized, each preparing for its part of the documents (importing
    the libraries they need) while this process sizes; :meth:`render` sends them the results.

    ``make_writers(result)`` gives the ``(file name, renderer)`` pairs (the workers were forked before the
    results existed, so they make the renderers themselves). ``shares`` has one ``(prepare, own)`` pair per
    worker: ``prepare()`` runs in the worker before the results come, and ``own(name)`` says which documents
    only that worker renders, first. ``pooled`` names documents any worker renders, heaviest first: a worker
    done with its own takes the next one no worker has taken (one byte read from a pipe that holds one byte per
    document, so no two take the same), and whichever worker is ready first draws the heaviest. The documents no worker
    renders are this process's (see :meth:`render`).

    The workers form a chain: this process forks the first; each, once prepared, forks the next. So only one
    worker runs beside the sizing (two cores are not shared three ways), and a later worker starts with what the
    ones before it imported. A worker stays until the one it started has ended (the system ends a worker whose
    parent ends, see :func:`_worker_start`). Nothing starts on one core or off Linux (:attr:`ready` is then
    false). What a worker fails to render is rendered here, as is the share of a worker never started.
    """

    def __init__(self, make_writers: Callable[[object], Sequence[Writer]],
                 shares: Sequence[tuple[Callable[[], None], Callable[[str], bool]]], pooled: Sequence[str] = ()):
        if len(pooled) > 256:
            raise ValueError("at most 256 pooled documents (one byte each in the pool)")
        self.first = None
        self.conns: list[object] = []
        self.pooled = frozenset(pooled)
        self.owns = [own for _, own in shares]
        if worker_count(PARALLEL_MIN_BANKS, len(shares) + 1) < 2:  # + 1: this process renders beside them
            return
        import multiprocessing

        context = multiprocessing.get_context("fork")
        pipes = [context.Pipe() for _ in shares]
        self.conns = [conn for conn, _ in pipes]
        pool, fill = os.pipe()
        os.write(fill, bytes(range(len(pooled))))
        os.close(fill)  # the pool ends once read empty
        process = context.Process(target=_warm_main, daemon=True, args=(
            os.getpid(), list(shares), tuple(pooled), pool, make_writers, [child for _, child in pipes], 0))
        try:
            _start(process)
            self.first = process
        except OSError:  # no more processes to be had: the documents are rendered the usual way
            self.stop()
        finally:
            os.close(pool)
            for _, child in pipes:
                child.close()

    @property
    def ready(self) -> bool:
        return self.first is not None

    @property
    def workers(self) -> list[tuple[object, object]]:
        """The first worker and its connection (the later ones are its descendants), while any runs."""
        return [(self.first, self.conns[0])] if self.first is not None else []

    def render(self, result, on_document: Callable[[str, bytes], None],
               meanwhile: Callable[[Callable[[str], bool]], None] | None = None) -> None:
        """Send ``result`` to the workers; ``on_document(name, data)`` for each document they render, as it
        arrives (those that fail never arrive). ``meanwhile(taken)``, if given, is called once the results are
        sent, to render here, while the workers render theirs, the documents for which ``taken(name)`` is false.
        """
        import pickle
        from multiprocessing.connection import wait

        try:
            try:
                data = pickle.dumps(result, protocol=pickle.HIGHEST_PROTOCOL)
            except Exception:  # noqa: BLE001 - results that cannot be sent (pickled): all rendered here
                data = None
            live = []
            for conn in self.conns if data is not None else ():
                try:
                    conn.send_bytes(data)
                except (OSError, ValueError):  # this worker is gone: what it would render is rendered here
                    continue
                live.append(conn)
            if meanwhile is not None:
                meanwhile(lambda name: bool(live) and (name in self.pooled or any(own(name) for own in self.owns)))
            while live:
                for conn in wait(live):
                    try:
                        kind, name, value = conn.recv()
                    except (EOFError, OSError, ValueError):
                        kind = "end"
                    if kind == "doc":
                        on_document(name, value)
                    else:
                        live.remove(conn)
        finally:
            self.stop()

    def stop(self) -> None:
        """End the workers now (they are not needed, or this process is stopping). They hold nothing worth a
        clean ending (no file, no lock): the first is killed outright, and the system ends each later one with
        the worker that started it."""
        first, conns, self.first, self.conns = self.first, self.conns, None, []
        if first is not None and first.is_alive():
            first.kill()
        for conn in conns:
            conn.close()
        if first is not None:
            first.join(timeout=5)


def _warm_main(parent: int, shares, pooled: tuple[str, ...], pool: int, make_writers, conns, index: int) -> None:
    """The body of warm worker ``index``: prepare, start the next worker of the chain, wait for the results,
    render its own documents, then take from the pool until it is empty, sending each document as it is done;
    say it has ended (also when it failed, so that the parent does not wait on it), wait for the worker it
    started to end, end."""
    code, child, conn = 1, None, conns[index]
    try:
        _worker_start(parent)
        prepare, own = shares[index]
        try:
            prepare()
            prepared = True
        except Exception:  # noqa: BLE001 - this share is rendered elsewhere; the next worker still starts
            prepared = False
        if index + 1 < len(shares):
            child = _fork_next(shares, pooled, pool, make_writers, conns, index)
        for later in conns[index + 1:]:  # the later workers' ends: theirs alone, so that the parent sees them end
            later.close()
        if prepared:
            import pickle

            result = pickle.loads(conn.recv_bytes())
            writers = dict(make_writers(result))
            for name, render in writers.items():
                if own(name):
                    conn.send(("doc", name, render(result)))
            while token := os.read(pool, 1):
                name = pooled[token[0]]
                conn.send(("doc", name, writers[name](result)))
            code = 0
    except BaseException:  # noqa: BLE001 - the parent renders these documents again and reports the error
        code = 1
    finally:
        try:
            conn.send(("end", None, None))
            conn.close()  # a parent still sending the results to a worker that failed gets a broken pipe
        except BaseException:  # noqa: BLE001 - the parent is gone or stopped listening
            code = 1
        if child is not None:  # a worker ends with its parent: the one it started may still be at work
            try:
                os.waitpid(child, 0)
            except BaseException:  # noqa: BLE001 - nothing to wait for
                pass
        os._exit(code)


def _fork_next(shares, pooled, pool: int, make_writers, conns, index: int) -> int | None:
    """Fork the worker after ``index`` in the chain; its pid, or None when no process could be had. (No signal
    is held back across this fork: the handling this worker set at its start is already a worker's.)"""
    me = os.getpid()
    try:
        pid = os.fork()
    except OSError:
        return None
    if pid == 0:
        for earlier in conns[:index + 1]:  # the earlier workers' ends: theirs alone
            earlier.close()
        _warm_main(me, shares, pooled, pool, make_writers, conns, index + 1)  # ends the process
    return pid


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
