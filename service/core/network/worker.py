"""solve() in a worker process that has an address-space limit and is killed at its deadline.

A factorisation runs in C and cannot be stopped in its thread, nor held to a memory limit (SuperLU through scipy
takes none). A separate process can be both: its address space is limited (RLIMIT_AS), so an allocation past
the limit fails with MemoryError instead of growing the server, and it is killed (SIGKILL) when its deadline
passes, which stops the work and gives its memory back to the system at once.

The workers are forked from a forkserver (multiprocessing's "forkserver" context), never from the server,
which runs threads: the forkserver is a single-threaded process started once, with this package (numpy, scipy
and the solver, no HTTP code) already imported, so a worker starts in milliseconds instead of re-importing
them. The network and options go to the worker pickled (frozen dataclasses of floats, strings and numpy
arrays), the Solution or the NetworkError comes back the same way.

A worker also has a CPU-time limit (RLIMIT_CPU): a topology whose factorisation needs more CPU than that is
answered like one whose factors are too big (FactorTooLargeError, 422), not with the 503 of a deadline, because
the CPU a factorisation needs is a property of the network, where wall-clock time also depends on the load.

Only one worker runs at a time per server process (``_ONE_AT_A_TIME``): with its limit, that bounds what the
worker path can add to the process's memory. Work waiting for it waits within its own deadline.

Stdlib only, beside the solver itself: the HTTP layer decides when to use it (service/api/routes/v1/networks.py).
"""

from __future__ import annotations

import multiprocessing
import resource
import signal
import threading
import time

from . import model as m
from .errors import DeadlineExceededError, FactorTooLargeError, NetworkError
from .results import Solution
from .solver import solve

# The worker's address space beyond what it has when it starts (the interpreter, numpy, scipy and the solver
# imported, the network unpickled: about 210-250 MiB of address space, 70 MiB resident): twice the factor budget,
# plus a fixed allowance. The factors themselves are held to the budget (linear.Factor measures them); the rest is
# SuperLU's working storage (it reserves about 20 times the matrix's entries up front, mostly never touched, and
# halves that guess when the reservation fails; its arrays grow by reallocation), the matrix and the results.
# Measured on the 2-core machine (address space above the start): a 100,000-node grid peaked 447 MiB in its
# factorisation (64 MiB of factors, 129 MiB resident), a 24,000-node cube 242 MiB (135 MiB of factors); a
# 200,000-node grid solved in a worker with the default 384 MiB budget.
ADDRESS_SPACE_PER_BUDGET = 2
ADDRESS_SPACE_FIXED = 512 * 2**20

_ONE_AT_A_TIME = threading.Lock()
_CONTEXT_LOCK = threading.Lock()
_context = None
# The pid of the latest worker started, for tests that check it is gone.
last_worker_pid: int | None = None


def _forkserver():
    global _context
    with _CONTEXT_LOCK:
        if _context is None:
            ctx = multiprocessing.get_context("forkserver")
            ctx.set_forkserver_preload(["service.core.network.worker"])
            _context = ctx
        return _context


def address_space_limit(baseline: int, budget: float, fixed: int = ADDRESS_SPACE_FIXED) -> int:
    """The RLIMIT_AS given to a worker that starts with ``baseline`` bytes of address space."""
    return int(baseline + ADDRESS_SPACE_PER_BUDGET * budget + fixed)


def _address_space() -> int:
    """This process's current virtual size (VmSize in /proc/self/status, Linux)."""
    with open("/proc/self/status") as status:
        for line in status:
            if line.startswith("VmSize:"):
                return int(line.split()[1]) * 1024
    raise OSError("VmSize not found in /proc/self/status")


_HOW_TO_FIX = "split the network, or reduce its meshed part (many branches joining distant nodes fill in most)"


def _out_of_memory(budget: float, limit: int | None) -> FactorTooLargeError:
    """The 422 for a worker that ran out of memory: its limit (``limit``), or the system's (None: it was killed)."""
    held = f"more than the {limit / 2**20:.0f} MiB of memory its worker may use" if limit else \
        "more memory than the system had for its worker"
    return FactorTooLargeError(
        f"solving this network needed {held} (the LU factors' limit of {budget / 2**20:.0f} MiB and the working "
        "storage of their factorisation): its topology fills in far more than a grid or a radial network does",
        how_to_fix=_HOW_TO_FIX,
        data={"limit_bytes": budget, "worker_address_space_bytes": limit},
    )


def _too_much_cpu(cpu_s: int) -> FactorTooLargeError:
    return FactorTooLargeError(
        f"solving this network needed more than the {cpu_s} s of CPU its worker may use: its topology fills in "
        "far more than a grid or a radial network does, so its factorisation is far more work",
        how_to_fix=_HOW_TO_FIX,
        data={"worker_cpu_s": cpu_s},
    )


def _work(conn, network: m.Network, options: m.SolveOptions, budget: float, fixed: int,
          cpu_s: int | None) -> None:  # in the worker
    limit = address_space_limit(_address_space(), budget, fixed)
    resource.setrlimit(resource.RLIMIT_AS, (limit, limit))
    if cpu_s is not None:  # SIGXCPU at the soft limit ends the process (its default action)
        resource.setrlimit(resource.RLIMIT_CPU, (cpu_s, cpu_s + 1))
    try:  # if the container's memory runs out all the same, the kernel's out-of-memory killer takes this first
        with open("/proc/self/oom_score_adj", "w") as adj:
            adj.write("1000")
    except OSError:
        pass
    try:
        try:
            answer = ("solution", solve(network, options))
        except NetworkError as err:
            answer = ("error", err)
        except MemoryError:
            answer = ("error", _out_of_memory(budget, limit))
        conn.send(answer)  # pickled whole before the first byte is written
    except MemoryError:  # the answer itself did not fit
        conn.send(("error", _out_of_memory(budget, limit)))
    finally:
        conn.close()


def solve_in_worker(network: m.Network, options: m.SolveOptions, timeout_s: float,
                    fixed_allowance: int = ADDRESS_SPACE_FIXED, cpu_s: int | None = None) -> Solution:
    """solve(network, options) in a worker process, killed after ``timeout_s`` seconds (DeadlineExceededError).

    ``cpu_s`` (whole seconds, None: no limit) is the worker's CPU time; a worker that uses it up is ended by
    SIGXCPU (the worker installs no handler for it) and raises FactorTooLargeError.

    ``options.factor_max_bytes`` (required) and ``fixed_allowance`` set the worker's address-space limit
    (:func:`address_space_limit`); running out of it raises FactorTooLargeError, like factors measured over the
    budget, and so does a worker killed by SIGKILL without answering (the kernel's out-of-memory killer). Raises
    what solve() raises otherwise; a worker that ends any other way without answering raises RuntimeError.
    """
    global last_worker_pid
    budget = options.factor_max_bytes
    if budget is None:
        raise ValueError("a worker needs options.factor_max_bytes for its memory limit")
    deadline = time.monotonic() + timeout_s
    if not _ONE_AT_A_TIME.acquire(timeout=max(timeout_s, 0.0)):
        raise _out_of_time(timeout_s)
    try:
        ctx = _forkserver()
        receiver, sender = ctx.Pipe(duplex=False)
        process = ctx.Process(target=_work, args=(sender, network, options, budget, fixed_allowance, cpu_s), daemon=True,
                              name="ampline-solve-worker")
        process.start()
        last_worker_pid = process.pid
        sender.close()
        try:
            if not receiver.poll(max(deadline - time.monotonic(), 0.0)):
                raise _out_of_time(timeout_s)
            try:
                kind, payload = receiver.recv()
            except EOFError:  # it died without answering
                process.join()
                if cpu_s is not None and process.exitcode == -signal.SIGXCPU:
                    kind, payload = "error", _too_much_cpu(cpu_s)
                elif process.exitcode == -signal.SIGKILL:  # what the kernel's out-of-memory killer sends
                    kind, payload = "error", _out_of_memory(budget, None)
                else:
                    raise RuntimeError(f"the solve worker ended without an answer (exit code {process.exitcode})") \
                        from None
        finally:
            if process.is_alive():
                process.kill()
            process.join()
            receiver.close()
    finally:
        _ONE_AT_A_TIME.release()
    if kind == "error":
        raise payload
    return payload


def _out_of_time(timeout_s: float) -> DeadlineExceededError:
    return DeadlineExceededError(f"the solve did not finish within its {timeout_s:g} s (deadline_s)",
                                 how_to_fix="allow more time, or solve a smaller network",
                                 data={"deadline_s": timeout_s})

