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
