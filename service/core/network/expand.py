"""Validate a Network and reduce its elements to primitives (see primitives.py).

Elements are grouped by type and each group is handled with numpy arrays, so
the Python work per element is a handful of attribute reads: this keeps a
100k-element typed network fast.  All invalid values found are reported in one
error rather than one per round trip.
"""

from __future__ import annotations

import math
from collections import Counter
from collections.abc import Callable, Sequence
from functools import lru_cache

import numpy as np

from . import model as m
from .errors import (
    DuplicateElementIdError,
    EmptyNetworkError,
    InvalidNodeError,
    InvalidValueError,
)
from .nodes import NodeTable, int_label
from .primitives import ADMITTANCE, BRANCH, INJECTION, NONLINEAR, OPEN, PrimitiveBuilder, Primitives

_KNOWN = (
    m.Resistor, m.Impedance, m.SeriesRLC, m.Inductor, m.Capacitor, m.VoltageSource,
    m.CurrentSource, m.Switch, m.CableRun, m.Load, m.ThreePhaseSupply, m.ResistorArray,
)


class _Problems:
    """Accumulates (element id, reason) pairs for one InvalidValueError."""

    def __init__(self, positions: dict[str, int]) -> None:
        self.items: list[tuple[str, str]] = []
        self.positions = positions

    def flag(self, els: Sequence, bad: np.ndarray, reason: str) -> None:
        if _any(bad):
            self.items.extend((els[j].id, reason) for j in np.flatnonzero(bad))

    def raise_if_any(self) -> None:
        if self.items:
            shown = "; ".join(f"{i}: {r}" for i, r in self.items[:5])
            raise InvalidValueError(
                f"{len(self.items)} element value(s) are not physical: {shown}",
                how_to_fix="give finite values within the documented ranges (resistances >= 0, "
                "lengths and capacitances > 0, power factor in (0, 1])",
                element_ids=[i for i, _ in self.items],
                element_positions=self.positions,
                data={"problems": [{"element": i, "reason": r} for i, r in self.items[:50]]},
            )


def _any(mask: np.ndarray) -> bool:
    """mask.any(), at a third of its cost on the small arrays of a small network."""
    return np.count_nonzero(mask) > 0


def _floats(els: Sequence, attr: str, problems: _Problems, default: float = math.nan) -> np.ndarray:
    """Attribute values as float64; a non-number becomes NaN and is flagged."""
    try:
        return np.array([getattr(e, attr) for e in els], dtype=np.float64)
    except (TypeError, ValueError):
        out = np.empty(len(els))
        for j, e in enumerate(els):
            v = getattr(e, attr)
            try:
                out[j] = float(v) if v is not None else default
            except (TypeError, ValueError):
                out[j] = math.nan
                problems.items.append((e.id, f"{attr} is not a number"))
        return out


# Bounds of a value column: a row is valid iff every value v has lo <= v <= hi.  The
# bounds are finite, so NaN and +-inf fail both comparisons; "> 0" is ">= the
# smallest positive double", which is the same test for doubles.
ANY = (-np.finfo(np.float64).max, np.finfo(np.float64).max)
AT_LEAST_0 = (0.0, ANY[1])
ABOVE_0 = (float(np.nextafter(0.0, 1.0)), ANY[1])
FRACTION = (ABOVE_0[0], 1.0)  # (0, 1]


@lru_cache(maxsize=None)
def _bound_arrays(bounds: tuple[tuple[float, float], ...]) -> np.ndarray:
    return np.array(bounds).T


def _columns(els: Sequence, attrs: tuple[str, ...], problems: _Problems, bounds: tuple[tuple[float, float], ...]):
    """Several float attributes at once: values of shape (len(els), len(attrs)) and the rows out of bounds.

    One array conversion instead of one per attribute (what a small network's
    solve time is made of); anything that is not a plain number falls back to
    :func:`_floats` attribute by attribute, so the problems reported are the same.
    """
    try:
        values = np.array([[getattr(e, a) for a in attrs] for e in els], dtype=np.float64)
        if values.shape != (len(els), len(attrs)):
            raise ValueError("not one number per attribute")
    except (TypeError, ValueError):
        values = np.stack([_floats(els, a, problems) for a in attrs], axis=1) if els else np.zeros((0, len(attrs)))
    lo, hi = _bound_arrays(bounds)
    ok = (values >= lo) & (values <= hi)
    if np.count_nonzero(ok) == ok.size:
        return values, np.zeros(len(els), dtype=bool)
    return values, ~ok.all(axis=1)


def _bools(els: Sequence, attr: str, problems: _Problems) -> np.ndarray:
    vals = [getattr(e, attr) for e in els]
    for e, v in zip(els, vals):
        if not isinstance(v, (bool, np.bool_)):
            problems.items.append((e.id, f"{attr} must be true or false"))
    return np.array([bool(v) for v in vals], dtype=bool)


def _median(values: np.ndarray) -> float:
    k = values.size // 2
    part = np.partition(values, k)
    if values.size % 2:
        return float(part[k])
    return 0.5 * (float(part[k]) + float(part[:k].max()))


def _check_frequency(net: m.Network) -> float:
    f = net.frequency_hz
    if f is None:
        return 0.0
    try:
        f = float(f)
    except (TypeError, ValueError):
        f = math.nan
    if not math.isfinite(f) or f < 0:
        raise InvalidValueError(
            f"frequency_hz must be a finite number >= 0 (or null for DC), got {net.frequency_hz!r}",
            how_to_fix="give the supply frequency in hertz, or 0 / null for a DC analysis",
        )
    return f


def expand(net: m.Network, guard_pu: float, impedance_form_ratio: float = 1e-6) -> tuple[Primitives, NodeTable, dict[str, int]]:
    """Check the network's definition and reduce it to primitives.

    Returns the primitives, the node table and the element id -> position map.
    """
    elements = net.elements
    if not elements:
        raise EmptyNetworkError("the network has no elements", how_to_fix="add at least one source and one path")
    freq = _check_frequency(net)
    if not isinstance(net.reference_node, str) or not net.reference_node:
        raise InvalidNodeError(
            f"reference node {net.reference_node!r} is not a non-empty string",
            how_to_fix='name the reference (0 V) node, e.g. "0"',
        )

    groups: dict[type, list[int]] = {}
    bad_type = []
    for i, e in enumerate(elements):
        t = type(e)
        if t not in _KNOWN:
            bad_type.append(i)
            continue
        groups.setdefault(t, []).append(i)
    ids = [getattr(e, "id", None) for e in elements]
    positions = {i: p for p, i in enumerate(ids) if isinstance(i, str)}
    if bad_type:
        raise InvalidValueError(
            f"unsupported element type(s): {sorted({type(elements[i]).__name__ for i in bad_type})}",
            how_to_fix="use the element types of service.core.network",
            element_ids=[str(ids[i]) for i in bad_type],
            element_positions=positions,
        )
    bad_ids = [p for p, i in enumerate(ids) if not isinstance(i, str) or not i]
    if bad_ids:
        raise InvalidValueError(
            f"{len(bad_ids)} element(s) have an empty or non-text id (positions {bad_ids[:10]})",
            how_to_fix="give every element a unique, non-empty id",
        )
    if len(positions) != len(ids):
        dup = [i for i, c in Counter(ids).items() if c > 1]
        raise DuplicateElementIdError(
            f"element id(s) used more than once: {', '.join(map(repr, dup[:10]))}",
            how_to_fix="give every element a unique id",
            element_ids=dup,
            element_positions=positions,
        )

    # -- node names ------------------------------------------------------
    names: dict[str, None] = {}  # insertion order: the same node order whatever the hash seed
    bad_nodes: list[str] = []
    label_arrays: list[np.ndarray] = []
    for t, idx in groups.items():
        if t is m.ResistorArray:
            for i in idx:
                e = elements[i]
                for arr in (e.a, e.b):
                    arr = np.asarray(arr)
                    if arr.dtype.kind not in "iu" or (arr.size and arr.min() < 0):
                        bad_nodes.append(e.id)
                    else:
                        label_arrays.append(arr.astype(np.int64, copy=False))
            continue
        for term in t.terminals:
            vals = [getattr(elements[i], term) for i in idx]
            try:
                names.update(dict.fromkeys(vals))
            except TypeError:
                pass
            bad_nodes.extend(elements[i].id for i, v in zip(idx, vals) if not isinstance(v, str) or not v)
    if bad_nodes:
        raise InvalidNodeError(
            "element(s) with an empty or non-text node name (or non-integer / negative node labels "
            "in an array element)",
            how_to_fix="name every terminal's node with a non-empty string; array elements take "
            "non-negative integer labels",
            element_ids=bad_nodes,
            element_positions=positions,
        )
    table = NodeTable(net.reference_node, names, label_arrays)
    ref_lab = int_label(net.reference_node)
    if net.reference_node not in names and not (
        ref_lab is not None and any(bool(np.any(arr == ref_lab)) for arr in label_arrays)
    ):
        raise InvalidNodeError(
            f"no element is connected to the reference node {net.reference_node!r}",
            how_to_fix="connect the network to the reference node (or name the node that is "
            "your 0 V reference as reference_node)",
            node_names=[net.reference_node],
        )

    return _reduce(elements, groups, table, positions, freq, guard_pu, impedance_form_ratio), table, positions


def _reduce(elements, groups: dict[type, list[int]], table: NodeTable, positions: dict[str, int],
            freq: float, guard_pu: float, impedance_form_ratio: float, impedance_scale: float | None = None) -> Primitives:
    """Check values and reduce the grouped elements to primitives (the per-type handlers).

    The handlers hand their impedances to ``impedance_split``, which holds them until every handler has run:
    which of them go in impedance form depends on the network's impedance scale, the median |Z| of them all
    (given by ``impedance_scale`` when only some elements are reduced again, see reduce_some).
    """
    dc = freq == 0.0
    b = PrimitiveBuilder(len(elements), np.float64 if dc else np.complex128)
    problems = _Problems(positions)
    self_loops: list[str] = []
    ctx = _Ctx(elements, table, b, problems, dc, 2.0 * math.pi * freq, guard_pu, self_loops)
    for t, idx in groups.items():
        _HANDLERS[t](ctx, np.asarray(idx, dtype=np.int64))
    scale, small = ctx.route_impedances(impedance_form_ratio, impedance_scale)
    problems.raise_if_any()
    if self_loops:
        raise InvalidValueError(
            f"{len(self_loops)} element(s) have both terminals on the same node",
            how_to_fix="connect each element between two different nodes (or remove it)",
            element_ids=self_loops,
            element_positions=positions,
        )
    return b.build(table.size, scale, small)


def reduce_some(net: m.Network, subset: Sequence[int], table: NodeTable, positions: dict[str, int],
                guard_pu: float, impedance_form_ratio: float = 1e-6, impedance_scale: float = 1.0) -> Primitives:
    """Primitives of the elements at ``subset`` only, in a network already expanded once.

    For :meth:`PreparedNetwork.replace`: the elements keep their type and nodes,
    so only their values are checked again, by the same handlers in the same
    order as :func:`expand` would (groups in order of the network's first
    element of each type), hence the same errors.  Entries of the result's
    elem_* arrays outside ``subset`` are meaningless.  The impedance scale is
    the expanded network's, so an element keeps the form it had unless its own
    value crosses the threshold (then the structure differs and the caller
    prepares the network again).
    """
    elements = net.elements
    first = {t: None for t in map(type, elements)}  # group order of expand()
    groups: dict[type, list[int]] = {t: [] for t in first}
    for i in sorted(subset):
        groups[type(elements[i])].append(i)
    groups = {t: idx for t, idx in groups.items() if idx}
    return _reduce(elements, groups, table, positions, _check_frequency(net), guard_pu, impedance_form_ratio,
                   impedance_scale)


class _Ctx:
    __slots__ = ("elements", "table", "b", "problems", "dc", "omega", "guard_pu", "self_loops", "impedances")

    def __init__(self, elements, table, b, problems, dc, omega, guard_pu, self_loops):
        self.impedances: list[tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]] = []
        self.elements = elements
        self.table = table
        self.b = b
        self.problems = problems
        self.dc = dc
        self.omega = omega
        self.guard_pu = guard_pu
        self.self_loops = self_loops

    def nodes(self, els: Sequence, attr: str) -> np.ndarray:
        return self.table.indices([getattr(e, attr) for e in els])

    def two_terminal(self, idx: np.ndarray, a_attr: str = "a", b_attr: str = "b"):
        els = [self.elements[i] for i in idx.tolist()]
        na, nb = self.nodes(els, a_attr), self.nodes(els, b_attr)
        same = na == nb
        if _any(same):
            self.self_loops.extend(els[j].id for j in np.flatnonzero(same))
        return els, na, nb

    def impedance_split(self, idx, na, nb, z: np.ndarray) -> None:
        """Hold elements given by impedance until every handler has run (see route_impedances)."""
        if idx.size:
            self.impedances.append((idx, na, nb, np.asarray(z, dtype=self.b.dtype)))

    def route_impedances(self, ratio: float, scale: float | None) -> tuple[float, tuple[int, ...]]:
        """Route the held elements: Z == 0 -> zero-volt branch; |Z| below ``ratio`` x scale -> a branch with its Z
        (impedance form); else admittance 1/Z.  Returns the scale and the elements put in impedance form."""
        if scale is None:
            mags = [np.abs(z[z != 0]) for _, _, _, z in self.impedances]
            mags = np.concatenate(mags) if mags else np.zeros(0)
            mags = mags[np.isfinite(mags)]
            # The median by partition: np.median's overhead is most of a small network's cost here.
            scale = _median(mags) if mags.size else 1.0
        small_form: list[int] = []
        for idx, na, nb, z in self.impedances:
            mag = np.abs(z)
            branch = (z == 0) | (mag < ratio * scale)
            if _any(branch):
                s = branch
                self.b.add(BRANCH, idx[s], 1, na[s], nb[s], np.zeros(int(s.sum()), dtype=self.b.dtype), z[s])
                small_form.extend(idx[s & (z != 0)].tolist())
                k = ~branch
                idx, na, nb, z = idx[k], na[k], nb[k], z[k]
            if idx.size:
                with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
                    y = 1.0 / z
                tiny = ~np.isfinite(y)
                if _any(tiny):  # e.g. 1e-320 ohm beside a scale as small: 1/Z overflows double precision
                    self.problems.flag([self.elements[i] for i in idx], tiny,
                                       "impedance too small to represent (give exactly 0 for an ideal short)")
                    y = np.where(tiny, 1.0, y)
                self.b.add(ADMITTANCE, idx, 1, na, nb, y)
        return scale, tuple(sorted(small_form))

    def open(self, idx, na, nb) -> None:
        if idx.size:
            self.b.add(OPEN, idx, 1, na, nb)

    def complex_or_real(self, real: np.ndarray, imag: np.ndarray) -> np.ndarray:
        return real.astype(np.float64) if self.dc else real + 1j * imag


def _nonfinite(*arrays: np.ndarray) -> np.ndarray:
    bad = np.zeros(arrays[0].shape, bool)
    for a in arrays:
        bad |= ~np.isfinite(a)
    return bad


def _split(columns: tuple[np.ndarray, np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """(values, bad) of :func:`_columns` as (one array per attribute, bad)."""
    values, bad = columns
    return values.T, bad


# Load model -> exponent k of S = S0 (|V|/V0)^k.
_LOAD_EXPONENT = {"constant_impedance": 2.0, "constant_current": 1.0, "constant_power": 0.0}


def _resistor(ctx: _Ctx, idx: np.ndarray) -> None:
    els, na, nb = ctx.two_terminal(idx)
    r = _floats(els, "resistance_ohm", ctx.problems)
    ok = np.isfinite(r) & (r >= 0)
    ctx.problems.flag(els, ~ok, "resistance_ohm must be finite and >= 0")
    z = np.where(ok, r, 1.0).astype(ctx.b.dtype)
    ctx.impedance_split(idx, na, nb, z)


def _impedance(ctx: _Ctx, idx: np.ndarray) -> None:
    els, na, nb = ctx.two_terminal(idx)
    (r, x), bad = _split(_columns(els, ("resistance_ohm", "reactance_ohm"), ctx.problems, (AT_LEAST_0, ANY)))
    ctx.problems.flag(els, bad, "resistance_ohm must be finite and >= 0, reactance_ohm finite")
    if ctx.dc:
        ctx.problems.flag(
            els, ~bad & (x != 0),
            "an Impedance with reactance has no meaning in a DC analysis (use SeriesRLC, Inductor or Capacitor)",
        )
    z = ctx.complex_or_real(np.where(bad, 1.0, r), np.where(bad, 0.0, x))
    ctx.impedance_split(idx, na, nb, z)


def _series_rlc(ctx: _Ctx, idx: np.ndarray) -> None:
    els, na, nb = ctx.two_terminal(idx)
    r = _floats(els, "resistance_ohm", ctx.problems)
    ell = _floats(els, "inductance_h", ctx.problems)
    has_c = np.array([e.capacitance_f is not None for e in els], dtype=bool)
    c = np.where(has_c, _floats(els, "capacitance_f", ctx.problems, default=1.0), 1.0)
    bad = _nonfinite(r, ell, c) | (r < 0) | (ell < 0) | (has_c & (c <= 0))
    ctx.problems.flag(els, bad, "R and L must be finite and >= 0, C (if given) finite and > 0")
    r, ell, c = (np.where(bad, 1.0, v) for v in (r, ell, c))
    if ctx.dc:
        ctx.open(idx[has_c], na[has_c], nb[has_c])
        k = ~has_c
        ctx.impedance_split(idx[k], na[k], nb[k], r[k])
        return
    x = ctx.omega * ell - np.where(has_c, 1.0 / (ctx.omega * c), 0.0)
    ctx.impedance_split(idx, na, nb, r + 1j * x)


def _inductor(ctx: _Ctx, idx: np.ndarray) -> None:
    els, na, nb = ctx.two_terminal(idx)
    ell = _floats(els, "inductance_h", ctx.problems)
    bad = _nonfinite(ell) | (ell < 0)
    ctx.problems.flag(els, bad, "inductance_h must be finite and >= 0")
    if ctx.dc:  # a short with its current as an unknown, so it is reported
        ctx.impedance_split(idx, na, nb, np.zeros(len(els)))
        return
    ctx.impedance_split(idx, na, nb, 1j * ctx.omega * np.where(bad, 1.0, ell))


def _capacitor(ctx: _Ctx, idx: np.ndarray) -> None:
    els, na, nb = ctx.two_terminal(idx)
    c = _floats(els, "capacitance_f", ctx.problems)
    bad = _nonfinite(c) | (c <= 0)
    ctx.problems.flag(els, bad, "capacitance_f must be finite and > 0")
    if ctx.dc:
        ctx.open(idx, na, nb)
        return
    ctx.b.add(ADMITTANCE, idx, 1, na, nb, 1j * ctx.omega * np.where(bad, 1.0, c))


def _source_phasor(ctx: _Ctx, els, mag: np.ndarray, phase: np.ndarray) -> np.ndarray:
    if ctx.dc:
        ctx.problems.flag(els, np.isfinite(phase) & (phase != 0),
                          "phase_deg must be 0 in a DC analysis (use a negative value instead)")
        return mag.copy()
    return mag * np.exp(1j * np.deg2rad(phase))


def _refuse_capacitive_at_dc(ctx: _Ctx, els, x: np.ndarray) -> None:
    """A negative (capacitive) internal reactance is a series capacitor: at DC it would block the source."""
    if ctx.dc:
        ctx.problems.flag(els, x < 0, "a capacitive internal reactance has no DC meaning (a series capacitor "
                          "blocks direct current)")


def _voltage_source(ctx: _Ctx, idx: np.ndarray) -> None:
    els, na, nb = ctx.two_terminal(idx, "pos", "neg")
    values, bad = _columns(els, ("voltage_v", "phase_deg", "internal_resistance_ohm", "internal_reactance_ohm"),
                           ctx.problems, (ANY, ANY, AT_LEAST_0, ANY))
    ctx.problems.flag(els, bad, "values must be finite, internal R >= 0")
    _refuse_capacitive_at_dc(ctx, els, values[:, 3])
    if _any(bad):
        values = np.where(bad[:, None], 0.0, values)
    v, ph, r, x = values.T
    e = _source_phasor(ctx, els, v, ph)
    z = ctx.complex_or_real(r, x)
    ctx.b.add(BRANCH, idx, 1, na, nb, e, z)


def _current_source(ctx: _Ctx, idx: np.ndarray) -> None:
    els, na, nb = ctx.two_terminal(idx)
    (i, ph), bad = _split(_columns(els, ("current_a", "phase_deg"), ctx.problems, (ANY, ANY)))
    ctx.problems.flag(els, bad, "current_a and phase_deg must be finite")
    j = _source_phasor(ctx, els, np.where(bad, 0.0, i), np.where(bad, 0.0, ph))
    ctx.b.add(INJECTION, idx, 1, na, nb, j)


def _switch(ctx: _Ctx, idx: np.ndarray) -> None:
    els, na, nb = ctx.two_terminal(idx)
    closed = _bools(els, "closed", ctx.problems)
    ctx.impedance_split(idx[closed], na[closed], nb[closed], np.zeros(int(closed.sum())))
    o = ~closed
    ctx.open(idx[o], na[o], nb[o])


def _cable_run(ctx: _Ctx, idx: np.ndarray) -> None:
    els, na, nb = ctx.two_terminal(idx)
    values, bad = _columns(els, ("length_m", "resistance_ohm_per_m", "reactance_ohm_per_m"), ctx.problems,
                           (ABOVE_0, AT_LEAST_0, AT_LEAST_0))
    loop = _bools(els, "go_and_return", ctx.problems)
    ctx.problems.flag(els, bad, "length_m must be > 0, per-metre R and X finite and >= 0")
    if _any(bad):
        values = np.where(bad[:, None], (1.0, 1.0, 0.0), values)
    length, r, x = values.T
    eff = length * np.where(loop, 2.0, 1.0)
    z = ctx.complex_or_real(eff * r, eff * x)
    ctx.impedance_split(idx, na, nb, z)


def _load(ctx: _Ctx, idx: np.ndarray) -> None:
    els, na, nb = ctx.two_terminal(idx)
    values, bad = _columns(els, ("rated_power_w", "rated_voltage_v", "power_factor"), ctx.problems,
                           (ABOVE_0, ABOVE_0, FRACTION))
    leading = _bools(els, "leading", ctx.problems)
    model = [e.model for e in els]
    ctx.problems.flag(els, bad, "rated_power_w and rated_voltage_v must be > 0, power_factor in (0, 1]")
    k = np.array([_LOAD_EXPONENT.get(mo, math.nan) if isinstance(mo, str) else math.nan for mo in model])
    unknown = np.isnan(k)
    ctx.problems.flag(els, unknown, f"model must be one of {', '.join(m.LOAD_MODELS)}")
    if _any(bad):
        values = np.where(bad[:, None], 1.0, values)
    p, v0, pf = values.T
    if ctx.dc:
        s0 = p.copy()
    else:
        q = p * np.tan(np.arccos(pf))
        if _any(leading):
            q = np.where(leading, -q, q)
        s0 = p + 1j * q
    k = np.where(unknown, 0.0, k)
    # Y = conj(S)/|V|^2 at rated voltage; a lagging load (Q > 0) is inductive.
    lin = k == 2.0
    linear = np.count_nonzero(lin)
    if linear == lin.size:
        ctx.b.add(ADMITTANCE, idx, 1, na, nb, np.conj(s0) / (v0 * v0))
        return
    if linear:
        ctx.b.add(ADMITTANCE, idx[lin], 1, na[lin], nb[lin], np.conj(s0[lin]) / (v0[lin] * v0[lin]))
    nl = ~lin
    if _any(nl):
        kk, vv = k[nl], v0[nl]
        c = np.conj(s0[nl]) / vv**kk  # i = c |v|^(k-2) v gives S = S0 (|v|/V0)^k
        ctx.b.add(NONLINEAR, idx[nl], 1, na[nl], nb[nl], c, kk, vv, ctx.guard_pu * vv, s0[nl])


def _three_phase(ctx: _Ctx, idx: np.ndarray) -> None:
    els = [ctx.elements[i] for i in idx]
    lines = [ctx.nodes(els, t) for t in ("l1", "l2", "l3")]
    neutral = ctx.nodes(els, "neutral")
    nodes4 = np.stack([*lines, neutral], axis=1)
    for j, e in enumerate(els):
        if len(set(nodes4[j].tolist())) < 4:
            ctx.self_loops.append(e.id)
    (v, r, x), bad = _split(_columns(els, ("line_to_neutral_voltage_v", "internal_resistance_ohm",
                                           "internal_reactance_ohm"), ctx.problems, (ABOVE_0, AT_LEAST_0, ANY)))
    ctx.problems.flag(els, bad, "line_to_neutral_voltage_v must be > 0, internal R >= 0")
    known = m.POSITIVE_SEQUENCE + m.NEGATIVE_SEQUENCE
    seq_bad = np.array([e.sequence not in known for e in els])
    ctx.problems.flag(els, seq_bad, 'sequence must be "positive" ("L1-L2-L3") or "negative" ("L1-L3-L2")')
    if ctx.dc:
        ctx.problems.flag(els, np.ones(len(els), bool), "a three-phase supply needs an AC frequency")
        return
    angles = np.array([e.phase_angles_deg if e.sequence in known else (0, 0, 0) for e in els])
    e3 = np.where(bad, 0.0, v)[:, None] * np.exp(1j * np.deg2rad(angles))
    z = (np.where(bad, 0.0, r) + 1j * np.where(bad, 0.0, x))[:, None].repeat(3, axis=1)
    a3 = np.stack(lines, axis=1)
    n3 = neutral[:, None].repeat(3, axis=1)
    # Row-major ravel keeps the three phases of one supply consecutive, L1 first.
    ctx.b.add(BRANCH, idx, 3, a3.ravel(), n3.ravel(), e3.ravel(), z.ravel())


def _resistor_array(ctx: _Ctx, idx: np.ndarray) -> None:
    for i in idx:
        e = ctx.elements[i]
        a = np.asarray(e.a, dtype=np.int64)
        bb = np.asarray(e.b, dtype=np.int64)
        r = np.asarray(e.resistance_ohm, dtype=np.float64)
        if not (a.ndim == bb.ndim == r.ndim == 1 and a.size == bb.size == r.size):
            ctx.problems.items.append((e.id, "a, b and resistance_ohm must be 1-D arrays of equal length"))
            continue
        rbad = ~(np.isfinite(r) & (r > 0))
        if rbad.any():
            ctx.problems.items.append((e.id, f"{int(rbad.sum())} resistance(s) not finite and > 0"))
            continue
        if np.any(a == bb):
            ctx.self_loops.append(e.id)
        na = ctx.table.label_indices(a)
        nb = ctx.table.label_indices(bb)
        ctx.b.add(ADMITTANCE, np.asarray([i]), -1, na, nb, (1.0 / r).astype(ctx.b.dtype))


_HANDLERS: dict[type, Callable[[_Ctx, np.ndarray], None]] = {
    m.Resistor: _resistor,
    m.Impedance: _impedance,
    m.SeriesRLC: _series_rlc,
    m.Inductor: _inductor,
    m.Capacitor: _capacitor,
    m.VoltageSource: _voltage_source,
    m.CurrentSource: _current_source,
    m.Switch: _switch,
    m.CableRun: _cable_run,
    m.Load: _load,
    m.ThreePhaseSupply: _three_phase,
    m.ResistorArray: _resistor_array,
}
