"""Circuit laws that must hold for any network the solver accepts (hypothesis).

Kirchhoff's laws, Tellegen's theorem (power balance), superposition and
reciprocity for linear networks, series/parallel equivalence, and balanced
three-phase identities (any circuits / power-systems text, from memory).
KCL and power balance are recomputed here from the per-element results, not
taken from the solver's own residual fields.
"""

from __future__ import annotations

import cmath
import math
from collections import defaultdict

import numpy as np
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from service.core.network import (
    Capacitor,
    CurrentSource,
    Impedance,
    Inductor,
    Load,
    Network,
    Resistor,
    SolveOptions,
    ThreePhaseSupply,
    VoltageSource,
    solve,
)

SETTINGS = settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.too_slow])


@st.composite
def linear_networks(draw, ac: bool | None = None, sources: bool = True):
    """A random connected network: a resistive/reactive spanning tree to ground
    plus extra branches, voltage sources that never form a loop, current sources."""
    if ac is None:
        ac = draw(st.booleans())
    n = draw(st.integers(2, 12))
    seed = draw(st.integers(0, 2**32 - 1))
    rng = np.random.default_rng(seed)
    parts = []
    for k in range(1, n + 1):
        parent = int(rng.integers(0, k))
        parts.append(_passive(rng, f"t{k}", str(k), str(parent), ac))
    for j in range(int(rng.integers(0, n + 1))):
        a, b = rng.choice(n + 1, 2, replace=False)
        parts.append(_passive(rng, f"x{j}", str(a), str(b), ac))
    if sources:
        used: set[int] = set()
        for j in range(int(rng.integers(1, 3))):
            a = int(rng.integers(1, n + 1))
            if a in used:
                continue
            used.add(a)  # each source to ground from a distinct node: no source loop
            parts.append(VoltageSource(f"V{j}", str(a), "0", float(rng.uniform(-400, 400)),
                                       float(rng.uniform(-180, 180)) if ac else 0.0))
        for j in range(int(rng.integers(0, 3))):
            a, b = rng.choice(n + 1, 2, replace=False)
            parts.append(CurrentSource(f"I{j}", str(a), str(b), float(rng.uniform(-20, 20)),
                                       float(rng.uniform(-180, 180)) if ac else 0.0))
    return Network(elements=tuple(parts), frequency_hz=50.0 if ac else None)


def _passive(rng, name, a, b, ac):
    kind = rng.integers(0, 4) if ac else 0
    if kind == 0:
        return Resistor(name, a, b, float(10 ** rng.uniform(-2, 3)))
    if kind == 1:
        return Impedance(name, a, b, float(10 ** rng.uniform(-2, 2)), float(rng.uniform(-50, 50)))
    if kind == 2:
        return Inductor(name, a, b, float(10 ** rng.uniform(-4, -1)))
    return Capacitor(name, a, b, float(10 ** rng.uniform(-6, -3)))


def node_current_sums(sol):
    """Sum of element currents leaving each node, from the element records."""
    total = defaultdict(complex)
    scale = 0.0
    for r in sol.element_results():
        i = r.current.value
        total[r.a] += i
        total[r.b] -= i
        scale = max(scale, abs(i))
    total.pop("0", None)
    return total, scale


@SETTINGS
@given(linear_networks())
def test_kcl_holds_at_every_node(net):
    sol = solve(net)
    sums, scale = node_current_sums(sol)
    assert max(abs(v) for v in sums.values()) <= 1e-9 * max(scale, 1.0)
    assert sol.max_kcl_residual_a <= 1e-9 * max(scale, 1.0)


@SETTINGS
@given(linear_networks())
def test_power_balance_supplied_equals_consumed_plus_lost(net):
    sol = solve(net)
    s_sources = sum(complex(r.supplied_w, r.supplied_var) for r in sol.element_results() if r.supplied_w is not None)
    s_rest = sum(complex(r.p_w, r.q_var) for r in sol.element_results() if r.supplied_w is None)
    scale = max(abs(s_sources), sum(r.s_va for r in sol.element_results()), 1.0)
    assert abs(s_sources - s_rest) <= 1e-9 * scale
    t = sol.totals
    assert abs(complex(t.supplied_w, t.supplied_var) - complex(t.consumed_by_loads_w + t.conductor_loss_w,
                                                             t.consumed_by_loads_var + t.network_reactive_var)) <= 1e-9 * scale
    assert t.conductor_loss_w >= -1e-9 * scale  # passive elements never generate


def _zeroed(net: Network, keep: str) -> Network:
    """Same network with every independent source but `keep` set to zero
    (voltage source -> 0 V short, current source -> 0 A open)."""
    out = []
    for e in net.elements:
        if isinstance(e, VoltageSource) and e.id != keep:
            e = VoltageSource(e.id, e.pos, e.neg, 0.0)
        elif isinstance(e, CurrentSource) and e.id != keep:
            e = CurrentSource(e.id, e.a, e.b, 0.0)
        out.append(e)
    return Network(elements=tuple(out), frequency_hz=net.frequency_hz)


@SETTINGS
@given(linear_networks())
def test_superposition(net):
    sources = [e.id for e in net.elements if isinstance(e, (VoltageSource, CurrentSource))]
    full = solve(net)
    parts = [solve(_zeroed(net, s)) for s in sources]
    names = full.node_names()
    # Round-off in any node voltage is relative to the largest voltages in the solves, not to that node's own
    # (a node near 0 V carries the same absolute error as its neighbours): one scale for the whole network.
    scale = max([abs(s.voltage(n).voltage.value) for s in (full, *parts) for n in names] + [1e-6])
    for name in names:
        want = full.voltage(name).voltage.value
        got = sum(p.voltage(name).voltage.value for p in parts)
        assert abs(got - want) <= 1e-8 * scale


@SETTINGS
@given(linear_networks(ac=False, sources=False), st.data())
def test_reciprocity_of_transfer_resistance(net, data):
    # Passive resistive network: inject 1 A at i, read v_j  ==  inject at j, read v_i.
    nodes = sorted(({e.a for e in net.elements} | {e.b for e in net.elements}) - {"0"})
    i = data.draw(st.sampled_from(nodes))
    j = data.draw(st.sampled_from(nodes))
    def inject(at):
        return solve(Network(elements=net.elements + (CurrentSource("J", "0", at, 1.0),)))
    r_ij = inject(i).voltage(j).voltage.real
    r_ji = inject(j).voltage(i).voltage.real
    assert abs(r_ij - r_ji) <= 1e-9 * max(abs(r_ij), 1e-9)


@SETTINGS
@given(st.lists(st.tuples(st.floats(0.01, 1e3), st.floats(-100, 100)), min_size=1, max_size=8), st.booleans())
def test_series_and_parallel_equivalence(zs, series):
    zs = [complex(r, x) for r, x in zs]
    if series:
        parts = [Impedance(f"Z{k}", str(k), str(k + 1), z.real, z.imag) for k, z in enumerate(zs)]
        parts.append(VoltageSource("V", str(len(zs)), "0", 100.0, 0.0))
        # a chain from the reference through every impedance to the source's node
        z_eq = sum(zs)
    else:
        parts = [Impedance(f"Z{k}", "1", "0", z.real, z.imag) for k, z in enumerate(zs)]
        parts.append(VoltageSource("V", "1", "0", 100.0))
        z_eq = 1 / sum(1 / z for z in zs)
    assume(abs(z_eq) > 1e-6)
    sol = solve(Network(elements=tuple(parts), frequency_hz=50.0))
    i = -sol.element("V").current.value  # delivered out of the + terminal
    assert abs(100.0 / i - z_eq) <= 1e-9 * abs(z_eq)


@SETTINGS
@given(st.floats(1.0, 100.0), st.floats(-60.0, 60.0), st.floats(100.0, 1000.0), st.sampled_from(["positive", "negative"]),
       st.one_of(st.just(0.0), st.floats(1e-6, 1.0)))
def test_balanced_three_phase_load_has_no_neutral_current_and_sqrt3_line_voltage(zmag, zang, v, seq, zn):
    z = cmath.rect(zmag, math.radians(zang))
    parts = [ThreePhaseSupply("G", "A", "B", "C", "0", v, seq, 0.01, 0.02)]
    parts += [Impedance(f"Z{p}", p, "S", z.real, z.imag) for p in "ABC"]
    parts.append(Resistor("N", "S", "0", zn))
    sol = solve(Network(elements=tuple(parts), frequency_hz=50.0))
    g = sol.element("G")
    i_line = g.phases[0].line_current.magnitude
    assert g.neutral_current.magnitude <= 1e-9 * i_line
    assert sol.element("N").current.magnitude <= 1e-9 * i_line
    for ll, ph in zip(g.line_to_line_voltages, g.phases):
        assert abs(ll.voltage.magnitude - math.sqrt(3) * ph.voltage_to_neutral.magnitude) <= 1e-9 * v


@SETTINGS
@given(st.floats(100.0, 1000.0), st.floats(0.001, 1.0), st.floats(-2.0, 2.0), st.floats(0.05, 1.0),
       st.floats(0.5, 1.0), st.booleans(), st.sampled_from(["constant_power", "constant_current"]), st.booleans())
def test_nonlinear_load_draws_its_rated_power_when_converged(v, r, x, frac, pf, leading, model, ac):
    # Size the load as a fraction of the maximum the source can deliver at rated voltage.
    z = complex(r, x if ac else 0.0)
    phi = math.acos(pf) * (-1 if leading else 1) if ac else 0.0
    s_max = v * v / (2 * (abs(z) + z.real * math.cos(phi) + z.imag * math.sin(phi)))
    p = 0.3 * frac * s_max * (pf if ac else 1.0)
    net = Network(frequency_hz=50.0 if ac else None, elements=(
        VoltageSource("E", "1", "0", v), Impedance("Z", "1", "2", z.real, z.imag),
        Load("L", "2", "0", p, v, pf, leading, model),
    ))
    sol = solve(net, SolveOptions(on_load_undervoltage="constant_impedance"))
    assert sol.converged
    load = sol.element("L")
    if not load.below_guard_voltage:
        want = 1.0 if model == "constant_power" else load.voltage.magnitude / v
        assert abs(load.rated_power_fraction - want) <= 1e-9


# --------------------------------------------------------------------------- the element count of the limits


@given(st.lists(st.integers(0, 4), max_size=30), st.integers(0, 4))
@settings(max_examples=60, deadline=None)
def test_every_element_adds_to_the_count_the_limits_see(branches, extra):
    """Adding an element, an empty array included, always raises the count the element limit and the inline
    decision use (issue 21, item 3: empty arrays once counted zero; common practice: every element costs work)."""
    from service.api.network_input import element_count
    from service.api.schemas.v1 import networks as s

    def request(sizes):
        arrays = [s.ResistorArrayIn(id=f"g{k}", a=[1] * n, b=[2] * n, resistance=[1.0] * n)
                  for k, n in enumerate(sizes)]
        return s.NetworkSolveRequest(elements=arrays)

    before, after = element_count(request(branches)), element_count(request([*branches, extra]))
    assert after >= before + 1 + extra
