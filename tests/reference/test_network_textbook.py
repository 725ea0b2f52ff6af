"""Textbook worked examples, each expected value computed here from the
textbook formula (never from the solver).  Sources are named beside each check;
"from memory" marks a result recalled rather than read from the book.
"""

from __future__ import annotations

import cmath
import math

import pytest

from service.core.network import (
    CableRun,
    CurrentSource,
    Impedance,
    Load,
    Network,
    Resistor,
    SeriesRLC,
    SolveOptions,
    ThreePhaseSupply,
    VoltageSource,
    solve,
)


def par(*rs: float) -> float:
    return 1.0 / sum(1.0 / r for r in rs)


def bridge(e, r1, r2, r3, r4, rg):
    return Network(elements=(
        VoltageSource("E", "t", "0", e),
        Resistor("R1", "t", "a", r1), Resistor("R2", "a", "0", r2),
        Resistor("R3", "t", "b", r3), Resistor("R4", "b", "0", r4),
        Resistor("G", "a", "b", rg),
    ))


def test_balanced_wheatstone_bridge_has_no_galvanometer_current():
    # Balance condition R1/R2 = R3/R4 (Wheatstone bridge; Boylestad, Introductory
    # Circuit Analysis, bridge networks chapter, from memory).
    sol = solve(bridge(10.0, 100.0, 200.0, 150.0, 300.0, 50.0))
    assert sol.element("G").current.magnitude < 1e-12


def test_unbalanced_wheatstone_bridge_by_thevenin():
    # Thevenin seen by the galvanometer: Vth = E (R2/(R1+R2) - R4/(R3+R4)),
    # Rth = R1||R2 + R3||R4, Ig = Vth / (Rth + Rg)  (Boylestad, from memory).
    e, r1, r2, r3, r4, rg = 12.0, 120.0, 330.0, 270.0, 180.0, 47.0
    vth = e * (r2 / (r1 + r2) - r4 / (r3 + r4))
    rth = par(r1, r2) + par(r3, r4)
    sol = solve(bridge(e, r1, r2, r3, r4, rg))
    assert sol.element("G").current.real == pytest.approx(vth / (rth + rg), rel=1e-12)
    # Thevenin request on the same network with the galvanometer branch removed.
    net = bridge(e, r1, r2, r3, r4, rg)
    net = Network(elements=net.elements[:-1])
    th = solve(net, SolveOptions(thevenin_between=(("a", "b"),))).thevenin[0]
    assert th.open_circuit_voltage.real == pytest.approx(vth, rel=1e-12)
    assert th.resistance_ohm == pytest.approx(rth, rel=1e-12)


def test_two_node_nodal_analysis_by_cramers_rule():
    # Nodal analysis (Hayt & Kemmerly, Engineering Circuit Analysis, ch. 4 method,
    # from memory), solved by hand with Cramer's rule:
    #   node 1: (1/R1 + 1/R2) V1 - (1/R2) V2 = Is1
    #   node 2: -(1/R2) V1 + (1/R2 + 1/R3) V2 = -Is2
    r1, r2, r3, is1, is2 = 2.0, 4.0, 8.0, 5.0, 2.0
    g11, g12, g22 = 1 / r1 + 1 / r2, -1 / r2, 1 / r2 + 1 / r3
    det = g11 * g22 - g12 * g12
    v1 = (is1 * g22 - g12 * (-is2)) / det
    v2 = (g11 * (-is2) - g12 * is1) / det
    sol = solve(Network(elements=(
        CurrentSource("Is1", "0", "1", is1), Resistor("R1", "1", "0", r1), Resistor("R2", "1", "2", r2),
        Resistor("R3", "2", "0", r3), CurrentSource("Is2", "2", "0", is2),
    )))
    assert sol.voltage("1").voltage.real == pytest.approx(v1, rel=1e-12)
    assert sol.voltage("2").voltage.real == pytest.approx(v2, rel=1e-12)


def test_millmans_theorem_parallel_sources():
    # V = sum(E_k / R_k) / sum(1 / R_k)  (Millman's theorem, from memory)
    branches = [(12.0, 1.0), (9.0, 2.0), (-3.0, 4.0), (0.0, 8.0)]
    parts = []
    for k, (e, r) in enumerate(branches):
        parts += [VoltageSource(f"E{k}", f"m{k}", "0", e), Resistor(f"R{k}", f"m{k}", "out", r)]
    sol = solve(Network(elements=tuple(parts)))
    want = sum(e / r for e, r in branches) / sum(1 / r for _, r in branches)
    assert sol.voltage("out").voltage.real == pytest.approx(want, rel=1e-12)


def test_maximum_power_transfer_matched_load():
    # R_L = R_th gives P = V^2 / (4 R_th)  (maximum power transfer theorem, from memory)
    sol = solve(Network(elements=(VoltageSource("E", "1", "0", 24.0), Resistor("Rth", "1", "2", 6.0), Resistor("RL", "2", "0", 6.0))))
    assert sol.element("RL").p_w == pytest.approx(24.0**2 / (4 * 6.0), rel=1e-12)


def test_series_rlc_resonance_and_q_factor():
    # f0 = 1 / (2 pi sqrt(LC)); at f0, I = V / R and |V_L| = Q V with
    # Q = (1/R) sqrt(L/C)  (series resonance; Hayt & Kemmerly, from memory).
    r, ell, c, v = 10.0, 0.1, 1e-6, 5.0
    f0 = 1 / (2 * math.pi * math.sqrt(ell * c))
    q = math.sqrt(ell / c) / r
    sol = solve(Network(frequency_hz=f0, elements=(
        VoltageSource("V", "1", "0", v), Resistor("R", "1", "2", r),
        SeriesRLC("L", "2", "3", 0.0, ell), SeriesRLC("C", "3", "0", 0.0, 0.0, c),
    )))
    assert sol.element("R").current.magnitude == pytest.approx(v / r, rel=1e-9)
    assert sol.element("R").current.angle_deg == pytest.approx(0.0, abs=1e-6)
    assert sol.element("L").voltage.magnitude == pytest.approx(q * v, rel=1e-9)


def star_load(z: complex | list[complex], neutral: str | None = "0", f=50.0, v=230.0):
    zs = z if isinstance(z, list) else [z] * 3
    parts = [ThreePhaseSupply("G", "A", "B", "C", "0", v)]
    for ph, zk in zip("ABC", zs):
        parts.append(Impedance(f"Z{ph}", ph, "S", zk.real, zk.imag))
    if neutral is not None:
        parts.append(Impedance("N", "S", neutral, 0.1, 0.0))
    return Network(elements=tuple(parts), frequency_hz=f)


def test_balanced_star_load_line_current_power_and_line_voltage():
    # I_L = V_LN / Z, P = 3 V_LN I_L cos(phi), |V_LL| = sqrt(3) V_LN, I_N = 0
    # (Glover, Sarma & Overbye, Power System Analysis and Design, balanced
    # three-phase circuits, from memory).
    z = complex(8.0, 6.0)
    sol = solve(star_load(z))
    g = sol.element("G")
    i = 230.0 / abs(z)  # 23 A
    for ph, ang in zip(g.phases, (0.0, -120.0, 120.0)):
        assert ph.line_current.magnitude == pytest.approx(i, rel=1e-12)
        assert ph.line_current.angle_deg == pytest.approx(ang - math.degrees(cmath.phase(z)), abs=1e-9)
    assert g.supplied_w == pytest.approx(3 * 230.0 * i * 0.8, rel=1e-12)
    assert g.supplied_var == pytest.approx(3 * 230.0 * i * 0.6, rel=1e-12)
    assert g.neutral_current.magnitude < 1e-9
    for ll in g.line_to_line_voltages:
        assert ll.voltage.magnitude == pytest.approx(math.sqrt(3) * 230.0, rel=1e-12)


def test_balanced_delta_load_phase_and_line_currents():
    # Delta: I_phase = V_LL / Z, I_line = sqrt(3) I_phase  (same text, from memory)
    z = complex(30.0, 40.0)
    parts = [ThreePhaseSupply("G", "A", "B", "C", "0", 230.0)]
    parts += [Impedance(f"Z{x}{y}", x, y, z.real, z.imag) for x, y in ("AB", "BC", "CA")]
    sol = solve(Network(elements=tuple(parts), frequency_hz=50.0))
    i_ph = math.sqrt(3) * 230.0 / abs(z)
    assert sol.element("ZAB").current.magnitude == pytest.approx(i_ph, rel=1e-12)
    assert sol.element("G").phases[0].line_current.magnitude == pytest.approx(math.sqrt(3) * i_ph, rel=1e-12)


def test_unbalanced_star_with_floating_neutral_follows_millman():
    # Neutral shift of an unearthed star: V_S = sum(V_k Y_k) / sum(Y_k)
    # (Millman's theorem applied to three-phase loads, from memory).
    zs = [complex(10, 0), complex(20, 5), complex(5, -2)]
    sol = solve(star_load(zs, neutral=None))
    vs = [230.0 * cmath.exp(1j * math.radians(a)) for a in (0.0, -120.0, 120.0)]
    want = sum(v / z for v, z in zip(vs, zs)) / sum(1 / z for z in zs)
    got = sol.voltage("S").voltage.value
    assert abs(got - want) < 1e-9 * abs(want)


def test_unbalanced_star_with_solid_neutral_neutral_current_is_phasor_sum():
    # With a 0-ohm neutral each phase sees its own V_LN: I_k = V_k / Z_k and
    # I_N = I_A + I_B + I_C (Kirchhoff's current law at the star point).
    zs = [complex(10, 0), complex(20, 5), complex(5, -2)]
    parts = [ThreePhaseSupply("G", "A", "B", "C", "0", 230.0)]
    parts += [Impedance(f"Z{ph}", ph, "0", z.real, z.imag) for ph, z in zip("ABC", zs)]
    sol = solve(Network(elements=tuple(parts), frequency_hz=50.0))
    vs = [230.0 * cmath.exp(1j * math.radians(a)) for a in (0.0, -120.0, 120.0)]
    i_n = sum(v / z for v, z in zip(vs, zs))
    assert abs(sol.element("G").neutral_current.value - i_n) < 1e-12 * abs(i_n) + 1e-12


def test_single_phase_cable_voltage_drop_matches_the_usual_approximation():
    # dV ~ 2 L I (R' cos(phi) + X' sin(phi)) for a go-and-return run (common practice)
    # The exact phasor drop differs by the small quadrature term, < 0.5 % here.
    length, r_m, x_m, p, pf = 40.0, 4.61e-3, 0.1e-3, 3000.0, 0.9
    sol = solve(Network(frequency_hz=50.0, elements=(
        VoltageSource("E", "1", "0", 230.0),
        CableRun("C", "1", "2", length, r_m, x_m, go_and_return=True),
        Load("L", "2", "0", p, 230.0, pf, model="constant_power"),
    )))
    i = sol.element("C").current.magnitude
    approx = 2 * length * i * (r_m * pf + x_m * math.sin(math.acos(pf)))
    drop = 230.0 - sol.voltage("2").voltage.magnitude
    assert drop == pytest.approx(approx, rel=5e-3)
