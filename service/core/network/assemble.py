"""Modified nodal analysis (MNA) matrices from primitives, fully vectorised.

Unknowns: x = [v_0 .. v_{n-1}, i_0 .. i_{m-1}]: node voltages (reference
excluded) then the currents of BRANCH primitives.  Rows 0..n-1 are KCL at
each node written as "sum of currents leaving the node = 0"; row n+k is the
branch law v_a - v_b - Z_k i_k = E_k.

Stamps (a, b are node indices, -1 = reference, whose row/column is dropped):
  admittance y:   (a,a)+=y (b,b)+=y (a,b)-=y (b,a)-=y
  branch k:       (a,n+k)+=1 (b,n+k)-=1 (n+k,a)+=1 (n+k,b)-=1 (n+k,n+k)-=Z; rhs[n+k]=E
  injection j:    rhs[a]-=j rhs[b]+=j   (j leaves a and enters b through the source)
Diagonals are summed with np.bincount (one pass, no duplicate entries for the
COO->CSC conversion to merge), off-diagonals are emitted once per element.

Two forms of the same equations (:func:`system_for` picks one):

* :class:`SparseSystem`: scipy.sparse CSC and SuperLU, for everything but
  small networks (see linear.py for the ordering measurements);
* :class:`DenseSystem`: a dense numpy matrix and LAPACK LU for networks of at
  most DENSE_MAX unknowns, where building scipy.sparse objects and calling
  SuperLU costs more than an O(N^3) dense factorisation.  The stamps' flat
  positions in the dense matrix depend only on the structure, so they are
  computed once (:class:`DenseStamps`) and each assembly is a few bincounts.

Both serve the same pipeline (solver.py, newton.py, thevenin.py) through the
same methods: ``matrix``, ``with_admittance``, ``operator``, ``jacobian``,
``factor``.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from .linear import DenseFactor, Factor
from .primitives import Primitives

# Largest number of unknowns (real unknowns for the Newton Jacobian of an AC
# network, which is twice the complex count) assembled and factorised densely.
# Measured crossover on the project's 2-core machine: see load_tests/bench_small_networks.py
# and docs/benchmarks.md.
DENSE_MAX = 200


_MAXIMUM = np.maximum.reduce


def amax(a: np.ndarray) -> float:
    """np.max(a, initial=0.0) as a float (NaN propagates), without np.max's Python-level wrapper.

    Small networks make many such reductions on short arrays; the wrapper
    costs three times the reduction itself there.
    """
    return float(_MAXIMUM(a, axis=None, initial=0.0))


def scatter_sum(idx: np.ndarray, w: np.ndarray, size: int) -> np.ndarray:
    """np.bincount for real or complex weights, ignoring idx < 0 (the reference)."""
    keep = idx >= 0
    idx, w = idx[keep], w[keep]
    if np.iscomplexobj(w):
        return np.bincount(idx, w.real, size) + 1j * np.bincount(idx, w.imag, size)
    return np.bincount(idx, w, size).astype(np.float64)


def admittance_coo(a: np.ndarray, b: np.ndarray, y: np.ndarray, n: int):
    """COO triplets of admittance stamps: diagonal (length n) then off-diagonals."""
    diag = scatter_sum(a, y, n) + scatter_sum(b, y, n)
    both = (a >= 0) & (b >= 0)
    ao, bo, yo = a[both], b[both], y[both]
    dn = np.arange(n, dtype=np.int64)
    rows = np.concatenate([dn, ao, bo])
    cols = np.concatenate([dn, bo, ao])
    vals = np.concatenate([diag, -yo, -yo])
    return rows, cols, vals


def mna_coo(p: Primitives, extra_a=None, extra_b=None, extra_y=None):
    """COO triplets of the linear MNA matrix (plus optional extra admittances)."""
    n, m = p.n, p.m
    a, b, y = p.adm_a, p.adm_b, p.adm_y
    if extra_a is not None and extra_a.size:
        a, b, y = np.concatenate([a, extra_a]), np.concatenate([b, extra_b]), np.concatenate([y, extra_y])
    r1, c1, v1 = admittance_coo(a, b, y, n)
    k = np.arange(m, dtype=np.int64) + n
    one = np.ones(m, dtype=p.dtype)
    pa, pb = p.br_a >= 0, p.br_b >= 0
    zk = p.br_z != 0
    rows = np.concatenate([r1, p.br_a[pa], p.br_b[pb], k[pa], k[pb], k[zk]])
    cols = np.concatenate([c1, k[pa], k[pb], p.br_a[pa], p.br_b[pb], k[zk]])
    vals = np.concatenate([v1, one[pa], -one[pb], one[pa], -one[pb], -p.br_z[zk]])
    return rows, cols, vals


def terminal_index(a: np.ndarray, b: np.ndarray, n: int) -> np.ndarray:
    """Terminal node indices a then b, the reference (-1) moved to an extra bin n: for node_sums."""
    return np.concatenate([np.where(a < 0, n, a), np.where(b < 0, n, b)])


def node_sums(index: np.ndarray, w: np.ndarray, n: int) -> np.ndarray:
    """Per node, the sum of w leaving it through terminals a minus entering through b (index from terminal_index)."""
    w2 = np.concatenate([w, -w])
    if np.iscomplexobj(w2):
        out = np.empty(n + 1, dtype=np.complex128)
        out.real = np.bincount(index, w2.real, n + 1)
        out.imag = np.bincount(index, w2.imag, n + 1)
        return out[:n]
    return np.bincount(index, w2, n + 1)[:n].astype(np.float64, copy=False)  # int64 if w is empty


def rhs_vector(p: Primitives) -> np.ndarray:
    n = p.n
    rhs = np.zeros(n + p.m, dtype=p.dtype)
    if p.inj_j.size:
        rhs[:n] = -node_sums(terminal_index(p.inj_a, p.inj_b, n), p.inj_j, n)
    rhs[n:] = p.br_e
    return rhs


def to_csc(rows, cols, vals, size: int) -> sp.csc_matrix:
    return sp.csc_matrix((vals, (rows, cols)), shape=(size, size))


def real_form(rows, cols, vals, size: int):
    """COO of the real 2N x 2N equivalent [[Re, -Im], [Im, Re]] of a complex matrix.

    Newton-Raphson for constant-power loads needs it: their current depends on
    conj(v), which is not complex-differentiable, so the Jacobian is real.
    """
    re, im = vals.real, vals.imag
    return (
        np.concatenate([rows, rows, rows + size, rows + size]),
        np.concatenate([cols, cols + size, cols, cols + size]),
        np.concatenate([re, -im, im, re]),
    )


# --------------------------------------------------------------------------- the two forms


def _stamp_positions(a: np.ndarray, b: np.ndarray):
    """Rows, columns, source index and sign of the four admittance stamps of each (a, b) port."""
    j = np.arange(a.size)
    ka, kb = a >= 0, b >= 0
    both = ka & kb
    rows = np.concatenate([a[ka], b[kb], a[both], b[both]])
    cols = np.concatenate([a[ka], b[kb], b[both], a[both]])
    pick = np.concatenate([j[ka], j[kb], j[both], j[both]])
    sign = np.concatenate([np.ones(int(ka.sum()) + int(kb.sum())), -np.ones(2 * int(both.sum()))])
    return rows, cols, pick, sign


class LoadStamps:
    """Where the nonlinear loads' Jacobian blocks go (structure only).

    At DC a load adds d i/d v at its four stamp positions; at AC the 2x2 real
    block [[Re di/dx, Re di/dy], [Im di/dx, Im di/dy]] at each of them, in the
    real 2N form [[Re, -Im], [Im, Re]] of the matrix (see loads.py).
    """

    __slots__ = ("rows", "cols", "pick", "sign")

    def __init__(self, p: Primitives, real2: bool) -> None:
        r, c, pick, sign = _stamp_positions(p.nl_a, p.nl_b)
        if real2:
            size = p.n + p.m
            r = np.concatenate([r, r, r + size, r + size])
            c = np.concatenate([c, c + size, c, c + size])
            sign = np.tile(sign, 4)
        self.rows, self.cols, self.pick, self.sign = r, c, pick, sign

    def values(self, di_dx: np.ndarray, di_dy: np.ndarray, real2: bool) -> np.ndarray:
        if not real2:
            return di_dx.real[self.pick] * self.sign
        blocks = (di_dx.real, di_dy.real, di_dx.imag, di_dy.imag)
        return np.concatenate([g[self.pick] for g in blocks]) * self.sign


class SparseSystem:
    """The MNA equations as scipy.sparse matrices, factorised by SuperLU."""

    dense = False

    def __init__(self, p: Primitives) -> None:
        self.p = p
        self.size = p.n + p.m
        self.coo = mna_coo(p)
        self.matrix = to_csc(*self.coo, self.size)
        self._jacobian_base = None

    def with_admittance(self, y: np.ndarray) -> sp.csc_matrix:
        """The matrix with admittances y added at the nonlinear loads' ports."""
        return to_csc(*mna_coo(self.p, self.p.nl_a, self.p.nl_b, y), self.size)

    def operator(self):
        return self.matrix.tocsr()  # faster products than CSC

    def jacobian(self, di_dx: np.ndarray, di_dy: np.ndarray) -> sp.csc_matrix:
        real2 = self.p.dtype is np.complex128
        if self._jacobian_base is None:
            self._jacobian_base = (LoadStamps(self.p, real2), real_form(*self.coo, self.size) if real2 else self.coo)
        st, (rows, cols, vals) = self._jacobian_base
        n2 = 2 * self.size if real2 else self.size
        return to_csc(np.concatenate([rows, st.rows]), np.concatenate([cols, st.cols]),
                      np.concatenate([vals, st.values(di_dx, di_dy, real2)]), n2)

    @staticmethod
    def factor(matrix, overwrite: bool = False) -> Factor:
        return Factor(matrix)


def _binned(flat: np.ndarray, w: np.ndarray, length: int) -> np.ndarray:
    if np.iscomplexobj(w):
        out = np.empty(length, dtype=np.complex128)
        out.real = np.bincount(flat, w.real, length)
        out.imag = np.bincount(flat, w.imag, length)
        return out
    return np.bincount(flat, w, length).astype(np.float64, copy=False)  # int64 if w is empty


class DenseStamps:
    """Flat positions of every stamp in the dense size x size MNA matrix (structure only).

    All of a matrix is then one bincount: admittance stamps (y at four
    positions each), the branch incidence (+-1) and -Z on the branch diagonal.
    """

    __slots__ = ("size", "flat", "pick", "sign", "incidence", "_nl", "loads")

    def __init__(self, p: Primitives) -> None:
        n, m = p.n, p.m
        size = self.size = n + m
        rows, cols, self.pick, self.sign = _stamp_positions(p.adm_a, p.adm_b)
        k = np.arange(m) + n
        pa, pb = p.br_a >= 0, p.br_b >= 0
        ka, kb, a, b = k[pa], k[pb], p.br_a[pa], p.br_b[pb]
        self.flat = np.concatenate([rows * size + cols, a * size + ka, ka * size + a, b * size + kb, kb * size + b,
                                    k * (size + 1)])
        self.incidence = np.concatenate([np.ones(2 * a.size), -np.ones(2 * b.size)])
        self._nl = None
        self.loads: tuple[LoadStamps, np.ndarray] | None = None

    def matrix(self, p: Primitives) -> np.ndarray:
        w = np.concatenate([p.adm_y[self.pick] * self.sign, self.incidence, -p.br_z])
        return _binned(self.flat, w, self.size * self.size).reshape(self.size, self.size)

    def nonlinear(self, p: Primitives, y: np.ndarray) -> np.ndarray:
        """Admittances y at the nonlinear loads' ports, as a dense matrix."""
        if self._nl is None:
            rows, cols, pick, sign = _stamp_positions(p.nl_a, p.nl_b)
            self._nl = (rows * self.size + cols, pick, sign)
        flat, pick, sign = self._nl
        return _binned(flat, y[pick] * sign, self.size * self.size).reshape(self.size, self.size)


class DenseSystem:
    """The MNA equations as a dense matrix, factorised by LAPACK (networks of at most DENSE_MAX unknowns)."""

    dense = True

    def __init__(self, p: Primitives, stamps: DenseStamps) -> None:
        self.p = p
        self.size = stamps.size
        self.stamps = stamps
        self.matrix = stamps.matrix(p)

    def with_admittance(self, y: np.ndarray) -> np.ndarray:
        return self.matrix + self.stamps.nonlinear(self.p, y)

    def operator(self) -> np.ndarray:
        return self.matrix

    def jacobian(self, di_dx: np.ndarray, di_dy: np.ndarray) -> np.ndarray:
        real2 = self.p.dtype is np.complex128
        size = self.size
        n2 = 2 * size if real2 else size
        if self.stamps.loads is None:
            st = LoadStamps(self.p, real2)
            self.stamps.loads = (st, st.rows * n2 + st.cols)
        st, flat = self.stamps.loads
        jac = np.bincount(flat, st.values(di_dx, di_dy, real2), n2 * n2).reshape(n2, n2)
        a = self.matrix
        if real2:
            jac[:size, :size] += a.real
            jac[:size, size:] -= a.imag
            jac[size:, :size] += a.imag
            jac[size:, size:] += a.real
        else:
            jac += a
        return jac

    @staticmethod
    def factor(matrix: np.ndarray, overwrite: bool = False) -> DenseFactor:
        return DenseFactor(matrix if overwrite else matrix.copy())


def dense_fits(p: Primitives) -> bool:
    """True when the network is small enough for the dense form (its Newton Jacobian included)."""
    size = p.n + p.m
    if p.nl_a.size and p.dtype is np.complex128:
        size *= 2
    return size <= DENSE_MAX


def system_for(p: Primitives, stamps: DenseStamps | None):
    """The dense form when structure stamps are given (see dense_fits), else the sparse one."""
    return DenseSystem(p, stamps) if stamps is not None else SparseSystem(p)
