"""solve(): the one entry point of the network solver, and prepare() for repeated solves.

Pipeline: expand (validate, map nodes, reduce to primitives) -> topology
checks -> MNA assembly -> LU solve, or damped Newton when constant-current /
constant-power loads are present -> results, Thevenin equivalents, and
finiteness checks.  Everything is a pure function of its inputs.

The first two steps depend on the network's structure and values only through
validation, so :func:`prepare` does them once and returns a
:class:`PreparedNetwork`; its :meth:`~PreparedNetwork.solve` runs the rest, and
:meth:`~PreparedNetwork.replace` swaps in elements with new values (same type,
same nodes) re-checking only those.  ``solve(net, opts)`` is exactly
``prepare(net, opts).solve()``.

Assembly and factorisation take the dense form for small networks and the
sparse one otherwise (assemble.py); both run this same pipeline.
"""

from __future__ import annotations

import math
import time
from functools import lru_cache

import numpy as np
import scipy.sparse as sp

from . import model as m
from .accuracy import current_rounding, dependent_elements, refine, stamp_norm
from .assemble import DenseStamps, SparseSystem, amax, dense_fits, rhs_vector, system_for
from .errors import (
    ConvergenceError,
    DeadlineExceededError,
    InvalidValueError,
    LoadUndervoltageError,
    NonFiniteResultError,
    ResonanceError,
    SingularNetworkError,
    VoltageCollapseError,
)
from .expand import expand, reduce_some
from .fill import estimated_factor_bytes
from .linear import factor_limits
from .loads import max_transferable_power, upper_operating_voltage
from .newton import port_voltage, solve_nonlinear
from .nodes import NodeTable
from .primitives import Primitives, with_values_of
from .results import Layout, Solution, SolvedState, kcl_residual, kind_classes, power_totals, primitive_values
from .thevenin import equivalents, port_values, source_side_impedances, thevenin_impedances
from .topology import check_topology

# A direct solve leaves KCL residuals around 1e-15 of the largest current; a
# residual above this fraction means the factorisation lost all accuracy
# (numerically singular matrix, e.g. an LC pair tuned almost exactly).
ILL_CONDITIONED = 1e-6
# Above this KCL residual, relative to the largest element current, the answer carries an accuracy warning.
ACCURACY_TOLERANCE = 1e-9


def _check_options(o: m.SolveOptions) -> None:
    bad = []
    if not isinstance(o.max_iterations, int) or o.max_iterations < 1:
        bad.append("max_iterations must be an integer >= 1")
    for name in ("tolerance_a", "relative_tolerance"):
        v = getattr(o, name)
        if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
            bad.append(f"{name} must be a finite number > 0")
    g = o.load_guard_voltage_pu
    if not (isinstance(g, (int, float)) and 0 < g <= 1):
        bad.append("load_guard_voltage_pu must be in (0, 1]")
    if o.on_load_undervoltage not in ("error", "constant_impedance"):
        bad.append('on_load_undervoltage must be "error" or "constant_impedance"')
    d = o.deadline_s
    if d is not None and not (isinstance(d, (int, float)) and not isinstance(d, bool) and math.isfinite(d) and d >= 0):
        bad.append("deadline_s must be None or a finite number of seconds >= 0")
    r = o.impedance_form_ratio
    if not (isinstance(r, (int, float)) and not isinstance(r, bool) and math.isfinite(r) and 0 <= r < 1):
        bad.append("impedance_form_ratio must be a finite number in [0, 1)")
    f = o.factor_max_bytes
    if f is not None and not (isinstance(f, (int, float)) and not isinstance(f, bool) and math.isfinite(f) and f > 0):
        bad.append("factor_max_bytes must be None or a finite number of bytes > 0")
    if bad:
        raise InvalidValueError("; ".join(bad), how_to_fix="correct the solver options")


def solve(network: m.Network, options: m.SolveOptions | None = None) -> Solution:
    """Solve a network; raises a NetworkError subclass when it has no answer.

    Floating-point warnings are silenced inside: extreme but valid inputs
    (5e-324 V, 1e300 ohm) overflow on the way, and every result is checked for
    finiteness before it is returned, so an unusable answer is a
    NonFiniteResultError or SingularNetworkError, never a stray warning.
    """
    started = time.monotonic()
    options = options or m.SolveOptions()
    with np.errstate(divide="ignore", over="ignore", under="ignore", invalid="ignore"), \
            factor_limits(options.factor_max_bytes, _deadline(options, started)):  # options checked by _prepare
        return _prepare(network, options)._solve_from(started)


def _deadline(options: m.SolveOptions, started: float) -> float | None:
    d = options.deadline_s
    return started + d if isinstance(d, (int, float)) and not isinstance(d, bool) and math.isfinite(d) else None


def prepare(network: m.Network, options: m.SolveOptions | None = None) -> PreparedNetwork:
    """Validate a network and check its topology once, for one or more solves.

    Raises what solve() raises before any matrix is factorised (invalid
    values or nodes, floating parts, source loops, bad options).
    """
    with np.errstate(divide="ignore", over="ignore", under="ignore", invalid="ignore"):
        return _prepare(network, options or m.SolveOptions())


class _Structure:
    """What every PreparedNetwork of one structure shares: all that depends on the topology only."""

    __slots__ = ("table", "positions", "ids", "pairs", "layout", "stamps")

    def __init__(self, prims: Primitives, table: NodeTable, positions, ids, pairs, kinds) -> None:
        self.table = table
        self.positions = positions
        self.ids = ids
        self.pairs = pairs
        self.layout = Layout(prims, kinds)
        self.stamps = DenseStamps(prims) if dense_fits(prims) else None


class PreparedNetwork:
    """A validated network whose structure is checked; solve it, or replace elements and solve again.

    Made by :func:`prepare`.  Immutable: :meth:`replace` returns a new one.
    """

    __slots__ = ("network", "options", "_prims", "_s", "_system")

    def __init__(self, network: m.Network, options: m.SolveOptions, prims: Primitives, structure: _Structure,
                 system=None) -> None:
        self.network = network
        self.options = options
        self._prims = prims
        self._s = structure
        self._system = system  # the assembled system, kept once built (the sparse one is built for topology)

    def solve(self) -> Solution:
        """The same Solution (or error) as solve(self.network, self.options), held to the same limits."""
        started = time.monotonic()
        with np.errstate(divide="ignore", over="ignore", under="ignore", invalid="ignore"), \
                factor_limits(self.options.factor_max_bytes, _deadline(self.options, started)):
            return self._solve_from(started)

    def estimated_factor_bytes(self) -> int | None:
        """fill.estimated_factor_bytes of this network's sparse matrix, before any factorisation; None when the
        network is small enough to be solved densely (its dense matrix is bounded by assemble.DENSE_MAX)."""
        if self._s.stamps is not None:
            return None
        if self._system is None:
            self._system = system_for(self._prims, self._s.stamps)
        prims = self._prims
        newton_real_form = prims.dtype is np.complex128 and prims.nl_a.size > 0
        return estimated_factor_bytes(self._system.matrix, real_form=newton_real_form)

    def replace(self, *elements: m.Element) -> PreparedNetwork:
        """This network with elements swapped for new ones of the same id.

        A replacement of the same type on the same nodes only has its values
        checked again (the same checks and errors as solve()); the topology
        checks and the node and stamp layout are reused.  Anything else (new
        type or nodes, a resistance becoming exactly 0, a switch opening, a
        load changing between linear and nonlinear models, any ResistorArray)
        prepares the new network from scratch, so the result is always that of
        solve() on the new network.  Raises KeyError for an id that is not in
        the network.
        """
        with np.errstate(divide="ignore", over="ignore", under="ignore", invalid="ignore"):
            return self._replace(elements)

    def _replace(self, elements) -> PreparedNetwork:
        s, old = self._s, self.network.elements
        new = list(old)
        changed: dict[int, None] = {}
        same = True
        for e in elements:
            pos = s.positions.get(getattr(e, "id", None))
            if pos is None:
                raise KeyError(f"no element {getattr(e, 'id', None)!r} in this network")
            was = old[pos]
            same = same and type(e) is type(was) and not isinstance(e, m.ResistorArray) and all(
                getattr(e, t) == getattr(was, t) for t in was.terminals)
            new[pos] = e
            changed[pos] = None
        network = m.Network(elements=tuple(new), frequency_hz=self.network.frequency_hz,
                            reference_node=self.network.reference_node)
        if same and changed:
            owners = np.fromiter(changed, dtype=np.int64, count=len(changed))
            guard = float(self.options.load_guard_voltage_pu)
            sub = reduce_some(network, owners.tolist(), s.table, s.positions, guard,
                              float(self.options.impedance_form_ratio), self._prims.impedance_scale)
            prims = with_values_of(self._prims, sub, owners)
            if prims is not None:
                return PreparedNetwork(network, self.options, prims, s)
        elif same:
            return self
        return _prepare(network, self.options)

    def _solve_from(self, started: float) -> Solution:
        system = self._system
        if system is None:
            system = self._system = system_for(self._prims, self._s.stamps)
        return _run(self, system, started)


def _prepare(network: m.Network, options: m.SolveOptions) -> PreparedNetwork:
    _check_options(options)
    prims, table, positions = expand(network, float(options.load_guard_voltage_pu), float(options.impedance_form_ratio))
    ids = [e.id for e in network.elements]
    structure_system = None
    if dense_fits(prims):
        check_topology(prims, table, ids, positions)
    else:  # the topology check reads the sparse pattern; keep the system for the first solve
        structure_system = SparseSystem(prims)
        check_topology(prims, table, ids, positions, structure_system.matrix)
    pairs = [(table.index(a), table.index(b)) for a, b in options.thevenin_between]
    structure = _Structure(prims, table, positions, ids, pairs, kind_classes(network.elements))
    return PreparedNetwork(network, options, prims, structure, structure_system)


def _finite_magnitude(a: np.ndarray) -> bool:
    """Every |a| is finite (NaN and inf fail; so does a finite complex value whose magnitude overflows)."""
    return math.isfinite(amax(np.abs(a)))


def _run(prep: PreparedNetwork, system, started: float) -> Solution:
    network, options, prims, s = prep.network, prep.options, prep._prims, prep._s
    ids, positions, table, pairs = s.ids, s.positions, s.table, s.pairs
    size = prims.n + prims.m
    rhs = rhs_vector(prims)
    factor = None
    guarded = np.zeros(prims.nl_a.size, dtype=bool)
    if prims.nl_a.size == 0:
        try:
            factor = system.factor(system.matrix)
        except SingularNetworkError as exc:
            raise _explained_singularity(prims, system, ids, positions, table, exc.detail) from None
        x = factor.solve(rhs)
        nl_current = np.zeros(0, dtype=prims.dtype)
        solves, converged, mismatch = 1, True, None
    else:
        deadline = None if options.deadline_s is None else started + options.deadline_s
        nr = solve_nonlinear(
            prims, system, rhs, options.max_iterations, options.tolerance_a, options.relative_tolerance, deadline
        )
        x, nl_current, guarded = nr.x, nr.load_current, nr.guarded
        solves, converged, mismatch = nr.solves, nr.converged, nr.mismatch_a
        if nr.out_of_time:
            _raise_out_of_time(prims, nr, ids, positions, options.deadline_s, time.monotonic() - started)
        if not converged or (guarded.any() and options.on_load_undervoltage == "error"):
            _raise_load_failure(prims, system, rhs, nr, ids, positions, table)
    if not math.isfinite(amax(np.abs(x))):
        raise NonFiniteResultError(
            "the network equations have no finite solution in double precision",
            how_to_fix="check for extreme element values (e.g. 1e-300 ohm or 1e300 V), ideal elements "
            "in conflict or an exact LC resonance",
        )

    if factor is not None and _may_cancel(prims):
        _check_conditioning(factor, prims, size, ids, positions, table)
    if factor is not None:
        x = refine(factor, system.matrix, rhs, x)
    layout = s.layout
    volts, amps = primitive_values(prims, layout, x, nl_current)
    if not (_finite_magnitude(volts) and _finite_magnitude(amps)):
        raise NonFiniteResultError(
            "element currents overflow double precision",
            how_to_fix="check for extreme element values (e.g. 1e-300 ohm or 1e300 V)",
        )
    kcl = kcl_residual(layout, amps)
    ax = np.abs(x)
    scale = max(
        amax(np.abs(prims.adm_y)) * amax(ax[: prims.n]),
        amax(ax[prims.n:]),
        amax(np.abs(prims.inj_j)),
        1e-30,
    )
    if kcl > ILL_CONDITIONED * scale + options.tolerance_a * 10:
        raise SingularNetworkError(
            f"the network equations are numerically singular (KCL residual {kcl:.3g} A after the solve)",
            how_to_fix="look for an LC pair in near-exact resonance or values spanning too many "
            "orders of magnitude",
        )
    current_scale = max(amax(np.abs(amps[: layout.live])), 1e-300)
    relative_kcl = kcl / current_scale
    warnings = []
    if relative_kcl > ACCURACY_TOLERANCE and kcl > options.tolerance_a:
        warnings.append(f"accuracy: the largest KCL residual is {kcl:.3g} A, {relative_kcl:.2g} of the largest "
                        f"element current (above the stated tolerance {ACCURACY_TOLERANCE:g}); values spanning many "
                        "orders of magnitude limit the digits that can be trusted")
    spread = current_rounding(prims, x) / current_scale
    if spread > ACCURACY_TOLERANCE:
        warnings.append(f"accuracy: the current through an element with a small impedance between two high node "
                        f"voltages is known only to about {spread:.2g} of the largest element current (its node "
                        f"voltages' own rounding, amplified; above the stated tolerance {ACCURACY_TOLERANCE:g})")
    totals, balance, powers = power_totals(prims, layout, volts, amps)

    thevenin = ()
    if pairs:
        if factor is None:  # nonlinear loads: use their operating-point impedance
            factor = system.factor(system.with_admittance(_operating_point_admittance(prims, x, nl_current)),
                                   overwrite=True)
        zth = thevenin_impedances(factor, size, pairs, prims.dtype)
        voc = port_values(x, pairs)
        loads = np.array([isinstance(e, m.Load) for e in network.elements], dtype=bool)
        # Without load elements the source-side loop is the Thevenin impedance itself: no second solve.
        source = source_side_impedances(prims, loads, pairs) if loads.any() else [complex(z) for z in zth]
        thevenin = equivalents(options.thevenin_between, voc, zth, source)

    numbers = [kcl, balance, mismatch if mismatch is not None else 0.0, *vars_of(totals)]
    for t in thevenin:
        numbers += [t.resistance_ohm, t.reactance_ohm, t.open_circuit_voltage.magnitude]
        if t.source_side is not None:
            numbers += [t.source_side.real, t.source_side.imag]
    if not (all(math.isfinite(v) for v in numbers) and _finite_magnitude(nl_current) and _finite_magnitude(powers)):
        raise NonFiniteResultError(
            "the solution contains non-finite values",
            how_to_fix="check for extreme element values (e.g. 1e-300 ohm or 1e300 V)",
        )
    guarded_ids = tuple(ids[o] for o in prims.nl_owner[guarded])
    state = SolvedState(network, prims, table, x, layout.split(volts), layout.split(amps), positions, guarded)
    return Solution(
        frequency_hz=float(network.frequency_hz or 0.0),
        reference_node=network.reference_node,
        node_count=prims.n,
        converged=converged,
        iterations=solves,
        final_mismatch_a=kcl if mismatch is None else mismatch,
        max_kcl_residual_a=kcl,
        power_balance_residual_va=balance,
        totals=totals,
        thevenin=thevenin,
        guarded_loads=guarded_ids,
        _state=state,
        assumptions=_impedance_form_note(prims, ids, options),
        warnings=tuple(warnings),
        relative_kcl_residual=float(relative_kcl),
        relative_current_rounding=float(spread),
    )


# cond(A) above this leaves fewer than ~3 correct digits in double precision.
COND_LIMIT = 1e13


def _may_cancel(prims: Primitives) -> bool:
    """True when inductive and capacitive parts coexist, so admittances can cancel.

    Without both signs of reactance, every admittance has Re >= 0 and the same
    sign of Im, and a connected network (checked by topology.py) gives a
    nonsingular matrix; an L and a C tuned to resonance can make it exactly
    singular, which SuperLU does not always notice (a pivot of 1e-17 instead
    of 0, producing currents of 1e16 A).
    """
    if prims.dtype is not np.complex128:
        return False
    im = np.concatenate([prims.adm_y.imag, -prims.br_z.imag])
    return bool(np.count_nonzero(im > 0) and np.count_nonzero(im < 0))


@lru_cache(maxsize=64)
def _probe(size: int, dtype) -> np.ndarray:
    r = np.random.default_rng(12345).standard_normal(size).astype(dtype)
    r.flags.writeable = False
    return r


def _check_conditioning(factor, prims: Primitives, size: int, ids, positions, table) -> None:
    """Lower bound on ||A^-1|| ||M|| (M: the stamp magnitudes, see accuracy.py) from one probe solve.

    ||A^-1 r|| / ||r|| <= ||A^-1||, so a large ratio proves near-singularity;
    a random r has a component along the near-null direction with probability
    one, so an exact resonance is not missed.  Measuring against the stamps'
    magnitudes rather than the assembled matrix catches an inductor and a
    capacitor that cancel to rounding residue even when that residue is all the
    matrix holds.  Costs one triangular solve.
    """
    r = _probe(size, prims.dtype)
    z = factor.solve(r)
    bound = float(np.max(np.abs(z))) / float(np.max(np.abs(r))) * stamp_norm(prims)
    if not math.isfinite(bound) or bound > COND_LIMIT:
        raise _resonance(prims, z, ids, positions, table, bound)


def _resonance(prims: Primitives, z: np.ndarray, ids, positions, table, bound: float) -> SingularNetworkError:
    involved, nodes = dependent_elements(prims, np.where(np.isfinite(z), z, 0.0), ids)
    shown = ", ".join(repr(i) for i in involved[:10]) or "(not identified)"
    return ResonanceError(
        f"resonant at this frequency: no steady state. The impedances of {shown} cancel (to rounding) at the "
        f"network's frequency, so the equations have no unique solution (||A^-1|| ||M|| >= {bound:.2g})",
        how_to_fix="add the resistance the real components have, or solve at another frequency",
        element_ids=involved, node_names=[table.name(k) for k in nodes[:10]], element_positions=positions,
    )


def _explained_singularity(prims: Primitives, system, ids, positions, table, reason: str) -> SingularNetworkError:
    """The singular system's dependent elements, from a regularised solve whose answer is its null direction."""
    size = prims.n + prims.m
    sigma = 1e-9 * max(stamp_norm(prims), 1e-300)
    shifted = system.matrix + sigma * (np.eye(size) if system.dense else sp.identity(size, format="csc"))
    try:
        z = system.factor(shifted).solve(_probe(size, prims.dtype))
    except SingularNetworkError:
        z = np.zeros(size, dtype=prims.dtype)
    involved, nodes = dependent_elements(prims, np.where(np.isfinite(z), z, 0.0), ids)
    if _may_cancel(prims):
        return _resonance(prims, z, ids, positions, table, math.inf)
    shown = ", ".join(repr(i) for i in involved[:10])
    return SingularNetworkError(
        reason + (f"; the dependent set: {shown}" if shown else ""),
        how_to_fix="look for parts whose voltage or current is not determined, e.g. an inductor and capacitor "
        "exactly in resonance, or ideal elements in conflict",
        element_ids=involved, node_names=[table.name(k) for k in nodes[:10]], element_positions=positions,
    )


def _impedance_form_note(prims: Primitives, ids, options: m.SolveOptions) -> tuple[str, ...]:
    if not prims.impedance_form:
        return ()
    shown = ", ".join(repr(ids[i]) for i in prims.impedance_form[:10])
    more = len(prims.impedance_form) - 10
    return (f"Impedances below {options.impedance_form_ratio:g} of the network's median impedance "
            f"({prims.impedance_scale:.3g} ohm) were solved with their current as an unknown (impedance form), "
            f"not as an admittance, so their currents stay exact: {shown}" + (f" and {more} more" if more > 0 else "")
            + ".",)


def vars_of(totals) -> list[float]:
    return [getattr(totals, f) for f in totals.__slots__]


def _operating_point_admittance(prims: Primitives, x, nl_current) -> np.ndarray:
    v = port_voltage(x, prims.nl_a, prims.nl_b)
    at_guard = prims.nl_c * prims.nl_vg ** (prims.nl_k - 2.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        y = np.where(np.abs(v) > 0, nl_current / np.where(v == 0, 1, v), at_guard)
    return y.astype(prims.dtype) if prims.dtype is np.complex128 else y.real


def _raise_out_of_time(prims: Primitives, nr, ids, positions, deadline_s: float, elapsed_s: float) -> None:
    loads = [ids[o] for o in prims.nl_owner]
    raise DeadlineExceededError(
        f"the load-flow iteration was stopped after {nr.solves - 1} Newton step(s): its time budget of "
        f"{deadline_s:g} s (deadline_s) ran out before it converged (largest KCL mismatch {nr.mismatch_a:.3g} A)",
        how_to_fix="allow more time (a larger deadline_s, or none), or solve a smaller network",
        element_ids=loads,
        element_positions=positions,
        data={"iterations": nr.solves, "mismatch_a": nr.mismatch_a, "deadline_s": deadline_s,
              "elapsed_s": elapsed_s},
    )


def _raise_load_failure(prims: Primitives, system, rhs, nr, ids, positions, table) -> None:
    """Explain a failed nonlinear solve with each load's Thevenin maximum power.

    Every nonlinear load is frozen at the impedance it has at the last
    iterate; for load l the network seen by it (all the others frozen, l
    removed) is a Thevenin source: with Z_in the impedance seen at l's
    terminals with l still in place (one extra solve with the factorised
    matrix), removing l's admittance y_l gives Zth = 1 / (1/Z_in - y_l), and
    l's voltage v_l = Vth / (1 + Zth y_l) gives Vth.  The maximum transfer is
    then exact for a single nonlinear load and a first-order estimate when
    several interact.
    """
    size = prims.n + prims.m
    y = _operating_point_admittance(prims, nr.x, nr.load_current)
    factor = system.factor(system.with_admittance(y), overwrite=True)
    x_op = factor.solve(rhs)
    pairs = list(zip(prims.nl_a.tolist(), prims.nl_b.tolist()))
    z_in = thevenin_impedances(factor, size, pairs, prims.dtype)
    v_l = port_values(x_op, pairs)
    y = y.astype(np.complex128)
    with np.errstate(divide="ignore", invalid="ignore"):
        zth = 1.0 / (1.0 / z_in - y)
    vth = v_l * (1.0 + zth * y)
    s0 = prims.nl_s0.astype(np.complex128)
    records, collapse = [], []
    for j in range(len(pairs)):
        phi = float(np.angle(s0[j])) if s0[j] != 0 else 0.0
        smax = max_transferable_power(complex(vth[j]), complex(zth[j]), phi)
        rec = {
            "element": ids[prims.nl_owner[j]],
            "model": "constant_power" if prims.nl_k[j] == 0 else "constant_current",
            "rated_power_w": float(s0[j].real),
            "rated_apparent_power_va": float(abs(s0[j])),
            "max_power_w": smax * math.cos(phi) if math.isfinite(smax) else None,
            "max_apparent_power_va": smax if math.isfinite(smax) else None,
            "iterate_voltage_pu": float(abs(v_l[j]) / prims.nl_v0[j]),
            "operating_voltage_pu": None,
            "thevenin_voltage_v": float(abs(vth[j])) if np.isfinite(vth[j]) else None,
        }
        if prims.nl_k[j] == 0 and np.isfinite(vth[j]) and np.isfinite(zth[j]):
            v_up = upper_operating_voltage(complex(vth[j]), complex(zth[j]), complex(s0[j]))
            rec["operating_voltage_pu"] = None if v_up is None else v_up / float(prims.nl_v0[j])
        records.append(rec)
        if prims.nl_k[j] == 0 and abs(s0[j]) > smax * (1 + 1e-9):
            collapse.append(rec)
    if collapse:
        shown = "; ".join(
            f"{r['element']} asks {r['rated_power_w']:.6g} W, at most {r['max_power_w']:.6g} W can be delivered"
            for r in collapse[:5]
        )
        raise VoltageCollapseError(
            f"constant-power load(s) ask for more power than the network can transfer: {shown}",
            how_to_fix="reduce those loads, shorten or enlarge the supply path (lower impedance), "
            "or raise the source voltage",
            element_ids=[r["element"] for r in collapse],
            element_positions=positions,
            data={"loads": collapse, "iterations": nr.solves},
        )
    if not nr.converged:
        raise ConvergenceError(
            f"the load-flow iteration did not converge in {nr.solves - 1} Newton steps "
            f"(largest KCL mismatch {nr.mismatch_a:.3g} A)",
            how_to_fix="check for loads close to the network's transfer limit, or raise max_iterations",
            element_ids=[r["element"] for r in records],
            element_positions=positions,
            data={"loads": records, "iterations": nr.solves, "mismatch_a": nr.mismatch_a},
        )
    low = [r for r, g in zip(records, nr.guarded) if g]
    shown = "; ".join(
        f"{r['element']} at {r['operating_voltage_pu'] or r['iterate_voltage_pu']:.3g} pu" for r in low[:5]
    )
    raise LoadUndervoltageError(
        f"load(s) would operate below the guard voltage, where constant-power/current behaviour is "
        f"not credible: {shown}",
        how_to_fix="strengthen the supply to those loads, or solve with on_load_undervoltage="
        '"constant_impedance" to see the network with them modelled as impedances',
        element_ids=[r["element"] for r in low],
        element_positions=positions,
        data={"loads": low},
    )
