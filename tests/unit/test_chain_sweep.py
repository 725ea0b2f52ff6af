"""The radial sweep of a lead chain (service/core/network/radial.py, service/core/chains/sweep.py).

Method: cross-check against the general MNA solver, service.core.network (solve() on the network
circuit.chain_network builds for the same chain): node voltages, lead and appliance currents, powers and the
fault-loop impedances on random chains (hypothesis), and the whole chain analysis with the sweep against the
same analysis with every solve left to the general solver.  The closed-form cases are the textbook solutions
of one load on a resistive source (common practice: V = E - I R; V^2 - E V + P R = 0 for constant power).
"""

from __future__ import annotations

import dataclasses
from unittest import mock

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.core.chains import Appliance, Chain, Lead, SourceImpedance, Supply, analyse_chain
from service.core.chains.circuit import FAULT_TEMPERATURE_C, chain_network, lead_id, outlet_node, appliance_id
from service.core.chains.sweep import chain_ladder, solve_by_sweep
from service.core.conductors import SizeSpec, default_library
from service.core.errors import CalcError
from service.core.network import (
    ConvergenceError,
    InvalidValueError,
    Load,
    LoadUndervoltageError,
    Network,
    NetworkError,
    Resistor,
    VoltageCollapseError,
    VoltageSource,
    solve,
)
from service.core.network.radial import Ladder, ladder

SIZES = (0.75, 1.0, 1.5, 2.5, 4.0)
MODELS = ("constant_impedance", "constant_current", "constant_power")
AGREE = 1e-9  # the agreement asked of the two solvers, relative
# The reference solve is held to a tighter test than the default: the general solver's own test scales with
# |A| |x| (large admittances of short leads), which lets its currents be off by up to ~2e-8 A (4e-9 relative
# seen on a 5 A chain) though its answer is right within its stated tolerance; tight, its Newton converges
# to the rounding floor and the comparison measures the sweep.
TIGHT = dict(tolerance_a=1e-12, relative_tolerance=1e-16)


def _reference(network, options):
    """solve() held to TIGHT; where rounding keeps its Newton from that (a ConvergenceError), a little looser."""
    for relative in (1e-16, 1e-15, 1e-14):
        try:
            return solve(network, dataclasses.replace(options, **{**TIGHT, "relative_tolerance": relative}))
        except ConvergenceError:
            continue
    return solve(network, options)


def cord(area_mm2: float):
    return default_library().find(SizeSpec.metric(area_mm2 * 1e-6), "copper", 5)


@st.composite
def chains(draw, max_leads: int = 20, max_appliances: int = 20):
    n = draw(st.integers(1, max_leads))
    frequency = draw(st.sampled_from([0.0, 50.0, 60.0]))
    inductive = draw(st.booleans())
    ln = SourceImpedance(draw(st.floats(0.0, 1.0)), draw(st.floats(0.0, 0.5)) if inductive else 0.0)
    le = draw(st.none() | st.builds(SourceImpedance, st.floats(0.05, 2.0), st.floats(0.0, 0.5)))
    supply = Supply(draw(st.sampled_from([110.0, 120.0, 230.0])), frequency, ln, le, "TN-S", "B", 16.0, 0.03, 25.0)
    leads = tuple(Lead(f"l{k}", draw(st.floats(0.5, 25.0)), cord(draw(st.sampled_from(SIZES)))) for k in range(n))
    # Sizes of load that a chain mostly can supply; about half the chains still leave a load below its guard
    # voltage or past the transfer limit, which exercises the general solver's errors.
    appliances = tuple(
        Appliance(f"a{j}", draw(st.integers(0, n - 1)), draw(st.floats(10.0, 400.0)),
                  draw(st.sampled_from([supply.nominal_voltage_v] * 3 + [230.0])), draw(st.floats(0.5, 1.0)),
                  draw(st.booleans()), draw(st.sampled_from(MODELS)))
        for j in range(draw(st.integers(0, max_appliances))))
    return Chain(supply, leads, appliances)


# The general solver's rounding of a current it takes from two node voltages: about eps |V| / |Z| through the
# shortest lead (230 V x 2.2e-16 / 0.006 ohm ~ 1e-11 A; a chain without appliances shows 3e-13 A where the sweep
# has exactly 0).  Below this floor two currents are not compared relatively.
CURRENT_FLOOR_A = 1e-10


def _close(a: complex, b: complex, scale: float, floor: float = 0.0) -> bool:
    return abs(a - b) <= max(AGREE * scale, floor)


@settings(max_examples=150, deadline=None, derandomize=True)
@given(chain=chains(), data=st.data())
def test_sweep_agrees_with_the_general_solver(chain, data):
    # Cross-check against the general MNA solver, service.core.network.
    temperatures = tuple(data.draw(st.floats(25.0, 70.0)) for _ in chain.leads)
    per_m = tuple(lead.conductor.resistance_per_m_at(t) for lead, t in zip(chain.leads, temperatures))
    at_fault = tuple(lead.conductor.resistance_per_m_at(FAULT_TEMPERATURE_C) for lead in chain.leads)
    swept = solve_by_sweep(chain, chain_ladder(chain), per_m, at_fault)
    network, options = chain_network(chain, temperatures)
    try:
        solve(network, options)
    except NetworkError:
        assert swept is None  # no answer where the general solver has none: the caller then gets its error
        return
    assert swept is not None
    general = _reference(network, options)
    n = len(chain.leads)
    volts = [general.voltage(outlet_node(k)).voltage for k in range(-1, n)]
    for k, v in enumerate(volts):
        assert _close(swept.voltage(f"L{k}").voltage.value, v.value, v.magnitude)
    ids = ["supply"] + [lead_id(k) for k in range(n)] + [appliance_id(j) for j in range(len(chain.appliances))]
    for element_id in ids:
        g, s = general.element(element_id), swept.element(element_id)
        assert (g.kind, g.a, g.b) == (s.kind, s.a, s.b)
        assert _close(s.current.value, g.current.value, g.current.magnitude, CURRENT_FLOOR_A)
        # Across a lead the general solver's voltage is a difference of node voltages: its rounding is some
        # ulps of |V| (1e-12 V seen), so it is compared to 1e-9 of itself or 1e-12 of the socket's voltage.
        assert _close(s.voltage.value, g.voltage.value, g.voltage.magnitude, 1e-12 * volts[0].magnitude)
        assert _close(complex(s.p_w, s.q_var), complex(g.p_w, g.q_var), g.s_va, CURRENT_FLOOR_A * volts[0].magnitude)
    assert swept.element("supply").internal_loss_w == pytest.approx(general.element("supply").internal_loss_w,
                                                                   rel=AGREE, abs=1e-12)
    assert len(swept.thevenin) == len(general.thevenin) == (2 if chain.supply.line_earth else 1)
    for s, g in zip(swept.thevenin, general.thevenin):
        assert (s.a, s.b) == (g.a, g.b)
        assert _close(complex(s.resistance_ohm, s.reactance_ohm), complex(g.resistance_ohm, g.reactance_ohm),
                      g.impedance_ohm)
        assert _close(s.open_circuit_voltage.value, g.open_circuit_voltage.value, g.open_circuit_voltage.magnitude)
        assert _close(s.source_side, g.source_side, g.impedance_ohm)
    assert swept.power_balance_residual_va <= 1e-6 * max(1.0, general.totals.supplied_w)


def _numbers(record, path=""):
    """Every number of a report, by path (strings and flags compared exactly)."""
    if dataclasses.is_dataclass(record):
        for f in dataclasses.fields(record):
            yield from _numbers(getattr(record, f.name), f"{path}.{f.name}")
    elif isinstance(record, (tuple, list)):
        for i, item in enumerate(record):
            yield from _numbers(item, f"{path}[{i}]")
    else:
        yield path, record


def _floor(path: str) -> float:
    """The general solver's rounding noise in a result of this unit (CURRENT_FLOOR_A, times ~230 V for a power);
    1e-9 in its own unit for the rest (V, %, ohm, degC, kWh)."""
    name = path.rsplit(".", 1)[-1]
    if name.endswith("_a"):
        return CURRENT_FLOOR_A
    if name.endswith(("_w", "_va", "_var")) or "_w_" in name:
        return CURRENT_FLOOR_A * 1e3
    return 1e-9


# Diagnostics of the solve itself, not of the chain: they count the sweep's passes and its own residuals.
SOLVER_DIAGNOSTICS = (".solver_iterations", ".max_kcl_residual_a", ".power_balance_residual_va")


@settings(max_examples=60, deadline=None, derandomize=True)
@given(chain=chains(max_leads=12, max_appliances=12))
def test_the_analysis_is_the_same_with_the_sweep_as_with_the_general_solver(chain):
    # Cross-check against the general MNA solver, service.core.network: the same analysis with every ladder
    # solve refused (Ladder.solve -> None), so circuit.solve_chain uses solve() (held to TIGHT) and the length
    # search prepare() (at its default tolerances: its lengths are compared to 0.05 m).
    def outcome():
        try:
            return analyse_chain(chain), None
        except CalcError as exc:
            # Code and blames: the numbers in the detail come from the general solver in both runs (the sweep
            # leaves failures to it), here at two tolerances; test_collapse_... compares a detail whole.
            return None, (exc.code, exc.blames)

    by_sweep, sweep_error = outcome()
    tight_solve = _reference
    with mock.patch.object(Ladder, "solve", lambda self, *args, **kwargs: None), \
            mock.patch("service.core.chains.circuit.solve", tight_solve):
        by_general, general_error = outcome()
    assert sweep_error == general_error
    if by_general is None:
        return
    for (path, s), (path_g, g) in zip(_numbers(by_sweep), _numbers(by_general), strict=True):
        assert path == path_g
        if path in SOLVER_DIAGNOSTICS:
            continue
        if isinstance(g, float) and not isinstance(s, bool):
            # The length search stops within LENGTH_TOLERANCE_M (0.05 m); its probes agree to 1e-9, but a probe
            # that far inside the bracket can still fall on either side of it.
            tol = 0.05 if path.startswith(".length_limits") and path.endswith("_m") else \
                max(AGREE * abs(g), _floor(path))
            assert abs(s - g) <= tol, path
        elif path.endswith("recommendations") or isinstance(g, str) and any(c.isdigit() for c in g):
            continue  # text with numbers in it: the numbers are compared where they are fields
        else:
            assert s == g, path


def _one_load(model: str, power_w: float, e_v: float = 230.0, r_ohm: float = 1.0) -> Ladder:
    return ladder(e_v, r_ohm, 0.0, 1, [(1, Load("x", "1", "0", power_w, e_v, model=model))], 0.0)


def test_constant_power_load_on_a_resistive_source_is_the_upper_root():
    # V^2 - E V + P R = 0, upper root V = E/2 + sqrt(E^2/4 - P R) (common practice). E = 230 V, R = 1 ohm in
    # all (0.5 ohm source, 0.5 ohm lead); P = 9918.75 W gives V = 172.5 V exactly (0.75 pu, above the guard).
    flow = ladder(230.0, 0.5, 0.0, 1, [(1, Load("x", "1", "0", 9918.75, 230.0, model="constant_power"))],
                  0.0).solve((0.5,))
    assert flow is not None
    assert flow.node_voltage_v[1].real == pytest.approx(172.5, rel=1e-12)
    assert flow.load_current_a[0].real == pytest.approx(9918.75 / 172.5, rel=1e-12)


def test_constant_current_load_drops_i_times_r():
    # V = E - I R with I = P / V0 (common practice): 2300 W at 230 V is 10 A; 1 ohm drops 10 V.
    flow = _one_load("constant_current", 2300.0).solve((0.0,))
    assert flow.node_voltage_v[1].real == pytest.approx(220.0, rel=1e-12)


def test_collapse_is_left_to_the_general_solver_and_its_error():
    # Above E^2 / 4R = 13225 W no operating point exists (maximum power transfer, common practice): the sweep
    # gives no answer, and the chain analysis reports the general solver's VoltageCollapseError as before.
    assert _one_load("constant_power", 13300.0).solve((0.0,)) is None
    chain = Chain(Supply(230.0, 50.0, SourceImpedance(0.8), None, "TN-S", None, None, None),
                  (Lead("reel", 50.0, cord(1.5)),), (Appliance("heater", 0, 12000.0, 230.0, model="constant_power"),))
    with pytest.raises(VoltageCollapseError):
        solve(*chain_network(chain, (70.0,)))
    # A collapse is a result (a fail verdict with the supply_collapse check), the same as through the general solver.
    report = analyse_chain(chain)
    with mock.patch.object(Ladder, "solve", lambda self, *args, **kwargs: None):
        before = analyse_chain(chain)  # every solve by the general solver, as before the sweep
    assert report.verdict == "fail" and [c.code for c in report.checks if c.code == "supply_collapse"]
    assert report.unsupplied == before.unsupplied and report.unsupplied[0].name == "heater"
    assert report.unsupplied[0].max_power_w is not None  # the per-load limit from the general solver's error data


def test_constant_impedance_ladder_is_solved_in_one_pass():
    # A linear ladder: each pass is an exact solve (module docstring), so one pass leaves no mismatch.
    loads = [(k, Load(f"r{k}", "", "0", 500.0, 230.0, 0.8)) for k in (1, 2, 3)]
    flow = ladder(230.0, 0.3, 0.1, 3, loads, 50.0).solve((0.2, 0.2, 0.2))
    assert flow.passes == 1 and flow.kcl_mismatch_a == 0.0


@pytest.mark.parametrize("resistance_ohm, below_guard", [(6.67, False), (7.13, True)])
def test_a_load_left_below_its_guard_voltage_is_the_general_solvers_to_report(resistance_ohm, below_guard):
    # A constant-current load of 10 A (2300 W at 230 V) drops V = E - I R (common practice): 163.3 V = 0.71 pu
    # on 6.67 ohm, above the 0.7 pu guard (SolveOptions.load_guard_voltage_pu); 158.7 V = 0.69 pu on 7.13 ohm,
    # below it, where the general solver raises LoadUndervoltageError (on_load_undervoltage="error").
    flow = _one_load("constant_current", 2300.0, r_ohm=0.0).solve((resistance_ohm,))
    network = Network(elements=(VoltageSource("E", "0s", "0", 230.0),
                                Resistor("R", "0s", "1", resistance_ohm), Load("x", "1", "0", 2300.0, 230.0,
                                                                               model="constant_current")))
    if below_guard:
        assert flow is None
        with pytest.raises(LoadUndervoltageError):
            solve(network)
    else:
        assert flow.node_voltage_v[1].real == pytest.approx(230.0 - 10.0 * resistance_ohm, rel=1e-12)
        assert solve(network).voltage("1").voltage.magnitude == pytest.approx(flow.node_voltage_v[1].real, rel=1e-12)


@pytest.mark.parametrize("frequency_hz, earth_loop", [(0.0, SourceImpedance(0.7, -0.05)),
                                                     (-50.0, SourceImpedance(0.7, 0.05))])
def test_values_the_general_solver_refuses_are_left_to_it(frequency_hz, earth_loop):
    # A capacitive internal reactance has no DC meaning (a series capacitor blocks direct current), and a
    # negative frequency none at all: solve() refuses both (InvalidValueError); the sweep must not answer.
    supply = Supply(230.0, frequency_hz, SourceImpedance(0.4), earth_loop, "TN-S", "B", 16.0, None)
    chain = Chain(supply, (Lead("lead", 10.0, cord(1.5)),), (Appliance("lamp", 0, 60.0, 230.0),))
    per_m = (cord(1.5).resistance_per_m_at(70.0),)
    with pytest.raises(InvalidValueError):
        solve(*chain_network(chain, (70.0,)))
    assert solve_by_sweep(chain, chain_ladder(chain), per_m, per_m) is None
    with pytest.raises(CalcError):
        analyse_chain(chain)
