"""Schemas of the reference-data endpoints: the packaged data tables, read as they are."""

from __future__ import annotations

from typing import Annotated, Literal, Union

from msgspec import Meta

from service.api.schemas.v1.common import Out

TableCell = Union[str, float, bool, None]
"""One cell as packaged: a number (whole numbers stay whole: JSON Schema's number includes integers, and a
separate integer member would make every whole number match two members of the oneOf), a label, a flag, or
null where the published table has no value."""

Provenance = Literal["published", "from memory", "published, some rows from memory"]


class TableSummary(Out):
    """One packaged data table, without its rows."""

    table_id: Annotated[str, Meta(description="The table's stable identifier: GET /v1/tables/{table_id} reads it; "
                                              "calculation answers name it in notes.sources.")]
    standard: Annotated[str, Meta(description="The published standard or code the table comes from, "
                                              "e.g. 'IEC 60364-5-52' or 'NFPA 70 (NEC)'.")]
    edition: Annotated[str, Meta(description="The edition (and year) of that standard the values were taken from.")]
    table: Annotated[str, Meta(description="The table's number or clause within the standard, e.g. 'Table B.52.4'.")]
    title: Annotated[str, Meta(description="What the table holds, in words.")]
    quantity: Annotated[str, Meta(description="The quantity tabulated, with the conditions it holds for (reference "
                                              "ambient, conductor temperature...).")]
    unit: Annotated[str, Meta(description="The unit of that quantity as the table gives it ('A', 'ohm/km', "
                                          "'mm^2', '1' for a dimensionless factor); the column names say which "
                                          "columns hold it and in which unit the other columns are.")]
    provenance: Annotated[Provenance, Meta(description=(
        "'published' when every value was compared with a copy of the published table; 'from memory' when none "
        "could be; 'published, some rows from memory' otherwise (verified_against says which)."))]
    verified_against: Annotated[str, Meta(description="What the values were compared with, row by row where it "
                                                       "matters, and what is still unconfirmed.")]
    row_count: Annotated[int, Meta(ge=1, description="Number of rows in the table as packaged.")]
    href: Annotated[str, Meta(description="The path of this table's rows and columns: GET /v1/tables/{table_id}.")]


class TableList(Out):
    """Every data table packaged with this service."""

    data_version: Annotated[str, Meta(description=(
        "Digest of the packaged tables (their SHA-256 manifest) and the service version: it changes whenever a "
        "value can; the reference answers' ETag is derived from it."))]
    count: Annotated[int, Meta(ge=0, description="Number of tables listed.")]
    tables: Annotated[list[TableSummary], Meta(description="The tables, in table_id order.")]


class TableDetail(TableSummary):
    """One packaged data table with its columns and rows exactly as packaged."""

    columns: Annotated[list[str], Meta(min_length=1, description=(
        "The column names, in the order of every row's cells. A name carries its unit where it has one (…_mm2 in "
        "mm², …_a in A, …_s in s, …_degc in °C); the other value columns hold the tabulated quantity, in unit."))]
    rows: Annotated[list[list[TableCell]], Meta(description=(
        "The rows as packaged: each a list of cells in the order of columns; a cell is a number, a label, a flag "
        "or null where the published table has no value (a method or size it does not cover)."))]
