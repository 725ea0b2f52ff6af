"""The conductor library against the published tables it is built from.

Each expected value is typed here from the standard (source beside it), not
read from the package's data files, so a mistyped data file fails these tests.
"""

from __future__ import annotations

import math

import pytest

from service.core.conductors import SizeSpec, awg_area_m2, default_library, run_resistance
from service.core.errors import CalcError

CMIL_M2 = math.pi / 4 * (0.001 * 0.0254) ** 2  # circular mil, by definition
FT = 0.3048


def ohm_per_km(size: SizeSpec, material: str, conductor_class: int) -> float:
    return default_library().find(size, material, conductor_class).resistance_ohm_per_m * 1000.0


@pytest.mark.parametrize(
    ("area_mm2", "material", "conductor_class", "expected_ohm_per_km"),
    [
        # IEC 60228:2004, Table 1 (class 1 solid), maximum DC resistance at 20 °C
        (1.5, "copper", 1, 12.1),
        (2.5, "copper", 1, 7.41),
        (10, "copper", 1, 1.83),
        # Class 1 copper from 185 mm² (values in doubt in issue 14), as printed in two independent reproductions:
        # Cembre catalogue p. 204 'IEC 60228:2004-11 conductor tables' and KMI Wire and Cable 'Conductor
        # specification in according to IEC 60228', Table A.1. They are not the class 2 values (0.0991 ...).
        (185, "copper", 1, 0.101),
        (240, "copper", 1, 0.0775),
        (300, "copper", 1, 0.0620),
        (400, "copper", 1, 0.0465),
        (16, "aluminium", 1, 1.91),
        (300, "aluminium", 1, 0.100),
        (1200, "aluminium", 1, 0.0247),
        # IEC 60228:2004, Table 2 (class 2 stranded)
        (0.5, "copper", 2, 36.0),
        (1.5, "copper", 2, 12.1),
        (2.5, "copper", 2, 7.41),
        (4, "copper", 2, 4.61),
        (6, "copper", 2, 3.08),
        (16, "copper", 2, 1.15),
        (95, "copper", 2, 0.193),
        (185, "copper", 2, 0.0991),
        (240, "copper", 2, 0.0754),
        (630, "copper", 2, 0.0283),
        (16, "aluminium", 2, 1.91),
        (35, "aluminium", 2, 0.868),
        (240, "aluminium", 2, 0.125),
        (630, "aluminium", 2, 0.0469),
        # IEC 60228:2004, Table 3 (class 5 flexible copper)
        (0.75, "copper", 5, 26.0),
        (1.0, "copper", 5, 19.5),
        (1.5, "copper", 5, 13.3),
        (2.5, "copper", 5, 7.98),
        (4, "copper", 5, 4.95),
        (6, "copper", 5, 3.30),
        (16, "copper", 5, 1.21),
        (120, "copper", 5, 0.161),
    ],
)
def test_iec60228_maximum_resistance_at_20c(area_mm2, material, conductor_class, expected_ohm_per_km):
    found = ohm_per_km(SizeSpec.metric(area_mm2 * 1e-6), material, conductor_class)
    assert found == pytest.approx(expected_ohm_per_km, rel=1e-9)


@pytest.mark.parametrize(
    ("gauge", "stranding_class", "material", "ohm_per_kft"),
    [
        # NFPA 70 (NEC) Chapter 9, Table 8: DC resistance at 75 °C, uncoated copper / aluminium
        ("14", 2, "copper", 3.14),
        ("14", 1, "copper", 3.07),
        ("12", 1, "copper", 1.93),
        ("12", 2, "copper", 1.98),
        ("10", 2, "copper", 1.24),
        ("8", 2, "copper", 0.778),
        ("6", 2, "copper", 0.491),
        ("2", 2, "copper", 0.194),
        ("1/0", 2, "copper", 0.122),
        ("4/0", 2, "copper", 0.0608),
        ("12", 2, "aluminium", 3.25),
        ("1/0", 2, "aluminium", 0.201),
        ("4/0", 2, "aluminium", 0.100),
    ],
)
def test_nec_table8_awg_resistance(gauge, stranding_class, material, ohm_per_kft):
    conductor = default_library().find(SizeSpec.awg(gauge), material, stranding_class)
    assert conductor.reference_temperature_c == 75.0  # NEC Chapter 9, Table 8 heading
    assert conductor.resistance_ohm_per_m * 1000 * FT == pytest.approx(ohm_per_kft, rel=1e-9)


@pytest.mark.parametrize(
    ("kcmil", "material", "ohm_per_kft"),
    [
        # NFPA 70 (NEC) Chapter 9, Table 8
        (250, "copper", 0.0515),
        (500, "copper", 0.0258),
        (1000, "copper", 0.0129),
        (250, "aluminium", 0.0847),
        (500, "aluminium", 0.0424),
    ],
)
def test_nec_table8_kcmil_resistance_and_area(kcmil, material, ohm_per_kft):
    conductor = default_library().find(SizeSpec.kcmil(kcmil), material, 2)
    assert conductor.resistance_ohm_per_m * 1000 * FT == pytest.approx(ohm_per_kft, rel=1e-9)
    assert conductor.area_m2 == pytest.approx(kcmil * 1000 * CMIL_M2, rel=1e-12)


@pytest.mark.parametrize(
    ("gauge", "area_cmil"),
    # NFPA 70 (NEC) Chapter 9, Table 8, area column (circular mils, rounded)
    [("18", 1620), ("14", 4110), ("12", 6530), ("10", 10380), ("8", 16510), ("6", 26240),
     ("4", 41740), ("2", 66360), ("1", 83690), ("1/0", 105600), ("2/0", 133100), ("4/0", 211600)],
)
def test_astm_b258_formula_reproduces_the_nec_areas(gauge, area_cmil):
    # ASTM B258: d = 0.005 in x 92^((36 - n)/39); Table 8 rounds the area (18 AWG: 1624 -> 1620).
    assert awg_area_m2(gauge) / CMIL_M2 == pytest.approx(area_cmil, rel=3e-3)


def test_astm_b258_anchor_diameters():
    # ASTM B258 defines 36 AWG as 0.0050 in and 0000 (4/0) as 0.4600 in.
    from service.core.conductors import awg_diameter_m

    assert awg_diameter_m("4/0") == pytest.approx(0.4600 * 0.0254, rel=1e-12)
    assert awg_diameter_m("36") == pytest.approx(0.0050 * 0.0254, rel=1e-12)


def test_temperature_correction_follows_iec60228_annex_b():
    # IEC 60228:2004, Annex B: R20 = Rt x 254.5 / (234.5 + t) for copper, 248 / (228 + t) for aluminium.
    cu = default_library().find(SizeSpec.metric(2.5e-6), "copper", 2)
    al = default_library().find(SizeSpec.metric(16e-6), "aluminium", 2)
    for t in (-10.0, 20.0, 70.0, 90.0, 160.0):
        assert cu.resistance_per_m_at(t) * 254.5 / (234.5 + t) == pytest.approx(7.41e-3, rel=1e-12)
        assert al.resistance_per_m_at(t) * 248.0 / (228.0 + t) == pytest.approx(1.91e-3, rel=1e-12)


def test_temperature_law_citation_names_the_formula_applied():
    # IEC 60228:2004 Annex B (exact formulae, as printed in GOST 22483-2021, its identical adoption):
    # B.1 annealed copper kt = 254.5 / (234.5 + t) = 1 / (1 + 0.00393 (t - 20)); B.2 aluminium kt = 248 / (228 + t)
    # = 1 / (1 + 0.00403 (t - 20)); R20 = Rt x kt.  The citation must name the formula the resistance follows (not
    # the rounded measurement factors, which follow 250 / (230 + t)).
    from service.core.conductors import temperature_law_source

    lib = default_library()
    for material, formula, alpha, r20 in (("copper", "B.1 (annealed copper): kt = 254.5/(234.5 + t)", "0.00393", 7.41e-3),
                                          ("aluminium", "B.2 (aluminium): kt = 248/(228 + t)", "0.00403", 1.91e-3)):
        c = lib.find(SizeSpec.metric(2.5e-6 if material == "copper" else 16e-6), material, 2)
        source = temperature_law_source(c.material)
        assert source.startswith("IEC 60228:2004, Annex B, formula " + formula), source
        assert f"1/(1 + {alpha} (t − 20))" in source
        assert "250/(230" not in source
        numerator, k = (254.5, 234.5) if material == "copper" else (248.0, 228.0)
        for t in (5.0, 40.0, 70.0, 90.0):
            assert c.resistance_per_m_at(t) * numerator / (k + t) == pytest.approx(r20, rel=1e-12)


def test_temperature_correction_matches_nec_table8_note():
    # NEC Chapter 9, Table 8, note 2: R2 = R1 [1 + alpha (T2 - 75)], alpha = 0.00323 copper, 0.00330 aluminium.
    cu = default_library().find(SizeSpec.awg("12"), "copper", 2)
    al = default_library().find(SizeSpec.awg("4/0"), "aluminium", 2)
    for t in (20.0, 30.0, 60.0, 90.0):
        assert cu.resistance_per_m_at(t) == pytest.approx(cu.resistance_ohm_per_m * (1 + 0.00323 * (t - 75)), rel=1e-3)
        assert al.resistance_per_m_at(t) == pytest.approx(al.resistance_ohm_per_m * (1 + 0.00330 * (t - 75)), rel=1e-3)


def test_tabulated_maximum_is_never_below_the_material_resistivity_over_nominal_area():
    # IEC 60028: annealed copper 1/58 ohm mm²/m at 20 °C; IEC 60889: aluminium 0.028264 ohm mm²/m.
    # A conductor's maximum resistance cannot be less than pure material of the full nominal area.
    # (NEC Table 8 gives typical, not maximum, values, so only the IEC 60228 maxima are held to this.)
    resistivity = {"copper": 1 / 58 * 1e-6, "aluminium": 0.028264e-6}
    for c in default_library().select(size_system="metric"):
        floor = resistivity[c.material.name] / c.area_m2
        assert c.resistance_per_m_at(20.0) >= floor * 0.999, c.size_label


def test_run_resistance_one_way_and_loop():
    # 25 m of 2.5 mm² class 2 copper at 20 °C: 7.41 ohm/km x 0.025 km = 0.18525 ohm one way (IEC 60228:2004, Table 2)
    conductor = default_library().find(SizeSpec.metric(2.5e-6), "copper", 2)
    run = run_resistance(conductor, 25.0, 20.0)
    assert run.one_way_ohm == pytest.approx(0.18525, rel=1e-12)
    assert run.loop_ohm == pytest.approx(0.3705, rel=1e-12)


def test_unknown_size_is_a_calculation_error_naming_the_size():
    with pytest.raises(CalcError) as caught:
        default_library().find(SizeSpec.metric(3e-6), "copper", 2)
    assert caught.value.code == "unknown-conductor"
    assert caught.value.blames[0].location == ("size",)
    with pytest.raises(CalcError):
        default_library().find(SizeSpec.metric(2.5e-6), "aluminium", 5)  # class 5 is copper only (IEC 60228 Table 3)
