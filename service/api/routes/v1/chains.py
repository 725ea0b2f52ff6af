"""Lead-chain endpoint: POST /v1/lead-chains/analyse."""

from __future__ import annotations

from typing import Annotated

import msgspec
from litestar import post
from litestar.datastructures import State
from litestar.enums import RequestEncodingType
from litestar.openapi.datastructures import ResponseSpec
from litestar.openapi.spec import Example
from litestar.params import Body

from service.api.chain_input import to_chain
from service.api.compute import calculate
from service.api.contract import request_examples
from service.api.limits import refuse_long_chain
from service.api.problems import error_responses
from service.api.routes.v1.conductors import source_refs
from service.api.schemas.v1 import chains as s
from service.api.schemas.v1.common import GENERAL_CAUTIONS, CalculationNotes, Step
from service.core.chains import ChainReport, analyse_chain

# Leads plus appliances up to which a chain is analysed on the event loop (the default limits: 50 + 100).
INLINE_CHAIN_ITEMS = 150

CHAIN_CAUTIONS = (
    "Temporary supplies need RCD protection: plug the chain into a 30 mA RCD-protected socket or use a portable RCD "
    "(a reduced-low-voltage 110 V centre-tapped site supply is the exception, BS 7671 411.8).",
    "Unwind cable reels fully before connecting heavy loads: a wound drum traps heat and can melt the cable.",
    "Withdraw damaged leads, plugs and reels from use; do not repair a lead with tape or join leads with connectors "
    "not made for it.",
    "Local wiring regulations and a competent person decide whether a temporary supply is safe to use.",
)


def _checks(checks) -> list[s.ChainCheckOut]:
    return [s.ChainCheckOut(code=c.code, passes=c.passes, value=c.value, limit=c.limit, unit=c.unit, source=c.source,
                            missing_inputs=list(c.missing_inputs)) for c in checks]


def _lead(r) -> s.LeadOut:
    rating = r.rating
    return s.LeadOut(
        index=r.index, name=r.name, size_label=r.size_label, length_m=r.length_m, current_a=r.current_a,
        input_voltage_v=r.input_voltage_v, output_voltage_v=r.output_voltage_v, drop_v=r.drop_v, drop_pct=r.drop_pct,
        loss_w=r.loss_w, conductor_temperature_degc=r.conductor_temperature_c,
        rating=s.LeadRatingOut(
            base_a=rating.base_a, base_source=rating.base_source,
            ambient_factor=None if rating.ambient is None else rating.ambient.value,
            ambient_note="no rating at this ambient" if rating.ambient is None else rating.ambient.reason,
            drum_factor=None if rating.drum is None else rating.drum.value,
            drum_note=None if rating.drum is None else rating.drum.reason,
            marked_wound_rating_used=rating.wound_rating_used, effective_a=rating.effective_a),
        loading_pct=r.loading_pct, overload_device=r.overload_device, overload_protected=r.overload_protected,
        verdict=r.verdict, checks=_checks(r.checks), problems=list(r.problems), plug_fuse=_plug_fuse(r.plug_fuse),
    )


def _plug_fuse(p) -> s.PlugFuseOut | None:
    if p is None:
        return None
    return s.PlugFuseOut(rated_current_a=p.rated_current_a, non_fusing_current_a=p.non_fusing_a,
                         fusing_current_a=p.fusing_a, conventional_time_s=p.conventional_time_s, response=p.response,
                         opens_within_s=p.opens_within_s, source=p.source)


def _plug_fuse_earth_fault(c) -> s.PlugFuseEarthFaultOut | None:
    if c is None:
        return None
    return s.PlugFuseEarthFaultOut(
        device=c.device, earth_fault_current_a=c.fault_current_a, required_disconnection_time_s=c.required_time_s,
        disconnecting_current_a=c.operating_current_a, max_earth_loop_ohm=c.max_zs_ohm,
        clearing_time_s=c.clearing_time_s, disconnects=c.complies, basis=c.basis, source=c.source)


def _appliance(a) -> s.ApplianceOut:
    heating = None
    if a.heating is not None:
        h = a.heating
        heating = s.HeatingOut(energy_j=h.energy_j, time_at_delivered_power_s=h.time_at_delivered_power_s,
                               time_at_rated_power_s=h.time_at_rated_power_s,
                               extra_time_s=h.time_at_delivered_power_s - h.time_at_rated_power_s)
    return s.ApplianceOut(
        index=a.index, name=a.name, outlet=a.outlet, voltage_v=a.voltage_v, current_a=a.current_a, power_w=a.power_w,
        power_pct_of_rated=a.power_pct_of_rated, drop_from_socket_pct=a.drop_from_socket_pct, heating=heating,
        energy_kwh_per_year=a.energy_kwh_per_year, cost_per_year=a.cost_per_year, verdict=a.verdict,
        checks=_checks(a.checks),
    )


def _earth_fault(report: ChainReport) -> s.EarthFaultOut:
    fault = report.fault
    check, disconnection = fault.earth_fault, fault.disconnection
    route = None
    if check is not None:
        route = check.overcurrent if check.route != "rcd" else check.rcd
        route = route or check.rcd or check.overcurrent
    return s.EarthFaultOut(
        required_disconnection_time_s=None if disconnection is None else disconnection.time_s,
        disconnection_source=None if disconnection is None else disconnection.source,
        voltage_factor_cmin=None if check is None else check.cmin,
        voltage_factor_source=None if check is None else check.cmin_source,
        earth_fault_current_a=None if check is None else check.fault_current_a,
        disconnecting_current_a=None if route is None else route.operating.current_a,
        disconnecting_device=None if route is None else route.device,
        max_earth_loop_ohm=None if route is None else route.max_zs_ohm,
        disconnects=None if check is None else check.complies,
        route=None if check is None else check.route,
    )


def _line_neutral(ln) -> s.LineNeutralFaultOut | None:
    if ln is None:
        return None
    return s.LineNeutralFaultOut(
        device=ln.device, voltage_factor_cmin=ln.cmin, fault_current_a=ln.fault_current_a,
        required_disconnection_time_s=ln.required_time_s, disconnecting_current_a=ln.operating.current_a,
        disconnecting_basis=ln.operating.basis, clearing_time_s=ln.clearing_time_s, disconnects=ln.complies)


def _totals(t) -> s.ChainTotalsOut | None:
    if t is None:
        return None
    return s.ChainTotalsOut(
        socket_voltage_v=t.socket_voltage_v, lowest_appliance_voltage_v=t.lowest_appliance_voltage_v,
        total_drop_v=t.total_drop_v, total_drop_pct=t.total_drop_pct, upstream_drop_pct=t.upstream_drop_pct,
        drop_from_origin_pct=t.drop_from_origin_pct, drop_limit_pct=t.drop_limit_pct,
        drop_complies=t.drop_complies, loss_w=t.loss_w, delivered_w=t.delivered_w,
        supply_current_a=t.supply_current_a, loss_kwh_per_year=t.loss_kwh_per_year,
        loss_cost_per_year=t.loss_cost_per_year, delivered_kwh_per_year=t.delivered_kwh_per_year)


def result_of(report: ChainReport) -> s.LeadChainResult:
    t, fault = report.totals, report.fault
    notes = CalculationNotes(
        steps=[Step(name=x.name, formula=x.formula, value=x.value, unit=x.unit, source=x.source) for x in report.steps],
        assumptions=list(report.assumptions),
        sources=source_refs(*report.table_ids),
        cautions=[*GENERAL_CAUTIONS, *CHAIN_CAUTIONS],
    )
    collapsed = report.totals is None
    return s.LeadChainResult(
        verdict=report.verdict, missing_inputs=list(report.missing_inputs), failed_checks=list(report.failed_checks),
        checks=_checks(report.checks),
        unsupplied_appliances=[s.UnsuppliedApplianceOut(index=a.index, name=a.name, rated_power_w=a.rated_power_w,
                                                        max_power_w=a.max_power_w) for a in report.unsupplied],
        leads=[_lead(r) for r in report.leads],
        appliances=[_appliance(a) for a in report.appliances],
        totals=_totals(t),
        fault=s.FaultOut(
            line_neutral_loop_ohm=fault.line_neutral_loop_ohm,
            prospective_short_circuit_a=fault.prospective_short_circuit_a, earth_loop_ohm=fault.earth_loop_ohm,
            conductor_temperature_degc=fault.conductor_temperature_c, earth_fault=_earth_fault(report),
            line_neutral=_line_neutral(fault.line_neutral), verdict=fault.verdict, checks=_checks(fault.checks),
            problems=list(fault.problems),
            earth_fault_voltage_v=None if fault.disconnection is None else fault.disconnection.u0_v,
            plug_fuse_earth_fault=_plug_fuse_earth_fault(fault.plug_fuse_credit)),
        length_limits=[s.LengthLimitOut(size_label=x.size_label, lead_indices=list(x.lead_indices),
                                        by_voltage_drop_m=x.by_voltage_drop_m,
                                        by_overcurrent_earth_fault_m=x.by_overcurrent_earth_fault_m,
                                        by_rcd_earth_fault_m=x.by_rcd_earth_fault_m,
                                        by_overcurrent_line_neutral_m=x.by_overcurrent_line_neutral_m,
                                        greatest_m=x.greatest_m, governed_by=x.governed_by,
                                        missing_inputs=list(x.missing_inputs))
                       for x in report.length_limits],
        recommendations=list(report.recommendations),
        solver=None if collapsed else s.SolverOut(
            temperature_rounds=report.temperature_rounds, temperatures_settled=report.temperatures_settled,
            newton_solves=report.solver_iterations, max_kcl_residual_a=report.max_kcl_residual_a,
            power_balance_residual_va=report.power_balance_residual_va),
        notes=notes,
    )


def analyse(req: s.LeadChainRequest) -> s.LeadChainResult:
    return result_of(analyse_chain(to_chain(req)))


_SOCKET = s.ChainSupplyIn(
    loop_impedance=s.LoopImpedanceIn(resistance="0.42 ohm", reactance="0.03 ohm"),
    earth_loop_impedance=s.LoopImpedanceIn(resistance="0.61 ohm", reactance="0.03 ohm"),
    earthing="TN-C-S", device=s.ChainDeviceIn(type="B", rated_current="16 A"), rcd=s.ChainRcdIn(rated_residual_current="30 mA"),
    ambient_temperature="18 degC",
)
_EXAMPLES = {
    "Village fête tea tent: an unwound reel and a lead to a tea urn and string lights": s.LeadChainRequest(
        supply=_SOCKET,
        leads=[s.LeadIn(name="hall reel", length="25 m", size="1.5 mm^2", reel=s.ReelIn(wound="none"), plug_fuse="13 A"),
               s.LeadIn(name="tent lead", length="10 m", size="1.5 mm^2", plug_fuse="13 A")],
        appliances=[s.ApplianceIn(name="tea urn", rated_power="2.5 kW", heating=s.HeatingTaskIn(
                        water_mass="15 kg", temperature_rise="85 K"), hours_per_year=60),
                    s.ApplianceIn(name="string lights", outlet=0, rated_power="60 W", power_factor=0.9,
                                  model="constant_power", hours_per_year=60)],
        limits=s.ChainLimitsIn(tariff_per_kwh=0.28),
    ),
    "Workshop planer on a 50 m reel still wound on its drum": s.LeadChainRequest(
        supply=s.ChainSupplyIn(prospective_fault_current="900 A", prospective_earth_fault_current="450 A",
                          earthing="TN-S", device=s.ChainDeviceIn(type="C", rated_current="16 A")),
        leads=[s.LeadIn(name="yard reel", length="50 m", size="1.5 mm^2",
                        reel=s.ReelIn(wound="fully", marked_wound_rating="4 A"), plug_fuse="13 A")],
        appliances=[s.ApplianceIn(name="planer", rated_power="1.8 kW", power_factor=0.85, model="constant_current")],
    ),
}


@post(
    "/lead-chains/analyse",
    operation_id="analyseLeadChain",
    summary="Analyse a chain of extension leads and cable reels",
    description=(
        "Solves the chain as a circuit network: the socket behind its loop impedance, each lead as a go-and-return "
        "run at its estimated conductor temperature (iterated with the load flow), each appliance as a load of its "
        "rating and model. Per lead: current, voltages, drop, loss, its rating after ambient and reel derating "
        "(BS 7671 Tables 4F3A and 4F1A) and a verdict. Per appliance: voltage, current, power delivered and any "
        "heating task's time. Totals: drop against the limit (default 5 %, IEC 60364-5-52 Table G.52.1), losses, "
        "energy and cost, the drop counted from the origin of the installation (upstream_voltage_drop). Overload "
        "protection of each lead: In <= Iz and I2 <= 1.45 Iz (IEC 60364-4-43 433.1). At the far end: loop "
        "impedances, and whether the origin device disconnects an earth fault and a line-neutral fault in time "
        "(IEC 60364-4-41 Table 41.1, IEC 60898-1, Cmin from IEC 60909-0), with the cords' withstand k²S² >= I²t "
        "(434.5.2). The greatest length of each lead type by route (voltage drop; overcurrent device for earth and "
        "line-neutral faults; RCD for earth faults only), and plain recommendations. Every lead, appliance and the "
        "fault carry checks with stable codes; the verdict is pass only when every check was made and passed, "
        "not_assessed (with missing_inputs) when some could not be made. A chain that cannot supply its "
        "appliances is a fail verdict (supply_collapse), not an error."
    ),
    status_code=200,
    responses={
        **error_responses(422, compute=True),
        200: ResponseSpec(
            data_container=s.LeadChainResult, generate_examples=False,
            description="Verdicts, values and recommendations, with steps, sources and cautions.",
            examples=[Example(summary=name, value=msgspec.to_builtins(analyse(req))) for name, req in _EXAMPLES.items()],
        ),
    },
    tags=["lead-chains"],
)
async def analyse_lead_chain(
    data: Annotated[s.LeadChainRequest, Body(media_type=RequestEncodingType.JSON,
                                            examples=request_examples("analyseLeadChain", _EXAMPLES))],
    state: State,
) -> s.LeadChainResult:
    refuse_long_chain(len(data.leads), len(data.appliances), state.settings)
    # Inline while the chain is no bigger than the default limits allow (an operator may raise them).
    return await calculate(state, analyse, data, inline=len(data.leads) + len(data.appliances) <= INLINE_CHAIN_ITEMS)
