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

The matrices come from the network's system (assemble.py): sparse for big
networks, dense for small ones; the iteration is the same.  An optional
deadline (a time.monotonic() value) is checked after every Newton step: when
it has passed before convergence the result says so (``out_of_time``) and the
caller stops, so the overrun is at most one step.
"""

from __future__ import annotations

import time
from dataclasses import dataclass

import numpy as np

from .assemble import amax, node_sums, terminal_index
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
    out_of_time: bool = False


def port_voltage(x: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    va = np.where(a >= 0, x[np.maximum(a, 0)], 0.0)
    vb = np.where(b >= 0, x[np.maximum(b, 0)], 0.0)
    return va - vb


def solve_nonlinear(
    p: Primitives, system, rhs: np.ndarray, max_iterations: int, tol_abs: float, tol_rel: float,
    deadline: float | None = None,
) -> NewtonResult:
    n, size = p.n, p.n + p.m
    dc = p.dtype is np.float64
    y_rated = p.nl_c * p.nl_v0 ** (p.nl_k - 2.0)
    x = system.factor(system.with_admittance(y_rated), overwrite=True).solve(rhs)
    solves = 1
    a_lin = system.operator()
    abs_a = abs(a_lin)
    ports = terminal_index(p.nl_a, p.nl_b, n)
    ga, gb = np.maximum(p.nl_a, 0), np.maximum(p.nl_b, 0)
    on_a, on_b = p.nl_a >= 0, p.nl_b >= 0
    rhs_scale = amax(np.abs(rhs[:n]))

    def residual(x):
        v = np.where(on_a, x[ga], 0.0) - np.where(on_b, x[gb], 0.0)  # port_voltage, indices hoisted
        i, dx_, dy_, guarded = load_currents(v, p.nl_c, p.nl_k, p.nl_vg)
        if dc:
            i = i.real
        f = a_lin @ x - rhs
        f[:n] += node_sums(ports, i, n)
        scale = max(amax((abs_a @ np.abs(x))[:n]), amax(np.abs(i)), rhs_scale)
        return f, amax(np.abs(f[:n])), scale, (i, dx_, dy_, guarded)

    f, mis, scale, loads = residual(x)
    converged = out_of_time = False
    for _ in range(max_iterations):
        if mis <= max(tol_abs, tol_rel * scale):
            converged = True
            break
        if deadline is not None and solves > 1 and time.monotonic() >= deadline:
            out_of_time = True
            break
        _, di_dx, di_dy, _ = loads
        factor = system.factor(system.jacobian(di_dx, di_dy), overwrite=True)
        if dc:
            dx = factor.solve(-f)
        else:
            d = factor.solve(-np.concatenate([f.real, f.imag]))
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
    return NewtonResult(x, solves, converged, mis, i, guarded, out_of_time)
