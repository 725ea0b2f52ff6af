"""Properties of the line impedance by arrangement and of the drop's temperature basis (hypothesis)."""

from __future__ import annotations

import dataclasses

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from service.core.cable_impedance import line_impedance, reactance_ohm_per_m
from service.core.conductors import default_library
from service.core.sizing import CircuitSpec, LimitsSpec, LoadSpec, ProtectionSpec, SizingInput, SupplySpec
from service.core.sizing import verify_conductor

SETTINGS = settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
CONDUCTORS = [c for c in default_library().select(conductor_class=2, size_system="metric")]


@SETTINGS
@given(st.floats(1e-3, 0.05), st.floats(1.0, 20.0), st.floats(1.0, 3.0), st.floats(10.0, 400.0))
def test_reactance_rises_with_spacing(d, spacing_over_d, stretch, f):
    # L = 0.05 + 0.2 ln(2 s/d) mH/km (textbook formula): more spacing, more reactance.
    s = spacing_over_d * d
    assert reactance_ohm_per_m(f, s * stretch, d) >= reactance_ohm_per_m(f, s, d)


@SETTINGS
@given(st.sampled_from(CONDUCTORS), st.sampled_from([2, 3]), st.floats(20.0, 90.0))
def test_reactance_rises_from_trefoil_to_flat_to_spaced_and_in_conduit(conductor, loaded, t):
    # The geometric mean spacing rises trefoil -> flat touching -> flat spaced (common practice; BS 7671 Table 4E1B
    # columns 4/7, 8, 5/9 rise the same way); in conduit it is taken at least at flat spaced.
    x = {a: line_impedance(conductor, t, 50.0, a, loaded).x_ohm_per_m
         for a in ("trefoil", "flat_touching", "flat_spaced", "enclosed")}
    assert x["trefoil"] <= x["flat_touching"] <= x["flat_spaced"] <= x["enclosed"] * (1 + 1e-12)
    # Never below IEC 60364-5-52:2009 Annex G's 0.08 mOhm/m.
    assert min(x.values()) >= 0.08e-3 * (1 - 1e-12)


@SETTINGS
@given(st.sampled_from(CONDUCTORS), st.sampled_from(["multicore", "trefoil", "flat_touching", "flat_spaced",
                                                     "enclosed"]), st.sampled_from([2, 3]), st.floats(1.0, 3.0))
def test_reactance_scales_with_frequency_and_ac_resistance_rises_with_it(conductor, arrangement, loaded, ratio):
    # X = 2 pi f L: 60 Hz is 1.2 times 50 Hz; skin and proximity effect (IEC 60287-1-1 2.1.2-2.1.4) rise with f
    # and never make R_ac below R_dc.
    low = line_impedance(conductor, 70.0, 50.0, arrangement, loaded)
    high = line_impedance(conductor, 70.0, 50.0 * ratio, arrangement, loaded)
    assert abs(high.x_ohm_per_m / low.x_ohm_per_m - ratio) < 1e-9
    assert low.r_dc_ohm_per_m <= low.r_ohm_per_m <= high.r_ohm_per_m


@SETTINGS
@given(st.sampled_from([1.5, 2.5, 4.0, 6.0, 10.0, 16.0, 25.0, 35.0]), st.floats(0.1, 1.0), st.floats(10.0, 45.0),
       st.sampled_from(["single", "three"]), st.floats(0.7, 1.0))
def test_estimated_drop_never_exceeds_the_drop_at_maximum_temperature(area, load_share, ambient, phases, pf):
    # theta = theta_a + (theta_max - theta_a)(Ib/Iz)^2 <= theta_max while Ib <= Iz, so the resistance and the
    # drop are at most those at the maximum (common practice); the earth-fault loop does not change.
    hot = SizingInput(
        load=LoadSpec(phases=phases, design_current_a=1.0, power_factor=pf),
        circuit=CircuitSpec(length_m=40.0, method="C", ambient_c=ambient),
        protection=ProtectionSpec("gG", 1000.0, required_time_s=5.0),
        supply=SupplySpec(ze_ohm=0.1), limits=LimitsSpec(voltage_drop_pct=100.0))
    iz = verify_conductor(hot, area * 1e-6).chosen.iz_a
    hot = dataclasses.replace(hot, load=dataclasses.replace(hot.load, design_current_a=load_share * iz))
    warm = dataclasses.replace(hot, circuit=dataclasses.replace(hot.circuit, drop_temperature_basis="estimated_from_load"))
    a, b = verify_conductor(hot, area * 1e-6).chosen, verify_conductor(warm, area * 1e-6).chosen
    assert b.voltage_drop_v <= a.voltage_drop_v * (1 + 1e-12)
    assert b.zs_ohm == a.zs_ohm
    assert b.line_impedance.temperature_c <= a.line_impedance.temperature_c
