"""Conductor library endpoints: list the conductors, resistance of a run."""

from __future__ import annotations

from typing import Annotated, Literal

import msgspec
from litestar import get, post
from litestar.datastructures import State
from litestar.enums import RequestEncodingType
from litestar.openapi.datastructures import ResponseSpec
from litestar.openapi.spec import Example
from litestar.params import Body, Parameter

from service.api.compute import calculate
from service.api.contract import request_examples
from service.api.inputs import FieldReader
from service.api.problems import error_responses
from service.api.schemas.v1.common import GENERAL_CAUTIONS, CalculationNotes, SourceRef, Step
from service.api.schemas.v1.conductors import ConductorList, ConductorOut, RunResistanceRequest, RunResistanceResult
from service.core.conductors import Conductor, default_library, run_resistance, temperature_law_source
from service.core.data import load_tables
from service.units import LENGTH, TEMPERATURE


def conductor_out(c: Conductor) -> ConductorOut:
    return ConductorOut(
        size_label=c.size_label,
        size_system=c.size_system,
        area_m2=c.area_m2,
        material=c.material.name,
        conductor_class=c.conductor_class,
        resistance_20c_ohm_per_m=c.resistance_per_m_at(20.0),
        table_resistance_ohm_per_m=c.resistance_ohm_per_m,
        table_reference_temperature_degc=c.reference_temperature_c,
        table_id=c.table_id,
    )


def source_refs(*table_ids: str) -> list[SourceRef]:
    tables = load_tables()
    return [
        SourceRef(table_id=t.table_id, standard=t.standard, edition=t.edition, table=t.table, provenance=t.provenance)
        for t in (tables[i] for i in dict.fromkeys(table_ids))
    ]


@get(
    "/conductors",
    operation_id="listConductors",
    summary="List the conductors in the library",
    description=(
        "Every conductor size the service knows, with its area and maximum DC resistance: metric sizes from "
        "IEC 60228 (class 1 solid, class 2 stranded, class 5 flexible; copper and aluminium) and AWG/kcmil sizes "
        "from NEC Chapter 9 Table 8 (area by the ASTM B258 formula). Filter by material, class and size system."
    ),
    responses=error_responses(body=False),
    tags=["conductors"],
)
async def list_conductors(
    material: Annotated[Literal["copper", "aluminium"] | None, Parameter(description="Only this material.")] = None,
    conductor_class: Annotated[Literal[1, 2, 5] | None, Parameter(description="Only this IEC 60228 class (1, 2 or 5).")] = None,
    size_system: Annotated[
        Literal["metric", "awg", "kcmil"] | None, Parameter(description="Only metric (mm²), AWG or kcmil sizes.")
    ] = None,
) -> ConductorList:
    found = default_library().select(material, conductor_class, size_system)
    return ConductorList(count=len(found), conductors=[conductor_out(c) for c in found])


def compute_run_resistance(data: RunResistanceRequest) -> RunResistanceResult:
    reader = FieldReader()
    size = reader.size(data.size, "size")
    length_m = reader.quantity(data.length, LENGTH, "length")
    temperature_c = reader.quantity(data.conductor_temperature, TEMPERATURE, "conductor_temperature")
    reader.done()
    conductor = default_library().find(size, data.material, data.conductor_class)
    run = run_resistance(conductor, length_m, temperature_c)
    k = conductor.material.temperature_constant_c
    table = load_tables()[conductor.table_id]
    steps = [
        Step(name="Tabulated resistance", formula=f"R_ref at {conductor.reference_temperature_c:g} °C",
             value=conductor.resistance_ohm_per_m, unit="ohm/m", source=f"{table.standard} {table.table}"),
        Step(name="Resistance at conductor temperature",
             formula=f"R_t = R_ref x ({k:g} + t) / ({k:g} + {conductor.reference_temperature_c:g})",
             value=run.resistance_ohm_per_m, unit="ohm/m", source=temperature_law_source(conductor.material)),
        Step(name="One conductor", formula="R = R_t x L", value=run.one_way_ohm, unit="ohm"),
        Step(name="Go and return", formula="R_loop = 2 x R_t x L", value=run.loop_ohm, unit="ohm"),
    ]
    assumptions = [
        f"Maximum DC resistance from {table.standard} {table.table}: a conforming conductor may measure lower.",
        f"Conductor at a uniform {temperature_c:g} °C along the run.",
        "DC resistance only: skin and proximity effects are negligible at 50/60 Hz for sizes up to about 150 mm².",
    ]
    return RunResistanceResult(
        conductor=conductor_out(conductor),
        length_m=run.length_m,
        conductor_temperature_degc=run.temperature_c,
        resistance_ohm_per_m=run.resistance_ohm_per_m,
        one_way_ohm=run.one_way_ohm,
        loop_ohm=run.loop_ohm,
        notes=CalculationNotes(
            steps=steps,
            assumptions=assumptions,
            sources=source_refs(conductor.table_id, "conductor-materials"),
            cautions=list(GENERAL_CAUTIONS),
        ),
    )


_EXAMPLES = {
    "Garden workshop feed, 2.5 mm² flexible copper, 25 m at 70 °C": RunResistanceRequest(
        size="2.5 mm^2", length="25 m", material="copper", conductor_class=5, conductor_temperature="70 degC"),
    "Barn sub-main, 4/0 AWG stranded aluminium, 300 ft at 75 °C": RunResistanceRequest(
        size="4/0 AWG", length="300 ft", material="aluminium", conductor_class=2, conductor_temperature=75),
}


@post(
    "/conductors/resistance",
    operation_id="computeRunResistance",
    summary="Resistance of a conductor run",
    description=(
        "Resistance of a run of one conductor size at a given conductor temperature: per metre, one way, and "
        "go-and-return (loop). The tabulated maximum resistance is corrected from the table's reference temperature "
        "with the linear law of IEC 60228 Annex B (formula B.1 for copper, B.2 for aluminium). Every step and source is listed in `notes`."
    ),
    status_code=200,
    responses={
        **error_responses(422, compute=True),
        200: ResponseSpec(
            data_container=RunResistanceResult,
            generate_examples=False,
            description="The run's resistance, with steps, sources and cautions.",
            examples=[Example(summary=name, value=msgspec.to_builtins(compute_run_resistance(req)))
                      for name, req in _EXAMPLES.items()],
        ),
    },
    tags=["conductors"],
)
async def compute_run_resistance_route(
    data: Annotated[
        RunResistanceRequest,
        Body(media_type=RequestEncodingType.JSON, examples=request_examples("computeRunResistance", _EXAMPLES)),
    ],
    state: State,
) -> RunResistanceResult:
    return await calculate(state, compute_run_resistance, data, inline=True)
