"""Pieces shared by every v1 schema.

Naming rule for outputs: every numeric output field ends with its unit
(``_m``, ``_m2``, ``_ohm``, ``_ohm_per_m``, ``_v``, ``_a``, ``_w``, ``_degc``,
``_pct``...), always SI except degrees Celsius and percentages.  Inputs take
a bare number in the unit their description names, or a string with a unit.
"""

from __future__ import annotations

from typing import Annotated, Literal

import msgspec
from msgspec import Meta

from service.units import MAX_QUANTITY_TEXT, QuantityKind


class Strict(msgspec.Struct, forbid_unknown_fields=True, frozen=True, kw_only=True):
    """Request structs refuse unknown fields instead of silently ignoring them."""


class Out(msgspec.Struct, frozen=True, kw_only=True):
    """Response structs."""


def _number_bounds(kind: QuantityKind) -> Meta:
    """The bounds of a bare number, so the schema states what the parser enforces."""
    bounds: dict[str, float] = {}
    if kind.minimum is not None:
        bounds["gt" if kind.exclusive_minimum else "ge"] = kind.minimum
    if kind.maximum is not None:
        bounds["le"] = kind.maximum
    return Meta(**bounds)


QUANTITY_TEXT = Meta(min_length=1, max_length=MAX_QUANTITY_TEXT)
"""A number and a unit fit in 64 characters; longer text is refused before parsing."""


def quantity(kind: QuantityKind, *examples: str | float) -> object:
    """The schema type of a physical input: a number in ``kind.unit`` or a string with a unit.

    The string's dimension and range are checked by the unit parser (a 422 names
    the field); the number's range is also in the schema.
    """
    return Annotated[
        Annotated[float, _number_bounds(kind)] | Annotated[str, QUANTITY_TEXT],
        Meta(description=kind.describe(), examples=list(examples or (kind.example,))),
    ]


ConductorSizeField = Annotated[
    float | Annotated[str, QUANTITY_TEXT],
    Meta(
        description=(
            "Conductor size: an area as a string with a unit (\"2.5 mm^2\", \"2.5 mm2\") or a bare number in m^2; "
            "an AWG gauge (\"12 AWG\", \"4/0 AWG\"); or kcmil (\"250 kcmil\"). Must be a size listed for the material and class."
        ),
        examples=["2.5 mm^2", "12 AWG", "250 kcmil"],
    ),
]
MaterialField = Annotated[Literal["copper", "aluminium"], Meta(description="Conductor material.")]
ConductorClassField = Annotated[
    Literal[1, 2, 5],
    Meta(description="Conductor class per IEC 60228: 1 solid, 2 stranded, 5 flexible. AWG/kcmil sizes (NEC Chapter 9 Table 8) exist as 1 (solid) and 2 (stranded)."),
]


class SourceRef(Out):
    table_id: str
    standard: str
    edition: str
    table: str
    provenance: str


class Step(Out):
    """One step of a calculation as a practitioner would write it down."""

    name: str
    formula: str
    value: float
    unit: str
    source: str | None = None


class CalculationNotes(Out):
    """Every calculation answer carries these."""

    steps: list[Step]
    assumptions: list[str]
    sources: list[SourceRef]
    cautions: list[str]


GENERAL_CAUTIONS = (
    "Design aid only: local wiring regulations and a qualified, licensed person decide what is installed.",
    "Results hold only for the conditions given as inputs; check them against the installation as built.",
)
