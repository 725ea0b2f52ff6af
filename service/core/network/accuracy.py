"""How far a solve can be trusted: refinement, the stamps' scale, and the elements a singular system involves.

* ``refine``: one step of iterative refinement, x += A^-1 (b - A x), with the
  factorisation already made.  A direct LU solve leaves a backward error of a
  few ulps times the growth of the factors; one step brings the forward error
  of a well-conditioned system down to the rounding of the answer itself
  (Wilkinson; Higham, Accuracy and Stability of Numerical Algorithms, ch. 12,
  from memory).  It costs one product and one pair of triangular solves.
* ``stamp_norm``: the infinity norm of the matrix of stamp magnitudes, every
  element's |y| (and the branches' incidence and |Z|) added without signs.  An
  inductor and a capacitor tuned to resonance cancel in the assembled matrix,
  so ||A|| cannot tell their rounding residue from a real value; ||M|| keeps
  the size of what was added, and ||A^-1|| ||M|| then shows the cancellation
  even when the whole matrix is that one residue (a 1 x 1 system).
* ``current_rounding``: the uncertainty a current y (v_a - v_b) inherits from
  the node voltages' own rounding, a few ulps of |v_a| + |v_b| times |y|: large
  for a small impedance between two high node voltages, however exact the
  solve (standard rounding-error analysis, common practice).
* ``dependent_elements``: given a vector dominated by the null direction of a
  (nearly) singular system, the elements whose current or voltage it drives:
  the loop or node set whose current or voltage the equations leave undefined.
"""

from __future__ import annotations

import numpy as np

from .primitives import Primitives

# A component of a null-direction vector at or above this fraction of its largest marks an element as involved.
INVOLVED_FRACTION = 1e-3


def refine(factor, matrix, rhs: np.ndarray, x: np.ndarray) -> np.ndarray:
    """x after one step of iterative refinement (unchanged when the step would not be finite)."""
    residual = rhs - matrix @ x
    step = factor.solve(residual)
    if not np.all(np.isfinite(step)):
        return x
    return x + step


# Ulps of a node voltage a refined solve leaves (a few units in the last place, common practice).
VOLTAGE_ULPS = 4.0


def current_rounding(p: Primitives, x: np.ndarray) -> float:
    """The largest absolute uncertainty of an admittance element's current from its node voltages' rounding."""
    if not p.adm_y.size:
        return 0.0
    xe = np.append(np.abs(x[: p.n]), 0.0)
    spread = np.abs(p.adm_y) * (xe[p.adm_a] + xe[p.adm_b])
    return float(spread.max()) * VOLTAGE_ULPS * float(np.finfo(np.float64).eps)


def stamp_norm(p: Primitives) -> float:
    """||M||_inf of the stamp-magnitude matrix: each row's sum of |stamp| over every element stamped into it."""
    size = p.n + p.m
    rows = np.zeros(size + 1)  # index size collects the reference node's stamps (dropped)
    y = np.abs(p.adm_y)
    for ends in (p.adm_a, p.adm_b):
        np.add.at(rows, np.where(ends < 0, size, ends), 2.0 * y)
    k = np.arange(p.m) + p.n
    for ends in (p.br_a, p.br_b):
        live = ends >= 0
        np.add.at(rows, ends[live], 1.0)
        np.add.at(rows, k[live], 1.0)
    rows[k] += np.abs(p.br_z)
    return float(rows[:size].max()) if size else 0.0


def dependent_elements(p: Primitives, x: np.ndarray, ids: list[str]) -> tuple[list[str], list[int]]:
    """Element ids and node indices that a null-direction vector ``x`` of the MNA system involves.

    The elements are those whose current under ``x`` is large (admittances y (v_a - v_b), branch currents);
    when no current stands out (an undefined voltage, not a loop current), those touching the nodes whose
    voltage does.
    """
    n = p.n
    xe = np.append(x[:n], 0.0)
    v_adm = xe[p.adm_a] - xe[p.adm_b]
    currents = np.concatenate([np.abs(p.adm_y * v_adm), np.abs(x[n:])])
    owners = np.concatenate([p.adm_owner, p.br_owner])
    top = currents.max() if currents.size else 0.0
    nodes_v = np.abs(x[:n])
    big_nodes = np.flatnonzero(nodes_v >= INVOLVED_FRACTION * nodes_v.max()) if n and nodes_v.max() > 0 else []
    if top > 0 and np.isfinite(top):
        picked = owners[currents >= INVOLVED_FRACTION * top]
    else:
        touch = np.isin(p.adm_a, big_nodes) | np.isin(p.adm_b, big_nodes)
        picked = p.adm_owner[touch]
    return [ids[i] for i in dict.fromkeys(picked.tolist())], [int(i) for i in big_nodes]
