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


def test_calculate_runs_bounded_work_inline_and_the_rest_on_the_pool():
    from litestar.datastructures import State

    from service.api.compute import calculate

    pool = ComputePool(Settings())
    state = State({"compute": pool})
    here = threading.current_thread().name
    try:
        assert run(calculate(state, lambda: threading.current_thread().name, inline=True)) == here
        assert run(calculate(state, lambda: threading.current_thread().name)).startswith("ampline-compute")
    finally:
        pool.shutdown()


def test_routes_send_big_networks_and_big_chains_to_the_pool():
    # The thresholds follow the default input limits: a default-size chain, or a network under 2,000 elements,
    # is bounded to tens of milliseconds; anything bigger must be cut off by the deadline.
    from service.api.routes.v1.chains import INLINE_CHAIN_ITEMS
    from service.api.routes.v1.networks import INLINE_ELEMENTS

    defaults = Settings()
    assert INLINE_CHAIN_ITEMS == defaults.max_chain_leads + defaults.max_chain_appliances
    assert INLINE_ELEMENTS <= 2_000
