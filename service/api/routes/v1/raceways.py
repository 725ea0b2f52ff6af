"""Raceway fill endpoint: POST /v1/raceways/fill (NEC Chapter 9 Tables 1, 4 and 5)."""

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
from service.api.limits import refuse_many_fill_groups
from service.api.contract import request_examples
from service.api.nec_input import to_fill_conductors
from service.api.problems import error_responses
from service.api.routes.v1.conductors import source_refs
from service.api.schemas.v1 import raceways as r
from service.api.schemas.v1 import sizing as s
from service.api.schemas.v1.common import GENERAL_CAUTIONS, CalculationNotes, Step
from service.core.sizing.nec import FillResult, default_nec_tables, raceway_fill

FILL_ID = "racewayFill"
FILL_CAUTIONS = (
    "Fill to NFPA 70-2023 (NEC) Chapter 9; the edition adopted locally and the authority having jurisdiction (AHJ) "
    "decide. The Table 1 percentages assume pulls of reasonable length and bends (Chapter 9 Note 1 and the "
    "informational note to Table 1): a long or bent pull may need a larger raceway.",
)


def fill_out(f: FillResult) -> s.RacewayFillOut:
    def trade(t) -> s.TradeSizeOut:
        return s.TradeSizeOut(trade_size=t.trade_size, metric_designator=t.metric_designator,
                              internal_area_m2=t.internal_area_m2, allowed_area_m2=t.allowed_area_m2,
                              fill_pct=t.fill_pct, fits=t.fits)
    return s.RacewayFillOut(raceway=f.raceway, raceway_name=f.raceway_name, conductor_count=f.conductor_count,
                            conductor_area_m2=f.conductor_area_m2, fill_limit_pct=f.fill_limit_pct,
                            trade_size=None if f.chosen is None else f.chosen.trade_size,
                            chosen=None if f.chosen is None else trade(f.chosen),
                            considered=[trade(t) for t in f.considered])


def compute_fill(data: r.RacewayFillRequest) -> r.RacewayFillResult:
    result = raceway_fill(default_nec_tables(), data.raceway, to_fill_conductors(data))
    cautions = [*GENERAL_CAUTIONS, *FILL_CAUTIONS]
    if result.chosen is None:
        cautions.append(f"No trade size of {result.raceway_name} held here takes these conductors within the fill.")
    return r.RacewayFillResult(fill=fill_out(result), notes=CalculationNotes(
        steps=[Step(name=st.name, formula=st.formula, value=st.value, unit=st.unit, source=st.source) for st in result.steps],
        assumptions=["Conductor areas are the approximate areas of Chapter 9 Table 5 for the insulated types given "
                     "(compact conductors, Table 5A, are not held).",
                     "Every conductor counts toward the number of conductors, equipment grounding conductors "
                     "included (Chapter 9 Note 3)."],
        sources=source_refs(*result.table_ids), cautions=cautions))


_EXAMPLES = {
    "Texas dental clinic: 480Y/277 V feeder, four 1/0 THHN and a 6 AWG EGC in EMT": r.RacewayFillRequest(
        raceway="emt", conductors=[r.FillConductorIn(type="THHN", size="1/0 AWG", count=4),
                                   r.FillConductorIn(type="THHN", size="6 AWG", count=1)]),
    "Warehouse lighting: nine 12 AWG THWN-2 and a 12 AWG EGC in PVC Schedule 80": r.RacewayFillRequest(
        raceway="pvc_80", conductors=[r.FillConductorIn(type="THWN-2", size="12 AWG", count=10)]),
}


@post(
    "/raceways/fill",
    operation_id=FILL_ID,
    summary="Choose the raceway trade size for a set of conductors (NEC Chapter 9)",
    description=("The smallest trade size of the raceway type (EMT, RMC, PVC Schedule 40 or 80; Chapter 9 Table 4) "
                 "whose internal area takes the conductors' total area (Chapter 9 Table 5) within the fill of Chapter 9 "
                 "Table 1: 53 % for one conductor, 31 % for two, 40 % for more. Every trade size tried is listed with "
                 "its fill. A 422 names the field when a type, size or raceway is not held."),
    status_code=200,
    responses={**error_responses(422, compute=True), 200: ResponseSpec(
        data_container=r.RacewayFillResult, generate_examples=False,
        description="The chosen trade size (or none), every trade size tried, and the notes.",
        examples=[Example(summary=name, value=msgspec.to_builtins(compute_fill(req))) for name, req in _EXAMPLES.items()])},
    tags=["raceways"],
)
async def raceway_fill_route(
    data: Annotated[r.RacewayFillRequest, Body(media_type=RequestEncodingType.JSON,
                                                examples=request_examples(FILL_ID, _EXAMPLES))],
    state: State,
) -> r.RacewayFillResult:
    refuse_many_fill_groups(len(data.conductors), state.settings)
    return await calculate(state, compute_fill, data, inline=True)
