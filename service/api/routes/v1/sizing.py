"""Conductor sizing endpoints: POST /v1/conductors/size and POST /v1/conductors/verify (IEC 60364 or NEC)."""

from __future__ import annotations

from typing import Annotated

import msgspec
from litestar import post
from litestar.datastructures import State
from litestar.enums import RequestEncodingType
from litestar.openapi.datastructures import ResponseSpec
from litestar.openapi.spec import Example
from litestar.params import Body

from service.api.compute import calculate
from service.api.contract import request_examples
from service.api.problems import error_responses
from service.api.routes.v1.conductors import source_refs
from service.api.schemas.v1 import sizing as s
from service.api.schemas.v1.common import GENERAL_CAUTIONS, CalculationNotes, Step
from service.api.nec_input import to_nec_input
from service.api.routes.v1.raceways import fill_out
from service.api.sizing_input import to_sizing_input
from service.core import sizing as core
from service.core.cable_impedance import mv_per_a_m
from service.core.sizing.regimes import sizing_regime

SIZE_ID = "sizeConductor"
VERIFY_ID = "verifyConductor"


def _impedance_fields(ev: core.SizeEvaluation) -> dict:
    z = ev.line_impedance
    if z is None:
        return {}
    phases = ev.drop_phases or "single"
    return dict(r_ohm_per_m=z.r_ohm_per_m, x_ohm_per_m=z.x_ohm_per_m, z_ohm_per_m=z.z_ohm_per_m,
                r_mv_per_a_m=mv_per_a_m(z.r_ohm_per_m, phases), x_mv_per_a_m=mv_per_a_m(z.x_ohm_per_m, phases),
                z_mv_per_a_m=mv_per_a_m(z.z_ohm_per_m, phases), drop_conductor_temperature_degc=z.temperature_c,
                line_impedance_basis=z.basis)


def _size_out(ev: core.SizeEvaluation) -> s.SizeOut:
    return s.SizeOut(
        size_label=ev.size_label, parallel_sets=ev.parallel_sets, area_m2=ev.area_m2,
        protective_conductor_size_label=ev.pe_size_label,
        protective_conductor_area_m2=ev.pe_area_m2, tabulated_capacity_a=ev.tabulated_capacity_a,
        capacity_basis=ev.capacity_basis, iz_a=ev.iz_a, voltage_drop_v=ev.voltage_drop_v,
        voltage_drop_pct=ev.voltage_drop_pct, total_voltage_drop_pct=ev.total_drop_pct, zs_ohm=ev.zs_ohm,
        earth_fault_current_a=ev.earth_fault_current_a, r1_ohm=ev.r1_ohm, r2_ohm=ev.r2_ohm,
        metal_mass_kg=ev.metal_mass_kg, passes=ev.passes, failing_checks=list(ev.failing),
        checks=[s.CheckOut(name=c.name, code=c.name, passes=c.passes, value=c.value, limit=c.limit, unit=c.unit,
                           condition=c.condition, source=c.source, detail=c.detail, obligation=c.obligation)
                for c in ev.checks],
        **_impedance_fields(ev),
        not_assessed=[s.NotAssessedOut(name=n.name, reason=n.reason) for n in ev.not_assessed],
    )


def sizing_out(r: core.SizingResult) -> s.SizingResult:
    d = r.device
    return s.SizingResult(
        verdict=r.verdict, regime=r.regime, design_current_a=r.design_current_a,
        device=s.DeviceOut(type=d.device_type, rated_current_a=d.rated_current_a, chosen_by_service=d.chosen_by_service,
                           label=d.label, conventional_current_a=d.conventional_current_a,
                           conventional_multiple=d.conventional_multiple, conventional_source=d.conventional_source),
        factors=[s.FactorOut(name=f.name, value=f.value, basis=f.basis, source=f.source) for f in r.factors],
        factor_product=r.factor_product, required_tabulated_capacity_a=r.required_tabulated_a,
        voltage_drop_limit_pct=r.drop_limit_pct, voltage_drop_limit_source=r.drop_limit_source,
        available_voltage_drop_pct=r.available_drop_pct, disconnection_time_s=r.disconnection_time_s,
        disconnection_time_source=r.disconnection_source,
        chosen=None if r.chosen is None else _size_out(r.chosen), governing_check=r.governing_check,
        rejected=[_size_out(ev) for ev in r.rejected], binding_checks=list(r.binding_checks), ways_out=list(r.ways_out),
        raceway=None if r.raceway is None else fill_out(r.raceway), drop_temperature_basis=r.drop_temperature_basis,
        notes=CalculationNotes(
            steps=[Step(name=st.name, formula=st.formula, value=st.value, unit=st.unit, source=st.source) for st in r.steps],
            assumptions=list(r.assumptions),
            sources=source_refs(*r.table_ids),
            cautions=[*GENERAL_CAUTIONS, *r.cautions],
        ),
    )


# Each regime's edge: request -> (the regime's input, the size to verify as the regime designates it).
_EDGES = {"iec60364": to_sizing_input, "nec": to_nec_input}


def compute_size(data: s.SizingRequest) -> s.SizingResult:
    spec, _ = _EDGES[data.regime](data)
    return sizing_out(sizing_regime(data.regime).size(spec))


def compute_verify(data: s.VerifyRequest) -> s.SizingResult:
    spec, size = _EDGES[data.regime](data)
    return sizing_out(sizing_regime(data.regime).verify(spec, size))


_SIZE_EXAMPLES = {
    "Bakery refit: 7.2 kW proving oven, 17 m in an insulated wall, 33 °C": s.SizingRequest(
        load=s.SizingLoadIn(power="7.2 kW"),
        circuit=s.CircuitIn(length="17 m", method="A1", cable="single_core", ambient_temperature="33 degC"),
        protection=s.ProtectionIn(device=s.SizingDeviceIn(type="B", rated_current="32 A")),
        supply=s.SizingSupplyIn(ze="0.28 ohm", prospective_fault_current="2.5 kA")),
    "Workshop sub-main: 22 kW three-phase, 60 m clipped, 3 circuits, XLPE, gG chosen by the service": s.SizingRequest(
        load=s.SizingLoadIn(phases="three", power="22 kW", power_factor=0.85),
        circuit=s.CircuitIn(length="60 m", method="C", insulation="xlpe_epr_90",
                            grouping=s.GroupingIn(circuits=3, arrangement="single_layer_wall")),
        protection=s.ProtectionIn(device=s.SizingDeviceIn(type="gG"), circuit_kind="distribution"),
        supply=s.SizingSupplyIn(ze="0.2 ohm", prospective_fault_current="8 kA")),
    "Farm building feed: 40 A single-phase, 110 m buried in ducts, TT with a 100 mA RCD": s.SizingRequest(
        load=s.SizingLoadIn(design_current="40 A", power_factor=0.95),
        circuit=s.CircuitIn(length="110 m", method="D1", ambient_temperature="15 degC",
                            soil_thermal_resistivity="1.5 K*m/W"),
        protection=s.ProtectionIn(device=s.SizingDeviceIn(type="C", rated_current="40 A"),
                                  rcd=s.SizingRcdIn(rated_residual_current="100 mA")),
        supply=s.SizingSupplyIn(earthing="TT", ze="75 ohm", electrode_resistance="60 ohm"),
        limits=s.SizingLimitsIn(upstream_drop=1.0)),
}
_NEC_SIZE_EXAMPLES = {
    "NEC: Texas dental clinic feeder, 480Y/277 V, 150 A (120 A continuous), 180 ft in EMT at 40 °C": s.SizingRequest(
        regime="nec",
        load=s.SizingLoadIn(design_current="150 A", continuous_share=0.8, power_factor=0.9),
        circuit=s.CircuitIn(length="180 ft", raceway="emt", ambient_temperature="40 degC", role="feeder"),
        supply=s.SizingSupplyIn(system="480Y/277V")),
    "NEC: Vermont barn sub-panel, 240 V, 60 A non-continuous, 250 ft of aluminium XHHW-2 in PVC": s.SizingRequest(
        regime="nec",
        load=s.SizingLoadIn(design_current="60 A", continuous_share=0.0),
        circuit=s.CircuitIn(length="250 ft", material="aluminium", conductor_type="XHHW-2", raceway="pvc_40",
                            role="feeder"),
        supply=s.SizingSupplyIn(system="240V"), limits=s.SizingLimitsIn(upstream_drop=1.0)),
}
_VERIFY_EXAMPLES = {
    "Café kitchen circuit: 2.5 mm² on a 20 A type B, 32 m, grouped with 3 others": s.VerifyRequest(
        load=s.SizingLoadIn(design_current="18 A"),
        circuit=s.VerifyCircuitIn(length="32 m", method="C", size="2.5 mm^2",
                                  grouping=s.GroupingIn(circuits=4, arrangement="bunched")),
        protection=s.ProtectionIn(device=s.SizingDeviceIn(type="B", rated_current="20 A"), circuit_kind="socket_outlets",
                                  rcd=s.SizingRcdIn(rated_residual_current="30 mA")),
        supply=s.SizingSupplyIn(ze="0.35 ohm")),
    "Workshop sub-main check: 16 mm² XLPE on a 63 A gG, 60 m, 1.5 % used upstream": s.VerifyRequest(
        load=s.SizingLoadIn(phases="three", design_current="45 A", power_factor=0.85),
        circuit=s.VerifyCircuitIn(length="60 m", method="C", insulation="xlpe_epr_90", size="16 mm^2"),
        protection=s.ProtectionIn(device=s.SizingDeviceIn(type="gG", rated_current="63 A"), circuit_kind="distribution"),
        supply=s.SizingSupplyIn(ze="0.2 ohm", prospective_fault_current="8 kA"),
        limits=s.SizingLimitsIn(upstream_drop=1.5)),
}
_NEC_VERIFY_EXAMPLES = {
    "NEC: warehouse lighting branch, 277 V, 16 A continuous on 12 AWG THHN, 20 A breaker, 210 ft in EMT": s.VerifyRequest(
        regime="nec",
        load=s.SizingLoadIn(design_current="16 A", continuous_share=1.0),
        circuit=s.VerifyCircuitIn(length="210 ft", size="12 AWG", raceway="emt", current_carrying_conductors=6),
        protection=s.ProtectionIn(device=s.SizingDeviceIn(rated_current="20 A")),
        supply=s.SizingSupplyIn(system="277V")),
}

_DESCRIPTION_COMMON = (
    " Regime iec60364 (the default), steps: design current Ib; device rating In (given, or the smallest standard rating >= Ib); correction factors "
    "for ambient (IEC 60364-5-52 Tables B.52.14/B.52.15), grouping (B.52.17 to B.52.19), thermal insulation and soil "
    "(B.52.16); the tabulated capacity (Annex B, Tables B.52.2 to B.52.5, B.52.10, B.52.12); overload coordination "
    "Ib <= In <= Iz and I2 <= 1.45 Iz (IEC 60364-4-43 433.1); the voltage drop (each size's line impedance r, x, z "
    "from the cable arrangement: AC resistance per IEC 60287-1-1, reactance from the conductor spacing, never below "
    "Annex G's 0.08 mΩ/m; at the maximum conductor temperature or, on request, one estimated from the load) and the "
    "earth-fault loop impedance "
    "Zs = Ze + R1 + R2 from the network solver, against Table G.52.1 and the device's maximum Zs for the disconnection "
    "time of IEC 60364-4-41; the adiabatic check of the protective and line conductors (an RCD credited for earth "
    "faults only; k of the protective conductor by its kind), the 543.1.3 minimum of a separate protective "
    "conductor, and the device's breaking capacity against the prospective fault current (434.5.1). A check that "
    "cannot be made is listed in not_assessed, never passed. A design that does not comply "
    "is a verdict in a 200 answer; a 422 means the inputs contradict each other or admit no answer."
    " Regime nec (NFPA 70-2023), the same response: load current and its continuous part; the device at least 125 % "
    "of the continuous plus the non-continuous load (210.20(A), 215.3; Table 240.6(A) ratings); the termination "
    "column of 110.14(C) against 125 % of the continuous load (210.19(A)(1)(a), 215.2(A)(1)(a)); Table 310.16 "
    "ampacity at the insulation's rating corrected for ambient (Table 310.15(B)(1)(1)) and adjusted for more than "
    "three current-carrying conductors (Table 310.15(C)(1)); overcurrent protection with 240.4(B) and the limits "
    "of 240.4(D); the EGC of Table 250.122, increased per 250.122(B) when the line is upsized; voltage drop from the "
    "network solver with Chapter 9 Table 9 R and X (checks marked guidance: 3 % for the circuit, 5 % with the "
    "feeder); and, with a raceway, the smallest trade size by Chapter 9 Tables 1, 4 and 5. A field of the other "
    "regime is refused with a 422 naming it."
)


def _responses(compute, examples) -> dict:
    return {
        **error_responses(422, compute=True),
        200: ResponseSpec(
            data_container=s.SizingResult, generate_examples=False,
            description="The verdict, every check with its numbers and source, and the notes.",
            examples=[Example(summary=name, value=msgspec.to_builtins(compute(req))) for name, req in examples.items()],
        ),
    }


@post(
    "/conductors/size",
    operation_id=SIZE_ID,
    summary="Choose the conductor size for a circuit (IEC 60364 or NEC)",
    description=("The smallest conductor size that passes every check, the check that governed it, and every smaller "
                 "size with the check it fails; when no tabulated size passes, the binding checks and ways out."
                 + _DESCRIPTION_COMMON),
    status_code=200,
    responses=_responses(compute_size, {**_SIZE_EXAMPLES, **_NEC_SIZE_EXAMPLES}),
    tags=["sizing"],
)
async def size_conductor_route(
    data: Annotated[s.SizingRequest, Body(media_type=RequestEncodingType.JSON,
                                          examples=request_examples(SIZE_ID, {**_SIZE_EXAMPLES,
                                                                                  **_NEC_SIZE_EXAMPLES}))],
    state: State,
) -> s.SizingResult:
    return await calculate(state, compute_size, data, inline=True)


@post(
    "/conductors/verify",
    operation_id=VERIFY_ID,
    summary="Verify a chosen conductor size and device (IEC 60364 or NEC)",
    description=("Every check on the size given (and the device given, or the one the service picks), each passing or "
                 "failing with its numbers, and the overall verdict." + _DESCRIPTION_COMMON),
    status_code=200,
    responses=_responses(compute_verify, {**_VERIFY_EXAMPLES, **_NEC_VERIFY_EXAMPLES}),
    tags=["sizing"],
)
async def verify_conductor_route(
    data: Annotated[s.VerifyRequest, Body(media_type=RequestEncodingType.JSON,
                                          examples=request_examples(VERIFY_ID, {**_VERIFY_EXAMPLES,
                                                                                      **_NEC_VERIFY_EXAMPLES}))],
    state: State,
) -> s.SizingResult:
    return await calculate(state, compute_verify, data, inline=True)


sizing_route_handlers = [size_conductor_route, verify_conductor_route]
