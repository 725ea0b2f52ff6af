"""The source-side loop impedance beside the Thevenin equivalent (issue: loads lowered the reported loop).

Expected values are series and parallel impedances worked by hand (Ohm's law; any circuits text, from memory).
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from service.core.network import CableRun, Load, Network, Resistor, SolveOptions, VoltageSource, solve


def _radial(ze: float, r_line: float, r_pe: float, load_w: float, model: str = "constant_impedance") -> Network:
    # Source EMF behind Ze, a line conductor out to "far", the load from "far" to "far_n", a return to "0".
    return Network(
        elements=(
            VoltageSource("U0", "src", "0", 230.0, internal_resistance_ohm=ze),
            Resistor("R1", "src", "far", r_line),
            Load("heater", "far", "far_n", load_w, 230.0, model=model),
            Resistor("R2", "far_n", "0", r_pe),
        ),
        frequency_hz=50.0,
    )


def test_source_loop_is_ze_plus_r1_plus_r2_and_thevenin_is_lower():
    # Loop with the load disconnected: Ze + R1 + R2 = 0.35 + 0.4 + 0.4 = 1.15 ohm (series resistances).
    # Thevenin between far and far_n with the 2 kW load (26.45 ohm at 230 V) connected: 1.15 || 26.45 ohm.
    sol = solve(_radial(0.35, 0.4, 0.4, 2000.0), SolveOptions(thevenin_between=(("far", "far_n"),)))
    (th,) = sol.thevenin
    assert th.source_side == pytest.approx(1.15, rel=1e-12)
    r_load = 230.0**2 / 2000.0
    assert th.impedance_ohm == pytest.approx(1.15 * r_load / (1.15 + r_load), rel=1e-9)
    assert th.impedance_ohm < abs(th.source_side)


def test_nonlinear_load_is_disconnected_too():
    # A constant-power load enters the Thevenin impedance at its operating point; the source loop leaves it out.
    sol = solve(_radial(0.2, 0.3, 0.5, 3000.0, "constant_power"), SolveOptions(thevenin_between=(("far", "far_n"),)))
    (th,) = sol.thevenin
    assert th.source_side == pytest.approx(1.0, rel=1e-12)  # 0.2 + 0.3 + 0.5
    assert th.impedance_ohm < 1.0


def test_node_reached_only_through_a_load_has_no_source_loop():
    # "far_n" reaches the reference only through the load: with the loads out it is cut off, so no loop exists.
    net = Network(elements=(VoltageSource("U0", "src", "0", 230.0), Resistor("R1", "src", "far", 0.5),
                            Load("lamp", "far", "far_n", 100.0, 230.0), Resistor("Rx", "far_n", "0", 1.0),
                            Load("lamp2", "far_n", "0", 100.0, 230.0)))
    sol = solve(net, SolveOptions(thevenin_between=(("far", "far_n"), ("far", "0"))))
    cut_off, to_ref = sol.thevenin
    # far_n still reaches 0 through Rx, so both pairs have a loop: far-far_n = 0.5 + 1.0, far-0 = 0.5.
    assert cut_off.source_side == pytest.approx(1.5, rel=1e-12)
    assert to_ref.source_side == pytest.approx(0.5, rel=1e-12)
    lone = Network(elements=(VoltageSource("U0", "src", "0", 230.0), Resistor("R1", "src", "far", 0.5),
                             Load("lamp", "far", "far_n", 100.0, 230.0), Load("lamp2", "far_n", "0", 100.0, 230.0)))
    (th,) = solve(lone, SolveOptions(thevenin_between=(("far", "far_n"),))).thevenin
    assert th.source_side is None


@settings(max_examples=60, deadline=None)
@given(ze=st.floats(0.01, 2.0), r1=st.floats(0.001, 2.0), r2=st.floats(0.001, 2.0), p=st.floats(10.0, 20_000.0))
def test_loads_never_lower_the_source_loop(ze, r1, r2, p):
    # Physical invariant (Rayleigh monotonicity, common practice): adding parallel paths (loads) can only lower the
    # impedance between two nodes, so the Thevenin value with loads never exceeds the source-side loop.
    sol = solve(_radial(ze, r1, r2, p), SolveOptions(thevenin_between=(("far", "far_n"),)))
    (th,) = sol.thevenin
    assert abs(th.source_side) == pytest.approx(ze + r1 + r2, rel=1e-9)
    assert th.impedance_ohm <= abs(th.source_side) * (1 + 1e-12)
