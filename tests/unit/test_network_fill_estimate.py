"""The factors' estimate made before factorising (core fill.py), and the worker process it sends large ones to.

What the estimate claims: Gaussian elimination without pivoting in reverse Cuthill-McKee order fills in only
inside the envelope of the permuted matrix (George & Liu, Computer Solution of Large Sparse Positive Definite
Systems, 1981, ch. 4: from memory), so L (strictly lower) and U (diagonal included) hold at most
2 * envelope + n entries. It is checked against a no-pivot elimination of the pattern itself, and, as a measured
fact rather than a theorem, against the entries SuperLU stores for grids, cubes, radial and random topologies.
"""

from __future__ import annotations

import os
import pickle

import numpy as np
import pytest
import scipy.sparse as sp
import scipy.sparse.linalg as spla
from hypothesis import given, settings
from hypothesis import strategies as st

from service.core.network import FactorTooLargeError, SolveOptions, prepare, solve
from service.core.network.assemble import SparseSystem
from service.core.network.errors import DeadlineExceededError
from service.core.network.fill import IN_PROCESS_MARGIN, envelope_entries, envelope_order, estimated_factor_bytes
from service.core.network.linear import ORDERING, factor_bytes
from service.core.network.worker import solve_in_worker
from tests.unit.test_network_fill import GRID, MIB, RANDOM, grid, network, random_topology


def no_pivot_fill(pattern: np.ndarray) -> int:
    """Entries of L (strictly lower) and U (diagonal included) of elimination without pivoting, structurally: row
    k's pattern joins every later row with an entry in column k (no cancellation assumed, the most fill there is)."""
    s = pattern.astype(bool).copy()
    n = s.shape[0]
    for k in range(n):
        rows = np.flatnonzero(s[k + 1:, k]) + k + 1
        s[np.ix_(rows, np.arange(k + 1, n))] |= s[k, k + 1:]
    return int(np.count_nonzero(np.tril(s, -1)) + np.count_nonzero(np.triu(s)))


def random_pattern(n: int, extra: int, seed: int) -> sp.csr_matrix:
    a, b = random_topology(n, extra, seed)
    a, b = a - 1, b - 1
    ones = np.ones(a.size)
    return sp.csr_matrix((np.r_[ones, ones, np.ones(n)], (np.r_[a, b, np.arange(n)], np.r_[b, a, np.arange(n)])),
                         shape=(n, n))


@settings(max_examples=40, deadline=None)
@given(n=st.integers(2, 60), extra=st.integers(0, 90), seed=st.integers(0, 2**31))
def test_the_estimate_bounds_a_no_pivot_lu_in_rcm_order(n, extra, seed):
    pattern = random_pattern(n, extra, seed)
    perm, _ = envelope_order(pattern)
    permuted = pattern[perm][:, perm].toarray() != 0
    assert no_pivot_fill(permuted) <= envelope_entries(pattern)


def test_the_envelope_is_exact_for_a_band():
    """A tridiagonal matrix (a radial chain): envelope n - 1, and its LU has no fill at all (common practice)."""
    n = 50
    chain = sp.diags([np.ones(n - 1), np.ones(n), np.ones(n - 1)], [-1, 0, 1], format="csr")
    assert envelope_order(chain)[1] == n - 1
    assert envelope_entries(chain) == no_pivot_fill(chain.toarray()) == 3 * n - 2


def cube(side: int) -> tuple[np.ndarray, np.ndarray]:
    idx = np.arange(1, side**3 + 1).reshape(side, side, side)
    return (np.r_[idx[:, :, :-1].ravel(), idx[:, :-1, :].ravel(), idx[:-1].ravel()],
            np.r_[idx[:, :, 1:].ravel(), idx[:, 1:, :].ravel(), idx[1:].ravel()])


def radial(n: int, seed: int = 3) -> tuple[np.ndarray, np.ndarray]:
    """A random tree: node k hangs from a random earlier node."""
    rng = np.random.default_rng(seed)
    b = np.arange(2, n + 1)
    return np.array([rng.integers(1, k) for k in b]), b


@pytest.mark.parametrize("name, net, most", [
    ("grid 3,600 nodes", GRID, 1.0),
    ("grid 10,000 nodes", network(grid(100), 100 * 100), 1.0),
    ("radial 5,000 nodes", network(radial(5000), 5000), 1.0),
    ("random 3,000 nodes", RANDOM, 1.0),
    ("cube 1,000 nodes", network(cube(10), 10**3), 1.5),
    ("cube 4,096 nodes", network(cube(16), 16**3), 1.5),
])
def test_superlu_stores_at_most_the_measured_multiple_of_the_estimate(name, net, most):
    """A measured property, not a theorem (SuperLU orders by minimum degree, pivots and pads supernodes): what
    fill.py states, below the estimate for grids, radial and random topologies, up to 1.48 times it for small cubes,
    within IN_PROCESS_MARGIN."""
    matrix = SparseSystem(prepare(net)._prims).matrix
    stored = spla.splu(matrix, permc_spec=ORDERING).nnz
    assert stored <= most * envelope_entries(matrix), name
    assert most < IN_PROCESS_MARGIN
    assert estimated_factor_bytes(matrix) == factor_bytes(envelope_entries(matrix), matrix.dtype)


def test_the_real_form_counts_four_entries_per_complex_one():
    matrix = SparseSystem(prepare(GRID)._prims).matrix.astype(np.complex128)
    entries = envelope_entries(matrix)
    assert estimated_factor_bytes(matrix) == entries * (16 + 4)
    assert estimated_factor_bytes(matrix, real_form=True) == 4 * entries * (8 + 4)


def test_a_small_network_solved_densely_has_no_estimate_and_a_sparse_one_has():
    small = network(grid(4), 16)  # 16 nodes: dense (assemble.DENSE_MAX)
    assert prepare(small).estimated_factor_bytes() is None
    assert prepare(RANDOM).estimated_factor_bytes() > prepare(GRID).estimated_factor_bytes() > 0


def test_a_prepared_network_is_held_to_the_factor_budget_too():
    """prepare(...).solve() is what the HTTP route runs in-process: it must keep the budget solve() keeps."""
    with pytest.raises(FactorTooLargeError):
        prepare(RANDOM, SolveOptions(factor_max_bytes=1 * MIB)).solve()


def test_network_errors_survive_pickling():
    """The worker sends its error back pickled: every attribute the HTTP layer reads must come back."""
    with pytest.raises(FactorTooLargeError) as caught:
        solve(RANDOM, SolveOptions(factor_max_bytes=1 * MIB))
    err = caught.value
    back = pickle.loads(pickle.dumps(err))
    assert type(back) is FactorTooLargeError and str(back) == str(err)
    assert (back.code, back.detail, back.how_to_fix, back.blames, back.data) == \
        (err.code, err.detail, err.how_to_fix, err.blames, err.data)


# ----------------------------------------------------------------------------------------------- the worker


def gone(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return True
    return False


def test_a_worker_gives_the_same_answer_as_this_process():
    from service.core.network import worker

    options = SolveOptions(factor_max_bytes=64 * MIB)
    here, there = solve(GRID, options), solve_in_worker(GRID, options, 60.0)
    assert there.element("v").current.value == here.element("v").current.value
    assert there.max_kcl_residual_a == here.max_kcl_residual_a
    assert gone(worker.last_worker_pid)


def test_a_worker_past_its_deadline_is_killed():
    """The factorisation of this random topology takes over a second (measured, 2-core machine); the worker is
    killed at 0.3 s and is gone when the call returns: nothing computes on after the answer."""
    import time

    from service.core.network import worker

    slow = network(random_topology(6000, 9000), 6000)
    solve_in_worker(GRID, SolveOptions(factor_max_bytes=64 * MIB), 60.0)  # the forkserver is started
    started = time.monotonic()
    with pytest.raises(DeadlineExceededError):
        solve_in_worker(slow, SolveOptions(factor_max_bytes=512 * MIB), 0.3)
    assert time.monotonic() - started < 0.3 + 0.5
    assert gone(worker.last_worker_pid)


def test_a_worker_out_of_its_cpu_time_answers_too_large():
    """The same slow topology (over a second of CPU to factorise, measured) with 1 s of CPU for its worker: the
    kernel ends the worker (SIGXCPU) and the answer is the 422 FactorTooLargeError naming the CPU limit, not the
    deadline's 503: the CPU a factorisation needs is the network's, wall time also the machine's load."""
    from service.core.network import worker

    slow = network(random_topology(6000, 9000), 6000)
    with pytest.raises(FactorTooLargeError) as caught:
        solve_in_worker(slow, SolveOptions(factor_max_bytes=512 * MIB), 60.0, cpu_s=1)
    assert caught.value.code == "network_too_costly"
    assert caught.value.data == {"worker_cpu_s": 1}
    assert gone(worker.last_worker_pid)


def test_a_cpu_limit_does_not_touch_a_solve_that_fits_it():
    options = SolveOptions(factor_max_bytes=64 * MIB)
    there, here = solve_in_worker(GRID, options, 60.0, cpu_s=30), solve(GRID, options)
    assert there.element("v").current.value == here.element("v").current.value


def test_a_worker_out_of_its_address_space_answers_too_large():
    """With no allowance beyond twice the budget, the worker's allocations fail: a MemoryError there is the 422
    FactorTooLargeError (never a 500), naming the worker's limit."""
    with pytest.raises(FactorTooLargeError) as caught:
        solve_in_worker(RANDOM, SolveOptions(factor_max_bytes=1 * MIB), 60.0, fixed_allowance=0)
    assert caught.value.code == "network_too_costly"
    assert caught.value.data["worker_address_space_bytes"] > 2 * MIB


def test_the_worker_module_loads_no_http_code():
    """What the forkserver imports (set_forkserver_preload) is the solver only: no litestar, structlog or msgspec,
    so a worker's start costs no web-framework import."""
    import subprocess
    import sys

    probe = ("import sys, service.core.network.worker; "
             "print(sorted({m.split('.')[0] for m in sys.modules} & {'litestar', 'structlog', 'msgspec', 'pint'}))")
    out = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=True,
                         cwd=os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__)))))
    assert out.stdout.strip() == "[]"
