"""Every structured error of the network solver names the right elements and nodes.

The expected culprits follow from circuit theory, not from the solver: a node
set reached only through current sources is a cut-set (KCL fixes the sum of
their currents), ideal sources in a loop contradict KVL, and a node with no
conducting path has no defined voltage (any circuits text; from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from service.core.errors import CalcError
from service.core.network import (
    CableRun,
    Capacitor,
    CurrentSource,
    CurrentSourceCutsetError,
    DuplicateElementIdError,
    EmptyNetworkError,
    FloatingNodesError,
    Impedance,
    Inductor,
    InvalidNodeError,
    InvalidValueError,
    Load,
    Network,
    NetworkError,
    Resistor,
    ResistorArray,
    SeriesRLC,
    ResonanceError,
    SingularNetworkError,
    SolveOptions,
    Switch,
    ThreePhaseSupply,
    VoltageSource,
    VoltageSourceLoopError,
    solve,
)

V = VoltageSource


def net(*elements, f=None, ref="0"):
    return Network(elements=tuple(elements), frequency_hz=f, reference_node=ref)


def raises(exc, network, options=None) -> NetworkError:
    with pytest.raises(exc) as info:
        solve(network, options)
    err = info.value
    assert isinstance(err, CalcError) and err.code == exc.CODE
    assert err.detail and err.how_to_fix
    return err


def test_empty_network():
    raises(EmptyNetworkError, net())


def test_duplicate_ids_are_named_with_their_position():
    err = raises(DuplicateElementIdError, net(V("a", "1", "0", 1.0), Resistor("r", "1", "0", 1.0), Resistor("r", "1", "0", 2.0)))
    assert err.element_ids == ("r",)
    assert err.blames[0].location == ("elements", 2)  # the later duplicate


@pytest.mark.parametrize("bad", ["", None, 5])
def test_empty_or_non_text_node_names_blame_the_element(bad):
    err = raises(InvalidNodeError, net(V("a", "1", "0", 1.0), Resistor("r", "1", bad, 1.0)))
    assert err.element_ids == ("r",)


def test_reference_node_not_used():
    err = raises(InvalidNodeError, net(V("a", "1", "2", 1.0), Resistor("r", "1", "2", 1.0)))
    assert err.node_names == ("0",)


def test_unknown_node_in_thevenin_request():
    err = raises(InvalidNodeError, net(V("a", "1", "0", 1.0), Resistor("r", "1", "0", 1.0)),
                 SolveOptions(thevenin_between=(("1", "nowhere"),)))
    assert err.node_names == ("nowhere",)


@pytest.mark.parametrize(
    "element",
    [
        Resistor("x", "1", "2", -1.0),
        Resistor("x", "1", "2", math.nan),
        Resistor("x", "1", "2", math.inf),
        Resistor("x", "1", "2", "ten"),
        Impedance("x", "1", "2", -0.1, 1.0),
        Inductor("x", "1", "2", -1e-3),
        Capacitor("x", "1", "2", 0.0),
        SeriesRLC("x", "1", "2", 1.0, 0.0, -1e-6),
        CableRun("x", "1", "2", 0.0, 1e-3),
        CableRun("x", "1", "2", 10.0, -1e-3),
        Load("x", "1", "2", 0.0, 230.0),
        Load("x", "1", "2", 100.0, 230.0, power_factor=1.2),
        Load("x", "1", "2", 100.0, 230.0, model="constant_speed"),
        V("x", "1", "2", 10.0, internal_resistance_ohm=-1.0),
        CurrentSource("x", "1", "2", math.nan),
        Switch("x", "1", "2", "yes"),
        ThreePhaseSupply("x", "1", "2", "3", "0", 230.0, "L2-L1-L3"),
    ],
)
def test_non_physical_values_name_the_element(element):
    err = raises(InvalidValueError, net(V("s", "1", "0", 10.0), Resistor("r", "2", "0", 1.0), element, f=50.0))
    assert err.element_ids == ("x",)
    assert err.data["problems"][0]["element"] == "x"


def test_subnormal_resistance_is_solved_in_impedance_form_not_refused():
    # 5e-324 ohm: 1/R overflows double precision, but in impedance form (its current an unknown) the series
    # circuit is exact: I = 10 V / (1 ohm + 5e-324 ohm) = 10 A through both resistors (Ohm's law).
    sol = solve(net(V("s", "1", "0", 10.0), Resistor("x", "1", "2", 5e-324), Resistor("r", "2", "0", 1.0), f=50.0))
    assert sol.element("x").current.magnitude == pytest.approx(10.0, rel=1e-15)
    assert sol.element("r").current.magnitude == pytest.approx(10.0, rel=1e-15)
    assert any("'x'" in a and "impedance form" in a for a in sol.assumptions)


def test_all_bad_values_reported_at_once():
    err = raises(InvalidValueError, net(V("s", "1", "0", 10.0), Resistor("r1", "1", "0", -1.0), Resistor("r2", "1", "0", math.nan)))
    assert set(err.element_ids) == {"r1", "r2"}


def test_impedance_with_reactance_in_dc_is_rejected():
    err = raises(InvalidValueError, net(V("s", "1", "0", 10.0), Impedance("z", "1", "0", 1.0, 2.0)))
    assert err.element_ids == ("z",)


def test_three_phase_supply_needs_ac():
    err = raises(InvalidValueError, net(ThreePhaseSupply("G", "a", "b", "c", "0", 230.0), Resistor("r", "a", "0", 1.0)))
    assert err.element_ids == ("G",)


def test_negative_frequency():
    raises(InvalidValueError, net(V("s", "1", "0", 10.0), Resistor("r", "1", "0", 1.0), f=-50.0))


def test_element_on_a_single_node():
    err = raises(InvalidValueError, net(V("s", "1", "0", 10.0), Resistor("r", "1", "1", 1.0), Resistor("q", "1", "0", 1.0)))
    assert err.element_ids == ("r",)


def test_resistor_array_with_bad_values_or_labels():
    arr = ResistorArray("grid", np.array([1, 2]), np.array([2, 0]), np.array([1.0, 0.0]))
    err = raises(InvalidValueError, net(V("s", "1", "0", 1.0), arr))
    assert err.element_ids == ("grid",)
    arr = ResistorArray("grid", np.array([1, -2]), np.array([2, 0]), np.array([1.0, 1.0]))
    err = raises(InvalidNodeError, net(V("s", "1", "0", 1.0), arr))
    assert err.element_ids == ("grid",)


def test_floating_island_names_its_nodes():
    err = raises(FloatingNodesError, net(V("s", "1", "0", 1.0), Resistor("r", "1", "0", 1.0), Resistor("island", "x", "y", 5.0)))
    assert set(err.node_names) == {"x", "y"}
    assert err.data["floating_node_count"] == 2


def test_open_switch_leaves_nodes_floating_and_is_named():
    err = raises(FloatingNodesError, net(V("s", "1", "0", 1.0), Resistor("r", "1", "0", 1.0), Switch("sw", "1", "2", False), Resistor("q", "2", "3", 1.0)))
    assert set(err.node_names) == {"2", "3"}
    assert err.element_ids == ("sw",)


def test_dc_capacitor_is_no_path_but_ac_capacitor_is():
    parts = (V("s", "1", "0", 1.0), Capacitor("c", "1", "2", 1e-6), Resistor("r", "2", "3", 1.0))
    err = raises(FloatingNodesError, net(*parts))
    assert set(err.node_names) == {"2", "3"}
    assert solve(net(*parts, Resistor("g", "3", "0", 1.0), f=50.0)).converged


def test_current_source_cutset_names_the_sources():
    err = raises(CurrentSourceCutsetError, net(
        V("s", "1", "0", 1.0), Resistor("r", "1", "0", 1.0),
        CurrentSource("i1", "1", "5", 2.0), CurrentSource("i2", "6", "0", 1.0), Resistor("q", "5", "6", 1.0),
    ))
    assert set(err.element_ids) == {"i1", "i2"}
    assert set(err.node_names) == {"5", "6"}


def test_current_source_into_a_dc_capacitor_node():
    err = raises(CurrentSourceCutsetError, net(V("s", "1", "0", 1.0), Resistor("r", "1", "0", 1.0),
                                               Capacitor("c", "1", "2", 1e-6), CurrentSource("i", "2", "0", 1.0)))
    assert err.element_ids == ("i",)
    assert err.node_names == ("2",)


@pytest.mark.parametrize(
    "loop, extra",
    [
        (("v1", "v2"), (V("v1", "1", "0", 1.0), V("v2", "1", "0", 2.0))),
        (("v1", "sw"), (V("v1", "1", "0", 1.0), Switch("sw", "1", "0", True))),
        (("v1", "L"), (V("v1", "1", "0", 1.0), Inductor("L", "1", "0", 1e-3))),  # DC: L is a short
        (("v1", "v2", "v3"), (V("v1", "1", "0", 1.0), V("v2", "1", "2", 1.0), V("v3", "2", "0", 1.0))),
        (("v1", "r0"), (V("v1", "1", "0", 1.0), Resistor("r0", "0", "1", 0.0))),
    ],
)
def test_voltage_source_loops_name_exactly_the_loop(loop, extra):
    # A dangling short and a resistor hang off the loop and must not be named.
    err = raises(VoltageSourceLoopError, net(*extra, Switch("tail", "1", "9", True), Resistor("r", "9", "0", 3.0)))
    assert set(err.element_ids) == set(loop)


def test_inductor_parallel_to_source_is_fine_at_ac():
    sol = solve(net(V("v1", "1", "0", 1.0), Inductor("L", "1", "0", 1e-3), f=50.0))
    assert sol.element("L").current.magnitude == pytest.approx(1.0 / (2 * math.pi * 50 * 1e-3))


def test_loop_detection_scales_beyond_the_small_union_find_path():
    # 3000 closed switches in a chain plus one closing the ring: the graph path.
    n = 3000
    parts = [Switch(f"s{k}", str(k), str(k + 1), True) for k in range(1, n)]
    parts += [Switch("close", str(n), "1", True), V("v", "1", "0", 1.0), Resistor("r", "5", "0", 1.0)]
    err = raises(VoltageSourceLoopError, net(*parts))
    # The ring is s1..s2999 + close = 3000 elements, listed up to the cap of 50;
    # the source hanging off the ring is not part of it.
    assert len(err.element_ids) == 50 and err.omitted_element_ids == 3000 - 50 and "v" not in err.element_ids


def test_exact_series_resonance_across_a_source_is_singular_and_names_the_loop():
    # X_L = wL and X_C = 1/(wC) cancel when C = 1/(w^2 L): the loop impedance is 0 across an ideal source, so no
    # steady state exists (series resonance, any circuits text, from memory). The loop is v, L and C.
    w = 2 * math.pi * 50.0
    err = raises(ResonanceError, net(V("v", "1", "0", 1.0), Inductor("L", "1", "2", 1.0), Capacitor("C", "2", "0", 1 / w**2), f=50.0))
    assert isinstance(err, SingularNetworkError)
    assert set(err.element_ids) == {"v", "L", "C"}
    assert "resonant at this frequency" in err.detail


def test_bad_options():
    n = net(V("v", "1", "0", 1.0), Resistor("r", "1", "0", 1.0))
    for opts in (SolveOptions(max_iterations=0), SolveOptions(load_guard_voltage_pu=0.0),
                 SolveOptions(tolerance_a=-1.0), SolveOptions(on_load_undervoltage="ignore")):
        raises(InvalidValueError, n, opts)


def test_long_culprit_lists_are_capped():
    parts = [V("v", "1", "0", 1.0), Resistor("r", "1", "0", 1.0)]
    parts += [Resistor(f"f{k}", f"a{k}", f"b{k}", 1.0) for k in range(200)]
    err = raises(FloatingNodesError, net(*parts))
    assert len(err.node_names) == 50 and err.omitted > 0
