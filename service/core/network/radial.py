"""Load flow of a radial ladder by backward/forward sweep: O(n) per pass, no matrix.

The fast radial path beside the general solver (solver.py), for circuits that are a single feeder: an EMF E
behind a source impedance Zs feeding node 0, series sections k = 1..n from node k-1 to node k, and loads from
any node to the reference.  It solves the equations solve() writes for that network, with the same load laws
(loads.py; model.Load, SolveOptions.load_guard_voltage_pu):

    i = c |v|^(k-2) v,  c = conj(S0) / V0^k,  |v| replaced by Vg = guard x V0 below the guard voltage
    (k = 2 constant impedance: i = conj(S0) / V0^2 x v at any voltage; k = 1 constant current; k = 0 constant
    power; at DC S0 = P and reactances vanish, as in expand.py).

Each pass solves the ladder exactly for its linear part (constant-impedance loads as admittances) with the
constant-current and constant-power loads drawn as fixed currents at the previous pass's voltages: a backward
pass folds the far end into an admittance A_k and a current draw D_k seen at each node (A_k once per solve),

    A_k = y_k + A_{k+1} / (1 + Z_{k+1} A_{k+1}),   D_k = d_k + D_{k+1} / (1 + Z_{k+1} A_{k+1}),

and a forward pass gives V_0 = (E - Zs D_0) / (1 + Zs A_0) and, section by section, the current
J_k = (A_k V_{k-1} + D_k) / (1 + Z_k A_k) and V_k = V_{k-1} - Z_k J_k.  A ladder of constant-impedance loads
is therefore solved in one pass.  Ohm's law holds exactly in every section after a pass; the only KCL mismatch
left at a node is the change of its nonlinear load currents between the voltages they were drawn at and the
new ones, and the sweep stops when the largest is below max(tolerance_a, relative_tolerance x the largest
current), the general solver's test (SolveOptions), with a margin (SWEEP_MARGIN).  It starts, like the
solver's Newton iteration, from the linear solution with every load at the impedance it has at rated voltage
(the upper, stable branch).

The sweep is a fixed-point iteration, contracting by about the fraction of the voltage the nonlinear loads
drop; near the transfer limit it slows and past it there is no solution.  :meth:`Ladder.solve` returns None
when it has not converged in MAX_PASSES or has stopped contracting (no new lowest mismatch in STALL_PASSES),
when any value is not finite, or when a nonlinear load ends below its
guard voltage: the caller then solves the same network with solve(), which gives its own answer or its own
error (VoltageCollapseError with the per-load data, LoadUndervoltageError, ConvergenceError), so callers see
no difference.  Cross-checked against solve() in tests/unit/test_chain_sweep.py.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

from .model import Load, SolveOptions

# Passes before giving up (the caller falls back to the general solver): a chain drops a few per cent, so the
# sweep contracts by ~0.05 a pass and needs about ten; this bound is only reached near the transfer limit or
# past it, where it bounds the time spent before the fallback (measured: up to 19 ms at 200 passes on
# 50 leads and 100 appliances).
MAX_PASSES = 100
# The sweep stops at SWEEP_MARGIN of the general solver's test, or at the rounding floor of the largest current:
# a fixed-point iteration's last change bounds its remaining error only loosely (by rho / (1 - rho)), where
# Newton's quadratic convergence leaves the general solver far inside its own test; the margin keeps the two
# in agreement to 1e-9 of each current, small ones included, for two or three more passes.
SWEEP_MARGIN = 1e-3
STALL_PASSES = 5
ROUNDING_FLOOR = 16 * 2.220446049250313e-16
_EXPONENT = {"constant_impedance": 2, "constant_current": 1, "constant_power": 0}


@dataclass(frozen=True, slots=True)
class LadderFlow:
    """A solved ladder: node k's voltage (node 0 is the source terminal), section k's current (node k-1 -> k)."""

    node_voltage_v: tuple[complex, ...]  # nodes 0..n
    section_current_a: tuple[complex, ...]  # sections 1..n, index k-1
    source_current_a: complex  # out of the source's terminal into node 0
    load_current_a: tuple[complex, ...]  # per load, node -> reference, in the order given
    passes: int
    kcl_mismatch_a: float


@dataclass(frozen=True, slots=True)
class Ladder:
    """The fixed part of a radial ladder (source and loads); the sections are given to each solve.

    Made by :func:`ladder`.  ``nodes`` is n + 1 (node 0 and one per section).
    """

    emf_v: complex
    source_impedance_ohm: complex
    nodes: int
    dc: bool
    linear_y: tuple[complex, ...]  # per node, the constant-impedance loads' admittance
    load_node: tuple[int, ...]  # per load
    load_c: tuple[complex, ...]
    load_k: tuple[int, ...]
    load_vg: tuple[float, ...]  # guard voltage (nonlinear loads), 0 for constant impedance
    load_rated_y: tuple[complex, ...]  # the admittance at rated voltage, conj(S0) / V0^2
    valid: bool  # False: a value solve() would refuse; the caller lets solve() say so
    nonlinear: tuple[int, ...]  # the loads that are not constant impedance

    def solve(self, sections: Sequence[complex], options: SolveOptions | None = None,
              start: Sequence[complex] | None = None) -> LadderFlow | None:
        """The ladder with these section impedances; None when the sweep gives no answer (see the module)."""
        options = options or _DEFAULT_OPTIONS
        if not self.valid or len(sections) != self.nodes - 1:
            return None
        if self.dc:
            sections = [complex(z.real, 0.0) for z in sections]
        if not all(math.isfinite(z.real) and math.isfinite(z.imag) and z.real >= 0 for z in sections):
            return None
        n = self.nodes
        nonlinear = self.nonlinear
        laws = [(self.load_node[j], self.load_c[j], self.load_vg[j], self.load_k[j] == 1) for j in nonlinear]
        y = list(self.linear_y)
        if start is None:  # the linear solution with every load at its rated-voltage impedance
            y0 = list(y)
            for j in nonlinear:
                y0[self.load_node[j]] += self.load_rated_y[j]
            v, _, _, _ = self._pass(sections, self._fold(sections, y0), [0j] * n)
        else:
            v = list(start)
        draws = _draws(laws, v)
        folded = self._fold(sections, y)
        limit_abs = SWEEP_MARGIN * options.tolerance_a
        limit_rel = max(SWEEP_MARGIN * options.relative_tolerance, ROUNDING_FLOOR)
        mismatch, lowest, lowest_at = 0.0, math.inf, 0
        for passes in range(1, MAX_PASSES + 1):
            d = [0j] * n
            for (node, _, _, _), i in zip(laws, draws):
                d[node] += i
            v, j_sec, i_src, largest = self._pass(sections, folded, d)
            new_draws = _draws(laws, v)
            change = [0j] * n  # per node: its nonlinear loads' current now, less the one the pass drew
            for (node, _, _, _), new, old in zip(laws, new_draws, draws):
                change[node] += new - old
            mismatch = max(map(abs, change))
            largest = max(largest, max(map(abs, new_draws), default=0.0))
            if not (math.isfinite(mismatch) and math.isfinite(largest)):
                return None
            draws = new_draws
            if mismatch <= max(limit_abs, limit_rel * largest):
                break
            if mismatch < lowest:
                lowest, lowest_at = mismatch, passes
            elif passes - lowest_at >= STALL_PASSES:
                return None  # not contracting: no operating point near, or one the sweep cannot reach
        else:
            return None
        if any(abs(v[node]) < vg for node, _, vg, _ in laws):
            return None  # the general solver decides: an error (the default) or a guarded solution
        drawn = dict(zip(nonlinear, draws))
        currents = tuple(drawn[j] if k != 2 else self.load_c[j] * v[self.load_node[j]]
                         for j, k in enumerate(self.load_k))
        return LadderFlow(tuple(v), tuple(j_sec), i_src, currents, passes, mismatch)

    def _fold(self, sections, y: list[complex]) -> tuple[list[complex], list[complex], complex]:
        """The far end folded into each node for admittances y: A_k, 1 / (1 + Z_k A_k), 1 / (1 + Zs A_0).

        They depend on the sections and the linear loads only, so one fold serves every pass of a solve.
        """
        n = self.nodes
        a, inv = list(y), [0j] * n
        for k in range(n - 1, 0, -1):  # fold node k into node k-1 through section k
            inv[k] = 1.0 / (1.0 + sections[k - 1] * a[k])
            a[k - 1] += a[k] * inv[k]
        return a, inv, 1.0 / (1.0 + self.source_impedance_ohm * a[0])

    def _pass(self, sections, folded, d: list[complex]):
        """One exact solve of the ladder (folded by _fold) with current draws d at the nodes.

        Returns the node voltages, the section currents, the source current and the largest of those currents.
        """
        a, inv, inv_source = folded
        n = self.nodes
        dd = list(d)
        for k in range(n - 1, 0, -1):
            dd[k - 1] += dd[k] * inv[k]
        v0 = (self.emf_v - self.source_impedance_ohm * dd[0]) * inv_source
        i_src = a[0] * v0 + dd[0]
        v, j_sec, largest = [v0], [], abs(i_src)
        for k in range(1, n):
            j = (a[k] * v[-1] + dd[k]) * inv[k]
            j_sec.append(j)
            v.append(v[-1] - sections[k - 1] * j)
            largest = max(largest, abs(j))
        return v, j_sec, i_src, largest


_DEFAULT_OPTIONS = SolveOptions()


def _draws(laws, v: list[complex]) -> list[complex]:
    """Each nonlinear load's current at its node's voltage, the guard applied (loads.load_currents).

    ``laws``: (node, c, guard voltage, constant current?) per load; i = c v / |v| or c v / |v|^2.
    """
    out = []
    for node, c, vg, constant_current in laws:
        vj = v[node]
        r = abs(vj)
        if r < vg:
            r = vg
        out.append(c * vj / r if constant_current else c * vj / (r * r))
    return out


def _finite(*values: float) -> bool:
    return all(isinstance(x, (int, float)) and math.isfinite(x) for x in values)


def ladder(emf_v: float, source_resistance_ohm: float, source_reactance_ohm: float, sections: int,
           loads: Sequence[tuple[int, Load]], frequency_hz: float | None,
           options: SolveOptions | None = None) -> Ladder:
    """A ladder of ``sections`` sections fed by an EMF (phase 0) behind R + jX, with loads at nodes 0..sections.

    The load constants are those expand.py gives solve() for the same Load elements.
    """
    options = options or _DEFAULT_OPTIONS
    dc = not frequency_hz
    guard = float(options.load_guard_voltage_pu)
    valid = _finite(emf_v, source_resistance_ohm, source_reactance_ohm) and source_resistance_ohm >= 0
    if frequency_hz is not None and not (_finite(frequency_hz) and frequency_hz >= 0):
        valid = False  # solve() refuses it (expand._check_frequency)
    if dc:
        valid = valid and source_reactance_ohm >= 0  # solve() refuses a capacitive internal reactance at DC
    nodes = sections + 1
    linear_y = [0j] * nodes
    node_of, cs, ks, vgs, rated = [], [], [], [], []
    for node, load in loads:
        k = _EXPONENT.get(load.model) if isinstance(load.model, str) else None
        p, v0, pf = load.rated_power_w, load.rated_voltage_v, load.power_factor
        ok = k is not None and 0 <= node < nodes and _finite(p, v0, pf) and p > 0 and v0 > 0 and 0 < pf <= 1
        valid = valid and ok
        if not ok:
            k, p, v0, pf, node = 2, 1.0, 1.0, 1.0, 0
        if dc:
            s0 = complex(p, 0.0)
        else:
            q = p * math.tan(math.acos(pf))
            s0 = complex(p, -q if load.leading else q)
        try:  # an extreme rating (5e-324 V squared is 0) has no admittance in floats: the general solver decides
            y_rated = s0.conjugate() / (v0 * v0)
            c = y_rated if k == 2 else s0.conjugate() / v0**k
        except (ZeroDivisionError, OverflowError):
            y_rated = c = 0j
            valid = False
        if not (_finite(y_rated.real, y_rated.imag, c.real, c.imag)):
            y_rated = c = 0j
            valid = False
        node_of.append(node)
        ks.append(k)
        rated.append(y_rated)
        cs.append(c)
        if k == 2:
            vgs.append(0.0)
            linear_y[node] += y_rated
        else:
            vgs.append(guard * v0)
    zs = complex(source_resistance_ohm, 0.0 if dc else source_reactance_ohm)
    nonlinear = tuple(j for j, k in enumerate(ks) if k != 2)
    return Ladder(complex(emf_v, 0.0), zs, nodes, dc, tuple(linear_y), tuple(node_of), tuple(cs), tuple(ks),
                  tuple(vgs), tuple(rated), valid, nonlinear)
