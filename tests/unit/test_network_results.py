"""Result records, totals, conventions and the compact array form.

Expected values are Ohm's/Kirchhoff's laws worked by hand in each test
(any circuits text, from memory) or the model's documented conventions.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from service.core.network import (
    ArrayElementResult,
    CableRun,
    Capacitor,
    CurrentSource,
    Inductor,
    Load,
    Network,
    NonFiniteResultError,
    Resistor,
    ResistorArray,
    SeriesRLC,
    SolveOptions,
    Switch,
    ThreePhaseSupply,
    VoltageSource,
    solve,
)


def test_voltage_divider_values_directions_and_powers():
    # E = 12 V, R1 = 2, R2 = 4: I = 2 A, V2 = 8 V; P_R1 = 8 W, P_R2 = 16 W.
    sol = solve(Network(elements=(VoltageSource("E", "1", "0", 12.0), Resistor("R1", "1", "2", 2.0),
                                  Resistor("R2", "2", "0", 4.0))))
    assert sol.voltage("2").voltage.real == pytest.approx(8.0)
    r1 = sol.element("R1")
    assert (r1.a, r1.b, r1.current.real, r1.p_w) == ("1", "2", pytest.approx(2.0), pytest.approx(8.0))
    src = sol.element("E")
    assert src.current.real == pytest.approx(-2.0)  # pos -> neg through the source, as in SPICE
    assert src.supplied_w == pytest.approx(24.0)
    t = sol.totals
    assert (t.supplied_w, t.conductor_loss_w, t.consumed_by_loads_w) == (pytest.approx(24.0), pytest.approx(24.0), 0.0)
    assert t.cable_loss_w == 0.0
    assert sol.power_balance_residual_va < 1e-12 and sol.max_kcl_residual_a < 1e-12
    assert sol.converged and sol.iterations == 1


def test_negative_dc_voltage_has_angle_180_and_signed_real_part():
    sol = solve(Network(elements=(VoltageSource("E", "0", "1", 5.0), Resistor("R", "1", "0", 1.0))))
    v = sol.voltage("1").voltage
    assert v.real == pytest.approx(-5.0) and v.magnitude == pytest.approx(5.0) and abs(v.angle_deg) == pytest.approx(180.0)


def test_current_source_convention_out_of_a_into_b():
    # 2 A from "0" through the source into node 1, 5 ohm to ground: V1 = +10 V.
    sol = solve(Network(elements=(CurrentSource("I", "0", "1", 2.0), Resistor("R", "1", "0", 5.0))))
    assert sol.voltage("1").voltage.real == pytest.approx(10.0)
    assert sol.element("I").supplied_w == pytest.approx(20.0)


def test_thevenin_of_a_divider_and_its_short_circuit_current():
    # Vth = E R2/(R1+R2) = 8 V, Rth = R1 || R2 = 4/3 ohm, Isc = 6 A.
    sol = solve(Network(elements=(VoltageSource("E", "1", "0", 12.0), Resistor("R1", "1", "2", 2.0),
                                  Resistor("R2", "2", "0", 4.0))), SolveOptions(thevenin_between=(("2", "0"), ("0", "2"))))
    th, rev = sol.thevenin
    assert th.open_circuit_voltage.real == pytest.approx(8.0)
    assert th.resistance_ohm == pytest.approx(4.0 / 3.0) and th.reactance_ohm == pytest.approx(0.0)
    assert th.short_circuit_current.real == pytest.approx(6.0)
    assert rev.open_circuit_voltage.real == pytest.approx(-8.0) and rev.resistance_ohm == pytest.approx(4.0 / 3.0)


def test_thevenin_between_two_nodes_bridged_by_a_short_has_no_short_circuit_current():
    sol = solve(Network(elements=(VoltageSource("E", "1", "0", 1.0), Switch("S", "1", "2", True), Resistor("R", "2", "0", 1.0))),
                SolveOptions(thevenin_between=(("1", "2"),)))
    assert sol.thevenin[0].impedance_ohm == 0.0 and sol.thevenin[0].short_circuit_current is None


def test_cable_run_go_and_return_doubles_resistance_and_counts_as_conductor_loss():
    # 50 m of 7.41e-3 ohm/m (2.5 mm^2-ish) go-and-return: R = 2 * 50 * 7.41e-3 = 0.741 ohm.
    r_loop = 2 * 50 * 7.41e-3
    sol = solve(Network(elements=(VoltageSource("E", "1", "0", 230.0), CableRun("C", "1", "2", 50.0, 7.41e-3, go_and_return=True),
                                  Load("L", "2", "0", 2300.0, 230.0))))
    r_load = 230.0**2 / 2300.0
    i = 230.0 / (r_loop + r_load)
    assert sol.element("C").current.real == pytest.approx(i)
    assert sol.totals.conductor_loss_w == pytest.approx(i * i * r_loop)
    assert sol.totals.cable_loss_w == pytest.approx(i * i * r_loop)
    assert sol.totals.consumed_by_loads_w == pytest.approx(i * i * r_load)


def test_constant_impedance_load_at_rated_voltage_draws_rated_p_and_q():
    for leading, sign in ((False, 1.0), (True, -1.0)):
        sol = solve(Network(frequency_hz=50.0, elements=(VoltageSource("E", "1", "0", 230.0),
                                                         Load("L", "1", "0", 1000.0, 230.0, 0.8, leading))))
        load = sol.element("L")
        assert load.p_w == pytest.approx(1000.0) and load.q_var == pytest.approx(sign * 750.0)
        assert load.power_factor == pytest.approx(0.8) and load.rated_power_fraction == pytest.approx(1.0)


def test_source_internal_impedance_losses_are_separate_from_supplied_power():
    # 100 V behind 1 + j1 ohm into 9 ohm: I = 100 / |10 + j1|.
    sol = solve(Network(frequency_hz=50.0, elements=(VoltageSource("E", "1", "0", 100.0, 0.0, 1.0, 1.0), Resistor("R", "1", "0", 9.0))))
    i = 100.0 / abs(complex(10.0, 1.0))
    src = sol.element("E")
    assert src.internal_loss_w == pytest.approx(i * i * 1.0)
    assert src.supplied_w == pytest.approx(i * i * 9.0) and sol.totals.source_internal_loss_w == pytest.approx(i * i)


def test_switches_dc_inductor_and_capacitor_report_currents_and_voltages():
    sol = solve(Network(elements=(
        VoltageSource("E", "1", "0", 10.0), Switch("S", "1", "2", True), Inductor("L", "2", "3", 1e-3),
        Resistor("R", "3", "0", 5.0), Switch("open", "3", "4", False), Resistor("R4", "4", "0", 1.0),
        Capacitor("C", "2", "0", 1e-6), SeriesRLC("RLC", "2", "0", 1.0, 1e-3, 1e-6),
    )))
    assert sol.element("S").current.real == pytest.approx(2.0) and sol.element("L").current.real == pytest.approx(2.0)
    op = sol.element("open")
    assert op.current.magnitude == 0.0 and op.voltage.real == pytest.approx(10.0)
    assert op.power_factor is None and op.power_factor_sense is None
    assert sol.element("C").current.magnitude == 0.0 and sol.element("RLC").current.magnitude == 0.0


def test_three_phase_supply_sequence_and_line_to_line_voltages():
    for seq, l2_angle in (("positive", -120.0), ("negative", 120.0), ("L1-L2-L3", -120.0), ("L1-L3-L2", 120.0)):
        parts = [ThreePhaseSupply("G", "A", "B", "C", "0", 230.0, seq)]
        parts += [Resistor(f"R{x}", x, "0", 10.0) for x in "ABC"]
        sol = solve(Network(frequency_hz=50.0, elements=tuple(parts)))
        g = sol.element("G")
        assert g.phases[1].voltage_to_neutral.angle_deg == pytest.approx(l2_angle)
        assert g.line_to_line_voltages[0].lines == "L1-L2"
        # V12 = V1 - V2 leads V1 by 30 deg in positive sequence, lags by 30 in negative.
        assert g.line_to_line_voltages[0].voltage.angle_deg == pytest.approx(30.0 if l2_angle < 0 else -30.0)
        assert g.supplied_w == pytest.approx(3 * 230.0**2 / 10.0)
        assert g.neutral_current.magnitude < 1e-9


def test_integer_labels_of_arrays_join_string_named_nodes():
    # Chain 1-2-3 of 1-ohm resistors given as an array, source on "1", load on "3".
    arr = ResistorArray("chain", np.array([1, 2]), np.array([2, 3]), np.array([1.0, 1.0]))
    sol = solve(Network(elements=(arr, VoltageSource("E", "1", "0", 6.0), Resistor("RL", "3", "0", 1.0))))
    assert sol.voltage("3").voltage.real == pytest.approx(2.0)
    summary = sol.element("chain")
    assert isinstance(summary, ArrayElementResult) and summary.count == 2 and summary.p_w == pytest.approx(8.0)
    vals = sol.array_values("chain")
    assert np.allclose(vals.current, 2.0) and np.allclose(vals.p_w, 4.0)
    assert sorted(sol.node_names()) == ["1", "2", "3"]
    arr_v = sol.voltage_array()
    assert not arr_v.flags.writeable
    assert {n.node: n.voltage.real for n in sol.node_voltages()} == pytest.approx({"1": 6.0, "2": 4.0, "3": 2.0})


def test_from_arrays_with_a_named_reference_node():
    net = Network.from_arrays([1], [2], [3.0], others=(VoltageSource("E", "1", "N", 3.0), Resistor("R0", "2", "N", 0.0)),
                              reference_node="N")
    sol = solve(net)
    assert sol.element("R0").current.real == pytest.approx(1.0) and sol.reference_node == "N"


def test_reference_voltage_and_voltage_between():
    sol = solve(Network(elements=(VoltageSource("E", "a", "0", 3.0), Resistor("R", "a", "b", 1.0), Resistor("R2", "b", "0", 2.0))))
    assert sol.voltage("0").voltage.magnitude == 0.0
    assert sol.voltage_between("a", "b").real == pytest.approx(1.0)
    with pytest.raises(KeyError):
        sol.element("nope")


def test_overflowing_values_raise_non_finite():
    with pytest.raises(NonFiniteResultError):
        solve(Network(elements=(VoltageSource("E", "1", "0", 1e300), Resistor("R", "1", "0", 1e-300))))


def test_ac_reactive_power_of_l_and_c():
    # Q_L = V^2 / (w L) absorbed, Q_C = -V^2 w C.
    w = 2 * math.pi * 50.0
    sol = solve(Network(frequency_hz=50.0, elements=(VoltageSource("E", "1", "0", 100.0), Inductor("L", "1", "0", 0.1),
                                                     Capacitor("C", "1", "0", 50e-6))))
    assert sol.element("L").q_var == pytest.approx(100.0**2 / (w * 0.1))
    assert sol.element("C").q_var == pytest.approx(-(100.0**2) * w * 50e-6)
    assert sol.totals.network_reactive_var == pytest.approx(sol.totals.supplied_var)
