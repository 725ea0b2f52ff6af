"""Thevenin equivalents from an existing LU factorisation.

Seen between nodes a and b, the network's Thevenin impedance is the voltage
that appears between a and b when 1 A is injected into a and drawn out of b
with every independent source set to zero.  In MNA that is one more solve
with the factorised matrix and a right-hand side of +1 at a, -1 at b (zero in
the source rows, which zeroes the EMFs; current sources are not in the matrix
at all) -- no new factorisation.  The open-circuit voltage is simply v_a - v_b
of the solved network.
"""

from __future__ import annotations

import numpy as np

from .linear import Factor
from .results import Phasor, TheveninEquivalent


def unit_injections(size: int, pairs: list[tuple[int, int]], dtype) -> np.ndarray:
    rhs = np.zeros((size, len(pairs)), dtype=dtype)
    for col, (a, b) in enumerate(pairs):
        if a >= 0:
            rhs[a, col] += 1.0
        if b >= 0:
            rhs[b, col] -= 1.0
    return rhs


def port_values(sol: np.ndarray, pairs: list[tuple[int, int]]) -> np.ndarray:
    """Column k of sol evaluated as v_a - v_b for pairs[k] (2-D sol) or per pair (1-D)."""
    out = []
    for col, (a, b) in enumerate(pairs):
        vec = sol[:, col] if sol.ndim == 2 else sol
        out.append((vec[a] if a >= 0 else 0.0) - (vec[b] if b >= 0 else 0.0))
    return np.asarray(out, dtype=np.complex128)


def thevenin_impedances(factor: Factor, size: int, pairs: list[tuple[int, int]], dtype) -> np.ndarray:
    if not pairs:
        return np.zeros(0, dtype=np.complex128)
    u = factor.solve(unit_injections(size, pairs, dtype))
    if u.ndim == 1:
        u = u[:, None]
    return port_values(u, pairs)


def equivalents(names, voc: np.ndarray, zth: np.ndarray) -> tuple[TheveninEquivalent, ...]:
    out = []
    for (a, b), v, z in zip(names, voc, zth):
        isc = Phasor.of(v / z) if z != 0 else None
        out.append(TheveninEquivalent(a, b, Phasor.of(v), float(z.real), float(z.imag), float(abs(z)), isc))
    return tuple(out)
