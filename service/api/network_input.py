"""The edge of POST /v1/networks/solve: request -> core Network, and core errors -> JSON pointers.

Units are parsed here (through FieldReader, i.e. service.units) and nowhere
else; cable runs get their resistance per metre from the conductor library at
their conductor temperature; size limits are enforced before anything is
solved.  When the core refuses a network, :func:`explain` turns its error into
one that points at the request: ``/elements/3`` for an element,
``/elements/3/b`` for the terminal that names a floating node,
``/reference_node``, ``/options/thevenin_between/0/a``...
"""

from __future__ import annotations

import math
from collections import Counter
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from service.api.inputs import FieldReader
from service.api.limits import refuse_many_thevenin_pairs
from service.api.problems import RequestInvalid, pointer
from service.api.schemas.v1 import networks as s
from service.api.settings import Settings
from service.core.conductors import Conductor, SizeSpec, default_library
from service.core.errors import Blame, CalcError
from service.core.network import model as m
from service.core.network.errors import (
    MAX_LISTED,
    CurrentSourceCutsetError,
    DuplicateElementIdError,
    FloatingNodesError,
    InvalidNodeError,
    InvalidValueError,
    LoadUndervoltageError,
    NetworkError,
    VoltageCollapseError,
    VoltageSourceLoopError,
)
from service.core.network.nodes import int_label
from service.units import (
    AC_POWER,
    ANALYSIS_FREQUENCY,
    CAPACITANCE,
    INDUCTANCE,
    LENGTH,
    PHASE_ANGLE,
    REACTANCE,
    REACTANCE_PER_LENGTH,
    REACTIVE_POWER,
    RESISTANCE,
    SERIES_CAPACITANCE,
    SOURCE_CURRENT,
    SOURCE_VOLTAGE,
    TEMPERATURE,
    VOLTAGE,
)

ARRAY_MAX_RESISTANCE_OHM = RESISTANCE.maximum
SHOWN = 5  # offending array entries named one by one


@dataclass(frozen=True, slots=True)
class CableUse:
    """What the edge looked up for one cable run (reported back and in the notes)."""

    conductor: Conductor
    temperature_c: float
    resistance_ohm_per_m: float
    resistance_ohm: float
    reactance_ohm: float


DEFAULT_FREQUENCY_HZ = s.DEFAULT_FREQUENCY  # the analysis frequency of a request that gives none


@dataclass(slots=True)
class ParsedNetwork:
    network: m.Network
    options: m.SolveOptions
    cables: dict[int, CableUse] = field(default_factory=dict)  # request position -> lookup
    dead_ends: list[str] = field(default_factory=list)  # nodes named by one terminal only
    frequency_given: bool = True  # False: the request left it out and DEFAULT_FREQUENCY_HZ was taken
    load_steps: list[tuple[int, str, float]] = field(default_factory=list)  # load ratings derived from S or Q


# --------------------------------------------------------------------------- limits


def element_count(req: s.NetworkSolveRequest) -> int:
    """Elements of a request as the limits and the inline/pool decision see them.

    An array element counts one for itself plus one per branch (its longest array), so an empty array still
    costs one: 200,000 empty arrays counted as nothing once, and ran inline with no deadline for 10.9 s.
    """
    return sum(1 + max(len(e.a), len(e.b), len(e.resistance)) if isinstance(e, s.ResistorArrayIn) else 1
               for e in req.elements)


def check_element_limit(req: s.NetworkSolveRequest, settings: Settings) -> int:
    count = element_count(req)
    if count > settings.max_network_elements:
        raise RequestInvalid([(
            "/elements",
            f"the network has {count} elements (an array element counts one plus one per branch); this service "
            f"accepts at most {settings.max_network_elements} per request",
        )])
    empty = [k for k, e in enumerate(req.elements) if isinstance(e, s.ResistorArrayIn)
             and not (e.a or e.b or e.resistance)]
    if empty:  # refused before any conversion: each costs work and adds nothing to the network
        message = "an array element needs at least one branch: a, b and resistance are empty"
        problems = [(pointer("elements", k, "a"), message) for k in empty[:SHOWN]]
        if len(empty) > SHOWN:
            problems.append((pointer("elements", empty[SHOWN], "a"),
                             f"{len(empty) - SHOWN} more empty arrays like /elements/{empty[0]}/a"))
        raise RequestInvalid(problems)
    return count


def _distinct_labels(arrays: list[np.ndarray]) -> np.ndarray:
    if not arrays:
        return np.zeros(0, dtype=np.int64)
    top = max(int(a.max()) for a in arrays if a.size) if any(a.size for a in arrays) else -1
    total = sum(a.size for a in arrays)
    if top < 4 * total + 1024:  # dense bitmap: a few ms for 1M labels
        seen = np.zeros(top + 1, dtype=bool)
        for arr in arrays:
            seen[arr] = True
        return np.flatnonzero(seen)
    return np.unique(np.concatenate(arrays))


# --------------------------------------------------------------------------- conversion


class _Converter:
    """Per-request state: the reader collecting field problems and a cache of conductor look-ups."""

    def __init__(self, reader: FieldReader, dc: bool) -> None:
        self.reader = reader
        self.dc = dc
        self.cables: dict[int, CableUse] = {}
        self._conductors: dict[tuple[SizeSpec, str, int], Conductor | str] = {}
        self.arrays: list[tuple[int, np.ndarray, np.ndarray]] = []
        self.load_steps: list[tuple[int, str, float]] = []  # (request position, formula, value) of derived load ratings

    def q(self, value, kind, k: int, name: str) -> float:
        return self.reader.quantity(value, kind, "elements", k, name)

    def signed_source(self, value: float, k: int, name: str) -> float:
        if not self.dc and value < 0:
            self.reader.add("an AC source takes a magnitude >= 0; give the angle in phase (add 180 deg to reverse it)",
                            "elements", k, name)
        return value

    def conductor(self, size: SizeSpec, material: str, cls: int, k: int) -> Conductor | None:
        key = (size, material, cls)
        if key not in self._conductors:
            try:
                self._conductors[key] = default_library().find(size, material, cls)
            except CalcError as exc:
                self._conductors[key] = f"{exc.detail} {exc.how_to_fix}"
        found = self._conductors[key]
        if isinstance(found, str):
            self.reader.add(found, "elements", k, "size")
            return None
        return found


def _resistor(c: _Converter, e: s.ResistorIn, k: int):
    return m.Resistor(e.id, e.a, e.b, c.q(e.resistance, RESISTANCE, k, "resistance"))


def _impedance(c: _Converter, e: s.ImpedanceIn, k: int):
    r = c.q(e.resistance, RESISTANCE, k, "resistance")
    x = c.q(e.reactance, REACTANCE, k, "reactance")
    ell = c.q(e.inductance, INDUCTANCE, k, "inductance")
    cap = c.q(e.capacitance, SERIES_CAPACITANCE, k, "capacitance")
    if ell == 0 and cap == 0:
        if c.dc and x != 0:
            c.reader.add("a fixed reactance has no meaning in a DC analysis (give inductance or capacitance)",
                         "elements", k, "reactance")
        return m.Impedance(e.id, e.a, e.b, r, x)
    if x != 0:
        c.reader.add("give reactance, or inductance and/or capacitance, not both", "elements", k, "reactance")
    return m.SeriesRLC(e.id, e.a, e.b, r, ell, cap if cap > 0 else None)


def _inductor(c: _Converter, e: s.InductorIn, k: int):
    return m.Inductor(e.id, e.a, e.b, c.q(e.inductance, INDUCTANCE, k, "inductance"))


def _capacitor(c: _Converter, e: s.CapacitorIn, k: int):
    return m.Capacitor(e.id, e.a, e.b, c.q(e.capacitance, CAPACITANCE, k, "capacitance"))


def _phase(c: _Converter, e, k: int) -> float:
    ph = c.q(e.phase, PHASE_ANGLE, k, "phase")
    if c.dc and ph != 0:
        c.reader.add("a DC source has no phase: give 0 and a negative value to reverse it", "elements", k, "phase")
    return ph


def source_terminals(e: s.VoltageSourceIn) -> tuple[str, str]:
    """The request field names that hold a voltage source's positive and negative nodes: a/b, or pos/neg."""
    return ("pos", "neg") if e.a is None and e.b is None and (e.pos is not None or e.neg is not None) else ("a", "b")


def _source_nodes(c: _Converter, e: s.VoltageSourceIn, k: int) -> tuple[str, str]:
    both = (e.a is not None or e.b is not None) and (e.pos is not None or e.neg is not None)
    if both:
        c.reader.add("give the terminals as a and b, or as pos and neg (the same terminals), not both",
                     "elements", k, "pos" if e.pos is not None else "neg")
    plus, minus = source_terminals(e)
    for name in (plus, minus):
        if getattr(e, name) is None:
            c.reader.add(f"missing: the {'positive' if name in ('a', 'pos') else 'negative'} terminal's node "
                         f"({name})", "elements", k, name)
    return getattr(e, plus) or "", getattr(e, minus) or ""


def _reactance(c: _Converter, e, k: int) -> float:
    x = c.q(e.internal_reactance, REACTANCE, k, "internal_reactance")
    if c.dc and x < 0:
        c.reader.add("a capacitive internal reactance has no DC meaning (a series capacitor blocks direct current)",
                     "elements", k, "internal_reactance")
    return x


def _voltage_source(c: _Converter, e: s.VoltageSourceIn, k: int):
    v = c.signed_source(c.q(e.voltage, SOURCE_VOLTAGE, k, "voltage"), k, "voltage")
    r = c.q(e.internal_resistance, RESISTANCE, k, "internal_resistance")
    pos, neg = _source_nodes(c, e, k)
    return m.VoltageSource(e.id, pos, neg, v, _phase(c, e, k), r, _reactance(c, e, k))


def _current_source(c: _Converter, e: s.CurrentSourceIn, k: int):
    i = c.signed_source(c.q(e.current, SOURCE_CURRENT, k, "current"), k, "current")
    return m.CurrentSource(e.id, e.a, e.b, i, _phase(c, e, k))


def _switch(c: _Converter, e: s.SwitchIn, k: int):
    return m.Switch(e.id, e.a, e.b, e.closed)


def _cable_run(c: _Converter, e: s.CableRunIn, k: int):
    size = c.reader.size(e.size, "elements", k, "size")
    length = c.q(e.length, LENGTH, k, "length")
    temp = c.q(e.conductor_temperature, TEMPERATURE, k, "conductor_temperature")
    x_per_m = c.q(e.reactance_per_length, REACTANCE_PER_LENGTH, k, "reactance_per_length")
    r_per_m = math.nan
    if not any(math.isnan(v) for v in (size.area_m2 or 0.0, temp)):
        conductor = c.conductor(size, e.material, e.conductor_class, k)
        if conductor is not None:
            r_per_m = conductor.resistance_per_m_at(temp)
            loop = length * (2.0 if e.go_and_return else 1.0)
            c.cables[k] = CableUse(conductor, temp, r_per_m, r_per_m * loop, x_per_m * loop)
    return m.CableRun(e.id, e.a, e.b, length, r_per_m, x_per_m, e.go_and_return)


def _load(c: _Converter, e: s.NetworkLoadIn, k: int):
    """A load from P or S, with power_factor or Q: Q = P tan φ, S² = P² + Q² (power triangle, common practice)."""
    given = c.reader.power(e.rated_power, AC_POWER, "elements", k, "rated_power")
    v = c.q(e.rated_voltage, VOLTAGE, k, "rated_voltage")
    q = None if e.rated_reactive_power is None else c.q(e.rated_reactive_power, REACTIVE_POWER, k, "rated_reactive_power")
    where = ("elements", k)
    if given.kind == "reactive":
        c.reader.add("a reactive power goes in rated_reactive_power; rated_power takes the active (W) or apparent (VA) "
                     "power", *where, "rated_power")
        return m.Load(e.id, e.a, e.b, math.nan, v, 1.0, e.leading, e.model)
    if c.dc and (given.kind == "apparent" or q is not None):
        c.reader.add("a DC load draws active power only: give rated_power in W and no rated_reactive_power", *where,
                     "rated_power" if given.kind == "apparent" else "rated_reactive_power")
    if q is not None and e.power_factor is not None:
        c.reader.add("give power_factor or rated_reactive_power, not both", *where, "power_factor")
    if q is not None and e.leading and q > 0:
        c.reader.add("rated_reactive_power is positive (lagging) but leading is true: a leading load has a negative "
                     "reactive power", *where, "leading")
    pf, leading = (1.0 if e.power_factor is None else e.power_factor), e.leading
    if not (math.isfinite(pf) and 0.0 < pf <= 1.0):
        c.reader.add(f"power factor must be greater than 0 and at most 1, got {pf:g}", *where, "power_factor")
    if q is None or not math.isfinite(q) or not math.isfinite(given.value):
        p = given.value * pf if given.kind == "apparent" else given.value
        if given.kind == "apparent":
            c.load_steps.append((k, f"P = S cos φ = {given.value:g} x {pf:g} (apparent power given)", p))
        return m.Load(e.id, e.a, e.b, p, v, pf, leading, e.model)
    if given.kind == "apparent":
        if abs(q) >= given.value:
            c.reader.add(f"|Q| = {abs(q):g} var must be less than S = {given.value:g} VA (P = √(S² − Q²) would be "
                         "zero or imaginary)", *where, "rated_reactive_power")
            return m.Load(e.id, e.a, e.b, math.nan, v, 1.0, leading, e.model)
        p = math.sqrt(given.value ** 2 - q * q)
        c.load_steps.append((k, f"P = √(S² − Q²) = √({given.value:g}² − {q:g}²) (apparent and reactive power given)", p))
    else:
        p = given.value
    pf = p / math.hypot(p, q)
    c.load_steps.append((k, f"cos φ = P / √(P² + Q²) = {p:.6g} / √({p:.6g}² + {q:g}²), "
                            f"{'leading' if q < 0 else 'lagging'}", pf))
    return m.Load(e.id, e.a, e.b, p, v, pf, q < 0, e.model)


def _three_phase(c: _Converter, e: s.ThreePhaseSupplyIn, k: int):
    if c.dc:
        c.reader.add("a three-phase supply needs an AC analysis (frequency > 0)", "elements", k, "type")
    v = c.q(e.line_to_neutral_voltage, VOLTAGE, k, "line_to_neutral_voltage")
    r = c.q(e.internal_resistance, RESISTANCE, k, "internal_resistance")
    x = _reactance(c, e, k)
    return m.ThreePhaseSupply(e.id, e.l1, e.l2, e.l3, e.neutral, v, e.sequence, r, x)


def _flag_entries(c: _Converter, bad: np.ndarray, k: int, name: str, what: str) -> None:
    where = np.flatnonzero(bad)
    for i in where[:SHOWN].tolist():
        c.reader.add(what, "elements", k, name, i)
    if where.size > SHOWN:
        c.reader.add(f"{where.size - SHOWN} more entries like /elements/{k}/{name}/{where[0]}", "elements", k, name)


def _labels(c: _Converter, values: list[int], k: int, name: str) -> np.ndarray:
    try:
        arr = np.asarray(values, dtype=np.int64)
    except OverflowError:  # a JSON integer beyond 64 bits
        arr = np.asarray([v if -s.MAX_NODE_LABEL <= v <= s.MAX_NODE_LABEL else -1 for v in values], dtype=np.int64)
    bad = (arr < 0) | (arr > s.MAX_NODE_LABEL)
    if bad.any():
        _flag_entries(c, bad, k, name, f"a node label must be an integer from 0 to {s.MAX_NODE_LABEL}")
        arr = np.where(bad, 0, arr)
    return arr


def _resistor_array(c: _Converter, e: s.ResistorArrayIn, k: int):
    a = _labels(c, e.a, k, "a")
    b = _labels(c, e.b, k, "b")
    r = np.asarray(e.resistance, dtype=np.float64)
    if not a.size == b.size == r.size:
        c.reader.add(f"a, b and resistance must have the same length (got {a.size}, {b.size}, {r.size})",
                     "elements", k)
    else:
        _flag_entries(c, ~((r > 0) & (r <= ARRAY_MAX_RESISTANCE_OHM)), k, "resistance",
                      f"must be greater than 0 ohm and at most {ARRAY_MAX_RESISTANCE_OHM:g} ohm")
        _flag_entries(c, a == b, k, "b", "a branch must join two different nodes (b equals a)")
    c.arrays.append((k, a, b))
    return m.ResistorArray(e.id, a, b, r)


_CONVERT: dict[type, Callable] = {
    s.ResistorIn: _resistor, s.ImpedanceIn: _impedance, s.InductorIn: _inductor, s.CapacitorIn: _capacitor,
    s.VoltageSourceIn: _voltage_source, s.CurrentSourceIn: _current_source, s.SwitchIn: _switch,
    s.CableRunIn: _cable_run, s.NetworkLoadIn: _load, s.ThreePhaseSupplyIn: _three_phase,
    s.ResistorArrayIn: _resistor_array,
}
_TERMINALS: dict[type, tuple[str, ...]] = {
    s.ThreePhaseSupplyIn: ("l1", "l2", "l3", "neutral"), s.ResistorArrayIn: (),
}


def terminals(e) -> tuple[str, ...]:
    if isinstance(e, s.VoltageSourceIn):
        return source_terminals(e)
    return _TERMINALS.get(type(e), ("a", "b"))


def to_network(req: s.NetworkSolveRequest, settings: Settings) -> ParsedNetwork:
    """Validate and convert a request; raises RequestInvalid (422) naming every bad field at once."""
    check_element_limit(req, settings)
    refuse_many_thevenin_pairs(len(req.options.thevenin_between), settings)  # each pair costs a solve
    reader = FieldReader()
    given = s.frequency_given(req)
    freq = reader.quantity(req.frequency, ANALYSIS_FREQUENCY, "frequency")  # NaN if bad: checked as AC
    c = _Converter(reader, dc=freq == 0.0)
    elements = tuple(_CONVERT[type(e)](c, e, k) for k, e in enumerate(req.elements))
    if not req.elements:
        reader.add("a network needs at least one element", "elements")
    reader.done()

    uses = Counter(getattr(e, t) for e in req.elements for t in terminals(e))
    _check_integer_names(req, reader, uses)
    reader.done()
    labels = _distinct_labels([x for _, a, b in c.arrays for x in (a, b)])
    _check_nodes(req, reader, uses, labels, settings)
    reader.done()

    o = req.options
    options = m.SolveOptions(
        max_iterations=o.max_iterations,
        deadline_s=settings.compute_deadline_s,  # Newton stops itself rather than run on past the request's deadline
        on_load_undervoltage=o.on_load_undervoltage,
        thevenin_between=tuple((p.a, p.b) for p in o.thevenin_between),
        impedance_form_ratio=settings.network_impedance_form_ratio,
        factor_max_bytes=settings.network_factor_max_bytes,
    )
    net = m.Network(elements=elements, frequency_hz=freq, reference_node=req.reference_node)
    return ParsedNetwork(net, options, c.cables, _dead_ends(uses, req.reference_node, labels), frequency_given=given,
                         load_steps=c.load_steps)


def _dead_ends(uses: Counter, reference: str, labels: np.ndarray) -> list[str]:
    """Nodes named by a single terminal and by no array element (often a misspelt name)."""
    once = [n for n, count in uses.items() if count == 1 and n != reference]
    lab = np.asarray([int_label(n) if int_label(n) is not None else -1 for n in once], dtype=np.int64)
    in_array = _among(lab, labels) & (lab >= 0)
    return [n for n, hit in zip(once, in_array.tolist()) if not hit]


def _among(values: np.ndarray, labels: np.ndarray) -> np.ndarray:
    """values[i] in labels, for a sorted labels array."""
    if labels.size == 0:
        return np.zeros(values.shape, dtype=bool)
    pos = np.minimum(np.searchsorted(labels, values), labels.size - 1)
    return labels[pos] == values


def _in_labels(name: str, labels: np.ndarray) -> bool:
    lab = int_label(name)
    return lab is not None and bool(_among(np.asarray([lab], dtype=np.int64), labels)[0])


def _check_integer_names(req: s.NetworkSolveRequest, reader: FieldReader, uses: Counter) -> None:
    """A name that is a plain integer is an array label, so it is bounded like one."""
    def too_big(name: str) -> bool:
        lab = int_label(name)
        return lab is not None and lab > s.MAX_NODE_LABEL

    message = (f"a node name that is a plain integer is the same node as that array label, and labels go up to "
               f"{s.MAX_NODE_LABEL}: give this node another name")
    where = _Where(req)
    for name in [n for n in uses if too_big(n)][:MAX_LISTED]:
        reader.add(message, *where.terminal(name))
    if too_big(req.reference_node):
        reader.add(message, "reference_node")
    for j, pair in enumerate(req.options.thevenin_between):
        for t in ("a", "b"):
            if too_big(getattr(pair, t)):
                reader.add(message, "options", "thevenin_between", j, t)


def _check_nodes(req: s.NetworkSolveRequest, reader: FieldReader, uses: Counter, labels: np.ndarray,
                 settings: Settings) -> None:
    int_names = [lab for n in uses if (lab := int_label(n)) is not None]
    ints = np.asarray(int_names, dtype=np.int64)  # distinct: Counter keys, canonical integer spellings
    extra = int(np.count_nonzero(~_among(ints, labels)))  # integer-named nodes that no array uses
    ref = req.reference_node
    ref_known = ref in uses or _in_labels(ref, labels)
    count = (len(uses) - len(int_names)) + labels.size + extra + (0 if ref_known else 1)
    if count > settings.max_network_nodes:
        reader.add(f"the network has {count} distinct nodes; this service accepts at most "
                   f"{settings.max_network_nodes} per request", "elements")
        return
    if not ref_known:
        reader.add(f"no element is connected to the reference node {ref!r}: connect the network to it, or name "
                   "the node that is your 0 V reference", "reference_node")
    if req.nodes is not None:
        for j, name in enumerate(req.nodes):
            if not name:
                reader.add("a node name must not be empty", "nodes", j)
        declared = set(req.nodes) | {ref}
        for k, e in enumerate(req.elements):
            for t in terminals(e):
                if getattr(e, t) not in declared:
                    reader.add(f"node {getattr(e, t)!r} is not listed in /nodes (a misspelt node name?)",
                               "elements", k, t)
    for j, pair in enumerate(req.options.thevenin_between):
        if pair.a == pair.b:
            reader.add("a Thevenin equivalent needs two different nodes", "options", "thevenin_between", j, "b")
        for t in ("a", "b"):
            name = getattr(pair, t)
            if name != ref and name not in uses and not _in_labels(name, labels):
                reader.add(f"node {name!r} is not a node of this network", "options", "thevenin_between", j, t)


# --------------------------------------------------------------------------- core errors -> pointers


class _Where:
    """Where a node is first named in the request: (k, terminal) or (k, "a"/"b", index) for arrays."""

    def __init__(self, req: s.NetworkSolveRequest) -> None:
        self.req = req

    def node(self, name: str) -> tuple[str | int, ...]:
        if name == self.req.reference_node:
            return ("reference_node",)
        return self.terminal(name)

    def terminal(self, name: str) -> tuple[str | int, ...]:
        lab = int_label(name)
        if lab is not None and lab > s.MAX_NODE_LABEL:
            lab = None  # no array can hold it (and numpy's int64 could not compare it)
        for k, e in enumerate(self.req.elements):
            if isinstance(e, s.ResistorArrayIn):
                if lab is None:
                    continue
                for t in ("a", "b"):
                    hit = np.flatnonzero(np.asarray(getattr(e, t), dtype=np.int64) == lab)
                    if hit.size:
                        return ("elements", k, t, int(hit[0]))
                continue
            for t in terminals(e):
                if getattr(e, t) == name:
                    return ("elements", k, t)
        return ("elements",)


def _positions(req: s.NetworkSolveRequest) -> dict[str, list[int]]:
    out: dict[str, list[int]] = {}
    for k, e in enumerate(req.elements):
        out.setdefault(e.id, []).append(k)
    return out


def explain(err: NetworkError, req: s.NetworkSolveRequest) -> CalcError:
    """The same error, its blames pointing into the request with a message each."""
    where = _Where(req)
    pos = _positions(req)
    first = {i: p[0] for i, p in pos.items()}
    blames: list[Blame] = []

    def element(i: str, message: str, *sub: str) -> None:
        if i in first:
            blames.append(Blame(("elements", first[i], *sub), message))

    if isinstance(err, DuplicateElementIdError):
        for i in err.element_ids:
            for p in pos.get(i, [])[1:]:
                blames.append(Blame(("elements", p, "id"), f"id {i!r} is already used by /elements/{pos[i][0]}"))
    elif isinstance(err, InvalidValueError):
        reasons = err.data.get("problems") or [{"element": i, "reason": "value not physical"} for i in err.element_ids]
        for item in reasons:
            element(item["element"], item["reason"])
    elif isinstance(err, (FloatingNodesError, CurrentSourceCutsetError)):
        why = ("is reached only through current sources" if isinstance(err, CurrentSourceCutsetError)
               else f"has no conducting path to the reference node {req.reference_node!r}")
        for n in err.node_names[:MAX_LISTED]:
            blames.append(Blame(where.node(n), f"node {n!r} {why}"))
        for i in err.element_ids:
            element(i, "current source or open element at the edge of that part" if isinstance(
                err, FloatingNodesError) else "current source forcing current into that part")
    elif isinstance(err, VoltageSourceLoopError):
        for i in err.element_ids:
            element(i, "part of a loop of ideal voltage sources and zero-impedance elements")
    elif isinstance(err, VoltageCollapseError):
        for rec in err.data.get("loads", []):
            most = rec.get("max_power_w")
            element(rec["element"], f"asks {rec['rated_power_w']:.6g} W; at most "
                    + (f"{most:.6g} W" if most is not None else "no power")
                    + " can be delivered to it here", "rated_power")
    elif isinstance(err, LoadUndervoltageError):
        for rec in err.data.get("loads", []):
            pu = rec.get("operating_voltage_pu") or rec.get("iterate_voltage_pu")
            element(rec["element"], f"would operate at {pu:.3g} of its rated voltage, below the 0.7 pu guard")
    elif isinstance(err, InvalidNodeError) and err.node_names and not err.element_ids:
        for n in err.node_names:
            blames.append(Blame(where.node(n), f"node {n!r}: {err.detail}"))
    if not blames:  # anything else: the core's own blames, or the whole element list
        blames = [Blame(b.location, b.message) for b in err.blames] or [Blame(("elements",), err.detail)]
    return CalcError(code=err.code.replace("_", "-"), detail=err.detail, how_to_fix=err.how_to_fix,
                     blames=tuple(blames))
