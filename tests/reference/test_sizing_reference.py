"""Conductor sizing against the published tables and worked examples it is built from.

Each expected value is typed here from its source (named beside it), never read
from the package's data files, so a mistyped data file fails these tests.  Values
the data files mark "from memory" are marked so here too: such a check holds the
file to the recalled table, not to print.

Worked examples reproduced end to end:
1. Textbook: T. Linsley, *Basic Electrical Installation Work*, the cable-size
   calculation for a 32 A circuit at 35 °C (stored page 312; the page is
   garbled, see the test for what was read and what was inferred).
2. Equipment maker's technical guide: an air-compressor maker's instruction
   book (Atlas Copco GA series, "Cable sizing according IEC"), whose tables give
   the maximum current of PVC and XLPE copper cables by methods B2, C and F at
   ambients from 30 to 55 °C, calculated to IEC 60364-5-52.
3. A standard's informative annex: IEC 60364-5-52:2009 Annex G, the
   voltage-drop formula u = b (rho L cos phi / S + lambda L sin phi) Ib with
   lambda = 0.08 mOhm/m, and the limits of its Table G.52.1.

Spot checks of single values also come from BS 7671 (the national adoption that
reproduces the IEC 60364-5-52 values for the same reference methods): Table 4E1A
as printed by two cable distributors (CSE Distributors' and Doncaster Cables'
technical pages), Table 4C1 in a stored flipbook of the 17th Edition, Table 4D1A's
25 mm² row quoted in a forum post, Table 54.7 on a training provider's page; and
from an equipment maker's FAQ (Schneider Electric, IEC 60898-1 conventional currents).
"""

from __future__ import annotations

import math

import pytest

from service.core.sizing import (
    CircuitSpec,
    LimitsSpec,
    LoadSpec,
    ProtectionSpec,
    SizingInput,
    SupplySpec,
    default_sizing_tables,
    iec60364,
    size_conductor,
    verify_conductor,
)
from service.core.sizing.tables import CapacityKey

MM2 = 1e-6
CU_K = 234.5  # IEC 60228:2004 Annex B, copper temperature constant


def capacity(insulation: str, loaded: int, material: str, method: str, area_mm2: float, formation=None) -> float:
    column = default_sizing_tables().capacities[CapacityKey(insulation, loaded, material, method, formation)]
    return column.at(area_mm2 * MM2)


def ambient(medium: str, insulation: str, degc: float) -> float:
    return next(s.value for s in default_sizing_tables().ambient[(medium, insulation)] if s.upto == degc)


# -- Annex B current-carrying capacities -------------------------------------------------------------

@pytest.mark.parametrize(("area", "amps"), [
    # Atlas Copco GA instruction book, "Installation method B2", PVC, three loaded copper conductors, 30 °C column
    # (1.5 and 2.5 mm²: GA 7 VSD book, p. 92; 4 mm² and up: GA 75+ book, p. 192)
    (1.5, 15), (2.5, 20), (4, 27), (6, 34), (10, 46), (16, 62), (25, 80), (35, 99), (50, 118), (70, 149),
    (95, 179), (120, 206),
])
def test_b52_4_method_b2_copper_published(area, amps):
    assert capacity("pvc_70", 3, "copper", "B2", area) == amps


@pytest.mark.parametrize(("area", "amps"), [
    # Atlas Copco GA instruction book, "Installation method C", PVC, three loaded copper conductors, 30 °C column
    # (2.5 mm²: GA 7 VSD book, p. 92.  Its 1.5 mm² entry, "< 17 A", is not checked: the file holds 17.5 A, and the
    # book's 40-55 °C entries for 1.5 mm² are 17.5 A x Ca rounded, so the 30 °C entry looks truncated)
    (2.5, 24), (4, 32), (6, 41), (10, 57), (16, 76), (25, 96), (35, 119), (50, 144),
])
def test_b52_4_method_c_copper_published(area, amps):
    assert capacity("pvc_70", 3, "copper", "C", area) == amps


@pytest.mark.parametrize(("area", "pvc", "xlpe"), [
    # Atlas Copco GA instruction book, "Installation method F", single-core cables touching in free air,
    # conductor 70 °C and 90 °C tables, 30 °C column (three loaded conductors in trefoil)
    (25, 110, 135), (35, 137, 169), (50, 167, 207), (70, 216, 268), (95, 264, 328), (120, 308, 383),
    (150, 356, 444), (185, 409, 510), (240, 485, 607), (300, 561, 703),
])
def test_b52_10_and_b52_12_method_f_trefoil_published(area, pvc, xlpe):
    assert capacity("pvc_70", 3, "copper", "F", area, "trefoil") == pvc
    assert capacity("xlpe_epr_90", 3, "copper", "F", area, "trefoil") == xlpe


@pytest.mark.parametrize(("area", "a_2", "a_3", "b_2", "b_3"), [
    # BS 7671 Table 4E1A (single-core 90 °C thermosetting, copper), columns 2-5: reference method A, 2 cables and
    # 3 or 4 cables; reference method B, 2 cables and 3 or 4 cables - the IEC 60364-5-52 Table B.52.3 / B.52.5 A1
    # and B1 values.  As printed by Doncaster Cables' page (1.5-300 mm²) and CSE Distributors' page (1.5-95 mm²).
    (1.5, 19, 17, 23, 20), (2.5, 26, 23, 31, 28), (4, 35, 31, 42, 37), (6, 45, 40, 54, 48),
    (10, 61, 54, 75, 66), (16, 81, 73, 100, 88), (25, 106, 95, 133, 117), (35, 131, 117, 164, 144),
    (50, 158, 141, 198, 175), (70, 200, 179, 253, 222), (95, 241, 216, 306, 269), (120, 278, 249, 354, 312),
    (150, 318, 285, 393, 342), (185, 362, 324, 449, 384), (240, 424, 380, 528, 450), (300, 486, 435, 603, 514),
])
def test_b52_3_and_b52_5_a1_b1_copper_published(area, a_2, a_3, b_2, b_3):
    assert capacity("xlpe_epr_90", 2, "copper", "A1", area) == a_2
    assert capacity("xlpe_epr_90", 3, "copper", "A1", area) == a_3
    assert capacity("xlpe_epr_90", 2, "copper", "B1", area) == b_2
    assert capacity("xlpe_epr_90", 3, "copper", "B1", area) == b_3


@pytest.mark.parametrize(("area", "two_flat", "three_flat"), [
    # BS 7671 Table 4E1A, reference method F touching: "2 cables, single-phase a.c. or d.c. flat" and "3 cables,
    # three-phase a.c. flat" - IEC 60364-5-52 Table B.52.12.  Doncaster Cables' page (25-300 mm²); CSE Distributors'
    # page agrees for 25-70 mm²
    (25, 161, 141), (35, 200, 176), (50, 242, 216), (70, 310, 279), (95, 377, 342), (120, 437, 400),
    (150, 504, 464), (185, 575, 533), (240, 679, 634), (300, 783, 736),
])
def test_b52_12_method_f_touching_published(area, two_flat, three_flat):
    assert capacity("xlpe_epr_90", 2, "copper", "F", area, "touching") == two_flat
    assert capacity("xlpe_epr_90", 3, "copper", "F", area, "flat_touching") == three_flat


def test_bs7671_4d1a_25mm2_row_agrees():
    # BS 7671 Table 4D1A, 25 mm² row as quoted in a forum post (Mike Holt forum, "European equivalent to AWG",
    # page 2): method A 80 A (2 cables) and 73 A (3 cables), method B 101 A and 89 A - the IEC 60364-5-52
    # Tables B.52.2 / B.52.4 A1 and B1 values (the rest of those tables is from memory)
    assert capacity("pvc_70", 2, "copper", "A1", 25) == 80
    assert capacity("pvc_70", 3, "copper", "A1", 25) == 73
    assert capacity("pvc_70", 2, "copper", "B1", 25) == 101
    assert capacity("pvc_70", 3, "copper", "B1", 25) == 89
    # the same post's trefoil value: Table B.52.10, three loaded, F trefoil
    assert capacity("pvc_70", 3, "copper", "F", 25, "trefoil") == 110


@pytest.mark.parametrize(("insulation", "loaded", "material", "method", "area", "amps"), [
    # IEC 60364-5-52:2009, Table B.52.2 (the A1, C and aluminium cells also agree with NBR 5410:2004 Tabela 36;
    # B1 300 mm² is from memory, below NBR's 477 A)
    ("pvc_70", 2, "copper", "A1", 2.5, 19.5),
    ("pvc_70", 2, "copper", "C", 16, 85),
    ("pvc_70", 2, "copper", "B1", 300, 458),
    ("pvc_70", 2, "aluminium", "C", 50, 125),
    # IEC 60364-5-52:2009, Table B.52.3 (from memory)
    ("xlpe_epr_90", 2, "copper", "C", 2.5, 33),
    # IEC 60364-5-52:2009, Table B.52.4 (A1 and aluminium C also agree with NBR 5410:2004 Tabela 36; D1 from memory)
    ("pvc_70", 3, "copper", "A1", 1.5, 13.5),
    ("pvc_70", 3, "copper", "D1", 25, 82),
    ("pvc_70", 3, "aluminium", "C", 16, 59),
    # IEC 60364-5-52:2009, Table B.52.5 (from memory)
    ("xlpe_epr_90", 3, "copper", "C", 10, 71),
    ("xlpe_epr_90", 3, "copper", "D1", 240, 324),
])
def test_annex_b_capacities_from_memory(insulation, loaded, material, method, area, amps):
    assert capacity(insulation, loaded, material, method, area) == amps


def test_textbook_a1_rows_agree():
    # T. Linsley, Basic Electrical Installation Work, p. 312 (stored page): a 10 mm² cable "having rating 46 A"
    # is required where 6 mm² (34 A) falls short of It = 34.04 A; those are the method A, two-cable values of
    # BS 7671 Table 4D1A, the same numbers as IEC 60364-5-52 Table B.52.2 column A1 (the latter from memory).
    assert capacity("pvc_70", 2, "copper", "A1", 6) == 34
    assert capacity("pvc_70", 2, "copper", "A1", 10) == 46


# -- correction factors ------------------------------------------------------------------------------

@pytest.mark.parametrize(("degc", "pvc", "xlpe"), [
    # Atlas Copco GA instruction book: the ambient columns of its PVC (B2 120 mm²: 206, 179, 163, 146, 126 A) and
    # XLPE (F 400 mm²: 823, 749, 716, 674, 625 A) tables divided by the 30 °C value, to its whole-ampere rounding
    (40, 0.87, 0.91), (45, 0.79, 0.87), (50, 0.71, 0.82), (55, 0.61, 0.76),
])
def test_b52_14_ambient_air_published(degc, pvc, xlpe):
    assert ambient("air", "pvc_70", degc) == pvc
    assert ambient("air", "xlpe_epr_90", degc) == xlpe
    assert abs(206 * pvc - {40: 179, 45: 163, 50: 146, 55: 126}[degc]) < 1  # the book's PVC B2 120 mm² row
    assert abs(823 * xlpe - {40: 749, 45: 716, 50: 674, 55: 625}[degc]) < 1  # the book's XLPE F 400 mm² row


@pytest.mark.parametrize(("insulation", "degc", "factor"), [
    # Table 1 of "Appendix 1: Correction factors for sizing of cable conductors" (stored scribd document "Derating
    # Factor Standard PDF", a BS 7671-practice national wiring-code table): general purpose PVC 70 °C and
    # thermosetting (XLPE) 90 °C, the rows it shares with IEC 60364-5-52 Table B.52.14
    ("pvc_70", 35, 0.94), ("pvc_70", 60, 0.5),
    ("xlpe_epr_90", 35, 0.96), ("xlpe_epr_90", 60, 0.71), ("xlpe_epr_90", 65, 0.65), ("xlpe_epr_90", 70, 0.58),
    ("xlpe_epr_90", 75, 0.5), ("xlpe_epr_90", 80, 0.41),
])
def test_b52_14_further_rows_published(insulation, degc, factor):
    assert ambient("air", insulation, degc) == factor


def test_b52_14_other_rows():
    # T. Linsley, Basic Electrical Installation Work, p. 312: "the correction factor for 35 °C ... 0.94" (PVC)
    assert ambient("air", "pvc_70", 35) == 0.94
    # IEC 60364-5-52:2009, Table B.52.14, 25 °C (from memory).  Open: the BS-practice appendix above gives 1.03
    # (PVC) and 1.02 (XLPE) at 25 °C; it is not a reproduction of the IEC table, so the file keeps 1.06 and 1.04
    assert ambient("air", "pvc_70", 25) == 1.06
    assert ambient("air", "xlpe_epr_90", 25) == 1.04
    # IEC 60364-5-52:2009, Table B.52.14 (from memory)
    assert ambient("air", "pvc_70", 10) == 1.22
    assert ambient("air", "xlpe_epr_90", 80) == 0.41
    assert ambient("air", "pvc_70", 30) == 1.0


def test_b52_15_to_b52_19_from_memory():
    t = default_sizing_tables()
    # IEC 60364-5-52:2009, Table B.52.15 (from memory)
    assert ambient("ground", "pvc_70", 30) == 0.89
    assert ambient("ground", "xlpe_epr_90", 10) == 1.07
    # IEC 60364-5-52:2009, Table B.52.16 (from memory)
    assert [s.value for s in t.soil["D1"]] == [1.28, 1.2, 1.18, 1.1, 1.05, 1.0, 0.96]
    assert [s.value for s in t.soil["D2"]] == [1.88, 1.62, 1.5, 1.28, 1.12, 1.0, 0.9]
    # IEC 60364-5-52:2009, Table B.52.17 item 3, single layer under a ceiling (not in BS 7671 Table 4C1; confirmed
    # against NBR 5410:2004 Tabela 42 in test_published_tables_reference.py)
    assert [s.value for s in t.grouping_air["single_layer_ceiling"]] == [0.95, 0.81, 0.72, 0.68, 0.66, 0.64, 0.63,
                                                                         0.62, 0.61]
    # IEC 60364-5-52:2009, Table B.52.18 (from memory): 3 circuits, 0.25 m apart
    assert t.grouping_direct["0.25_m"][1].value == 0.8
    # IEC 60364-5-52:2009, Table B.52.19 (from memory): 4 circuits in ducts, touching
    assert t.grouping_ducts["touching"][2].value == 0.7


def test_b52_17_grouping_in_air_published():
    t = default_sizing_tables()
    # BS 7671:2008 Table 4C1 (stored flipbook of the 17th Edition, "Circuitry and Related Parts of BS 7671: 2008",
    # p. 60), the national adoption of IEC 60364-5-52 Table B.52.17 items 1, 2, 4 and 5
    assert [s.value for s in t.grouping_air["bunched"]] == [1.00, 0.80, 0.70, 0.65, 0.60, 0.57, 0.54, 0.52, 0.50,
                                                            0.45, 0.41, 0.38]  # 1-9, 12, 16, 20 circuits
    assert [s.value for s in t.grouping_air["single_layer_wall"]] == [1.00, 0.85, 0.79, 0.75, 0.73, 0.72, 0.72,
                                                                      0.71, 0.70]
    assert [s.value for s in t.grouping_air["perforated_tray"]] == [1.00, 0.88, 0.82, 0.77, 0.75, 0.73, 0.73,
                                                                    0.72, 0.72]
    assert [s.value for s in t.grouping_air["ladder_or_cleats"]] == [1.00, 0.87, 0.82, 0.80, 0.80, 0.79, 0.79,
                                                                     0.78, 0.78]


def test_thermal_insulation_factors():
    steps = default_sizing_tables().insulation
    # IEC 60364-5-52 523.9, as reproduced by an installation guide (TLC Direct, 16th edition guide, 4.3.6):
    # totally surrounded for 0.5 m or more: 0.5
    assert steps[-1].upto == 500 and steps[-1].value == 0.5
    # BS 7671:2018 Table 52.2 (from memory): 50, 100, 200, 400 mm
    assert [s.value for s in steps[:-1]] == [0.88, 0.78, 0.63, 0.51]


# -- limits, devices, protective conductor, densities ------------------------------------------------

def test_g52_1_voltage_drop_limits_published():
    regime = iec60364()
    # IEC 60364-5-52:2009, Table G.52.1 (stored page 74): type A 3 % lighting, 5 % other; type B 6 % and 8 %
    assert regime.drop_limit(LimitsSpec(use="lighting"), 20).limit_pct == 3
    assert regime.drop_limit(LimitsSpec(use="other"), 20).limit_pct == 5
    assert regime.drop_limit(LimitsSpec(use="lighting", supply_kind="private_lv"), 20).limit_pct == 6
    assert regime.drop_limit(LimitsSpec(use="other", supply_kind="private_lv"), 20).limit_pct == 8
    # same table's note: +0.005 % per metre beyond 100 m, the supplement at most 0.5 %
    assert regime.drop_limit(LimitsSpec(), 160).limit_pct == pytest.approx(5.3)
    assert regime.drop_limit(LimitsSpec(), 1000).limit_pct == pytest.approx(5.5)


def test_conventional_currents():
    regime = iec60364()
    # IEC 60898-1 conventional non-tripping 1.13 In and tripping 1.45 In: Schneider Electric FAQ FA369327 (se.com)
    # and a summary of IS/IEC 60898-1:2002 (infralens.in); both stored pages agree
    assert default_sizing_tables().breaker_conventional == (1.13, 1.45)
    assert regime.conventional_current("B", 32).i2_a == pytest.approx(46.4)
    # IEC 60269-1 Table 2: conventional fusing current 1.6 In for In >= 16 A, 1.9 In for 4 < In < 16 A (from memory;
    # consistent with the Schneider Electric guide's k3 = 1.31 below 16 A and 1.10 from 16 A, k3 = k2 / 1.45)
    assert regime.conventional_current("gG", 63).multiple == 1.6
    assert regime.conventional_current("gG", 16).multiple == 1.6
    assert regime.conventional_current("gG", 10).multiple == 1.9
    assert regime.conventional_current("gG", 4).multiple == 2.1


@pytest.mark.parametrize(("line", "pe"), [
    # IEC 60364-5-54:2011 Table 54.2, via BS 7671 Table 54.7 as set out by the-regs.co.uk ("Protective Conductor
    # Sizes"): S <= 16: S; 16 < S <= 35: 16; S > 35: S/2 (here rounded up to the next listed size)
    (10, 10), (16, 16), (25, 16), (35, 16), (70, 35), (120, 70), (240, 120),
])
def test_table_54_2_minimum_protective_conductor(line, pe):
    regime = iec60364()
    chosen, _ = regime.protective_conductor_minimum(regime.conductor(line * MM2, "copper"))
    assert chosen.area_m2 == pytest.approx(pe * MM2)


def test_metal_densities():
    regime = iec60364()
    # Industrial Power Engineering and Applications Handbook, Table 30.1: standard (IEC 60028) copper, mass
    # resistivity 15.328 ohm g/m² over volume resistivity 1.7241 uOhm cm = 8.89 g/cm³
    assert regime.metal_density("copper")[0] == pytest.approx(15.328 / 1.7241 * 1000, rel=1e-3)
    # IEC 60889 hard-drawn aluminium 2.703 g/cm³ (EN 60889:1997, clause 2, stored scribd copy)
    assert regime.metal_density("aluminium")[0] == 2703


# -- worked examples ---------------------------------------------------------------------------------

def test_worked_example_textbook_32a_circuit_at_35c():
    """T. Linsley, Basic Electrical Installation Work (stored page 312, text partly garbled).

    Read on the page: design current 26.09 A, so a 32 A MCB; correction factor for 35 °C 0.94; cable rating
    It = 32 / 0.94 = 34.04 A; a 10 mm² cable "having rating 46 A" is required.  Inferred, not read: the load is
    6 kW at 230 V (6000 / 230 = 26.09 A) and the cable is enclosed in conduit in an insulated wall (method A,
    where 6 mm² is rated 34 A and 10 mm² 46 A).
    """
    spec = SizingInput(
        load=LoadSpec(power_w=6000.0),
        circuit=CircuitSpec(length_m=10.0, method="A1", cable="single_core", ambient_c=35.0),
        protection=ProtectionSpec("B", 32.0),
        supply=SupplySpec(ze_ohm=0.35),
    )
    r = size_conductor(spec)
    assert r.design_current_a == pytest.approx(26.09, abs=0.005)  # the book: 26.09 A
    assert r.device.rated_current_a == 32  # the book: 32 A MCB
    assert r.factor_product == pytest.approx(0.94)  # the book: 0.94 at 35 °C
    assert r.required_tabulated_a == pytest.approx(34.04, abs=0.005)  # the book: It = 34.04 A
    assert r.verdict == "compliant" and r.chosen.size_label == "10 mm²"  # the book: 10 mm², 46 A
    assert r.chosen.tabulated_capacity_a == 46
    assert r.rejected[-1].size_label == "6 mm²" and "ampacity" in r.rejected[-1].failing
    assert r.governing_check == "ampacity"


@pytest.mark.parametrize(("method", "insulation", "area", "degc", "published_a"), [
    # Atlas Copco GA instruction book, maximum allowed current by ambient (whole amperes, "< N A")
    ("B2", "pvc_70", 16, 45, 49),
    ("B2", "pvc_70", 95, 50, 127),
    ("C", "pvc_70", 50, 50, 102),
    ("C", "pvc_70", 10, 55, 35),
    ("F", "pvc_70", 240, 40, 422),
    ("F", "xlpe_epr_90", 240, 55, 461),
    ("F", "xlpe_epr_90", 70, 45, 233),
])
def test_worked_example_equipment_maker_tables(method, insulation, area, degc, published_a):
    """The instruction book's tables are It x Ca for three loaded copper conductors; verify gives Iz."""
    spec = SizingInput(
        load=LoadSpec(phases="three", design_current_a=10.0, power_factor=0.85),
        circuit=CircuitSpec(length_m=5.0, method=method, insulation=insulation, ambient_c=float(degc),
                            cable="single_core" if method == "F" else "multicore"),
        protection=ProtectionSpec("gG", 16.0),
        supply=SupplySpec(ze_ohm=0.1, u0_v=230.0),
    )
    r = verify_conductor(spec, area * MM2)
    assert abs(r.chosen.iz_a - published_a) < 1.0  # the book rounds It x Ca to whole amperes


def _annex_g_drop(b: float, r_ohm_per_m: float, length: float, pf: float, ib: float) -> float:
    """IEC 60364-5-52:2009 Annex G: u = b (R L cos phi + lambda L sin phi) Ib, lambda = 0.08 mOhm/m."""
    return b * (r_ohm_per_m * length * pf + 0.08e-3 * length * math.sin(math.acos(pf))) * ib


@pytest.mark.parametrize(("phases", "b", "area", "r20_ohm_per_km", "length", "ib", "pf"), [
    # IEC 60228:2004 Table 2: class 2 copper, 6 mm² 3.08 ohm/km, 16 mm² 1.15 ohm/km, 35 mm² 0.524 ohm/km
    ("single", 2, 6, 3.08, 40.0, 30.0, 0.9),
    ("three", 1, 16, 1.15, 80.0, 55.0, 0.85),
    ("three", 1, 35, 0.524, 150.0, 100.0, 0.8),
])
def test_worked_example_annex_g_voltage_drop(phases, b, area, r20_ohm_per_km, length, ib, pf):
    """The solver's drop agrees with Annex G's formula, b = 2 single-phase and 1 three-phase (phase to neutral)."""
    spec = SizingInput(
        load=LoadSpec(phases=phases, design_current_a=ib, power_factor=pf),
        circuit=CircuitSpec(length_m=length, method="C"),
        protection=ProtectionSpec("gG", 160.0, required_time_s=5.0),
        supply=SupplySpec(ze_ohm=0.05),
        limits=LimitsSpec(voltage_drop_pct=100.0),
    )
    r = verify_conductor(spec, area * MM2)
    r70 = r20_ohm_per_km / 1000 * (CU_K + 70) / (CU_K + 20)  # IEC 60228 Annex B, at PVC's 70 °C
    expected_v = _annex_g_drop(b, r70, length, pf, ib)
    assert r.chosen.voltage_drop_v == pytest.approx(expected_v, rel=0.01)  # Annex G drops second-order terms
    # Zs = Ze + R1 + R2 at 70 °C (IEC 60364-6 practice), independent of the solver
    assert r.chosen.zs_ohm == pytest.approx(0.05 + 2 * r70 * length, rel=1e-9)


def test_e52_1_and_b52_19_single_core_from_memory():
    t = default_sizing_tables()
    # IEC 60364-5-52:2009, Annex E, Table E.52.1 (from memory): 0-15 % line current x 1.0; 15-33 % line x 0.86;
    # 33-45 % neutral current x 0.86; above 45 % neutral current x 1.0
    assert [(b.above_pct, b.up_to_pct, b.size_on, b.factor) for b in t.harmonic_bands] == [
        (0.0, 15.0, "line", 1.0), (15.0, 33.0, "line", 0.86), (33.0, 45.0, "neutral", 0.86),
        (45.0, None, "neutral", 1.0)]
    # IEC 60364-5-52:2009, Table B.52.19, single-core cables in single-way ducts (from memory)
    assert [s.value for s in t.grouping_ducts_single_core["touching"]] == [0.8, 0.7, 0.65, 0.6, 0.6]
    assert [s.value for s in t.grouping_ducts_single_core["1.0_m"]] == [0.95, 0.9, 0.9, 0.9, 0.9]
