"""Rendering documents on several cores for a large plant: same documents, same errors, order kept."""

from __future__ import annotations

import os
import time
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
    end = time.monotonic() + timeout_s
    while time.monotonic() < end:
        pids = [int(p) for p in path.read_text().split()] if path.exists() else []
        if len(pids) >= count:
            return pids
        time.sleep(0.05)
    raise AssertionError(f"workers did not start: {path.read_text() if path.exists() else ''}")


def _workers_end_with_a_parent_killed_outright(tmp_path, child: str, before_kill=None) -> None:
    """Run ``child`` (a script whose two workers each write their pid into the file it is given), kill it with
    SIGKILL, and check that both workers end too."""
    import subprocess
    import sys

    pids_file = tmp_path / "pids"
    parent = subprocess.Popen([sys.executable, "-c", child, str(pids_file)])
    try:
        workers = _worker_pids(pids_file, 2)
        if before_kill is not None:
            before_kill(workers)
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


@needs_workers
@pytest.mark.skipif(not os.path.exists("/proc/self/stat"), reason="reads /proc")
def test_workers_do_not_outlive_a_parent_killed_outright(tmp_path) -> None:
    """SIGKILL gives the parent no chance to stop its workers: the system ends them (PR_SET_PDEATHSIG)."""
    import signal

    def interrupt(workers):  # a terminal's Ctrl-C reaches every process of the job: a worker leaves it to the parent
        for pid in workers:
            os.kill(pid, signal.SIGINT)
        time.sleep(0.3)

    _workers_end_with_a_parent_killed_outright(tmp_path, CHILD, interrupt)


POOLED = ("protection-worksheet.pdf", "bill-of-materials.pdf")


def warm_for(writers, first=lambda: None, second=lambda: None):
    """Warm workers for ``writers`` as the command line starts them: the first draws PDFs; the second writes the
    workbook, then draws PDFs; the PDFs go to whichever is free; the rest is this process's."""
    return render.WarmWorkers(lambda result: writers, [(first, lambda name: False),
                                                       (second, lambda name: name == "bill-of-materials.xlsx")],
                              pooled=POOLED)


def _renderer(data: bytes) -> str:
    return data.decode().split(":")[2]


@needs_workers
def test_a_small_plants_documents_are_rendered_by_the_workers_started_before_sizing() -> None:
    warm = warm_for(WRITERS)
    assert warm.ready
    first = warm.workers[0][0].pid
    events = []
    out = render_documents(plant(render.WARM_MAX_BANKS), WRITERS, lambda d, t, n: events.append((d, t, n)), warm=warm)
    assert [name for name, _ in out] == [name for name, _ in WRITERS]
    by = {name: _renderer(data) for name, data in out}
    assert by["results.json"] == str(PARENT)  # a light document: rendered here, while the workers draw
    assert by["bill-of-materials.xlsx"] not in (str(PARENT), str(first))  # the second worker's own
    assert {by[name] for name in POOLED} <= {str(first), by["bill-of-materials.xlsx"]}
    assert all(data.decode().split(":")[1] == str(render.WARM_MAX_BANKS) for _, data in out)  # the results sent
    counts = [d for d, _, _ in events]
    assert events[-1] == (4, 4, "") and counts == sorted(counts)  # progress only goes forward
    assert not warm.ready and not warm.workers  # stopped once done


@needs_workers
def test_the_pooled_documents_go_to_whichever_worker_is_free() -> None:
    """The second worker is busy with its workbook: the first, free, draws both PDFs, one after the other."""
    def slow_workbook(result):
        time.sleep(1.0)
        return pid_writer("xlsx")(result)

    writers = [*WRITERS[:2], ("bill-of-materials.xlsx", slow_workbook), WRITERS[3]]
    warm = warm_for(writers)
    first = str(warm.workers[0][0].pid)
    by = {name: _renderer(data) for name, data in render_documents(plant(2), writers, warm=warm)}
    assert by["protection-worksheet.pdf"] == by["bill-of-materials.pdf"] == first
    assert by["bill-of-materials.xlsx"] not in (first, str(PARENT))


@needs_workers
def test_a_large_plant_stops_the_early_workers_and_forks_its_own() -> None:
    warm = warm_for(WRITERS)
    processes = [process for process, _ in warm.workers]
    out = dict(render_documents(plant(render.WARM_MAX_BANKS + 1), WRITERS, warm=warm))
    assert not warm.workers and not any(process.is_alive() for process in processes)
    assert len(out) == len(WRITERS) and all(_renderer(data) != str(PARENT) for data in out.values())


@needs_workers
def test_what_an_early_worker_fails_to_render_is_rendered_here() -> None:
    def broken(result):
        if os.getpid() != PARENT:
            raise RuntimeError("a worker's failure")
        return b"rendered here"

    writers = [*WRITERS[:3], ("protection-worksheet.pdf", broken)]
    out = dict(render_documents(plant(2), writers, warm=warm_for(writers)))
    assert out["protection-worksheet.pdf"] == b"rendered here"
    assert _renderer(out["bill-of-materials.xlsx"]) != str(PARENT)  # the other worker's documents stand


@needs_workers
def test_a_worker_whose_preparation_fails_leaves_its_share_to_the_others() -> None:
    def fails():
        raise ImportError("no such library")

    warm = warm_for(WRITERS, second=fails)
    first = str(warm.workers[0][0].pid)
    by = {name: _renderer(data) for name, data in render_documents(plant(1), WRITERS, warm=warm)}
    assert by["bill-of-materials.xlsx"] == str(PARENT)  # its own: rendered here
    assert by["protection-worksheet.pdf"] == by["bill-of-materials.pdf"] == first  # the pool: the other worker's


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
    render_documents(plant(1), WRITERS, warm=warm_for(WRITERS, first=prepare))
    assert signal.pthread_sigmask(signal.SIG_BLOCK, []) == before  # this process's mask as it was
    seen = json.loads(record.read_text())
    assert seen["sigint_ignored"]
    assert not {int(signal.SIGINT), int(signal.SIGTERM), int(signal.SIGHUP)} & set(seen["blocked"])


@needs_workers
def test_a_later_worker_gone_before_the_results_are_sent_leaves_only_its_own_here() -> None:
    def dies():
        os._exit(3)

    warm = warm_for(WRITERS, second=dies)
    first = str(warm.workers[0][0].pid)
    assert warm.conns[1].poll(30)  # its end of the pipe closed: gone, and sending it the results fails
    by = {name: _renderer(data) for name, data in render_documents(plant(1), WRITERS, warm=warm)}
    assert by["bill-of-materials.xlsx"] == str(PARENT)
    assert by["protection-worksheet.pdf"] == by["bill-of-materials.pdf"] == first


@needs_workers
def test_a_first_worker_gone_before_it_started_the_next_leaves_every_document_here() -> None:
    def dies():
        os._exit(3)

    warm = warm_for(WRITERS, first=dies)
    warm.workers[0][0].join(timeout=30)
    out = dict(render_documents(plant(1), WRITERS, warm=warm))
    assert all(data.decode().endswith(f":{PARENT}") for data in out.values())


@needs_workers
def test_each_later_worker_is_started_by_the_one_before_once_it_is_prepared(tmp_path) -> None:
    """The chain: the second worker is the first one's child, started after the first one's preparation (so it
    has what that imported), and the first stays until the second has sent its share."""
    import json

    record = tmp_path / "chain.json"

    def first():
        os.environ["BANKBUILD_TEST_PREPARED_BY"] = str(os.getpid())  # seen by the child only if it forks after

    def second():
        record.write_text(json.dumps({"parent": os.getppid(),
                                      "prepared_by": os.environ.get("BANKBUILD_TEST_PREPARED_BY")}))

    def slow_workbook(result):
        time.sleep(0.5)  # the first worker is done long before: it must not end (and take this one with it)
        return pid_writer("xlsx")(result)

    writers = [WRITERS[0], ("bill-of-materials.xlsx", slow_workbook)]
    warm = warm_for(writers, first=first, second=second)
    first_pid = warm.workers[0][0].pid
    by = {name: _renderer(data) for name, data in render_documents(plant(1), writers, warm=warm)}
    assert json.loads(record.read_text()) == {"parent": first_pid, "prepared_by": str(first_pid)}
    assert by["bill-of-materials.xlsx"] not in (str(first_pid), str(PARENT))
    assert "BANKBUILD_TEST_PREPARED_BY" not in os.environ


@needs_workers
def test_a_worker_that_fails_to_prepare_does_not_hold_up_this_process() -> None:
    """A worker whose preparation failed says so and closes its end: this process, sending it results larger
    than a pipe holds, gets a broken pipe instead of waiting for ever."""
    def fails():
        raise ImportError("no such library")

    big = SimpleNamespace(banks=[1], padding=b"x" * 4_000_000)
    start = time.perf_counter()
    by = {name: _renderer(data) for name, data in render_documents(big, WRITERS, warm=warm_for(WRITERS, first=fails))}
    assert time.perf_counter() - start < 20
    assert by["protection-worksheet.pdf"] != str(PARENT)  # drawn by the second worker, from the pool


CHAIN_CHILD = """
import os, sys, time
from bankbuild.reports.render import WarmWorkers

def prepare():
    with open(sys.argv[1], "a") as handle:
        handle.write(f"{os.getpid()}\\n")

warm = WarmWorkers(lambda result: [], [(prepare, lambda name: False), (prepare, lambda name: False)])
time.sleep(60)
"""


@needs_workers
@pytest.mark.skipif(not os.path.exists("/proc/self/stat"), reason="reads /proc")
def test_a_chain_of_workers_does_not_outlive_a_parent_killed_outright(tmp_path) -> None:
    """The second worker is the first one's child: killing the parent ends the first, which ends the second."""
    _workers_end_with_a_parent_killed_outright(tmp_path, CHAIN_CHILD)
