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

from dataclasses import replace

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from .assemble import SparseSystem
from .errors import SingularNetworkError
from .linear import Factor
from .primitives import Primitives
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


def equivalents(names, voc: np.ndarray, zth: np.ndarray, source_side: list[complex | None]) -> tuple[TheveninEquivalent, ...]:
    out = []
    for (a, b), v, z, zs in zip(names, voc, zth, source_side):
        isc = Phasor.of(v / z) if z != 0 else None
        out.append(TheveninEquivalent(a, b, Phasor.of(v), float(z.real), float(z.imag), float(abs(z)), isc, zs))
    return tuple(out)


def _connected_to_reference(p: Primitives, keep: np.ndarray) -> np.ndarray:
    """Per node: True when the kept admittances and the branches still join it to the reference node."""
    ref = p.n  # the reference node (-1 in the primitives) as the last vertex
    a = np.concatenate([p.adm_a[keep], p.br_a])
    b = np.concatenate([p.adm_b[keep], p.br_b])
    a, b = np.where(a < 0, ref, a), np.where(b < 0, ref, b)
    graph = sp.coo_matrix((np.ones(a.size), (a, b)), shape=(p.n + 1, p.n + 1))
    _, label = connected_components(graph, directed=False)
    return label[: p.n] == label[ref]


def source_side_impedances(p: Primitives, load_elements: np.ndarray, pairs: list[tuple[int, int]]) -> list[complex | None]:
    """The impedance between each pair with every load disconnected and every source zeroed.

    ``load_elements`` flags the network's elements that are loads.  Their admittances (constant-impedance loads)
    are left out, and so are the nonlinear loads' ports (they take no part in the equations without their
    operating point).  A node cut off from the reference by that is tied to it by a 1 S admittance: it hangs
    off the reference alone, so no injected current flows through it and the pairs that still reach the
    reference are not affected; a pair one of whose nodes is cut off has no source-side loop (None).
    """
    keep = ~load_elements[p.adm_owner] if p.adm_owner.size else np.zeros(0, dtype=bool)
    linked = _connected_to_reference(p, keep)
    cut = np.flatnonzero(~linked)
    empty_i, empty_d = np.zeros(0, dtype=np.int64), np.zeros(0, dtype=p.dtype)
    reduced = replace(
        p,
        adm_a=np.concatenate([p.adm_a[keep], cut]), adm_b=np.concatenate([p.adm_b[keep], np.full(cut.size, -1)]),
        adm_y=np.concatenate([p.adm_y[keep], np.ones(cut.size, dtype=p.dtype)]),
        adm_owner=np.concatenate([p.adm_owner[keep], np.full(cut.size, -1)]),
        nl_a=empty_i, nl_b=empty_i, nl_c=empty_d, nl_k=np.zeros(0), nl_v0=np.zeros(0), nl_vg=np.zeros(0),
        nl_s0=empty_d, nl_owner=empty_i,
    )
    reachable = [(a < 0 or linked[a]) and (b < 0 or linked[b]) for a, b in pairs]
    asked = [pair for pair, ok in zip(pairs, reachable) if ok]
    try:
        found = iter(thevenin_impedances(SparseSystem.factor(SparseSystem(reduced).matrix), reduced.n + reduced.m,
                                         asked, p.dtype) if asked else ())
    except SingularNetworkError:  # the loads held the rest together (e.g. a source only loaded, never returned)
        return [None] * len(pairs)
    return [complex(next(found)) if ok else None for ok in reachable]
