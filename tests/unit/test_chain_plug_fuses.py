"""Plug fuses as BS 1362 devices in a lead chain: their time-current band, overload verdict and fault credit."""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from service.core.chains import Appliance, Chain, Lead, SourceImpedance, Supply, analyse_chain
from service.core.conductors import SizeSpec, default_library
from service.core.errors import CalcError
from service.core.protection import PlugFuse, guaranteed_clearing, operating_current, plug_fuse_rating_problem


def cord(area_mm2: float):
    return default_library().find(SizeSpec.metric(area_mm2 * 1e-6), "copper", 5)


def supply(**overrides) -> Supply:
    values = dict(nominal_voltage_v=230.0, frequency_hz=50.0, line_neutral=SourceImpedance(0.4),
                  line_earth=SourceImpedance(1.0), earthing="TN-C-S", device_kind="C", device_rating_a=32.0,
                  rcd_sensitivity_a=None, ambient_c=30.0)
    values.update(overrides)
    return Supply(**values)


def test_a_13_a_plug_fuse_meets_the_bs1362_zone_limits():
    fuse = PlugFuse(13.0)
    # BS 1362:1973, time/current zones (13 A: 1-400 s at 30 A, 0.1-20 s at 50 A, 0.01-0.2 s at 100 A)
    assert operating_current(fuse, 400.0).current_a == pytest.approx(30.0)
    assert operating_current(fuse, 20.0).current_a == pytest.approx(50.0)
    assert guaranteed_clearing(fuse, 100.0).time_s == pytest.approx(0.2)
    assert guaranteed_clearing(fuse, 50.0).time_s == pytest.approx(20.0)
    # BS 1362:1973, conventional fusing current 1.9 In within 30 min: 24.7 A for 13 A
    assert guaranteed_clearing(fuse, 24.7).time_s == pytest.approx(1800.0)
    # below the fusing current nothing is guaranteed: 15 A is carried (BS 1362 non-fusing current 1.6 In)
    assert guaranteed_clearing(fuse, 15.0) is None


def test_a_3_a_plug_fuse_meets_the_bs1362_zone_limits():
    fuse = PlugFuse(3.0)
    # BS 1362:1973, time/current zones (3 A: 0.02-80 s at 9 A, < 0.1 s at 20 A, < 0.03 s at 30 A)
    assert guaranteed_clearing(fuse, 9.0).time_s == pytest.approx(80.0)
    assert guaranteed_clearing(fuse, 20.0).time_s == pytest.approx(0.1)
    assert guaranteed_clearing(fuse, 30.0).time_s == pytest.approx(0.03)


def test_nothing_faster_than_the_held_zones_is_guaranteed():
    # BS 1362:1973 zones: the fastest maximum for 13 A is 0.2 s at 100 A
    with pytest.raises(CalcError):
        operating_current(PlugFuse(13.0), 0.1)


def test_ratings_above_13_a_or_not_held_are_refused():
    # BS 1362:1973 scope: current ratings not exceeding 13 A
    assert "13 A maximum" in plug_fuse_rating_problem(15.0)
    assert plug_fuse_rating_problem(4.0) is not None  # not a rating held (from memory list 1, 2, 3, 5, 7, 10, 13 A)
    assert plug_fuse_rating_problem(13.0) is None and plug_fuse_rating_problem(3.0) is None  # BS 1362 preferred


@given(st.floats(min_value=24.7, max_value=2000.0), st.floats(min_value=1.01, max_value=10.0))
def test_a_larger_current_never_takes_longer_to_clear(current, factor):
    # physical invariant: the maximum operating characteristic falls with current (common practice)
    fuse = PlugFuse(13.0)
    slow, fast = guaranteed_clearing(fuse, current), guaranteed_clearing(fuse, current * factor)
    assert fast.time_s <= slow.time_s * (1 + 1e-12)


@given(st.floats(min_value=0.2, max_value=1800.0))
def test_the_operating_current_for_a_time_clears_within_that_time(t):
    # consistency of the two faces of one band (log-log between BS 1362 points)
    fuse = PlugFuse(13.0)
    ia = operating_current(fuse, t).current_a
    assert guaranteed_clearing(fuse, ia * (1 + 1e-9)).time_s <= t * (1 + 1e-6)


def test_a_little_over_the_rating_is_carried_not_opened():
    # 3.3 kW at 230 V is about 14 A: above 13 A, below the non-fusing 1.6 x 13 = 20.8 A, so a BS 1362 fuse
    # carries it for 30 min at least (BS 1362:1973, conventional non-fusing current, from memory): not "opens".
    chain = Chain(supply(), (Lead("stall lead", 5.0, cord(2.5), plug_fuse_a=13.0),),
                  (Appliance("griddle", 0, 3300.0, 230.0),))
    lead = analyse_chain(chain).leads[0]
    assert 13.0 < lead.current_a < 20.8
    assert lead.plug_fuse.response == "holds" and lead.plug_fuse.opens_within_s is None
    assert not any("will open" in p for p in lead.problems)
    assert any("above its rating" in p for p in lead.problems)  # Ib <= In still fails (IEC 60364-4-43, 433.1)


def test_the_plug_fuse_clears_a_far_end_earth_fault_the_breaker_cannot():
    # Zs ~ 1.3 ohm: If = 0.95 x 230 / Zs ~ 167 A (IEC 60909-0 cmin). A C32 needs 320 A (IEC 60898-1, 10 In) for
    # 0.4 s (IEC 60364-4-41 Table 41.1, TN, 230 V); the 13 A plug fuse clears 100 A within 0.2 s (BS 1362:1973 zones).
    chain = Chain(supply(), (Lead("reel", 10.0, cord(1.5), plug_fuse_a=13.0),), (Appliance("lamp", 0, 200.0, 230.0),))
    report = analyse_chain(chain)
    assert report.fault.earth_fault is not None and not report.fault.earth_fault.complies
    credit = report.fault.plug_fuse_credit
    assert credit is not None and credit.complies and credit.clearing_time_s == pytest.approx(0.2)
    assert credit.fault_current_a > 100.0
    assert not report.fault.problems and report.fault.verdict == "pass"
    # The lead's overload protection rests on the plug fuse alone here (the C32 is above the cord's rating), and a
    # BS 1362 fuse's I2 under IEC 60364-4-43 433.1 is not held: that check is not assessed, so the chain is too.
    assert report.verdict == "not_assessed"
    assert not any("Shorten the chain" in r for r in report.recommendations)  # the fault is cleared in time
    assert any("plug fuse" in step.name for step in report.steps)


def test_a_plug_fuse_too_slow_for_the_fault_is_not_credited():
    # If ~ 80 A: between the 13 A zone limits 20 s at 50 A and 0.2 s at 100 A, the log-log chord gives about
    # 0.9 s, more than 0.4 s (BS 1362:1973 zones; IEC 60364-4-41 Table 41.1)
    chain = Chain(supply(line_earth=SourceImpedance(2.4)), (Lead("reel", 10.0, cord(1.5), plug_fuse_a=13.0),),
                  (Appliance("lamp", 0, 200.0, 230.0),))
    report = analyse_chain(chain)
    credit = report.fault.plug_fuse_credit
    assert 50.0 < credit.fault_current_a < 100.0 and not credit.complies
    assert report.verdict == "fail" and any("not cleared" in p for p in report.fault.problems)


def test_the_fastest_device_in_the_fault_path_clears_the_fault():
    # Series devices: the first to open clears the fault. A C32 guarantees 0.1 s only from 320 A (IEC 60898-1,
    # 10 In); a 13 A plug fuse clears 100 A and more within 0.2 s (BS 1362:1973 zones).
    from service.core.chains.plug_fuses import fastest_clearing, fault_path_devices
    from service.core.protection import CircuitBreaker

    chain = Chain(supply(), (Lead("a", 5.0, cord(2.5)), Lead("b", 5.0, cord(1.5), plug_fuse_a=13.0)), ())
    origin = CircuitBreaker("C", 32.0)
    assert len(fault_path_devices(chain, origin, last_lead=0)) == 1  # lead b's plug fuse is not upstream of lead a
    path = fault_path_devices(chain, origin)
    assert fastest_clearing(path, 200.0).time_s == pytest.approx(0.2) and "plug fuse" in fastest_clearing(path, 200.0).device
    assert fastest_clearing(path, 400.0).time_s == pytest.approx(0.1) and "circuit-breaker" in fastest_clearing(path, 400.0).device
    assert fastest_clearing(path, 20.0) is None  # below 1.9 In of the fuse and the breaker's range: nothing guaranteed


def test_the_core_refuses_a_plug_fuse_rating_bs1362_does_not_have():
    # BS 1362:1973 scope: ratings not exceeding 13 A; the error names the lead's field
    chain = Chain(supply(), (Lead("a", 5.0, cord(2.5), plug_fuse_a=16.0),), (Appliance("lamp", 0, 100.0, 230.0),))
    with pytest.raises(CalcError) as caught:
        analyse_chain(chain)
    assert caught.value.blames[0].location == ("leads", 0, "plug_fuse")


@given(st.floats(min_value=0.05, max_value=6.0), st.sampled_from([3.0, 13.0]))
def test_adding_a_plug_fuse_never_makes_the_far_end_fault_worse(ze_ohm, rating):
    # a device in series can only open the circuit sooner (common practice): with a plug fuse added, a far-end
    # earth fault the origin device cleared is still cleared, and the fault problems never grow
    leads = (Lead("reel", 12.0, cord(1.5)),)
    bare = analyse_chain(Chain(supply(line_earth=SourceImpedance(ze_ohm)), leads, ()))
    fused = analyse_chain(Chain(supply(line_earth=SourceImpedance(ze_ohm)),
                                (Lead("reel", 12.0, cord(1.5), plug_fuse_a=rating),), ()))
    assert len(fused.fault.problems) <= len(bare.fault.problems)
    if bare.fault.earth_fault.complies:
        assert not fused.fault.problems


def test_a_plug_fuse_guards_only_what_follows_its_plug():
    # The 13 A plug fuse is in lead 1's plug; lead 0 (40 m of 1.5 mm²) before it is guarded by the C32 alone.
    # At lead 1's plug Zs = 1.0 + 2 x 40 m x 13.3 mohm/m x (234.5 + 70) / (234.5 + 20) (IEC 60228:2004 Table 3,
    # class 5, 1.5 mm² at 20 °C; the cords' maximum 70 °C) = 2.27 ohm: If = 0.95 x 230 / 2.27 = 96 A < 320 A, the
    # C32's 10 In (IEC 60898-1; IEC 60364-4-41 Table 41.1, 0.4 s). An earth fault on lead 0's far end is not
    # cleared in time, so the plug fuse further on must not be credited for the chain.
    long_first = Chain(supply(), (Lead("reel", 40.0, cord(1.5)), Lead("lead", 5.0, cord(1.5), plug_fuse_a=13.0)),
                       (Appliance("lamp", 1, 200.0, 230.0),))
    report = analyse_chain(long_first)
    assert report.fault.plug_fuse_credit is None
    earth = next(c for c in report.fault.checks if c.code == "earth_fault_disconnection")
    assert earth.passes is False and report.verdict == "fail"
    # The same plug fuse in lead 0's plug (in the socket itself) guards the whole chain: credited.
    fused_first = Chain(supply(), (Lead("reel", 10.0, cord(1.5), plug_fuse_a=13.0), Lead("lead", 5.0, cord(1.5))),
                        (Appliance("lamp", 1, 200.0, 230.0),))
    credit = analyse_chain(fused_first).fault.plug_fuse_credit
    assert credit is not None and credit.complies
