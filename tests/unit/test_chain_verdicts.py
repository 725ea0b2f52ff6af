"""Issue 15: lead-chain verdicts that never say "pass" without assessing, and the checks behind them."""

from __future__ import annotations

import ast
import typing
from pathlib import Path

import pytest

from service.core.chains import Appliance, Chain, Lead, Limits, SourceImpedance, Supply, analyse_chain
from service.core.conductors import SizeSpec, default_library

CHAINS = Path(__file__).resolve().parents[2] / "service" / "core" / "chains"
K60 = (234.5 + 60.0) / (234.5 + 20.0)  # IEC 60228:2004 Annex B, copper, 20 °C -> 60 °C (cords at their maximum)
R20_OHM_PER_M = {0.75: 26.0e-3, 1.5: 13.3e-3, 2.5: 7.98e-3}  # IEC 60228:2004 Table 3, class 5 plain copper


def cord(area_mm2: float):
    return default_library().find(SizeSpec.metric(area_mm2 * 1e-6), "copper", 5)


def supply(**overrides) -> Supply:
    values = dict(nominal_voltage_v=230.0, frequency_hz=50.0, line_neutral=SourceImpedance(0.45),
                  line_earth=SourceImpedance(0.7), earthing="TN-S", device_kind="B", device_rating_a=16.0,
                  rcd_sensitivity_a=0.03, ambient_c=25.0)
    values.update(overrides)
    return Supply(**values)


def lamp(outlet: int = 0, power_w: float = 300.0) -> Appliance:
    return Appliance("work lamp", outlet, power_w, 230.0)


def checks(report, code):
    everything = [c for r in (*report.leads, *report.appliances, report.fault) for c in r.checks] + list(report.checks)
    return [c for c in everything if c.code == code]


# -- item 1 ---------------------------------------------------------------------------------------------------------

def test_no_device_and_no_earth_loop_is_not_assessed_never_pass():
    # Project rule (helper_rules.md, Trust first): a check passes only when it was made and passed.
    chain = Chain(supply(line_earth=None, device_kind=None, device_rating_a=None, rcd_sensitivity_a=None),
                  (Lead("hall lead", 10.0, cord(1.5)),), (lamp(),))
    report = analyse_chain(chain)
    assert report.verdict == "not_assessed"
    assert "supply.device" in report.missing_inputs and "supply.earth_loop_impedance" in report.missing_inputs
    assert checks(report, "earth_fault_disconnection")[0].passes is None
    assert checks(report, "line_neutral_disconnection")[0].passes is None
    limit = report.length_limits[0]
    assert limit.missing_inputs  # the drop-only length is flagged as not the whole story


# -- item 2 ---------------------------------------------------------------------------------------------------------

def film_set(**overrides) -> Chain:
    return Chain(supply(device_kind="C", device_rating_a=32.0, **overrides),
                 tuple(Lead(f"reel {k}", 50.0, cord(2.5)) for k in range(3)), (lamp(2, 1000.0),))


def test_film_set_far_end_line_neutral_fault_does_not_trip_a_c32_instantly():
    report = analyse_chain(film_set())
    # Z(line-neutral) = 0.45 + 2 x 150 m x 7.98 mohm/m x K60 (IEC 60228:2004 Table 3, Annex B);
    # If = Cmin U0 / Z with Cmin = 0.95 (IEC 60909-0 Table 1): about 68 A.
    z = 0.45 + 2 * 150.0 * R20_OHM_PER_M[2.5] * K60
    ln = report.fault.line_neutral
    assert ln.fault_current_a == pytest.approx(0.95 * 230.0 / z, rel=1e-9)
    assert ln.fault_current_a == pytest.approx(68.0, abs=1.5)
    # IEC 60898-1 Table 7 test e: a type C breaker trips instantly only at 10 x In = 320 A.
    assert ln.operating.current_a == pytest.approx(320.0)
    assert ln.clearing_time_s is None and not ln.complies  # no guaranteed time below 5 s: does not disconnect
    check = checks(report, "line_neutral_disconnection")[0]
    assert check.passes is False and check.limit == pytest.approx(320.0)
    assert report.fault.problems and report.verdict == "fail"
    # IEC 60364-4-43:2008, 434.5.2: not cleared within 5 s, so the cords are not protected against it.
    assert all(c.passes is False for c in checks(report, "cord_withstand"))


def test_the_rcd_does_not_rescue_a_line_neutral_fault():
    # IEC 61008-1: an RCD responds to residual current only; a line-neutral fault has none (common practice).
    with_rcd = analyse_chain(film_set(rcd_sensitivity_a=0.03))
    assert with_rcd.fault.earth_fault.complies  # the RCD clears the earth fault...
    assert checks(with_rcd, "line_neutral_disconnection")[0].passes is False  # ...not the line-neutral one


def test_cord_withstand_is_k2s2_against_i2t_for_the_clearing_time():
    # A 2 m 0.75 mm² lead on a strong socket: If well above 5 In, so a type B breaker trips within 0.1 s
    # (IEC 60898-1 Table 7 test e); I² t = If² x 0.1 s against (k S)² with k = 115, copper PVC
    # (IEC 60364-4-43:2008 Table 43A; the lower of rubber 141 and PVC 115, the insulation not being given).
    chain = Chain(supply(line_neutral=SourceImpedance(0.2)), (Lead("short lead", 2.0, cord(0.75)),), (lamp(),))
    report = analyse_chain(chain)
    z = 0.2 + 2 * 2.0 * R20_OHM_PER_M[0.75] * K60
    current = 0.95 * 230.0 / z
    check = checks(report, "cord_withstand")[0]
    assert report.fault.line_neutral.clearing_time_s == pytest.approx(0.1)
    assert check.value == pytest.approx(current**2 * 0.1, rel=1e-9)
    assert check.limit == pytest.approx((115 * 0.75) ** 2)
    assert check.passes is False  # about 27 kA²s against 7.4 kA²s


# -- item 3 ---------------------------------------------------------------------------------------------------------

def test_gg16_on_a_16a_cord_fails_the_conventional_current_condition():
    # IEC 60364-4-43:2008, 433.1: I2 <= 1.45 Iz. gG 16 A: I2 = 1.6 In = 25.6 A (IEC 60269-1 Table 2, from memory)
    # > 1.45 x 16 A = 23.2 A; a 1.5 mm² cord carries 16 A at 30 °C (BS 7671:2018 Table 4F3A).
    chain = Chain(supply(device_kind="gG", device_rating_a=16.0, ambient_c=30.0), (Lead("cord", 5.0, cord(1.5)),),
                  (lamp(),))
    lead = analyse_chain(chain).leads[0]
    (in_check,) = [c for c in lead.checks if c.code == "lead_overload"]
    (i2_check,) = [c for c in lead.checks if c.code == "lead_conventional_current"]
    assert in_check.passes is True
    assert i2_check.value == pytest.approx(25.6) and i2_check.limit == pytest.approx(23.2)
    assert i2_check.passes is False
    assert lead.verdict == "fail" and lead.overload_protected is False


def test_a_lead_whose_device_rating_exceeds_its_rating_fails():
    # IEC 60364-4-43:2008, 433.1: In <= Iz. A C32 breaker on a 2.5 mm² cord rated 25 A (BS 7671 Table 4F3A).
    report = analyse_chain(film_set(ambient_c=30.0))
    lead = report.leads[0]
    (in_check,) = [c for c in lead.checks if c.code == "lead_overload"]
    assert in_check.value == 32.0 and in_check.limit == pytest.approx(25.0) and in_check.passes is False
    assert lead.verdict == "fail"


def test_b16_on_a_16a_cord_meets_both_conditions():
    # IEC 60898-1 Table 7: I2 = 1.45 In, so In = Iz gives I2 = 1.45 Iz exactly (433.1 met).
    chain = Chain(supply(ambient_c=30.0), (Lead("cord", 5.0, cord(1.5)),), (lamp(),))
    lead = analyse_chain(chain).leads[0]
    assert lead.overload_protected is True
    assert all(c.passes for c in lead.checks if c.code in ("lead_overload", "lead_conventional_current"))


# -- item 6 ---------------------------------------------------------------------------------------------------------

def test_voltage_drop_budget_counts_from_the_origin():
    # IEC 60364-5-52:2009 Table G.52.1: 5 % from the origin of the installation (other uses); a chain of about
    # 3 % behind fixed wiring that used 3 % exceeds it.
    base = Chain(supply(), (Lead("lead", 25.0, cord(1.5)),), (Appliance("heater", 0, 2300.0, 230.0),))
    alone = analyse_chain(base)
    share = alone.totals.total_drop_pct
    assert 2.0 < share < 5.0
    behind = analyse_chain(Chain(base.supply, base.leads, base.appliances, Limits(upstream_voltage_drop_pct=3.0)))
    t = behind.totals
    assert t.upstream_drop_pct == 3.0 and t.drop_from_origin_pct == pytest.approx(3.0 + t.total_drop_pct)
    (budget,) = checks(behind, "voltage_drop_budget")
    assert budget.passes is False and budget.limit == 5.0 and budget.value == pytest.approx(t.drop_from_origin_pct)
    assert checks(behind, "appliance_voltage")[0].passes is False
    assert behind.verdict == "fail"
    assert any("upstream_voltage_drop not given" in a for a in alone.assumptions)


# -- item 7 ---------------------------------------------------------------------------------------------------------

def test_length_limits_by_route_and_the_rcd_never_governs_a_line_neutral_fault():
    report = analyse_chain(film_set())
    limit = report.length_limits[0]
    r = 2 * R20_OHM_PER_M[2.5] * K60  # out and back, per metre (IEC 60228 Table 3, Annex B)
    # Line-neutral: |Z_socket + 2 r L| <= Cmin U0 / Ia, Ia = 10 x 32 A (IEC 60898-1), Cmin 0.95 (IEC 60909-0)
    assert limit.by_overcurrent_line_neutral_m == pytest.approx((0.95 * 230.0 / 320.0 - 0.45) / r, rel=1e-9)
    # Earth fault by the breaker: Zs,max = 0.95 x 230 / 320 = 0.683 ohm is below Ze = 0.7 ohm: no length at all.
    assert limit.by_overcurrent_earth_fault_m == 0.0
    assert limit.by_rcd_earth_fault_m > 10_000  # the RCD route alone would allow kilometres...
    assert limit.greatest_m <= limit.by_overcurrent_line_neutral_m  # ...but it cannot see the line-neutral fault
    assert limit.governed_by == "line_neutral_overcurrent"


# -- item 8 ---------------------------------------------------------------------------------------------------------

def test_collapse_is_a_fail_verdict_with_the_most_power_and_the_appliance_name():
    # Maximum power transfer (common practice): through about 5 ohm no more than U0² / (4 R) ~ 2.6 kW can reach a
    # load, so a 4 kW constant-power heater has no operating point.
    chain = Chain(supply(line_neutral=SourceImpedance(2.0)), (Lead("long lead", 80.0, cord(0.75)),),
                  (Appliance("fan heater", 0, 4000.0, 230.0, model="constant_power"),))
    report = analyse_chain(chain)
    assert report.verdict == "fail" and report.totals is None
    (collapse,) = checks(report, "supply_collapse")
    assert collapse.passes is False and collapse.value == 4000.0 and 0 < collapse.limit < 4000.0
    assert report.unsupplied[0].name == "fan heater"
    assert report.fault.line_neutral is not None  # fault checks still made: the loops do not depend on the loads


# -- codes ----------------------------------------------------------------------------------------------------------

def _emitted_codes() -> set[str]:
    found = set()
    for path in CHAINS.glob("*.py"):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Call) and getattr(node.func, "id", None) == "ChainCheck" and node.args:
                arg = node.args[0]
                if isinstance(arg, ast.Constant) and isinstance(arg.value, str):
                    found.add(arg.value)
    return found


def test_every_code_the_core_emits_is_listed_and_in_the_contract():
    from service.core.chains.codes import CHAIN_CHECK_CODES, LENGTH_ROUTES

    emitted = _emitted_codes()
    assert len(emitted) >= 9  # the scan sees the checks (a scan that finds nothing would prove nothing)
    assert emitted <= set(CHAIN_CHECK_CODES)
    assert len(set(CHAIN_CHECK_CODES)) == len(CHAIN_CHECK_CODES)
    assert all(c.replace("_", "").isalnum() and c == c.lower() for c in CHAIN_CHECK_CODES + LENGTH_ROUTES)
    from service.api.schemas.v1 import chains as schema

    literal = typing.get_args(typing.get_args(schema.ChainCheckCode)[0])
    assert literal == CHAIN_CHECK_CODES


def test_an_unlisted_code_is_refused_at_run_time():
    from service.core.chains.codes import ChainCheck

    with pytest.raises(ValueError):
        ChainCheck("lead_is_fine", True, 1.0, 2.0, "A", "nowhere")


def test_tt_rcd_without_electrode_resistance_is_not_assessed():
    # IEC 60364-4-41:2005, 411.5.3: a TT system protected by an RCD also needs RA x IΔn <= 50 V; without RA the
    # earth-fault check is not made in full, so it cannot pass.
    chain = Chain(supply(earthing="TT", line_earth=SourceImpedance(20.0), electrode_resistance_ohm=None),
                  (Lead("lead", 10.0, cord(1.5)),), (lamp(),))
    report = analyse_chain(chain)
    (check,) = checks(report, "earth_fault_disconnection")
    assert check.passes is None and check.missing_inputs == ("supply.electrode_resistance",)
    assert report.verdict != "pass"
