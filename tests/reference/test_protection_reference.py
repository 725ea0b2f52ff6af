"""The protection core against the published tables and guidance it is built from.

Each expected value is typed here from the standard or a published table (the
source beside it), not read from the package's data files, so a mistyped data
file fails these tests.  Values the data files mark "from memory" are marked
so here too: they check the file against the recalled table, not against print.
"""

from __future__ import annotations

import math

import pytest

from service.core.protection import (
    CMIN_LOW_VOLTAGE,
    CircuitBreaker,
    GGFuse,
    ResidualCurrentDevice,
    default_protection,
    earth_fault_check,
    energy_class_let_through,
    k_factor,
    max_fault_duration_s,
    adiabatic_minimum_csa,
    operating_current,
    required_disconnection_time,
)

MM2 = 1e-6


@pytest.mark.parametrize(
    ("curve", "rated_a", "ia_a"),
    [
        # IEC 60898-1, Table 2: instantaneous tripping above 3 up to 5 In (B), 5 up to 10 In (C), 10 up to 20 In (D)
        ("B", 6, 30.0),
        ("B", 32, 160.0),
        ("C", 16, 160.0),
        ("C", 32, 320.0),
        ("D", 32, 640.0),
        ("D", 125, 2500.0),
    ],
)
def test_breaker_ia_is_the_upper_instantaneous_limit(curve, rated_a, ia_a):
    assert operating_current(CircuitBreaker(curve, rated_a), 0.4).current_a == pytest.approx(ia_a)


def test_worked_example_max_zs_of_a_32_a_type_b_breaker():
    # Worked by hand: Ia = 5 x 32 = 160 A (IEC 60898-1 Table 2); Cmin = 0.95 (IEC 60909-0 Table 1, low voltage);
    # Zs,max = Cmin x U0 / Ia = 0.95 x 230 / 160 = 218.5 / 160 = 1.3656 ohm, printed as 1.37 ohm in
    # BS 7671:2018, Table 41.3 (type B, 32 A, 0.4 s).
    check = earth_fault_check(230.0, 1.0, CircuitBreaker("B", 32), 0.4)
    assert check.overcurrent.max_zs_ohm == pytest.approx(218.5 / 160, rel=1e-12)
    assert round(check.overcurrent.max_zs_ohm, 2) == 1.37
    assert check.fault_current_a == pytest.approx(218.5)  # If = 0.95 x 230 / 1.0
    assert check.complies and check.route == "overcurrent"
    assert earth_fault_check(230.0, 1.40, CircuitBreaker("B", 32), 0.4).complies is False


@pytest.mark.parametrize(
    ("curve", "rated_a", "printed_ohm"),
    [
        # BS 7671:2018, Table 41.3: maximum Zs for circuit-breakers to BS EN 60898, U0 = 230 V, 0.4 s (Cmin 0.95)
        ("B", 6, 7.28),
        ("B", 16, 2.73),
        ("B", 63, 0.69),
        ("C", 16, 1.37),
        ("C", 32, 0.68),
        ("D", 16, 0.68),
        ("D", 32, 0.34),
    ],
)
def test_max_zs_matches_the_published_0_4_s_table(curve, rated_a, printed_ohm):
    check = earth_fault_check(230.0, 1.0, CircuitBreaker(curve, rated_a), 0.4)
    assert round(check.overcurrent.max_zs_ohm, 2) == printed_ohm


@pytest.mark.parametrize(
    ("earthing", "u0", "ac", "seconds"),
    [
        # IEC 60364-4-41:2005, Table 41.1 (final circuits of 411.3.2.2)
        ("TN", 120, True, 0.8),
        ("TN", 230, True, 0.4),
        ("TN", 230, False, 5.0),
        ("TN", 400, True, 0.2),
        ("TN", 400, False, 0.4),
        ("TN", 690, True, 0.1),
        ("TN", 690, False, 0.1),
        ("TT", 120, True, 0.3),
        ("TT", 230, True, 0.2),
        ("TT", 230, False, 0.4),
        ("TT", 400, True, 0.07),
        ("TT", 400, False, 0.2),
        ("TT", 690, True, 0.04),
        ("TT", 690, False, 0.1),
    ],
)
def test_table_41_1(earthing, u0, ac, seconds):
    result = required_disconnection_time(earthing, u0, "socket_outlets", 16, ac=ac)
    assert result.time_s == pytest.approx(seconds)
    assert "Table 41.1" in result.source


def test_table_41_1_note_1_cells_give_no_time():
    # IEC 60364-4-41:2005, Table 41.1: DC, 50 V < U0 <= 120 V, TN and TT: Note 1 (no time for shock protection)
    for earthing in ("TN", "TT"):
        assert required_disconnection_time(earthing, 110, "fixed_equipment", 10, ac=False).time_s is None


def test_distribution_circuit_times():
    # IEC 60364-4-41:2005, 411.3.2.3: TN, 5 s; 411.3.2.4: TT, 1 s
    assert required_disconnection_time("TN-S", 230, "distribution", 100).time_s == 5.0
    assert required_disconnection_time("TT", 230, "distribution", 100).time_s == 1.0
    assert required_disconnection_time("TN-C-S", 230, "distribution", 100).source.endswith("411.3.2.3")


def test_amendment_scope_of_411_3_2_2():
    # BS 7671:2018, 411.3.2.2 (adopting IEC 60364-4-41:2005/A1:2017): Table 41.1 applies to final circuits
    # up to 63 A with socket-outlets and 32 A supplying only fixed equipment; IEC 60364-4-41:2005: up to 32 A.
    assert required_disconnection_time("TN", 230, "socket_outlets", 63).time_s == 0.4
    assert required_disconnection_time("TN", 230, "fixed_equipment", 40).time_s == 5.0
    assert required_disconnection_time("TN", 230, "socket_outlets", 40, edition="2005").time_s == 5.0


@pytest.mark.parametrize(
    ("rated_a", "imax_5s", "imax_0_1s"),
    [
        # IEC 60269-1:2006, Table 3, gG gates, from memory.  The Imax(5 s) values 16-100 A are also printed
        # as the 5 s Ia of gG fuses in an installation tester's manual (65, 150, 320, 580 A).
        (16, 65.0, 150.0),
        (32, 150.0, 350.0),
        (63, 320.0, 820.0),
        (100, 580.0, 1450.0),
        (400, 2840.0, 8060.0),  # from memory only
    ],
)
def test_gg_fuse_gates(rated_a, imax_5s, imax_0_1s):
    assert operating_current(GGFuse(rated_a), 5.0).current_a == imax_5s
    assert operating_current(GGFuse(rated_a), 0.1).current_a == imax_0_1s


def test_worked_example_gg_fuse_at_5_s():
    # Worked by hand: 63 A gG, TN distribution circuit (5 s, 411.3.2.3), Ia = Imax(5 s) = 320 A
    # (IEC 60269-1 Table 3, from memory); Zs,max = 0.95 x 230 / 320 = 218.5 / 320 = 0.6828 ohm.
    check = earth_fault_check(230.0, 0.5, GGFuse(63), 5.0)
    assert check.overcurrent.max_zs_ohm == pytest.approx(0.6828, abs=5e-5)


@pytest.mark.parametrize(
    ("idn_a", "rcd_type", "time_s", "ia_a"),
    [
        # IEC 61008-1:2010, Table 1: general type breaks within 0.3 s at IΔn, 0.15 s at 2 IΔn, 0.04 s at 5 IΔn
        (0.1, "general", 0.3, 0.1),
        (0.1, "general", 0.2, 0.2),
        (0.1, "general", 0.04, 0.5),
        # IEC 61008-1 Table 1 note: IΔn <= 30 mA may be tested at 0.25 A instead of 5 IΔn (= 0.15 A)
        (0.03, "general", 0.04, 0.25),
        # IEC 61008-1 Table 1, type S: 0.5 s at IΔn, 0.15 s at 5 IΔn
        (0.3, "S", 0.5, 0.3),
        (0.3, "S", 0.15, 1.5),
        # Type S at 2 IΔn breaks within 0.20 s: IEC 61008-1/61009-1 times as printed in the HT Instruments
        # SIRIUS89N user manual, 6.3.1, Table 3 (installation tester)
        (0.3, "S", 0.2, 0.6),
    ],
)
def test_rcd_operating_currents(idn_a, rcd_type, time_s, ia_a):
    assert operating_current(ResidualCurrentDevice(idn_a, rcd_type), time_s).current_a == pytest.approx(ia_a)


def test_tt_touch_voltage_condition():
    # IEC 60364-4-41:2005, 411.5.3: RA x IΔn <= 50 V.  Published guidance example: RA = 200 ohm allows an
    # RCD of at most 250 mA (200 x 0.25 = 50 V, on the limit).
    rcd = ResidualCurrentDevice(0.25)
    on_limit = earth_fault_check(230.0, 200.0, None, 0.2, rcd=rcd, ra_ohm=200.0, earthing="TT")
    assert on_limit.rcd.touch_voltage_v == pytest.approx(50.0) and on_limit.rcd.touch_voltage_complies
    over = earth_fault_check(230.0, 200.0, None, 0.2, rcd=ResidualCurrentDevice(0.3), ra_ohm=200.0, earthing="TT")
    assert over.rcd.touch_voltage_complies is False and not over.complies
    # 30 mA: RA up to 50 / 0.03 = 1667 ohm (rounded, as printed in an installation tester's manual)
    assert earth_fault_check(230.0, 1666.0, None, 0.2, rcd=ResidualCurrentDevice(0.03), ra_ohm=1666.0, earthing="TT").complies
    assert not earth_fault_check(230.0, 1668.0, None, 0.2, rcd=ResidualCurrentDevice(0.03), ra_ohm=1668.0, earthing="TT").complies


def test_cmin_is_the_low_voltage_minimum_factor():
    # IEC 60909-0, Table 1: cmin = 0.95 for low voltage (100 V to 1000 V), tolerance +6 % (edition 2016 from memory)
    assert CMIN_LOW_VOLTAGE == 0.95
    assert "IEC 60909-0" in earth_fault_check(230.0, 1.0, CircuitBreaker("B", 6), 0.4).cmin_source


@pytest.mark.parametrize(
    ("material", "insulation", "area_mm2", "k"),
    [
        # IEC 60364-4-43:2008, Table 43A, as printed in BS 7671:2018 Table 43.1 (copper)
        ("copper", "pvc_70", 2.5, 115),
        ("copper", "pvc_70", 400, 103),
        ("copper", "pvc_90", 95, 100),
        ("copper", "pvc_90", 400, 86),
        ("copper", "xlpe_epr_90", 400, 143),
        ("copper", "rubber_60", 10, 141),
        # IEC 60364-4-43:2008, Table 43A, aluminium: from memory
        ("aluminium", "pvc_70", 50, 76),
        ("aluminium", "pvc_70", 400, 68),
        ("aluminium", "pvc_90", 50, 66),
        ("aluminium", "pvc_90", 400, 57),
        ("aluminium", "xlpe_epr_90", 50, 94),
        ("aluminium", "rubber_60", 50, 93),
    ],
)
def test_k_for_live_conductors(material, insulation, area_mm2, k):
    assert k_factor(material, insulation, "live", area_mm2 * MM2).k == k


@pytest.mark.parametrize(
    ("role", "material", "insulation", "area_mm2", "k"),
    [
        # IEC 60364-5-54:2002, Table A.54.2, as printed in BS 7671:2018 Table 54.2 (separate protective conductor)
        ("pe_separate", "copper", "pvc_70", 16, 143),
        ("pe_separate", "copper", "pvc_70", 400, 133),
        ("pe_separate", "copper", "xlpe_epr_90", 16, 176),
        ("pe_separate", "aluminium", "pvc_90", 16, 95),
        ("pe_separate", "aluminium", "pvc_90", 400, 88),
        ("pe_separate", "aluminium", "xlpe_epr_90", 16, 116),
        # IEC 60364-5-54:2002, Table A.54.4, as printed in BS 7671:2018 Table 54.3 (core of a cable), copper
        ("pe_in_cable", "copper", "pvc_70", 2.5, 115),
        ("pe_in_cable", "copper", "pvc_90", 400, 86),
        ("pe_in_cable", "copper", "xlpe_epr_90", 2.5, 143),
        # IEC 60364-5-54:2002, Table A.54.4, aluminium: from memory
        ("pe_in_cable", "aluminium", "xlpe_epr_90", 25, 94),
        # IEC 60364-5-54:2002, Table A.54.3 (bare, touching a cable covering, initial 30 °C): from memory
        ("pe_bare_on_covering", "copper", "pvc_covering", 16, 159),
        ("pe_bare_on_covering", "copper", "polyethylene_covering", 16, 138),
        ("pe_bare_on_covering", "aluminium", "csp_covering", 16, 110),
        # IEC 60364-5-54:2002, Table A.54.5 (bare, no risk of damage to neighbouring material): from memory
        ("pe_bare", "copper", "visible_restricted_area", 16, 228),
        ("pe_bare", "copper", "normal_conditions", 16, 159),
        ("pe_bare", "aluminium", "fire_risk", 16, 91),
    ],
)
def test_k_for_protective_conductors(role, material, insulation, area_mm2, k):
    assert k_factor(material, insulation, role, area_mm2 * MM2).k == k


# IEC 60364-5-54:2002, Annex A (from memory): k = K0 x sqrt(ln(1 + (tf - ti) / (B + ti))), with
# K0 = sqrt(Qc (B + 20) / rho20) printed rounded in Table A.54.1: copper K0 = 226, B = 234.5 degC;
# aluminium K0 = 148, B = 228 degC (Qc = 3.45e-3 and 2.5e-3 J/(degC mm3), rho20 = 17.241e-6 and 28.264e-6 ohm mm).
ANNEX_A = {"copper": (226.0, 234.5, 3.45e-3, 17.241e-6), "aluminium": (148.0, 228.0, 2.5e-3, 28.264e-6)}


def annex_a_k(material: str, initial_c: float, final_c: float) -> float:
    k0, beta, _, _ = ANNEX_A[material]
    return k0 * math.sqrt(math.log(1 + (final_c - initial_c) / (beta + initial_c)))


def test_annex_a_constant_follows_from_the_material_parameters():
    for k0, beta, qc, rho20 in ANNEX_A.values():
        assert math.sqrt(qc * (beta + 20) / rho20) == pytest.approx(k0, abs=0.5)


def test_every_tabulated_k_agrees_with_the_annex_a_formula():
    lib = default_protection()
    rows = [v for values in lib.k_values.values() for v in values]
    assert len(rows) == 44  # Tables 43A, A.54.2, A.54.3, A.54.4 and A.54.5
    for v in rows:
        derived = annex_a_k(v.material, v.initial_temp_c, v.final_temp_c)
        assert abs(derived - v.k) <= 0.5, (v, derived)  # the tables round k to whole numbers


def test_annex_a_formula_reproduces_familiar_values():
    # Worked by hand from the formula: copper 70 -> 160 degC: 226 x sqrt(ln(1 + 90/304.5)) = 226 x 0.50891 = 115.0;
    # aluminium 90 -> 250 degC: 148 x sqrt(ln(1 + 160/318)) = 148 x 0.63841 = 94.5
    assert annex_a_k("copper", 70, 160) == pytest.approx(115.0, abs=0.1)
    assert annex_a_k("aluminium", 90, 250) == pytest.approx(94.5, abs=0.1)


def test_worked_adiabatic_examples():
    # Worked by hand (IEC 60364-5-54 543.1.2): I = 1 kA for t = 0.4 s, copper PVC 70 degC, k = 115:
    # S = sqrt(1000^2 x 0.4) / 115 = 632.46 / 115 = 5.4996 mm2, so 6 mm2 is the smallest standard size.
    result = adiabatic_minimum_csa(1000.0**2 * 0.4, "copper", "pvc_70")
    assert result.minimum_area_m2 / MM2 == pytest.approx(5.4996, abs=1e-4)
    # IEC 60364-4-43 434.5.2: 2.5 mm2 copper PVC at 1 kA: t = (115 x 2.5 / 1000)^2 = 0.2875^2 = 0.08266 s
    assert max_fault_duration_s(2.5 * MM2, 115, 1000.0) == pytest.approx(0.08266, abs=1e-5)


@pytest.mark.parametrize(("rated_a", "max_zs_ohm"), [
    # BS 7671:2008 (2011) Table 41.2, fuses to BS 88-2 systems E and G, 0.4 s at U0 = 230 V, as reproduced in
    # NICEIC Connections, Winter 2011-12, Table 2: the operating current within 0.4 s is 230 V / Zs.
    (16, 2.56),
    (20, 1.77),
    (25, 1.35),
    (32, 1.04),
])
def test_bs88_2_operating_currents_at_0_4_s(rated_a, max_zs_ohm):
    assert operating_current(GGFuse(rated_a, "bs88_2"), 0.4).current_a == pytest.approx(230.0 / max_zs_ohm, rel=1e-9)


@pytest.mark.parametrize(("curve", "rated_a", "energy_class", "prospective_a", "i2t"), [
    # EN 60898-1 Annex ZA, permissible let-through I²t by energy-limiting class: from memory
    ("B", 16, 3, 6000, 35000),
    ("B", 16, 3, 10000, 70000),
    ("B", 32, 3, 6000, 45000),
    ("C", 16, 3, 6000, 42000),
    ("B", 10, 2, 3000, 31000),
])
def test_energy_class_let_through(curve, rated_a, energy_class, prospective_a, i2t):
    found = energy_class_let_through(CircuitBreaker(curve, rated_a), energy_class, prospective_a)
    assert found is not None and found[0] == i2t


def test_energy_class_sets_no_limit_outside_the_annex():
    # EN 60898-1 Annex ZA covers types B and C up to 32 A and prospective currents up to 10 kA; class 1 has no limit
    assert energy_class_let_through(CircuitBreaker("D", 16), 3, 6000) is None
    assert energy_class_let_through(CircuitBreaker("B", 40), 3, 6000) is None
    assert energy_class_let_through(CircuitBreaker("B", 16), 1, 6000) is None
    assert energy_class_let_through(CircuitBreaker("B", 16), 3, 15000) is None


def test_separate_protective_conductor_minimum_areas():
    # IEC 60364-5-54:2011, 543.1.3 (from memory): copper 2.5 mm² protected, 4 mm² unprotected; aluminium 16 mm²
    minimum = default_protection().separate_pe_minimum_mm2
    assert minimum == {("copper", True): 2.5, ("copper", False): 4.0, ("aluminium", True): 16.0,
                       ("aluminium", False): 16.0}
