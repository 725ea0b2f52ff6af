"""AWG cords to NEC Table 400.5(A)(1), and 1.25 mm² cords, in a lead chain."""

from __future__ import annotations

import pytest

from service.core.chains import Appliance, Chain, Lead, SourceImpedance, Supply, analyse_chain
from service.core.conductors import SizeSpec
from service.core.cord_conductors import cord_conductor
from service.core.cords import default_cords

FEET = 0.3048


def supply(u0: float = 120.0, ambient_c: float = 30.0) -> Supply:
    return Supply(nominal_voltage_v=u0, frequency_hz=60.0, line_neutral=SourceImpedance(0.25),
                  line_earth=SourceImpedance(0.4), earthing="TN-S", device_kind="C", device_rating_a=20.0,
                  rcd_sensitivity_a=None, ambient_c=ambient_c)


@pytest.mark.parametrize("gauge, amps", [("18", 10.0), ("16", 13.0), ("14", 18.0), ("12", 25.0)])
def test_awg_cords_take_their_nec_ampacity(gauge, amps):
    # NEC 2023 Table 400.5(A)(1), column B (two current-carrying conductors): 18 AWG 10 A, 16 AWG 13 A,
    # 14 AWG 18 A, 12 AWG 25 A
    chain = Chain(supply(), (Lead("cord", 15.0, cord_conductor(SizeSpec.awg(gauge), "copper", 5)),),
                  (Appliance("saw", 0, 600.0, 120.0),))
    rating = analyse_chain(chain).leads[0].rating
    assert rating.base_a == amps and rating.effective_a == amps
    assert "400.5(A)(1)" in rating.base_source


def test_column_a_is_held_below_column_b():
    # NEC 2023 Table 400.5(A)(1): 14 AWG column A (three current-carrying conductors) 15 A, from memory
    assert default_cords().nec_three_conductor_a["14 AWG"] == 15.0


def test_an_awg_cord_in_hot_air_takes_the_nec_60_c_factor():
    # NEC 2023 Table 310.15(B)(1)(1), 60 °C column: 36-40 °C -> 0.82 (400.5(A) applies it to cords)
    chain = Chain(supply(ambient_c=38.0), (Lead("cord", 15.0, cord_conductor(SizeSpec.awg("14"), "copper", 5)),),
                  (Appliance("saw", 0, 600.0, 120.0),))
    assert analyse_chain(chain).leads[0].rating.effective_a == pytest.approx(18.0 * 0.82)


def test_awg_cord_resistance_is_nec_chapter_9_table_8_stranded():
    # NEC 2023 Chapter 9 Table 8: 14 AWG stranded, coated copper 3.26 ohm/kft at 75 °C
    conductor = cord_conductor(SizeSpec.awg("14"), "copper", 5)
    assert conductor.resistance_per_m_at(75.0) == pytest.approx(3.26 / (1000 * FEET))


def test_a_1_25_mm2_cord_is_rated_and_has_the_4f3b_drop():
    # BS 7671:2018 Table 4F3A: 1.25 mm² cord 13 A single-phase; Table 4F3B: 37 mV/A/m at 60 °C
    conductor = cord_conductor(SizeSpec.metric(1.25e-6), "copper", 5)
    assert 2 * conductor.resistance_per_m_at(60.0) * 1000 == pytest.approx(37.0)
    chain = Chain(supply(230.0), (Lead("kettle lead", 3.0, conductor),), (Appliance("urn", 0, 2500.0, 230.0),))
    lead = analyse_chain(chain).leads[0]
    assert lead.rating.base_a == 13.0
