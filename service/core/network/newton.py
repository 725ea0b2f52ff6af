"""Newton-Raphson for networks with constant-current / constant-power loads.

The network is linear except for those loads, so the residual is

    f(x) = A x - rhs + P i_load(x)      (P scatters each load current to its nodes)

Start: the linear solution with every nonlinear load replaced by the
impedance it has at rated voltage (a physically sensible point on the upper,
stable branch of the PV curve, so Newton converges to the normal operating
point rather than the low-voltage one).  Each step solves J dx = -f with the
exact Jacobian (real 2N form for AC, see loads.py) and halves the step while
the KCL mismatch does not decrease (a damped Newton).  The branch-law rows are
linear, so every step keeps them satisfied and the mismatch is measured on the
KCL rows, in amperes.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from .assemble import scatter_sum, mna_coo, real_form, to_csc
from .linear import Factor
from .loads import load_currents
from .primitives import Primitives

MAX_HALVINGS = 8


@dataclass(frozen=True, slots=True, eq=False)
class NewtonResult:
    x: np.ndarray
    solves: int
    converged: bool
    mismatch_a: float
    load_current: np.ndarray
    guarded: np.ndarray


def port_voltage(x: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    va = np.where(a >= 0, x[np.maximum(a, 0)], 0.0)
    vb = np.where(b >= 0, x[np.maximum(b, 0)], 0.0)
    return va - vb


def _load_stamps(p: Primitives, g11, g12, g21, g22, size: int, real2: bool):
    """COO of the loads' Jacobian blocks; g.. are the 2x2 block entries per load."""
    rows, cols, vals = [], [], []
    for ta, tb, sgn in ((p.nl_a, p.nl_a, 1.0), (p.nl_b, p.nl_b, 1.0), (p.nl_a, p.nl_b, -1.0), (p.nl_b, p.nl_a, -1.0)):
        ok = (ta >= 0) & (tb >= 0)
        r, c = ta[ok], tb[ok]
        rows.append(r)
        cols.append(c)
        vals.append(sgn * g11[ok])
        if real2:
            rows += [r, r + size, r + size]
            cols += [c + size, c, c + size]
            vals += [sgn * g12[ok], sgn * g21[ok], sgn * g22[ok]]
    return np.concatenate(rows), np.concatenate(cols), np.concatenate(vals)


def solve_nonlinear(
    p: Primitives, coo, rhs: np.ndarray, max_iterations: int, tol_abs: float, tol_rel: float
) -> NewtonResult:
    n, size = p.n, p.n + p.m
    dc = p.dtype is np.float64
    y_rated = p.nl_c * p.nl_v0 ** (p.nl_k - 2.0)
    start = to_csc(*mna_coo(p, p.nl_a, p.nl_b, y_rated), size)
    x = Factor(start).solve(rhs)
    solves = 1
    a_lin = to_csc(*coo, size).tocsr()
    abs_a = abs(a_lin)
    base_real = coo if dc else real_form(*coo, size)

    def residual(x):
        v = port_voltage(x, p.nl_a, p.nl_b)
        i, dx_, dy_, guarded = load_currents(v, p.nl_c, p.nl_k, p.nl_vg)
        if dc:
            i = i.real
        f = a_lin @ x - rhs
        f[:n] += scatter_sum(p.nl_a, i, n) - scatter_sum(p.nl_b, i, n)
        scale = max(
            float(np.max((abs_a @ np.abs(x))[:n], initial=0.0)),
            float(np.max(np.abs(i), initial=0.0)),
            float(np.max(np.abs(rhs[:n]), initial=0.0)),
        )
        return f, float(np.max(np.abs(f[:n]), initial=0.0)), scale, (i, dx_, dy_, guarded)

    f, mis, scale, loads = residual(x)
    converged = False
    for _ in range(max_iterations):
        if mis <= max(tol_abs, tol_rel * scale):
            converged = True
            break
        _, di_dx, di_dy, _ = loads
        if dc:
            lr, lc, lv = _load_stamps(p, di_dx.real, None, None, None, size, False)
            jac = to_csc(np.concatenate([base_real[0], lr]), np.concatenate([base_real[1], lc]),
                         np.concatenate([base_real[2], lv]), size)
            dx = Factor(jac).solve(-f)
        else:
            lr, lc, lv = _load_stamps(p, di_dx.real, di_dy.real, di_dx.imag, di_dy.imag, size, True)
            jac = sp.csc_matrix(
                (np.concatenate([base_real[2], lv]),
                 (np.concatenate([base_real[0], lr]), np.concatenate([base_real[1], lc]))),
                shape=(2 * size, 2 * size),
            )
            d = Factor(jac).solve(-np.concatenate([f.real, f.imag]))
            dx = d[:size] + 1j * d[size:]
        solves += 1
        step = 1.0
        for h in range(MAX_HALVINGS):
            cand = residual(x + step * dx)
            if cand[1] < mis or h == MAX_HALVINGS - 1:
                break
            step *= 0.5
        # Take the (possibly tiny) step even if it did not help: stalling here
        # would only end the loop, and the iteration cap bounds the work.
        x = x + step * dx
        f, mis, scale, loads = cand
    else:
        converged = mis <= max(tol_abs, tol_rel * scale)
    i, _, _, guarded = loads
    return NewtonResult(x, solves, converged, mis, i, guarded)
