"""Sparse LU factorisation of MNA matrices (SuperLU through scipy).

Why splu with permc_spec="MMD_AT_PLUS_A": measured on this project's 2-core
machine with random 4-neighbour resistor grids plus one voltage source
(median of 3, factorise + solve, scipy 1.17):

    nodes      MMD_AT_PLUS_A   COLAMD    MMD_ATA   RCM + NATURAL
    10k        0.020 s         0.027 s   0.025 s   0.074 s
    40k        0.12 s          0.17 s    0.18 s    0.77 s
    100k       0.43 s          0.56 s    0.60 s    5.9 s
    1M         9.9 s / 1.8 GB  12.6 s / 3.3 GB (peak RSS)

MNA matrices are structurally symmetric apart from the few source rows, so a
minimum-degree ordering of A^T + A fits them best; COLAMD (spsolve's default)
fills in about twice as much at 1M nodes.  A symmetric RCM ordering gives a
band whose fill grows as n^1.5.  spsolve and splu run the same SuperLU code;
splu keeps the factors, which the Thevenin requests and the collapse
diagnosis reuse (one extra triangular solve instead of a new factorisation).
SymmetricMode / diag_pivot_thresh tweaks changed nothing measurable.
"""

from __future__ import annotations

import time
import warnings
from collections.abc import Iterator
from contextlib import contextmanager
from contextvars import ContextVar

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla
from scipy.linalg import lapack

from .errors import DeadlineExceededError, FactorTooLargeError, SingularNetworkError

ORDERING = "MMD_AT_PLUS_A"

# What every sparse factorisation of one solve is held to, set by solve() for the thread it runs in: the most bytes
# its LU factors may take (None: unbounded) and the deadline (a time.monotonic() value, None: none). A context
# variable rather than an argument: every factorisation of a solve (the linear system, each Newton Jacobian, the
# Thevenin and collapse diagnoses) is checked without threading the limits through each call.
_LIMITS: ContextVar[tuple[float | None, float | None]] = ContextVar("factor_limits", default=(None, None))
_INDEX_BYTES = 4  # SuperLU's int row subscripts


@contextmanager
def factor_limits(max_bytes: float | None, deadline: float | None) -> Iterator[None]:
    token = _LIMITS.set((max_bytes, deadline))
    try:
        yield
    finally:
        _LIMITS.reset(token)


def factor_bytes(entries: int, dtype: np.dtype) -> int:
    """Storage of LU factors with this many stored entries: a value and a row subscript each (an upper estimate:
    SuperLU's supernodes share one subscript list per supernode)."""
    return entries * (np.dtype(dtype).itemsize + _INDEX_BYTES)


def _singular(reason: str) -> SingularNetworkError:
    return SingularNetworkError(
        f"the network equations are singular ({reason})",
        how_to_fix="look for parts whose voltage or current is not determined, e.g. an "
        "inductor and capacitor exactly in resonance, or ideal elements in conflict",
    )


def _too_large(size: int, budget: float) -> FactorTooLargeError:
    return FactorTooLargeError(
        f"the LU factors of this network's equations take {size / 2**20:.0f} MiB, over this service's limit of "
        f"{budget / 2**20:.0f} MiB: its topology fills in far more than a grid or a radial network does",
        how_to_fix="split the network, or reduce its meshed part (many branches joining distant nodes fill in most)",
        data={"factor_bytes": size, "limit_bytes": budget},
    )


class Factor:
    """An LU factorisation that raises SingularNetworkError instead of RuntimeError, held to the solve's limits
    (factor_limits: DeadlineExceededError before it starts, FactorTooLargeError when its factors are too big)."""

    __slots__ = ("_lu",)

    def __init__(self, matrix: sp.csc_matrix) -> None:
        budget, deadline = _LIMITS.get()
        if deadline is not None and time.monotonic() >= deadline:
            # A factorisation cannot be interrupted once begun (it runs in C), so the deadline is checked before
            # each: work abandoned past its deadline (a 503 already sent) stops at the next one.
            raise DeadlineExceededError("the solve ran out of its time budget (deadline_s) before a factorisation",
                                        how_to_fix="allow more time, or solve a smaller network")
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("error", spla.MatrixRankWarning)
                self._lu = spla.splu(matrix, permc_spec=ORDERING)
        except (RuntimeError, spla.MatrixRankWarning) as exc:
            if "malloc" in str(exc).lower():  # SuperLU's ABORT("Malloc fails for ...") on a failed allocation
                raise MemoryError(str(exc)) from exc
            raise _singular(str(exc)) from exc
        if budget is not None:
            # scipy's splu offers neither a symbolic analysis nor a memory limit for SuperLU, so the factors are
            # measured once made, and dropped at once when over the budget: that bounds the memory a solve keeps
            # and stops every further factorisation (Newton steps, Thevenin pairs), not the peak of this one.
            size = factor_bytes(self._lu.nnz, matrix.dtype)  # nnz: entries SuperLU stores, supernode padding included
            if size > budget:
                self._lu = None
                raise _too_large(size, budget)

    def solve(self, rhs: np.ndarray) -> np.ndarray:
        return self._lu.solve(rhs)


_GETRF = {np.dtype(np.float64): (lapack.dgetrf, lapack.dgetrs), np.dtype(np.complex128): (lapack.zgetrf, lapack.zgetrs)}


class DenseFactor:
    """LAPACK LU with partial pivoting (getrf/getrs) of a small dense matrix; same interface as Factor.

    The matrix is consumed: getrf factorises its transpose in place (a C-ordered
    array is a Fortran-ordered transpose, so no copy), and getrs then solves
    with trans=1, i.e. with the transpose of that, which is the matrix itself
    (a plain transpose, not the conjugate one, for complex matrices too).  An
    exactly zero pivot is the same "exactly singular" case SuperLU reports.
    """

    __slots__ = ("_lu", "_piv", "_getrs")

    def __init__(self, matrix: np.ndarray) -> None:
        getrf, self._getrs = _GETRF[matrix.dtype]
        self._lu, self._piv, info = getrf(matrix.T, overwrite_a=True)
        if info > 0:
            raise _singular("Factor is exactly singular")
        if info < 0:  # pragma: no cover - an argument error is a bug here, not a property of the network
            raise ValueError(f"getrf argument {-info} is invalid")

    def solve(self, rhs: np.ndarray) -> np.ndarray:
        x, _ = self._getrs(self._lu, self._piv, rhs, trans=1)
        return x
