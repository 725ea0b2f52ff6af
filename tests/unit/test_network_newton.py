"""Constant-current / constant-power loads: Newton-Raphson, voltage collapse, guard.

Expected values come from closed forms solved here by hand or from an
independent numerical method (scipy root finding / maximisation), never from
the solver under test.
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest
from scipy.optimize import fsolve, minimize_scalar

from service.core.network import (
    ConvergenceError,
    Impedance,
    Load,
    LoadUndervoltageError,
    Network,
    Resistor,
    SolveOptions,
    VoltageCollapseError,
    VoltageSource,
    solve,
)


def feeder(load: Load, r=1.0, x=0.0, e=230.0, f=None):
    z = Impedance("Z", "1", "2", r, x) if x or f else Resistor("Z", "1", "2", r)
    return Network(elements=(VoltageSource("E", "1", "0", e), z, load), frequency_hz=f)


def test_dc_constant_power_matches_quadratic_upper_root():
    # P = V (E - V) / R  =>  V = (E + sqrt(E^2 - 4 P R)) / 2  (upper root; algebra)
    e, r, p = 230.0, 0.5, 8000.0
    sol = solve(feeder(Load("L", "2", "0", p, 230.0, model="constant_power"), r=r, e=e))
    want = (e + math.sqrt(e * e - 4 * p * r)) / 2
    assert sol.voltage("2").voltage.real == pytest.approx(want, rel=1e-10)
    load = sol.element("L")
    assert load.p_w == pytest.approx(p, rel=1e-9) and load.rated_power_fraction == pytest.approx(1.0, rel=1e-9)
    assert sol.converged and 2 <= sol.iterations <= 8
    assert sol.final_mismatch_a <= 1e-9


def test_ac_constant_power_matches_independent_root_finding():
    e, zth, p, pf = 400.0, complex(0.3, 0.4), 30e3, 0.85
    s0 = p / pf * cmath.exp(1j * math.acos(pf))
    sol = solve(feeder(Load("L", "2", "0", p, 400.0, pf, model="constant_power"), zth.real, zth.imag, e, 50.0))

    def eqs(xy):  # V = E - Zth * conj(S0 / V)
        v = complex(*xy)
        r = v - (e - zth * (s0 / v).conjugate())
        return [r.real, r.imag]

    v_ref = complex(*fsolve(eqs, [e, 0.0], xtol=1e-14))
    assert abs(sol.voltage("2").voltage.value - v_ref) < 1e-8 * e
    load = sol.element("L")
    assert complex(load.p_w, load.q_var) == pytest.approx(s0, rel=1e-9)
    assert load.power_factor == pytest.approx(pf) and load.power_factor_sense == "lagging"


def test_leading_constant_power_load_absorbs_negative_q():
    sol = solve(feeder(Load("L", "2", "0", 5e3, 230.0, 0.9, leading=True, model="constant_power"), 0.1, 0.1, f=50.0))
    load = sol.element("L")
    assert load.q_var == pytest.approx(-5e3 * math.tan(math.acos(0.9)), rel=1e-9)
    assert load.power_factor_sense == "leading"


def test_dc_constant_current_load():
    # V = E - R I0 with I0 = P / V0  (Ohm's law)
    sol = solve(feeder(Load("L", "2", "0", 2300.0, 230.0, model="constant_current"), r=2.0))
    assert sol.voltage("2").voltage.real == pytest.approx(230.0 - 2.0 * 10.0, rel=1e-10)
    assert sol.element("L").current.real == pytest.approx(10.0, rel=1e-10)


def test_ac_constant_current_load_keeps_magnitude_and_angle_to_voltage():
    pf = 0.8
    sol = solve(feeder(Load("L", "2", "0", 4000.0, 230.0, pf, model="constant_current"), 0.4, 0.3, f=60.0))
    load = sol.element("L")
    assert load.current.magnitude == pytest.approx(4000.0 / pf / 230.0, rel=1e-9)
    lag = load.voltage.angle_deg - load.current.angle_deg
    assert lag == pytest.approx(math.degrees(math.acos(pf)), abs=1e-7)


def test_load_between_two_ungrounded_nodes_draws_rated_power():
    net = Network(elements=(
        VoltageSource("E", "p", "n", 400.0), Resistor("Rp", "p", "a", 0.2), Resistor("Rn", "n", "b", 0.2),
        Resistor("G", "n", "0", 1.0), Load("L", "a", "b", 20e3, 400.0, model="constant_power"),
    ))
    sol = solve(net)
    assert sol.element("L").p_w == pytest.approx(20e3, rel=1e-9)
    assert sol.totals.consumed_by_loads_w == pytest.approx(20e3, rel=1e-9)


def test_dc_voltage_collapse_reports_max_power_e2_over_4r():
    # Maximum power transfer into a resistive Thevenin source: E^2 / (4 R)  (textbook, from memory)
    e, r = 230.0, 1.0
    with pytest.raises(VoltageCollapseError) as info:
        solve(feeder(Load("L", "2", "0", 20e3, 230.0, model="constant_power"), r=r, e=e))
    err = info.value
    assert err.element_ids == ("L",)
    (rec,) = err.data["loads"]
    assert rec["max_power_w"] == pytest.approx(e * e / (4 * r), rel=1e-9)
    assert rec["thevenin_voltage_v"] == pytest.approx(e, rel=1e-9)
    assert rec["operating_voltage_pu"] is None


@pytest.mark.parametrize("pf, leading", [(1.0, False), (0.8, False), (0.6, True)])
def test_ac_voltage_collapse_max_power_matches_brute_force(pf, leading):
    e, zth = 230.0, complex(0.5, 1.0)
    phi = math.acos(pf) * (-1 if leading else 1)

    def neg_power(z):  # load = z e^{j phi}; P = |I|^2 z cos(phi)
        return -abs(e / (zth + z * cmath.exp(1j * phi))) ** 2 * z * math.cos(phi)

    best = minimize_scalar(neg_power, bounds=(1e-6, 100.0), method="bounded", options={"xatol": 1e-12})
    p_max = -best.fun
    with pytest.raises(VoltageCollapseError) as info:
        solve(feeder(Load("L", "2", "0", 3 * p_max, 230.0, pf, leading, "constant_power"), zth.real, zth.imag, e, 50.0))
    assert info.value.data["loads"][0]["max_power_w"] == pytest.approx(p_max, rel=1e-7)


def test_just_below_the_limit_is_solved_or_reported_as_undervoltage():
    e, r = 230.0, 1.0
    p_max = e * e / (4 * r)
    with pytest.raises(LoadUndervoltageError) as info:  # the nose is at 0.5 pu, below the 0.7 pu guard
        solve(feeder(Load("L", "2", "0", 0.99 * p_max, 230.0, model="constant_power"), r=r, e=e))
    rec = info.value.data["loads"][0]
    upper = (e + math.sqrt(e * e - 4 * 0.99 * p_max * r)) / 2
    assert rec["operating_voltage_pu"] == pytest.approx(upper / 230.0, rel=1e-9)
    # With a lower guard the same load is supplied normally.
    sol = solve(feeder(Load("L", "2", "0", 0.99 * p_max, 230.0, model="constant_power"), r=r, e=e),
                SolveOptions(load_guard_voltage_pu=0.3))
    assert sol.voltage("2").voltage.real == pytest.approx(upper, rel=1e-9)


def test_only_the_infeasible_load_is_named():
    net = Network(elements=(
        VoltageSource("E", "1", "0", 230.0),
        Resistor("R12", "1", "2", 0.05), Load("small", "2", "0", 2e3, 230.0, model="constant_power"),
        Resistor("R23", "2", "3", 2.0), Load("big", "3", "0", 15e3, 230.0, model="constant_power"),
    ))
    with pytest.raises(VoltageCollapseError) as info:
        solve(net)
    assert info.value.element_ids == ("big",)


def test_guard_as_constant_impedance_option_returns_the_guarded_solution():
    e, r, p, vg = 230.0, 1.0, 13e3, 0.7 * 230.0
    sol = solve(feeder(Load("L", "2", "0", p, 230.0, model="constant_power"), r=r, e=e),
                SolveOptions(on_load_undervoltage="constant_impedance"))
    assert sol.guarded_loads == ("L",)
    load = sol.element("L")
    assert load.below_guard_voltage
    # Below the guard the load is the resistance it has at Vg: R_L = Vg^2 / P  (Ohm's law)
    r_l = vg * vg / p
    assert load.voltage.real == pytest.approx(e * r_l / (r + r_l), rel=1e-9)


def test_iteration_cap_gives_convergence_error():
    with pytest.raises(ConvergenceError) as info:
        solve(feeder(Load("L", "2", "0", 10e3, 230.0, model="constant_power"), r=1.0),
              SolveOptions(max_iterations=1))
    assert info.value.element_ids == ("L",) and info.value.data["mismatch_a"] > 0


def test_thevenin_with_a_nonlinear_load_uses_its_operating_point_impedance():
    e, r, p = 230.0, 0.5, 8000.0
    sol = solve(feeder(Load("L", "2", "0", p, 230.0, model="constant_power"), r=r, e=e),
                SolveOptions(thevenin_between=(("2", "0"),)))
    v = (e + math.sqrt(e * e - 4 * p * r)) / 2
    r_op = v * v / p
    (th,) = sol.thevenin
    assert th.resistance_ohm == pytest.approx(r * r_op / (r + r_op), rel=1e-9)  # R || R_op
    assert th.open_circuit_voltage.real == pytest.approx(v, rel=1e-9)


def test_many_loads_converge_quadratically():
    # A 40-bus radial feeder with a constant-power load at every bus.
    parts = [VoltageSource("E", "b0", "0", 400.0)]
    for k in range(1, 41):
        parts += [Impedance(f"Z{k}", f"b{k - 1}", f"b{k}", 0.002, 0.001),
                  Load(f"L{k}", f"b{k}", "0", 3e3, 400.0, 0.95, model="constant_power" if k % 2 else "constant_current")]
    sol = solve(Network(elements=tuple(parts), frequency_hz=50.0))
    assert sol.converged and sol.iterations <= 6
    cp = [sol.element(f"L{k}") for k in range(1, 41, 2)]
    assert all(abs(x.p_w - 3e3) < 1e-6 for x in cp)
    assert sol.power_balance_residual_va < 1e-6 * sol.totals.supplied_w
    assert np.isfinite(sol.totals.conductor_loss_w) and sol.totals.conductor_loss_w > 0
