"""Reduced-low-voltage (110 V centre-tapped) site supplies in a lead chain: U0 to earth, 5 s, no RCD required."""

from __future__ import annotations

import pytest

from service.core.chains import Appliance, Chain, Lead, SourceImpedance, Supply, analyse_chain
from service.core.conductors import SizeSpec, default_library
from service.core.protection import CircuitBreaker, GGFuse, rlv_disconnection_rule, rlv_max_zs, rlv_u0


def cord(area_mm2: float):
    return default_library().find(SizeSpec.metric(area_mm2 * 1e-6), "copper", 5)


def site(system: str, ze_ohm: float) -> Chain:
    s = Supply(nominal_voltage_v=110.0, frequency_hz=50.0, line_neutral=SourceImpedance(0.3),
               line_earth=SourceImpedance(ze_ohm), earthing="TN-S", device_kind="B", device_rating_a=16.0,
               rcd_sensitivity_a=None, system=system)
    return Chain(s, (Lead("site lead", 2.0, cord(2.5)),), (Appliance("drill", 0, 700.0, 110.0),))


def test_u0_to_earth_of_the_two_rlv_systems():
    # BS 7671:2018, 411.8.1.2 (from memory): 55 V single-phase centre-tapped, 63.5 V three-phase star (110 / sqrt 3)
    assert rlv_u0("rlv_single_phase_cte") == 55.0
    assert rlv_u0("rlv_three_phase_star") == pytest.approx(110.0 / 3**0.5, abs=0.05)


def test_rlv_circuits_disconnect_within_5_s():
    # BS 7671:2018, 411.8.3 (national rule): 5 s for every RLV circuit
    rule = rlv_disconnection_rule("rlv_single_phase_cte", "TN-S", 16.0)
    assert rule.time_s == 5.0 and rule.u0_v == 55.0 and "411.8" in rule.source


def test_max_zs_is_cmin_u0_over_the_5_s_operating_current():
    # BS 7671:2018, 411.8.3: Zs <= Cmin x U0 / Ia, Cmin = 0.95 (IEC 60909-0 Table 1); a type B 16 A breaker
    # trips within 0.1 s at 5 In = 80 A (IEC 60898-1 Table 7), so Ia(5 s) = 80 A.
    zs, op = rlv_max_zs(CircuitBreaker("B", 16.0), "rlv_single_phase_cte")
    assert op.current_a == 80.0 and zs == pytest.approx(0.95 * 55.0 / 80.0)
    zs3, _ = rlv_max_zs(CircuitBreaker("B", 16.0), "rlv_three_phase_star")
    assert zs3 == pytest.approx(0.95 * 63.5 / 80.0)
    # a gG fuse at 5 s takes its IEC 60269-1 gate Imax(5 s): 16 A -> 65 A (IEC 60269-1, Table 3 gates)
    zs_fuse, op_fuse = rlv_max_zs(GGFuse(16.0), "rlv_single_phase_cte")
    assert op_fuse.current_a == pytest.approx(65.0) and zs_fuse == pytest.approx(0.95 * 55.0 / 65.0)


def test_a_110_v_site_is_checked_at_55_v_to_earth_not_at_110_v():
    # Zs ~ 1.0 ohm. At U0 = 110 V a B16 would pass (0.95 x 110 / 80 = 1.31 ohm); at the true U0 = 55 V to earth
    # (BS 7671:2018, 411.8.1.2) the limit is 0.95 x 55 / 80 = 0.65 ohm (411.8.3), so the far-end fault fails.
    report = analyse_chain(site("rlv_single_phase_cte", 0.95))
    check = report.fault.earth_fault
    assert check.u0_v == 55.0 and check.required_time_s == 5.0 and not check.complies
    assert check.fault_current_a == pytest.approx(0.95 * 55.0 / report.fault.earth_loop_ohm)
    assert report.verdict == "fail"


def test_no_rcd_is_asked_for_on_an_rlv_site():
    # BS 7671:2018, 411.8 (from memory): additional protection by a 30 mA RCD is not required on RLV
    report = analyse_chain(site("rlv_single_phase_cte", 0.3))
    assert report.fault.earth_fault.complies
    assert not any("30 mA RCD" in r for r in report.recommendations)
    assert any("Reduced low voltage" in a for a in report.assumptions)


def test_a_standard_supply_is_unchanged():
    # IEC 60364-4-41:2005, Table 41.1: TN, 50 V < U0 <= 120 V, AC: 0.8 s
    report = analyse_chain(site("standard", 0.3))
    assert report.fault.earth_fault.u0_v == 110.0 and report.fault.earth_fault.required_time_s == 0.8


def test_an_rcd_on_an_rlv_site_needs_zs_times_idn_within_50_v():
    # BS 7671:2018, 411.8.3 (from memory): Zs x IΔn <= 50 V; 30 mA -> 1667 ohm, stricter than
    # Cmin x U0 / IΔn = 0.95 x 55 / 0.03 = 1742 ohm (IEC 61008-1 Table 1: IΔn within 0.3 s)
    s = Supply(nominal_voltage_v=110.0, frequency_hz=50.0, line_neutral=SourceImpedance(0.3),
               line_earth=SourceImpedance(1700.0), earthing="TN-S", device_kind=None, device_rating_a=None,
               rcd_sensitivity_a=0.03, system="rlv_single_phase_cte")
    report = analyse_chain(Chain(s, (Lead("site lead", 2.0, cord(2.5)),), (Appliance("drill", 0, 700.0, 110.0),)))
    assert report.fault.earth_fault.complies  # the break-time route alone passes
    assert any("50 V" in p for p in report.fault.problems) and report.verdict == "fail"
