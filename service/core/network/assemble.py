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
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from .primitives import Primitives


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


def rhs_vector(p: Primitives) -> np.ndarray:
    n = p.n
    rhs = np.zeros(n + p.m, dtype=p.dtype)
    rhs[:n] = scatter_sum(p.inj_b, p.inj_j, n) - scatter_sum(p.inj_a, p.inj_j, n)
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
