"""The compute pool: calculations in worker threads, each within the deadline."""

from __future__ import annotations

import asyncio
import threading
import time

import pytest

from service.api.compute import ComputeDeadlineExceeded, ComputePool
from service.api.settings import Settings


def run(coro):
    return asyncio.run(coro)


def test_a_calculation_runs_in_a_worker_thread_and_returns_its_result():
    pool = ComputePool(Settings())
    try:
        name = run(pool.run(lambda: threading.current_thread().name))
    finally:
        pool.shutdown()
    assert name.startswith("ampline-compute")


def test_an_exception_reaches_the_caller_unchanged():
    pool = ComputePool(Settings())

    def fails():
        raise KeyError("from the calculation")

    try:
        with pytest.raises(KeyError, match="from the calculation"):
            run(pool.run(fails))
    finally:
        pool.shutdown()


def test_a_calculation_past_the_deadline_is_refused_and_the_queued_one_never_starts():
    pool = ComputePool(Settings(compute_deadline_s=0.2, compute_threads=1))
    release = threading.Event()
    started = []

    def slow(tag):
        started.append(tag)
        release.wait(5)
        return tag

    async def both():
        return await asyncio.gather(pool.run(slow, "first"), pool.run(slow, "queued"), return_exceptions=True)

    try:
        began = time.monotonic()
        first, queued = run(both())
        waited = time.monotonic() - began
        release.set()
        assert isinstance(first, ComputeDeadlineExceeded) and "while calculating" in str(first)
        assert isinstance(queued, ComputeDeadlineExceeded) and "waiting for a free compute thread" in str(queued)
        assert waited < 2.0  # refused at the deadline, not when the work ended (bounded by release.wait(5))
        # The overrun calculation gives its thread back when it ends; the pool then serves again.
        assert run(pool.run(lambda: "after")) == "after"
        assert started == ["first"]
    finally:
        release.set()
        pool.shutdown()
