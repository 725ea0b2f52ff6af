"""Calculations run in a bounded pool of worker threads, each within a deadline.

Every compute route hands its work to :meth:`ComputePool.run`.  The event loop stays free for probes and
other requests meanwhile, and a request whose calculation (waiting for a free thread included) outlasts
AMPLINE_COMPUTE_DEADLINE_S is answered 503 ``compute-deadline-exceeded``.  A thread cannot be stopped from
outside, so an overrun calculation runs on to its end in the background: it keeps its thread until then,
which is why the pool is bounded (AMPLINE_COMPUTE_THREADS) — abandoned work can hold at most that many
threads, and later requests queue for them under their own deadlines (queued work whose request gave up
is cancelled before it starts).  The network solver is also given the
deadline itself, so its Newton iteration stops rather than running on, and a network whose factors' estimate
does not fit the memory setting is solved in a worker process that is killed at the deadline
(service/core/network/worker.py): its thread waits for it, and then nothing computes on.
"""

from __future__ import annotations

import asyncio
import contextvars
from concurrent.futures import ThreadPoolExecutor
from typing import Callable, TypeVar

from litestar.datastructures import State

from service.api.settings import Settings

T = TypeVar("T")


class ComputeDeadlineExceeded(Exception):
    """The calculation did not finish within AMPLINE_COMPUTE_DEADLINE_S (503)."""

    def __init__(self, deadline_s: float, waiting: bool) -> None:
        self.deadline_s = deadline_s
        where = "waiting for a free compute thread" if waiting else "while calculating"
        super().__init__(f"The calculation did not finish within this service's {deadline_s:g} s deadline ({where}).")


class ComputePool:
    def __init__(self, settings: Settings) -> None:
        self.deadline_s = settings.compute_deadline_s
        self._threads = settings.compute_threads
        self._executor: ThreadPoolExecutor | None = None

    def shutdown(self) -> None:
        if self._executor is not None:  # do not wait: an overrun calculation may still be running
            self._executor.shutdown(wait=False, cancel_futures=True)
            self._executor = None

    async def run(self, fn: Callable[..., T], *args: object) -> T:
        if self._executor is None:
            self._executor = ThreadPoolExecutor(max_workers=self._threads, thread_name_prefix="ampline-compute")
        # The request's log context (request id) goes with the work into the thread.
        work = self._executor.submit(contextvars.copy_context().run, fn, *args)
        try:
            return await asyncio.wait_for(asyncio.wrap_future(work), self.deadline_s)
        except TimeoutError:
            # wait_for cancelled the work: queued work never starts; running work runs on and keeps its thread.
            raise ComputeDeadlineExceeded(self.deadline_s, waiting=work.cancelled()) from None


async def calculate(state: State, fn: Callable[..., T], *args: object, inline: bool = False) -> T:
    """Run ``fn(*args)`` on the app's compute pool (what every compute route calls), or here when ``inline``.

    ``inline`` is for work whose size the input limits bound to a few tens of milliseconds (a default-size
    lead chain at its largest measured 15 ms, a sizing a few ms, a small network).  Handing such work to a
    thread doubled its CPU cost under concurrent load (GIL hand-overs between the event loop and the compute
    threads: a lead chain cost 10-14 ms of server CPU from the pool against 6 ms inline, load_tests/load.py,
    8 users), for no gain: it ends long before any deadline.  Work that can run long (big networks) goes to
    the pool; the network solver also checks the deadline itself, inline or not.
    """
    if inline:
        return fn(*args)
    pool: ComputePool = state.compute
    return await pool.run(fn, *args)
