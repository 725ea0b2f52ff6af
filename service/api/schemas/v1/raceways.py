"""Schemas of POST /v1/raceways/fill (NEC Chapter 9 raceway fill)."""

from __future__ import annotations

from typing import Annotated

from msgspec import Meta

from service.api.schemas.v1.common import CalculationNotes, ConductorSizeField, Out, Strict
from service.api.schemas.v1.sizing import ConductorTypeField, RacewayField, RacewayFillOut


class FillConductorIn(Strict):
    type: ConductorTypeField
    size: ConductorSizeField
    count: Annotated[int, Meta(ge=1, le=1000, description="How many conductors of this type and size.")]


class RacewayFillRequest(Strict):
    raceway: RacewayField
    conductors: Annotated[list[FillConductorIn], Meta(min_length=1, description=(
        "Every conductor in the raceway, equipment grounding conductors included, grouped by type and size; "
        "at most AMPLINE_MAX_FILL_CONDUCTOR_GROUPS entries (default 50), more gets 422."))]


class RacewayFillResult(Out):
    fill: RacewayFillOut
    notes: CalculationNotes
