"""Schemas of the conductor-library endpoints."""

from __future__ import annotations

from typing import Annotated

from msgspec import Meta

from service.api.schemas.v1.common import (
    CalculationNotes,
    ConductorClassField,
    ConductorSizeField,
    MaterialField,
    Out,
    Strict,
    quantity,
)
from service.units import LENGTH, TEMPERATURE


class ConductorOut(Out):
    size_label: str
    size_system: str
    area_m2: float
    material: str
    conductor_class: int
    resistance_20c_ohm_per_m: float
    """Maximum DC resistance per metre at 20 °C (converted from the table's reference temperature if needed)."""
    table_resistance_ohm_per_m: float
    table_reference_temperature_degc: float
    table_id: str


class ConductorList(Out):
    count: int
    conductors: list[ConductorOut]


class RunResistanceRequest(Strict):
    size: ConductorSizeField
    length: quantity(LENGTH, "30 m", "98 ft", 12.5)  # type: ignore[valid-type]
    material: MaterialField = "copper"
    conductor_class: ConductorClassField = 2
    conductor_temperature: quantity(TEMPERATURE, "70 degC", 20) = 20.0  # type: ignore[valid-type]


class RunResistanceResult(Out):
    conductor: ConductorOut
    length_m: float
    conductor_temperature_degc: float
    resistance_ohm_per_m: float
    one_way_ohm: float
    loop_ohm: float
    notes: CalculationNotes


SizeSystemFilter = Annotated[str, Meta(pattern="^(metric|awg|kcmil)$")]
