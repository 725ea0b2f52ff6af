"""Lead-chain analysis against published tables, hand calculations and facts of the trade."""

from __future__ import annotations

import pytest

from service.core.chains import Appliance, Chain, Lead, Limits, Reel, SourceImpedance, Supply, analyse_chain
from service.core.conductors import SizeSpec, default_library


def cord(area_mm2: float):
    return default_library().find(SizeSpec.metric(area_mm2 * 1e-6), "copper", 5)


def supply(**overrides) -> Supply:
    values = dict(nominal_voltage_v=230.0, frequency_hz=50.0, line_neutral=SourceImpedance(0.5),
                  line_earth=SourceImpedance(0.8), earthing="TN-C-S", device_kind="B", device_rating_a=16.0,
                  rcd_sensitivity_a=0.03, ambient_c=30.0)
    values.update(overrides)
    return Supply(**values)


def heater(power_w: float, outlet: int = 0) -> Appliance:
    return Appliance("heater", outlet, power_w, 230.0)  # constant impedance, unity power factor


def test_one_lead_agrees_with_a_hand_calculation():
    # 20 m of 2.5 mm² class 5 copper: 7.98 ohm/km at 20 °C (IEC 60228:2004, Table 3), corrected to the reported
    # conductor temperature by IEC 60228 Annex B; a 2 kW heater is R = 230² / 2000 ohm. Series loop, all resistive.
    report = analyse_chain(Chain(supply(), (Lead("lead", 20.0, cord(2.5)),), (heater(2000.0),)))
    lead = report.leads[0]
    t = lead.conductor_temperature_c
    r_per_m = 7.98e-3 * (234.5 + t) / (234.5 + 20.0)
    current = 230.0 / (0.5 + 2 * r_per_m * 20.0 + 230.0**2 / 2000.0)
    assert lead.current_a == pytest.approx(current, rel=1e-9)
    assert lead.drop_v == pytest.approx(current * 2 * r_per_m * 20.0, rel=1e-9)
    assert lead.loss_w == pytest.approx(current**2 * 2 * r_per_m * 20.0, rel=1e-9)
    # The temperature estimate t = ta + (tmax - ta)(I / Iz)^2 (BS 7671:2018 Appendix 4, 6.1, from memory)
    # with Iz = 25 A for 2.5 mm² (BS 7671:2018 Table 4F3A) agrees to the iteration's 0.5 °C tolerance.
    assert t == pytest.approx(30.0 + 30.0 * (current / 25.0) ** 2, abs=0.5)


@pytest.mark.parametrize(("area_mm2", "rating_a"), [(0.75, 6), (1.0, 10), (1.5, 16), (2.5, 25), (4, 32)])
def test_cord_ratings_are_bs7671_table_4f3a(area_mm2, rating_a):
    # BS 7671:2018 Table 4F3A, single-phase, 30 °C ambient
    report = analyse_chain(Chain(supply(), (Lead("lead", 5.0, cord(area_mm2)),), (heater(200.0),)))
    assert report.leads[0].rating.effective_a == rating_a


def test_drop_per_amp_per_metre_matches_bs7671_table_4f3b():
    # A 1.5 mm² cord at exactly its rating (16 A, 30 °C ambient) runs at 60 °C. BS 7671:2018 Table 4F3B gives
    # 32 mV/A/m for 1.5 mm² two-core cords at 60 °C; the IEC 60228 maximum resistance gives 30.8 mV/A/m, and the
    # table's figure is rounded and allows for reactance: agreement within 5 %.
    load_w = 16.0 * 230.0
    report = analyse_chain(Chain(supply(line_neutral=SourceImpedance(1e-3)), (Lead("lead", 10.0, cord(1.5)),),
                                 (Appliance("load", 0, load_w, 230.0, model="constant_current"),)))
    lead = report.leads[0]
    assert lead.current_a == pytest.approx(16.0, rel=0.03)
    mv_per_a_per_m = lead.drop_v / lead.current_a / lead.length_m * 1000
    assert mv_per_a_per_m == pytest.approx(32.0, rel=0.05)


def test_resistive_appliance_power_scales_with_voltage_squared():
    # common practice: a constant-impedance appliance draws P = P_rated (V / V_rated)^2
    report = analyse_chain(Chain(supply(), (Lead("lead", 40.0, cord(1.5)),), (heater(3000.0),)))
    a = report.appliances[0]
    assert a.power_w == pytest.approx(3000.0 * (a.voltage_v / 230.0) ** 2, rel=1e-9)


def test_five_percent_of_230_volts_is_the_default_limit():
    # common practice: 5 % of 230 V is 11.5 V (IEC 60364-5-52:2009 Table G.52.1, other uses: 5 %)
    report = analyse_chain(Chain(supply(), (Lead("lead", 30.0, cord(1.5)),), (heater(2500.0),)))
    t = report.totals
    assert t.drop_limit_pct == 5.0
    assert t.drop_complies == (t.total_drop_v <= 11.5 + 1e-9)


@pytest.mark.parametrize(("curve", "multiple"), [("B", 5), ("C", 10), ("D", 20)])
def test_disconnecting_current_is_the_iec60898_instantaneous_multiple(curve, multiple):
    # IEC 60898-1: instantaneous tripping guaranteed at 5 In (B), 10 In (C), 20 In (D)
    report = analyse_chain(Chain(supply(device_kind=curve, rcd_sensitivity_a=None), (Lead("lead", 10.0, cord(1.5)),),
                                 (heater(500.0),)))
    check = report.fault.earth_fault
    assert check.overcurrent.operating.current_a == pytest.approx(multiple * 16.0)
    # Zs,max = Cmin U0 / Ia with Cmin = 0.95 (IEC 60909-0 Table 1)
    assert check.overcurrent.max_zs_ohm == pytest.approx(0.95 * 230.0 / (multiple * 16.0))


@pytest.mark.parametrize(("earthing", "seconds"), [("TN-C-S", 0.4), ("TN-S", 0.4), ("TT", 0.2)])
def test_required_disconnection_time_is_iec60364_4_41_table_41_1(earthing, seconds):
    # IEC 60364-4-41:2005, Table 41.1: 120 V < U0 <= 230 V, AC: TN 0.4 s, TT 0.2 s
    report = analyse_chain(Chain(supply(earthing=earthing), (Lead("lead", 10.0, cord(1.5)),), (heater(500.0),)))
    assert report.fault.disconnection.time_s == seconds


def test_earth_loop_is_ze_plus_line_and_protective_conductors_at_60c():
    # Zs = Ze + (R1 + R2) (IEC 60364-4-41, 411.4.4); cords at their 60 °C maximum (BS 7671 Table 4F3A heading);
    # 1.5 mm² class 5: 13.3 ohm/km at 20 °C (IEC 60228:2004, Table 3).
    report = analyse_chain(Chain(supply(), (Lead("a", 25.0, cord(1.5)), Lead("b", 15.0, cord(2.5))), (heater(500.0, 1),)))
    k60 = (234.5 + 60.0) / (234.5 + 20.0)
    expected = 0.8 + 2 * (13.3e-3 * 25.0 + 7.98e-3 * 15.0) * k60
    assert report.fault.earth_loop_ohm == pytest.approx(expected, rel=1e-9)
    assert report.fault.earth_fault.fault_current_a == pytest.approx(0.95 * 230.0 / expected, rel=1e-9)


def test_a_fully_wound_reel_takes_the_deepest_drum_factor():
    # BS 7671:2018 Table 4F1A note 2: ventilated cylindrical drum, 4 layers: 35 %; 1.5 mm² cord 16 A (Table 4F3A)
    report = analyse_chain(Chain(supply(), (Lead("reel", 25.0, cord(1.5), reel=Reel("fully")),), (heater(500.0),)))
    assert report.leads[0].rating.effective_a == pytest.approx(16.0 * 0.35)
    marked = analyse_chain(Chain(supply(), (Lead("reel", 25.0, cord(1.5), reel=Reel("fully", marked_wound_rating_a=5.0)),),
                                 (heater(500.0),)))
    assert marked.leads[0].rating.effective_a == 5.0  # the maker's wound rating when given


def test_greatest_length_meets_the_drop_limit_exactly():
    chain = Chain(supply(), (Lead("lead", 10.0, cord(1.5)),), (heater(2000.0),), Limits(voltage_drop_pct=4.0))
    limit = analyse_chain(chain).length_limits[0]
    assert limit.governed_by == "voltage_drop"
    # At the drop-limited length (conductors at 60 °C, conservative) the drop is the limit.
    from service.core.chains.lengths import _DropProbe

    assert _DropProbe(chain, chain.leads[0])(limit.by_voltage_drop_m) == pytest.approx(4.0, abs=0.01)
