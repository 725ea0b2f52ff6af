"""The solver against an exact rational solve (tests/reference/exact_mna.py): accuracy, extreme values, resonance.

Method: the same network solved by Gaussian elimination over complex rationals from the very floats the service
starts from, so the expected values carry no rounding at all (exact arithmetic, no tolerance of its own).
"""

from __future__ import annotations

import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from service.core.network import (
    Capacitor,
    CurrentSource,
    Inductor,
    Network,
    NetworkError,
    ResonanceError,
    Resistor,
    VoltageSource,
    solve,
)

from tests.reference.exact_mna import solve_exact

W50 = 2 * math.pi * 50.0


def _worst_errors(net: Network) -> tuple[float, float]:
    """(max |V - V_exact| / max |V_exact|, max |I - I_exact| / max |I_exact| over passive elements)."""
    sol = solve(net)
    ref = solve_exact(net)
    v_scale = max(abs(v) for v in ref.voltages.values()) or 1.0
    v_err = max(abs(sol.voltage(n).voltage.value - v) for n, v in ref.voltages.items()) / v_scale
    passive = {i: c for i, c in ref.currents.items() if not isinstance(_by_id(net, i), VoltageSource)}
    i_scale = max(abs(c) for c in passive.values()) or 1.0
    i_err = max(abs(sol.element(i).current.value - c) for i, c in passive.items()) / i_scale
    return v_err, i_err


def _by_id(net: Network, element_id: str):
    return next(e for e in net.elements if e.id == element_id)


def test_parallel_lc_at_exact_resonance_fed_by_a_current_source_has_no_steady_state():
    # A parallel L-C tank at w = 1/sqrt(LC) has infinite impedance: a 1 A source into it has no sinusoidal steady
    # state (parallel resonance, any circuits text, from memory). The 1 x 1 matrix is rounding residue only.
    L = 0.01
    C = 1 / (W50**2 * L)
    net = Network(elements=(CurrentSource("J", "0", "t", 1.0), Inductor("L", "t", "0", L), Capacitor("C", "t", "0", C)),
                  frequency_hz=50.0)
    with pytest.raises(ResonanceError) as info:
        solve(net)
    assert set(info.value.element_ids) == {"L", "C"}
    assert "resonant at this frequency: no steady state" in info.value.detail


def test_tiny_resistance_in_series_reports_the_series_current_through_both():
    # 1e-12 ohm in series with 5 ohm on 10 V: I = 10 / (5 + 1e-12) = 2 A in both (Ohm's law; exact solve agrees).
    net = Network(elements=(VoltageSource("E", "1", "0", 10.0), Resistor("tiny", "1", "2", 1e-12),
                            Resistor("R", "2", "0", 5.0)))
    sol = solve(net)
    expected = 10.0 / (5.0 + 1e-12)
    assert sol.element("tiny").current.real == pytest.approx(expected, rel=1e-14)
    assert sol.element("R").current.real == pytest.approx(expected, rel=1e-14)
    assert sol.max_kcl_residual_a <= 1e-13
    assert any("impedance form" in a and "'tiny'" in a for a in sol.assumptions)


def test_values_from_1e_minus_12_to_1e12_ohm_solve_to_full_accuracy_at_dc_and_ac():
    # A ladder mixing 1e-12, 1e12 and ordinary values; both analyses against the exact solve.
    for f in (0.0, 50.0):
        parts = [VoltageSource("E", "1", "0", 230.0, internal_resistance_ohm=0.2),
                 Resistor("a", "1", "2", 1e-12), Resistor("b", "2", "3", 4.0), Resistor("c", "3", "0", 1e12),
                 Resistor("d", "3", "4", 1e-12), Resistor("e", "4", "0", 7.5), Resistor("g", "2", "0", 1e12)]
        if f:
            parts += [Inductor("l", "4", "5", 1e-3), Capacitor("k", "5", "0", 1e-4)]
        v_err, i_err = _worst_errors(Network(elements=tuple(parts), frequency_hz=f))
        assert v_err <= 1e-12 and i_err <= 1e-12, (f, v_err, i_err)


def _ladder(rs: list[float], shunts: list[float], f: float, lc: bool) -> Network:
    parts = [VoltageSource("E", "n0", "0", 100.0, internal_resistance_ohm=0.5)]
    for k, (r, g) in enumerate(zip(rs, shunts)):
        parts.append(Resistor(f"s{k}", f"n{k}", f"n{k + 1}", r))
        parts.append(Resistor(f"p{k}", f"n{k + 1}", "0", g))
    if lc and f:
        parts.append(Inductor("L", f"n{len(rs)}", "x", 2e-3))
        parts.append(Capacitor("C", "x", "0", 3e-4))
    return Network(elements=tuple(parts), frequency_hz=f)


@settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(rs=st.lists(st.floats(0.01, 100.0), min_size=2, max_size=6), data=st.data(), f=st.sampled_from([0.0, 50.0, 60.0]))
def test_ordinary_networks_agree_with_the_exact_solve_to_1e_12(rs, data, f):
    # Values of ordinary installations: one refinement step leaves the node voltages at the rounding of the answer
    # itself (1e-12 normwise). A current through a small impedance is y (v_a - v_b): the node voltages' own
    # rounding, eps |V|, is amplified by |V| / |v_a - v_b| (1e4 for 0.01 ohm carrying 1 A at 100 V); the solver
    # states that bound (relative_current_rounding, rounding analysis, common practice), and the currents and the
    # KCL residual must lie within it (or within 1e-12).
    shunts = data.draw(st.lists(st.floats(0.1, 1000.0), min_size=len(rs), max_size=len(rs)))
    net = _ladder(rs, shunts, f, lc=True)
    v_err, i_err = _worst_errors(net)
    sol = solve(net)
    bound = max(1e-12, 2.0 * sol.relative_current_rounding)
    assert v_err <= 1e-12 and i_err <= bound
    assert sol.relative_kcl_residual <= bound
    assert sol.relative_current_rounding < 1e-9 and not sol.warnings  # ordinary values: no accuracy warning


values = st.floats(1e-9, 1e9).map(lambda v: float(f"{v:.6g}"))


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(rs=st.lists(values, min_size=2, max_size=6), data=st.data(), f=st.sampled_from([0.0, 50.0]))
def test_extreme_value_ranges_are_right_or_say_they_could_not_be(rs, data, f):
    # Values spanning 1e-9 to 1e9 ohm: either the answer agrees with the exact solve to 1e-9 (normwise, voltages
    # and currents) or the service says it could not: a NetworkError (422) or an accuracy warning. Never silent.
    shunts = data.draw(st.lists(values, min_size=len(rs), max_size=len(rs)))
    net = _ladder(rs, shunts, f, lc=False)
    try:
        sol = solve(net)
    except NetworkError:
        return
    v_err, i_err = _worst_errors(net)
    assert (v_err <= 1e-9 and i_err <= 1e-9) or sol.warnings, (v_err, i_err)
