"""The memory budget of the LU factors (SolveOptions.factor_max_bytes): topology, not size, decides the fill.

Fill-in of sparse Gaussian elimination follows the graph: a planar grid ordered by minimum degree or nested
dissection fills in O(n log n), while a graph of random long branches has large separators and fills in far
faster (George & Liu, Computer Solution of Large Sparse Positive Definite Systems, 1981: from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.sparse.linalg as spla

from service.core.network import (
    FactorTooLargeError,
    InvalidValueError,
    NetworkError,
    Network,
    Resistor,
    ResistorArray,
    SolveOptions,
    VoltageSource,
    solve,
)
from service.core.network.linear import factor_bytes

MIB = 2**20


def random_topology(n: int, chords: int, seed: int = 7) -> tuple[np.ndarray, np.ndarray]:
    """A path through nodes 1..n (so nothing floats) plus `chords` branches between random nodes."""
    rng = np.random.default_rng(seed)
    a = np.r_[np.arange(1, n), rng.integers(1, n + 1, chords)]
    b = np.r_[np.arange(2, n + 1), rng.integers(1, n + 1, chords)]
    keep = a != b
    return a[keep], b[keep]


def grid(side: int) -> tuple[np.ndarray, np.ndarray]:
    idx = np.arange(1, side * side + 1).reshape(side, side)
    return np.r_[idx[:, :-1].ravel(), idx[:-1, :].ravel()], np.r_[idx[:, 1:].ravel(), idx[1:, :].ravel()]


def network(branches: tuple[np.ndarray, np.ndarray], last: int) -> Network:
    a, b = branches
    return Network(elements=(VoltageSource("v", "1", "0", 1.0), Resistor("ground", str(last), "0", 1.0),
                             ResistorArray("mesh", a, b, np.ones(a.size))), frequency_hz=0.0)


RANDOM = network(random_topology(3000, 3000), 3000)  # 3,000 nodes, about 6,000 branches
GRID = network(grid(60), 3600)  # 3,600 nodes, 7,080 branches: more of both than RANDOM


def test_a_random_topology_outgrows_a_budget_that_a_bigger_grid_fits():
    budget = 4 * MIB
    with pytest.raises(FactorTooLargeError) as caught:
        solve(RANDOM, SolveOptions(factor_max_bytes=budget))
    err = caught.value
    assert isinstance(err, NetworkError) and err.code == "network_too_costly"
    assert err.data["factor_bytes"] > budget == err.data["limit_bytes"] and "MiB" in err.detail
    sol = solve(GRID, SolveOptions(factor_max_bytes=budget))
    # Ohm's law through the grid and the 1 ohm ground resistor: the source current is 1 V over a resistance > 1 ohm
    # (common practice), so the budget let a correct solve through.
    assert 0 < abs(sol.element("v").current.value) < 1.0


def test_the_budget_does_not_outlive_its_solve():
    with pytest.raises(FactorTooLargeError):
        solve(RANDOM, SolveOptions(factor_max_bytes=1 * MIB))
    assert solve(RANDOM).converged  # no budget given: unbounded, as before


def test_the_measure_is_not_below_the_factors_storage():
    """What is compared with the budget covers the CSC storage of L and U as scipy hands them out."""
    with pytest.raises(FactorTooLargeError) as caught:
        solve(RANDOM, SolveOptions(factor_max_bytes=1 * MIB))
    from service.core.network.assemble import SparseSystem
    from service.core.network.linear import ORDERING
    from service.core.network.solver import prepare

    system = SparseSystem(prepare(RANDOM)._prims)
    lu = spla.splu(system.matrix, permc_spec=ORDERING)
    csc_bytes = sum(f.data.nbytes + f.indices.nbytes for f in (lu.L, lu.U))
    assert caught.value.data["factor_bytes"] >= csc_bytes
    assert factor_bytes(10, np.dtype(np.complex128)) == 10 * (16 + 4)


@pytest.mark.parametrize("bad", [0, -1.0, math.nan, math.inf, True, "1e6"])
def test_the_budget_option_is_checked(bad):
    with pytest.raises(InvalidValueError, match="factor_max_bytes"):
        solve(GRID, SolveOptions(factor_max_bytes=bad))


def test_a_past_deadline_stops_the_solve_before_its_next_factorisation():
    """A factorisation cannot be interrupted, so an abandoned solve (its 503 already sent) stops at the next one
    (common practice: check a deadline at each unit of work that cannot itself be cut short)."""
    from service.core.network import DeadlineExceededError

    with pytest.raises(DeadlineExceededError):
        solve(GRID, SolveOptions(deadline_s=0.0))  # linear: it was never stopped before
    assert solve(GRID, SolveOptions(deadline_s=60.0)).converged
