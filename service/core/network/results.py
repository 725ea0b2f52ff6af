"""Result records (frozen dataclasses of plain floats) and the Solution object.

Per-node and per-element records are built on demand from the solved arrays:
a 1M-node solution keeps a few numpy arrays, not millions of Python objects,
and the HTTP layer asks for the records it serialises.  Powers follow the
passive sign convention: p_w / q_var are *absorbed* by the element
(S = V * conj(I) with RMS phasors, V = v_a - v_b, I from a to b through the
element); sources also report ``supplied_w`` / ``supplied_var`` = -absorbed.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Union

import numpy as np

from . import model as m
from .assemble import amax
from .nodes import NodeTable
from .primitives import ADMITTANCE, BRANCH, INJECTION, NONLINEAR, OPEN, Primitives

SOURCE_KINDS = ("voltage_source", "current_source", "three_phase_supply")


@dataclass(frozen=True, slots=True)
class Phasor:
    """A complex quantity as real/imag and magnitude/angle (degrees); DC: imag = 0."""

    real: float
    imag: float
    magnitude: float
    angle_deg: float

    @classmethod
    def of(cls, z: complex) -> Phasor:
        # math.hypot and math.atan2 are what abs() and cmath.phase() compute, minus their range errors:
        # cmath.phase raises on an angle that underflows (1e6 - 5e-324j) and abs() on a magnitude that
        # overflows, where these return -0.0 and inf (solve() refuses non-finite magnitudes beforehand).
        z = complex(z)
        re, im = z.real, z.imag
        return cls(re, im, math.hypot(re, im), math.degrees(math.atan2(im, re)) if z != 0 else 0.0)

    @property
    def value(self) -> complex:
        return complex(self.real, self.imag)


@dataclass(frozen=True, slots=True)
class NodeVoltage:
    node: str
    voltage: Phasor


def _pf(p: float, q: float) -> tuple[float | None, str | None]:
    s = math.hypot(p, q)
    if s == 0.0:
        return None, None
    sense = "unity" if abs(q) <= 1e-12 * s else ("lagging" if q > 0 else "leading")
    return abs(p) / s, sense


@dataclass(frozen=True, slots=True)
class ElementResult:
    """A two-terminal element.  power_factor is |P|/|S| (None when S == 0);
    power_factor_sense is "lagging" when the element absorbs reactive power."""

    id: str
    kind: str
    a: str
    b: str
    voltage: Phasor
    current: Phasor
    p_w: float
    q_var: float
    s_va: float
    power_factor: float | None
    power_factor_sense: str | None
    supplied_w: float | None = None  # sources only: power delivered at the terminals
    supplied_var: float | None = None
    internal_loss_w: float | None = None  # voltage sources with internal resistance
    load_model: str | None = None
    rated_power_fraction: float | None = None  # loads: P drawn / rated P
    below_guard_voltage: bool = False


@dataclass(frozen=True, slots=True)
class SupplyPhaseResult:
    line: str  # "L1", "L2" or "L3"
    node: str
    line_current: Phasor  # out of the supply's line terminal into the network
    voltage_to_neutral: Phasor  # terminal voltage, line node minus neutral node
    supplied_w: float
    supplied_var: float


@dataclass(frozen=True, slots=True)
class LineToLineVoltage:
    lines: str  # "L1-L2", "L2-L3", "L3-L1"
    voltage: Phasor


@dataclass(frozen=True, slots=True)
class ThreePhaseSupplyResult:
    id: str
    kind: str
    phases: tuple[SupplyPhaseResult, SupplyPhaseResult, SupplyPhaseResult]
    line_to_line_voltages: tuple[LineToLineVoltage, LineToLineVoltage, LineToLineVoltage]
    neutral_current: Phasor  # returning from the network into the supply's neutral = I1 + I2 + I3
    supplied_w: float
    supplied_var: float
    s_va: float
    power_factor: float | None
    power_factor_sense: str | None  # of the power delivered ("lagging" = network absorbs var)
    internal_loss_w: float


@dataclass(frozen=True, slots=True)
class ArrayElementResult:
    """Summary of an array element; per-branch arrays via Solution.array_values(id)."""

    id: str
    kind: str
    count: int
    p_w: float
    q_var: float
    max_current_a: float


@dataclass(frozen=True, slots=True, eq=False)
class ArrayValues:
    voltage: np.ndarray  # complex (real at DC), v_a - v_b
    current: np.ndarray  # a -> b
    p_w: np.ndarray
    q_var: np.ndarray


AnyElementResult = Union[ElementResult, ThreePhaseSupplyResult, ArrayElementResult]


@dataclass(frozen=True, slots=True)
class PowerTotals:
    supplied_w: float  # by all sources, at their terminals
    supplied_var: float
    consumed_by_loads_w: float
    consumed_by_loads_var: float
    conductor_loss_w: float  # resistors, impedances, cable runs: the I^2 R losses
    cable_loss_w: float  # the part of conductor_loss_w that is in CableRun elements
    network_reactive_var: float  # absorbed by inductive/capacitive network elements
    source_internal_loss_w: float  # in sources' internal resistance (not in supplied_w)


@dataclass(frozen=True, slots=True)
class TheveninEquivalent:
    """The solved network seen between nodes a and b: Voc (= v_a - v_b) behind Z.

    Z is the Thevenin impedance with every load connected: the loads are in parallel with the source path, so Z
    is lower than the loop a fault current takes from the source.  ``source_side`` is that loop: the impedance
    between a and b with every ``load`` element disconnected (None when a or b then has no path to the
    reference node), the value to compare with a maximum Zs.
    """

    a: str
    b: str
    open_circuit_voltage: Phasor
    resistance_ohm: float
    reactance_ohm: float
    impedance_ohm: float  # |Z|
    short_circuit_current: Phasor | None  # Voc / Z, a -> b through the short; None if Z == 0
    source_side: complex | None = None


class SolvedState:
    """Arrays behind a Solution (internal; not part of the public API)."""

    __slots__ = ("network", "prims", "table", "x", "volts", "amps", "positions", "guarded")

    def __init__(self, network, prims: Primitives, table: NodeTable, x, volts, amps, positions, guarded):
        self.network = network
        self.prims = prims
        self.table = table
        self.x = x
        self.volts = volts  # per primitive category: V across
        self.amps = amps  # per primitive category: I a -> b
        self.positions = positions
        self.guarded = guarded  # bool per NONLINEAR primitive

    def node_v(self, index: int) -> complex:
        return 0.0 if index < 0 else complex(self.x[index])


@dataclass(frozen=True, slots=True, eq=False)
class Solution:
    frequency_hz: float  # 0 for DC
    reference_node: str
    node_count: int  # excluding the reference node
    converged: bool
    iterations: int  # linear solves done: 1 for a linear network, 1 + Newton steps otherwise
    final_mismatch_a: float  # largest KCL mismatch of the final Newton iterate (linear: = max KCL residual)
    max_kcl_residual_a: float  # recomputed from element currents, independent of the matrix
    power_balance_residual_va: float  # |S supplied - S loads - S network|
    totals: PowerTotals
    thevenin: tuple[TheveninEquivalent, ...]
    guarded_loads: tuple[str, ...]  # loads left below the guard voltage (option "constant_impedance")
    _state: SolvedState
    # What the solve assumed or did beyond the elements as given (impedance form), and what the caller should know
    # about the answer's accuracy (a residual above the stated tolerance).
    assumptions: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()
    relative_kcl_residual: float = 0.0  # max KCL residual / largest element current
    # The rounding a current through an admittance inherits from its node voltages, |y| (|v_a| + |v_b|) x a few ulps,
    # at its largest, over the largest element current: what no solve can remove (accuracy.current_rounding).
    relative_current_rounding: float = 0.0

    # -- nodes -----------------------------------------------------------
    def voltage(self, node: str) -> NodeVoltage:
        return NodeVoltage(node, Phasor.of(self._state.node_v(self._state.table.index(node))))

    def voltage_between(self, a: str, b: str) -> Phasor:
        t = self._state.table
        return Phasor.of(self._state.node_v(t.index(a)) - self._state.node_v(t.index(b)))

    def node_names(self) -> list[str]:
        """Non-reference node names in the order of voltage_array()."""
        return self._state.table.names()

    def voltage_array(self) -> np.ndarray:
        """Node voltages (complex for AC, float for DC) in node_names() order; read-only."""
        v = self._state.x[: self.node_count].view()
        v.flags.writeable = False
        return v

    def node_voltages(self) -> tuple[NodeVoltage, ...]:
        x = self._state.x
        return tuple(NodeVoltage(nm, Phasor.of(x[i])) for i, nm in enumerate(self.node_names()))

    # -- elements --------------------------------------------------------
    def element(self, element_id: str) -> AnyElementResult:
        try:
            pos = self._state.positions[element_id]
        except KeyError:
            raise KeyError(f"no element {element_id!r} in this network") from None
        return _element_result(self._state, pos)

    def element_results(self) -> tuple[AnyElementResult, ...]:
        return tuple(_element_result(self._state, i) for i in range(len(self._state.network.elements)))

    def array_values(self, element_id: str) -> ArrayValues:
        st = self._state
        pos = st.positions[element_id]
        s, e = int(st.prims.elem_start[pos]), int(st.prims.elem_stop[pos])
        v, i = st.volts[ADMITTANCE][s:e], st.amps[ADMITTANCE][s:e]
        sv = v * np.conj(i)
        return ArrayValues(v, i, sv.real.copy(), sv.imag.copy())


def _element_result(st: SolvedState, pos: int) -> AnyElementResult:
    el = st.network.elements[pos]
    p = st.prims
    cat, s, e = int(p.elem_cat[pos]), int(p.elem_start[pos]), int(p.elem_stop[pos])
    if isinstance(el, m.ResistorArray):
        v, i = st.volts[cat][s:e], st.amps[cat][s:e]
        sv = v * np.conj(i)
        return ArrayElementResult(el.id, el.kind, e - s, float(sv.real.sum()), float(sv.imag.sum()),
                                  float(np.abs(i).max(initial=0.0)))
    if isinstance(el, m.ThreePhaseSupply):
        return _three_phase_result(st, el, s)
    v = complex(st.volts[cat][s])
    i = complex(st.amps[cat][s]) if cat != OPEN else 0j
    sc = v * i.conjugate()
    pf, sense = _pf(sc.real, sc.imag)
    a_name, b_name = (getattr(el, t) for t in el.terminals)
    extra: dict = {}
    if el.kind in SOURCE_KINDS:
        extra["supplied_w"], extra["supplied_var"] = -sc.real, -sc.imag
        if isinstance(el, m.VoltageSource):
            extra["internal_loss_w"] = _squared(i) * float(p.br_z[s].real)
    elif isinstance(el, m.Load):
        extra["load_model"] = el.model
        extra["rated_power_fraction"] = sc.real / el.rated_power_w
        if cat == NONLINEAR:
            extra["below_guard_voltage"] = bool(st.guarded[s])
    return ElementResult(el.id, el.kind, a_name, b_name, Phasor.of(v), Phasor.of(i), sc.real, sc.imag,
                         math.hypot(sc.real, sc.imag), pf, sense, **extra)


def _squared(z: complex) -> float:
    """abs(z) ** 2 without Python's OverflowError (abs() and ** raise where * gives inf)."""
    h = math.hypot(z.real, z.imag)
    return h * h


def _three_phase_result(st: SolvedState, el: m.ThreePhaseSupply, s: int) -> ThreePhaseSupplyResult:
    p = st.prims
    nodes = (el.l1, el.l2, el.l3)
    idx = [st.table.index(nm) for nm in nodes]
    vn = st.node_v(st.table.index(el.neutral))
    phases, total, loss, i_sum = [], 0j, 0.0, 0j
    for k in range(3):
        i_line = -complex(st.amps[BRANCH][s + k])  # branch current runs neutral -> line inside
        v_ph = st.node_v(idx[k]) - vn
        sup = v_ph * i_line.conjugate()
        total += sup
        loss += _squared(i_line) * float(p.br_z[s + k].real)
        i_sum += i_line
        phases.append(SupplyPhaseResult(f"L{k + 1}", nodes[k], Phasor.of(i_line), Phasor.of(v_ph), sup.real, sup.imag))
    vll = tuple(
        LineToLineVoltage(f"L{k + 1}-L{(k + 1) % 3 + 1}", Phasor.of(st.node_v(idx[k]) - st.node_v(idx[(k + 1) % 3])))
        for k in range(3)
    )
    pf, sense = _pf(total.real, total.imag)
    return ThreePhaseSupplyResult(el.id, el.kind, tuple(phases), vll, Phasor.of(i_sum), total.real, total.imag,
                                  math.hypot(total.real, total.imag), pf, sense, loss)


CATEGORIES = (ADMITTANCE, BRANCH, INJECTION, NONLINEAR, OPEN)


class Layout:
    """Every primitive in one array, kind after kind; depends on the structure only.

    Voltages, currents, KCL sums and power totals are then a handful of numpy
    calls on whole arrays instead of a few per primitive kind: that is most of
    what result extraction costs on a small network.  The reference node (-1)
    reads as the extra entry n of the extended voltage vector, and collects
    KCL sums in an extra bin n that is dropped.
    """

    __slots__ = ("n", "a", "b", "bounds", "live", "kcl_index", "classes", "source_branch")

    def __init__(self, p: Primitives, kinds: np.ndarray) -> None:
        n = p.n
        ends = [p.adm_a, p.br_a, p.inj_a, p.nl_a, p.open_a]
        self.n = n
        self.a = np.concatenate(ends)
        self.b = np.concatenate([p.adm_b, p.br_b, p.inj_b, p.nl_b, p.open_b])
        stops = np.cumsum([e.size for e in ends]).tolist()
        self.bounds = dict(zip(CATEGORIES, zip([0, *stops[:-1]], stops)))
        self.live = self.bounds[OPEN][0]  # open elements carry no current
        a, b = self.a[: self.live], self.b[: self.live]
        self.kcl_index = np.concatenate([np.where(a < 0, n, a), np.where(b < 0, n, b)])
        owners = np.concatenate([p.adm_owner, p.br_owner, p.inj_owner, p.nl_owner])
        self.classes = kinds[owners].astype(np.int64)
        self.source_branch = np.flatnonzero(kinds[p.br_owner] == 0)

    def split(self, values: np.ndarray) -> dict[int, np.ndarray]:
        """Views of a per-primitive array, per primitive kind."""
        return {cat: values[s:e] for cat, (s, e) in self.bounds.items()}


def primitive_values(p: Primitives, layout: Layout, x: np.ndarray, nl_current: np.ndarray):
    """V across and I through every primitive: (all voltages, all currents), in Layout order."""
    n = p.n
    xe = np.empty(n + 1, dtype=p.dtype)
    xe[:n] = x[:n]
    xe[n] = 0.0  # index -1, the reference
    volts = xe[layout.a] - xe[layout.b]
    if p.impedance_form:  # Z x I, not the difference of two nearly equal node voltages across a tiny impedance
        rows = np.flatnonzero(np.isin(p.br_owner, p.impedance_form))
        volts[layout.bounds[BRANCH][0] + rows] = p.br_z[rows] * x[n + rows]
    s, e = layout.bounds[ADMITTANCE]
    amps = np.concatenate([
        p.adm_y * volts[s:e], x[n:], p.inj_j, nl_current.astype(p.dtype, copy=False),
        np.zeros(p.open_a.size, dtype=p.dtype),
    ])
    return volts, amps


def kcl_residual(layout: Layout, amps: np.ndarray) -> float:
    """Largest |sum of element currents leaving a node| over non-reference nodes."""
    n, live = layout.n, amps[: layout.live]
    w = np.concatenate([live, -live])
    if np.iscomplexobj(w):
        total = np.abs(np.bincount(layout.kcl_index, w.real, n + 1) + 1j * np.bincount(layout.kcl_index, w.imag, n + 1))
    else:
        total = np.abs(np.bincount(layout.kcl_index, w, n + 1))
    return amax(total[:n])


def power_totals(p: Primitives, layout: Layout, volts: np.ndarray, amps: np.ndarray):
    """Totals by element class, the power-balance residual |sum of absorbed S| (Tellegen), and S per primitive."""
    live = layout.live
    s = volts[:live] * np.conj(amps[:live])
    re = np.bincount(layout.classes, s.real, 4).tolist()
    im = np.bincount(layout.classes, s.imag, 4).tolist() if np.iscomplexobj(s) else [0.0] * 4
    source, load, network, cable = (complex(r, i) for r, i in zip(re, im))
    br0 = layout.bounds[BRANCH][0]
    src = layout.source_branch
    i_src = amps[br0 + src] if src.size else np.zeros(0, dtype=p.dtype)
    internal = float(np.sum(np.abs(i_src) ** 2 * p.br_z[src].real))
    sup = -source
    net = network + cable
    totals = PowerTotals(sup.real, sup.imag, load.real, load.imag, net.real, cable.real, net.imag, internal)
    r = sup - load - net
    return totals, math.hypot(r.real, r.imag), s


def kind_classes(elements) -> np.ndarray:
    """0 source, 1 load, 2 network element, 3 cable run (a network element too), per element."""
    codes = {k: 0 for k in SOURCE_KINDS} | {"load": 1, "cable_run": 3}
    return np.fromiter(
        (codes.get(e.kind, 2) for e in elements),
        dtype=np.int8,
        count=len(elements),
    )
