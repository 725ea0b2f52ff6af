"""Issue 21, item 4: a network whose factors may outgrow the memory setting is solved in a worker process.

The estimate (service/core/network/fill.py) is made before any factorisation. Ordinary networks stay in this
process; one whose estimate does not fit AMPLINE_NETWORK_FACTOR_MAX_BYTES goes to a worker that has an
address-space limit and is killed at AMPLINE_COMPUTE_DEADLINE_S. Fill-in follows the topology: random long
branches fill in far faster than a grid (George & Liu, Computer Solution of Large Sparse Positive Definite
Systems, 1981: from memory).
"""

from __future__ import annotations

import os
import random
import time

from service.api.routes.v1 import networks as route
from service.core.network import worker
from tests.e2e.test_abuse_limits import _mesh, client, grid, problem

MIB = 2**20


def random_mesh(n: int, chords: int, seed: int = 7) -> dict:
    """A path through nodes 1..n (nothing floats) plus `chords` branches between random nodes."""
    rnd = random.Random(seed)
    a = list(range(1, n)) + [rnd.randint(1, n) for _ in range(chords)]
    b = list(range(2, n + 1)) + [rnd.randint(1, n) for _ in range(chords)]
    pairs = [(x, y) for x, y in zip(a, b) if x != y]
    return _mesh([p[0] for p in pairs], [p[1] for p in pairs], n)


def gone(pid: int | None, wait_s: float = 2.0) -> bool:
    end = time.monotonic() + wait_s
    while True:
        try:
            os.kill(pid, 0)
        except ProcessLookupError:
            return True
        if time.monotonic() > end:
            return False
        time.sleep(0.02)


def test_a_hostile_topology_is_refused_from_a_worker_with_422():
    """3,000 nodes and 3,000 random branches: about 10 MiB of factors (measured), over a 4 MiB setting. Its
    estimate does not fit, so it is factorised in a worker, which answers the 422 and is gone afterwards."""
    before = worker.last_worker_pid
    with client(network_factor_max_bytes=4 * MIB) as c:
        body = problem(c.post("/v1/networks/solve", json=random_mesh(3000, 3000)), 422)
    assert body["type"].endswith("/network-too-costly") and "4 MiB" in body["detail"]
    assert [e["pointer"] for e in body["errors"]] == ["/elements"]
    assert worker.last_worker_pid not in (None, before)
    assert gone(worker.last_worker_pid)


def test_a_worker_past_the_deadline_answers_503_and_is_killed():
    """6,000 nodes and 9,000 random branches: 58 MiB of factors (under the 64 MiB setting) that take over a second
    to compute (measured, 2-core machine). Past the 0.5 s deadline the answer is 503 and the worker no longer exists:
    the work stopped, where a compute thread would have finished it in the background."""
    mesh = random_mesh(6000, 9000)
    with client(network_factor_max_bytes=64 * MIB) as c:  # the forkserver is started outside the deadline
        assert c.post("/v1/networks/solve", json=random_mesh(3000, 3000)).status_code == 200
    with client(network_factor_max_bytes=64 * MIB, compute_deadline_s=0.5) as c:
        started = time.monotonic()
        body = problem(c.post("/v1/networks/solve", json=mesh), 503)
        assert body["type"].endswith("/compute-deadline-exceeded")
        assert time.monotonic() - started < 2.0
        # Nothing of it computes on in this process (a compute thread would, for about a second more).
        cpu = time.process_time()
        time.sleep(0.5)
        assert time.process_time() - cpu < 0.2
        assert gone(worker.last_worker_pid)
        assert c.get("/healthz").status_code == 200


def test_a_worker_out_of_its_cpu_seconds_answers_422_not_503():
    """The same 6,000-node random mesh with AMPLINE_NETWORK_WORKER_CPU_S=1 and a generous deadline: the worker is
    ended at 1 s of CPU and the answer is 422 network-too-costly naming the setting's limit (a survival run sent
    such networks and got 503s at the deadline before)."""
    with client(network_factor_max_bytes=64 * MIB, network_worker_cpu_s=1, compute_deadline_s=60) as c:
        body = problem(c.post("/v1/networks/solve", json=random_mesh(6000, 9000)), 422)
    assert body["type"].endswith("/network-too-costly") and "1 s of CPU" in body["detail"]
    assert gone(worker.last_worker_pid)


def test_ordinary_networks_do_not_use_the_worker(monkeypatch):
    """A 3,600-node grid (7,080 branches, the compute pool's size) and a radial feeder are solved in-process under
    the default setting."""
    def no_worker(*args, **kwargs):
        raise AssertionError("an ordinary network was sent to a worker process")

    monkeypatch.setattr(route, "solve_in_worker", no_worker)
    feeder = list(range(1, 5000))
    with client() as c:
        assert c.post("/v1/networks/solve", json=grid(60)).status_code == 200
        radial = _mesh(feeder, [k + 1 for k in feeder], 5000)
        assert c.post("/v1/networks/solve", json=radial).status_code == 200
