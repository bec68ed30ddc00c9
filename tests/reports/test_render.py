"""Rendering documents on several cores for a large plant: same documents, same errors, order kept."""

from __future__ import annotations

import os
from types import SimpleNamespace

import pytest

from bankbuild.errors import BankbuildError
from bankbuild.reports import render
from bankbuild.reports.render import PARALLEL_MIN_BANKS, render_documents

PARENT = os.getpid()


def plant(banks: int) -> SimpleNamespace:
    return SimpleNamespace(banks=[f"bank {i}" for i in range(banks)])


def pid_writer(tag: str):
    return lambda result: f"{tag}:{len(result.banks)}:{os.getpid()}".encode()


WRITERS = [("results.json", pid_writer("json")), ("bill-of-materials.pdf", pid_writer("bom")),
           ("bill-of-materials.xlsx", pid_writer("xlsx")), ("protection-worksheet.pdf", pid_writer("ws"))]

needs_workers = pytest.mark.skipif(render.worker_count(PARALLEL_MIN_BANKS, 4) < 2,
                                   reason="one core, or no fork on this system: nothing runs in parallel")


def test_one_core_renders_in_this_process(monkeypatch) -> None:
    monkeypatch.setattr(render, "cores", lambda: 1)
    out = render_documents(plant(30), WRITERS)
    assert [name for name, _ in out] == [name for name, _ in WRITERS]
    assert all(data.decode().endswith(f":{PARENT}") for _, data in out)


@needs_workers
def test_large_plant_renders_in_workers_in_order() -> None:
    events = []
    out = render_documents(plant(PARALLEL_MIN_BANKS), WRITERS, lambda d, t, n: events.append((d, t, n)))
    assert [name for name, _ in out] == [name for name, _ in WRITERS]
    tags = [data.decode().split(":") for _, data in out]
    assert [t[0] for t in tags] == ["json", "bom", "xlsx", "ws"]
    assert all(t[1] == str(PARALLEL_MIN_BANKS) for t in tags)
    assert all(t[2] != str(PARENT) for t in tags)  # rendered by workers
    assert events[-1] == (4, 4, "") and sorted(d for d, _, _ in events) == [0, 1, 2, 3, 4, 4]


@needs_workers
def test_an_error_in_a_worker_is_raised_as_in_one_process() -> None:
    def broken(result):
        raise BankbuildError("Bill of materials", "layout", "cannot lay out the document")

    writers = [*WRITERS[:1], ("bill-of-materials.pdf", broken), *WRITERS[2:]]
    with pytest.raises(BankbuildError, match="^Bill of materials: layout: cannot lay out the document$"):
        render_documents(plant(PARALLEL_MIN_BANKS), writers)


@needs_workers
def test_a_worker_that_dies_is_replaced_by_this_process() -> None:
    def dies_in_a_worker(result):
        if os.getpid() != PARENT:
            os._exit(3)
        return b"rendered here"

    writers = [*WRITERS[:3], ("protection-worksheet.pdf", dies_in_a_worker)]
    out = dict(render_documents(plant(PARALLEL_MIN_BANKS), writers))
    assert out["protection-worksheet.pdf"] == b"rendered here"
    assert set(out) == {name for name, _ in writers}


@needs_workers
def test_light_documents_share_one_worker() -> None:
    """A JSON file and a one-line diagram per bank cost less than starting a process each: one worker renders all
    of them (a process per diagram made a 500-bank plant fork 500 processes)."""
    svgs = [(f"one-line-{n}.svg", pid_writer(f"svg{n}")) for n in range(1, 41)]
    out = render_documents(plant(PARALLEL_MIN_BANKS), [*WRITERS, *svgs])
    assert [name for name, _ in out] == [name for name, _ in [*WRITERS, *svgs]]
    pids = {name: data.decode().split(":")[2] for name, data in out}
    light = {pids[name] for name in pids if not name.endswith((".pdf", ".xlsx"))}
    assert len(light) == 1 and PARENT not in {int(p) for p in light}
    assert pids["protection-worksheet.pdf"] not in light


def test_heaviest_first_and_worker_count() -> None:
    assert render.heaviest_first(WRITERS) == [3, 1, 2, 0]
    assert render.worker_count(0, 6) == 1
    assert 1 <= render.worker_count(500, 6) <= render.MAX_WORKERS


@needs_workers
def test_an_interruption_stops_the_workers_at_once() -> None:
    import time

    def slow(result):
        time.sleep(60)
        return b"never"

    def interrupt(done, total, name):
        raise KeyboardInterrupt

    start = time.perf_counter()
    with pytest.raises(KeyboardInterrupt):
        render_documents(plant(PARALLEL_MIN_BANKS), [("a.pdf", slow), ("b.pdf", slow), ("c.pdf", slow)], interrupt)
    assert time.perf_counter() - start < 10  # not the 60 s (or 3 × 60 s) the queued documents would take
    assert render._JOB is None


CHILD = """
import os, sys, time
from types import SimpleNamespace
from bankbuild.reports.render import render_documents

def slow(result):
    with open(sys.argv[1], "a") as handle:
        handle.write(f"{os.getpid()}\\n")
    time.sleep(60)
    return b"never"

render_documents(SimpleNamespace(banks=[1]), [("a.pdf", slow), ("b.pdf", slow)])
"""


def _alive(pid: int) -> bool:
    try:
        with open(f"/proc/{pid}/stat", encoding="ascii") as handle:
            return handle.read().rsplit(")", 1)[1].split()[0] != "Z"
    except FileNotFoundError:
        return False


def _worker_pids(path, count: int, timeout_s: float = 30) -> list[int]:
    import time

    end = time.monotonic() + timeout_s
    while time.monotonic() < end:
        pids = [int(p) for p in path.read_text().split()] if path.exists() else []
        if len(pids) >= count:
            return pids
        time.sleep(0.05)
    raise AssertionError(f"workers did not start: {path.read_text() if path.exists() else ''}")


@needs_workers
@pytest.mark.skipif(not os.path.exists("/proc/self/stat"), reason="reads /proc")
def test_workers_do_not_outlive_a_parent_killed_outright(tmp_path) -> None:
    """SIGKILL gives the parent no chance to stop its workers: the system ends them (PR_SET_PDEATHSIG)."""
    import signal
    import subprocess
    import sys
    import time

    pids_file = tmp_path / "pids"
    parent = subprocess.Popen([sys.executable, "-c", CHILD, str(pids_file)])
    try:
        workers = _worker_pids(pids_file, 2)
        for pid in workers:  # a terminal's Ctrl-C reaches every process of the job: a worker leaves it to the parent
            os.kill(pid, signal.SIGINT)
        time.sleep(0.3)
        assert all(_alive(p) for p in workers)
        parent.kill()
        parent.wait(timeout=30)
        end = time.monotonic() + 10
        while any(_alive(p) for p in workers) and time.monotonic() < end:
            time.sleep(0.05)
        assert not [p for p in workers if _alive(p)]
    finally:
        if parent.poll() is None:
            parent.kill()


def warm_for(writers):
    """Warm workers for ``writers``: one takes the PDFs, one the rest (as the command line starts them)."""
    def is_pdf(name):
        return name.endswith(".pdf")

    return render.WarmWorkers(lambda result: writers, [(lambda: None, is_pdf), (lambda: None, lambda n: not is_pdf(n))])


@needs_workers
def test_a_small_plants_documents_are_rendered_by_the_workers_started_before_sizing() -> None:
    warm = warm_for(WRITERS)
    assert warm.ready
    out = render_documents(plant(render.WARM_MAX_BANKS), WRITERS, warm=warm)
    assert [name for name, _ in out] == [name for name, _ in WRITERS]
    pids = {name: data.decode().split(":")[2] for name, data in out}
    assert pids["bill-of-materials.pdf"] == pids["protection-worksheet.pdf"] != str(PARENT)
    assert pids["results.json"] == pids["bill-of-materials.xlsx"] != pids["bill-of-materials.pdf"]
    assert all(data.decode().split(":")[1] == str(render.WARM_MAX_BANKS) for _, data in out)  # the results sent
    assert not warm.ready and not warm.workers  # stopped once done


@needs_workers
def test_a_large_plant_stops_the_early_workers_and_forks_its_own() -> None:
    warm = warm_for(WRITERS)
    processes = [process for process, _ in warm.workers]
    out = dict(render_documents(plant(render.WARM_MAX_BANKS + 1), WRITERS, warm=warm))
    assert not warm.workers and not any(process.is_alive() for process in processes)
    assert len(out) == len(WRITERS) and all(data.decode().split(":")[2] != str(PARENT) for data in out.values())


@needs_workers
def test_what_an_early_worker_fails_to_render_is_rendered_here() -> None:
    def broken(result):
        if os.getpid() != PARENT:
            raise RuntimeError("a worker's failure")
        return b"rendered here"

    writers = [*WRITERS[:3], ("protection-worksheet.pdf", broken)]
    out = dict(render_documents(plant(2), writers, warm=warm_for(writers)))
    assert out["protection-worksheet.pdf"] == b"rendered here"
    assert out["bill-of-materials.pdf"].decode().endswith(f":{PARENT}")  # its worker failed: done here too
    assert not out["results.json"].decode().endswith(f":{PARENT}")  # the other worker's share stands


@needs_workers
def test_an_early_worker_whose_preparation_fails_leaves_its_share_here() -> None:
    def fails():
        raise ImportError("no such library")

    warm = render.WarmWorkers(lambda result: WRITERS, [(fails, lambda n: n.endswith(".pdf")),
                                                       (lambda: None, lambda n: not n.endswith(".pdf"))])
    out = dict(render_documents(plant(1), WRITERS, warm=warm))
    assert all(out[name].decode().endswith(f":{PARENT}") for name in out if name.endswith(".pdf"))
    assert not any(out[name].decode().endswith(f":{PARENT}") for name in out if not name.endswith(".pdf"))


def test_no_early_workers_on_one_core(monkeypatch) -> None:
    monkeypatch.setattr(render, "cores", lambda: 1)
    warm = warm_for(WRITERS)
    assert not warm.ready
    out = render_documents(plant(2), WRITERS, warm=warm)
    assert all(data.decode().endswith(f":{PARENT}") for _, data in out)


@needs_workers
def test_results_that_cannot_be_sent_to_the_early_workers_are_rendered_here() -> None:
    unpicklable = SimpleNamespace(banks=[1], hook=lambda: None)  # a lambda does not pickle
    out = dict(render_documents(unpicklable, WRITERS, warm=warm_for(WRITERS)))
    assert all(data.decode().endswith(f":{PARENT}") for data in out.values())


@needs_workers
def test_a_worker_starts_with_the_stop_signals_held_until_its_own_handling_is_set(tmp_path) -> None:
    """A signal that comes while a worker starts must not run this process's handler in the worker: the stop
    signals are held back across the start and let through once the worker ignores Ctrl-C and dies on SIGTERM."""
    import json
    import signal

    record = tmp_path / "worker.json"

    def prepare():
        mask = signal.pthread_sigmask(signal.SIG_BLOCK, [])
        record.write_text(json.dumps({"blocked": sorted(int(s) for s in mask),
                                      "sigint_ignored": signal.getsignal(signal.SIGINT) == signal.SIG_IGN}))

    before = signal.pthread_sigmask(signal.SIG_BLOCK, [])
    warm = render.WarmWorkers(lambda result: WRITERS, [(prepare, lambda n: True), (lambda: None, lambda n: False)])
    render_documents(plant(1), WRITERS, warm=warm)
    assert signal.pthread_sigmask(signal.SIG_BLOCK, []) == before  # this process's mask as it was
    seen = json.loads(record.read_text())
    assert seen["sigint_ignored"]
    assert not {int(signal.SIGINT), int(signal.SIGTERM), int(signal.SIGHUP)} & set(seen["blocked"])


@needs_workers
def test_an_early_worker_gone_before_the_results_are_sent_leaves_only_its_share_here() -> None:
    def dies():
        os._exit(3)

    warm = render.WarmWorkers(lambda result: WRITERS, [(dies, lambda n: n.endswith(".pdf")),
                                                       (lambda: None, lambda n: not n.endswith(".pdf"))])
    warm.workers[0][0].join(timeout=30)  # gone: sending it the results fails (a broken pipe)
    out = dict(render_documents(plant(1), WRITERS, warm=warm))
    assert all(out[name].decode().endswith(f":{PARENT}") for name in out if name.endswith(".pdf"))
    assert not any(out[name].decode().endswith(f":{PARENT}") for name in out if not name.endswith(".pdf"))
