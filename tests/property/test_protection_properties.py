"""Laws the protection core must keep for any input it accepts (hypothesis).

* A larger loop impedance never turns a failing earth-fault check into a pass
  (If = Cmin U0 / Zs falls as Zs rises; Ia does not depend on Zs).
* Within one breaker type, and along the gG ratings, the maximum Zs falls as
  the rated current rises (Ia rises with In).
* The adiabatic minimum area rises with the let-through energy I²t.
* Table 41.1 times never lengthen as U0 rises (higher touch voltage, faster
  disconnection: common practice, and the table's shape).
* A gG fuse-link's Ia never rises with the required time, and the band read
  both ways agrees (IEC 60269-1 gates, log-log between points).
* Adding an RCD never removes a check and never changes the line-conductor
  fault check (IEC 60364-4-43 434.5.2: an RCD does not see a line fault).
"""

from __future__ import annotations

import dataclasses

from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from service.core.protection import (
    CircuitBreaker,
    GGFuse,
    ResidualCurrentDevice,
    adiabatic_minimum_csa,
    default_protection,
    earth_fault_check,
    guaranteed_clearing,
    operating_current,
    required_disconnection_time,
)
from service.core.sizing import CircuitSpec, LoadSpec, ProtectionSpec, SizingInput, SupplySpec, verify_conductor

SETTINGS = settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
LIB = default_protection()
FUSE_RATINGS = sorted(LIB.fuse_gates)
K_COMBOS = sorted({(role, v.material, v.insulation) for role, values in LIB.k_values.items() for v in values})

curves = st.sampled_from(["B", "C", "D"])
breaker_ratings = st.floats(min_value=0.5, max_value=125.0, allow_nan=False)
times = st.one_of(st.sampled_from([0.1, 0.2, 0.4, 0.8, 1.0, 5.0]), st.floats(min_value=0.1, max_value=10.0))
u0s = st.floats(min_value=50.5, max_value=1000.0, allow_nan=False)
impedances = st.floats(min_value=1e-3, max_value=1e4, allow_nan=False)


@st.composite
def devices(draw):
    if draw(st.booleans()):
        return CircuitBreaker(draw(curves), draw(breaker_ratings))
    return GGFuse(draw(st.sampled_from(FUSE_RATINGS)))


@st.composite
def rcds(draw):
    if draw(st.booleans()):
        return None
    return ResidualCurrentDevice(draw(st.sampled_from([0.01, 0.03, 0.1, 0.3, 0.5])), "general")


@SETTINGS
@given(devices(), rcds(), u0s, impedances, st.floats(min_value=1.0, max_value=1e3), times,
       st.floats(min_value=0.8, max_value=1.0))
def test_larger_zs_never_turns_a_fail_into_a_pass(device, rcd, u0, zs, factor, t, cmin):
    low = earth_fault_check(u0, zs, device, t, cmin, rcd=rcd)
    high = earth_fault_check(u0, zs * factor, device, t, cmin, rcd=rcd)
    assert high.fault_current_a <= low.fault_current_a
    if not low.complies:
        assert not high.complies
    if high.complies:
        assert low.complies


@SETTINGS
@given(devices(), u0s, impedances, times)
def test_verdict_agrees_with_max_zs(device, u0, zs, t):
    check = earth_fault_check(u0, zs, device, t)
    route = check.overcurrent
    assert route.complies == (check.fault_current_a >= route.operating.current_a)
    assume(abs(zs - route.max_zs_ohm) > 1e-9 * route.max_zs_ohm)  # away from the rounding at equality
    assert route.complies == (zs < route.max_zs_ohm)


@SETTINGS
@given(curves, breaker_ratings, breaker_ratings, u0s, times)
def test_max_zs_falls_as_breaker_rating_rises(curve, a, b, u0, t):
    assume(a != b)
    low, high = sorted((a, b))
    zs_low = earth_fault_check(u0, 1.0, CircuitBreaker(curve, low), t).overcurrent.max_zs_ohm
    zs_high = earth_fault_check(u0, 1.0, CircuitBreaker(curve, high), t).overcurrent.max_zs_ohm
    assert zs_high < zs_low


@SETTINGS
@given(st.lists(st.sampled_from(FUSE_RATINGS), min_size=2, max_size=2, unique=True), u0s, times)
def test_max_zs_falls_as_fuse_rating_rises(pair, u0, t):
    low, high = sorted(pair)
    zs_low = earth_fault_check(u0, 1.0, GGFuse(low), t).overcurrent.max_zs_ohm
    zs_high = earth_fault_check(u0, 1.0, GGFuse(high), t).overcurrent.max_zs_ohm
    assert zs_high < zs_low


@SETTINGS
@given(st.sampled_from(K_COMBOS), st.floats(min_value=1.0, max_value=1e12), st.floats(min_value=1.0 + 1e-6, max_value=1e4))
def test_adiabatic_minimum_area_rises_with_i2t(combo, i2t, factor):
    role, material, insulation = combo
    smaller = adiabatic_minimum_csa(i2t, material, insulation, role)
    larger = adiabatic_minimum_csa(i2t * factor, material, insulation, role)
    assert larger.minimum_area_m2 > smaller.minimum_area_m2
    # and the answer withstands its own I²t: k² S² >= I²t with the k of the band it falls in
    area_mm2 = larger.minimum_area_m2 / 1e-6
    assert (larger.k.k * area_mm2) ** 2 >= i2t * factor * (1 - 1e-12)


@SETTINGS
@given(st.sampled_from(["TN", "TT"]), u0s, u0s, st.booleans(), st.sampled_from(["socket_outlets", "fixed_equipment"]))
def test_table_times_never_lengthen_with_u0(earthing, a, b, ac, kind):
    low, high = sorted((a, b))
    t_low = required_disconnection_time(earthing, low, kind, 16, ac=ac).time_s
    t_high = required_disconnection_time(earthing, high, kind, 16, ac=ac).time_s
    if t_low is not None and t_high is not None:
        assert t_high <= t_low


# -- issue 14: gG band between the gates, and RCDs against line faults -----------------------------------------

fuse_systems = st.sampled_from(["iec60269_1", "bs88_2"])


@SETTINGS
@given(st.sampled_from(FUSE_RATINGS), fuse_systems, st.floats(min_value=0.1, max_value=10.0),
       st.floats(min_value=1.0, max_value=50.0))
def test_longer_required_time_never_lowers_the_permitted_zs(rating, system, t, factor):
    """IEC 60269-1 gates: the pre-arcing time falls as the current rises, so Ia(t) never rises with t."""
    fuse = GGFuse(rating, system)
    assert operating_current(fuse, t * factor).current_a <= operating_current(fuse, t).current_a * (1 + 1e-12)


@SETTINGS
@given(st.sampled_from(FUSE_RATINGS), fuse_systems, st.floats(min_value=0.1, max_value=5.0))
def test_fuse_clears_its_own_operating_current_within_the_time(rating, system, t):
    """The band read both ways agrees: the current Ia(t) is cleared within t (log-log chord, inverted)."""
    fuse = GGFuse(rating, system)
    ia = operating_current(fuse, t).current_a
    cleared = guaranteed_clearing(fuse, ia)
    assert cleared is not None and cleared.time_s <= t * (1 + 1e-9)
    more = guaranteed_clearing(fuse, ia * 1.5)
    assert more is not None and more.time_s <= cleared.time_s


SIZING_SETTINGS = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])


@SIZING_SETTINGS
@given(st.sampled_from([("B", 16.0), ("B", 32.0), ("C", 20.0), ("D", 16.0), ("gG", 32.0), ("gG", 63.0)]),
       st.sampled_from([2.5, 6.0, 16.0]), st.floats(min_value=50.0, max_value=20000.0),
       st.sampled_from([0.01, 0.03, 0.1, 0.3]), st.sampled_from(["TN-S", "TN-C-S"]), st.booleans())
def test_adding_an_rcd_never_removes_a_check_nor_passes_a_line_fault(device, area, pfc, idn, earthing, give_pfc):
    """IEC 60364-4-43 434.5.2: an RCD sees no line-to-neutral fault, so it cannot shorten one."""
    kind, rating = device
    base = SizingInput(
        load=LoadSpec(design_current_a=rating * 0.8), circuit=CircuitSpec(length_m=20.0, method="C"),
        protection=ProtectionSpec(kind, rating),
        supply=SupplySpec(ze_ohm=0.2, earthing=earthing, prospective_fault_current_a=pfc if give_pfc else None))
    with_rcd = dataclasses.replace(base, protection=ProtectionSpec(kind, rating, rcd_residual_current_a=idn))
    before = verify_conductor(base, area * 1e-6).chosen
    after = verify_conductor(with_rcd, area * 1e-6).chosen
    names_before = {c.name for c in before.checks} | {n.name for n in getattr(before, "not_assessed", ())}
    names_after = {c.name for c in after.checks} | {n.name for n in getattr(after, "not_assessed", ())}
    assert names_before <= names_after
    line_before = next((c for c in before.checks if c.name == "line_conductor_adiabatic"), None)
    line_after = next((c for c in after.checks if c.name == "line_conductor_adiabatic"), None)
    assert (line_before is None) == (line_after is None)
    if line_before is not None:
        assert line_after.passes == line_before.passes and line_after.value == line_before.value
