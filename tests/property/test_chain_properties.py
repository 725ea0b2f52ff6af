"""Physical invariants of the lead-chain analysis (hypothesis)."""

from __future__ import annotations

import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from service.core.errors import CalcError

from service.core.chains import Appliance, Chain, Lead, SourceImpedance, Supply, analyse_chain
from service.core.conductors import SizeSpec, default_library

SIZES = (0.75, 1.0, 1.5, 2.5, 4.0)
SUPPLY = Supply(230.0, 50.0, SourceImpedance(0.4, 0.05), SourceImpedance(0.7, 0.05), "TN-C-S", "B", 16.0, 0.03, 25.0)
MODELS = ("constant_impedance", "constant_current", "constant_power")


def cord(area_mm2: float):
    return default_library().find(SizeSpec.metric(area_mm2 * 1e-6), "copper", 5)


leads_st = st.lists(st.tuples(st.floats(1.0, 25.0), st.sampled_from(SIZES)), min_size=1, max_size=4)
appliance_st = st.tuples(st.floats(50.0, 1200.0), st.sampled_from(MODELS), st.floats(0.7, 1.0))


def analysed(chain: Chain):
    """The report, or hypothesis discards the case when the chain cannot supply its appliances at all."""
    try:
        report = analyse_chain(chain)
    except CalcError as exc:
        assume(exc.code not in ("voltage_collapse", "load_undervoltage"))
        raise
    assume(report.totals is not None)  # a collapse is a verdict now, with no operating point to check
    return report


def make_chain(leads, appliances, scale_length=1.0, scale_power=1.0) -> Chain:
    n = len(leads)
    return Chain(
        SUPPLY,
        tuple(Lead(f"l{k}", length * scale_length, cord(size)) for k, (length, size) in enumerate(leads)),
        tuple(Appliance(f"a{j}", j % n, p * scale_power, 230.0, pf, False, model)
              for j, (p, model, pf) in enumerate(appliances)),
    )


@settings(max_examples=12, deadline=None, derandomize=True)
@given(leads_st, st.lists(appliance_st, min_size=1, max_size=4))
def test_lead_losses_are_the_sum_of_i_squared_r(leads, appliances):
    report = analysed(make_chain(leads, appliances))
    for r, lead in zip(report.leads, make_chain(leads, appliances).leads):
        resistance = 2 * lead.conductor.resistance_per_m_at(r.conductor_temperature_c) * lead.length_m
        assert abs(r.loss_w - r.current_a**2 * resistance) <= 1e-9 * max(1.0, r.loss_w)
    assert abs(report.totals.loss_w - sum(r.loss_w for r in report.leads)) <= 1e-9 * max(1.0, report.totals.loss_w)


@pytest.mark.parametrize("grown", ["scale_length", "scale_power"])
@settings(max_examples=12, deadline=None, derandomize=True)
@given(leads=leads_st, appliances=st.lists(appliance_st, min_size=1, max_size=3), factor=st.floats(1.1, 2.0))
def test_drop_rises_with_length_and_with_load(grown, leads, appliances, factor):
    before = analysed(make_chain(leads, appliances)).totals.total_drop_v
    after = analysed(make_chain(leads, appliances, **{grown: factor})).totals.total_drop_v
    assert after > before


@settings(max_examples=12, deadline=None, derandomize=True)
@given(leads_st, st.lists(appliance_st, min_size=1, max_size=4))
def test_power_balance_and_voltages_fall_along_the_chain(leads, appliances):
    report = analysed(make_chain(leads, appliances))
    assert report.power_balance_residual_va < 1e-6 * max(1.0, report.totals.delivered_w)
    # Each lead's output is below its input: current flows outwards only.
    for r in report.leads:
        assert r.output_voltage_v < r.input_voltage_v if r.current_a > 1e-9 else abs(r.output_voltage_v - r.input_voltage_v) < 1e-9
    # Constant-impedance appliances draw less than rated below rated voltage; constant power draws exactly rated.
    for a, spec in zip(report.appliances, make_chain(leads, appliances).appliances):
        if spec.model == "constant_power":
            assert abs(a.power_w - spec.rated_power_w) < 1e-6 * spec.rated_power_w
        else:
            assert a.power_w < spec.rated_power_w
