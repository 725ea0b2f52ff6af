"""The packaged data tables as a resource: read a capacity or a factor without describing a circuit.

The answers are built once, from what the loader validated at start-up (``load_tables``, cached), and kept as
encoded bytes: the tables cannot change while the process runs, so no request re-reads a file or re-encodes.
"""

from __future__ import annotations

from functools import lru_cache
from typing import Annotated

import msgspec
from litestar import MediaType, Request, Response, get
from litestar.openapi.datastructures import ResponseSpec
from litestar.openapi.spec import Example
from litestar.params import Parameter

from service.api.problems import (PROBLEM_BASE, PROBLEM_MEDIA_TYPE, FieldProblem, Problem, error_responses,
                                  problem_response)
from service.api.reference import data_version
from service.api.schemas.v1.tables import TableDetail, TableList, TableSummary
from service.core.data import DataTable, load_tables

TABLES_PATH = "/v1/tables"
EXAMPLE_TABLE_ID = "iec60228-table2"
_LISTED_EXAMPLE = (EXAMPLE_TABLE_ID, "iec60364-5-52-tableB52-14", "nec-table310-16")
_NOT_FOUND_SLUG, _NOT_FOUND_TITLE = "table-not-found", "No such data table"


def _fields(t: DataTable) -> dict[str, object]:
    return {"table_id": t.table_id, "standard": t.standard, "edition": t.edition, "table": t.table,
            "title": t.title, "quantity": t.quantity, "unit": t.unit, "provenance": t.provenance,
            "verified_against": t.verified_against, "row_count": len(t.rows), "href": f"{TABLES_PATH}/{t.table_id}"}


def _summary(t: DataTable) -> TableSummary:
    return TableSummary(**_fields(t))  # type: ignore[arg-type]


def _detail(t: DataTable) -> TableDetail:
    return TableDetail(**_fields(t), columns=list(t.columns), rows=[list(row) for row in t.rows])  # type: ignore[arg-type]


def table_list(only: tuple[str, ...] | None = None) -> TableList:
    """Every table, in table_id order (or only the listed ones, for the contract's example)."""
    tables = sorted((t for t in load_tables().values() if only is None or t.table_id in only), key=lambda t: t.table_id)
    return TableList(data_version=data_version(), count=len(tables), tables=[_summary(t) for t in tables])


@lru_cache(maxsize=1)
def _encoded() -> tuple[bytes, dict[str, bytes]]:
    """The list and every table, encoded once per process."""
    return (msgspec.json.encode(table_list()),
            {table_id: msgspec.json.encode(_detail(t)) for table_id, t in load_tables().items()})


_HOW_TO_FIX = f"Use a table_id listed by GET {TABLES_PATH}."
_NOT_FOUND_EXAMPLE = Problem(PROBLEM_BASE + _NOT_FOUND_SLUG, _NOT_FOUND_TITLE, 404,
                             f"no data table 'iec60228-table9' is packaged with this service; GET {TABLES_PATH} lists "
                             "every table_id", instance=f"{TABLES_PATH}/iec60228-table9",
                             errors=[FieldProblem("", "no data table 'iec60228-table9' is packaged with this service",
                                                  parameter="table_id")], how_to_fix=_HOW_TO_FIX)


def _json(body: bytes) -> Response[bytes]:
    return Response(body, media_type=MediaType.JSON)


@get(TABLES_PATH.removeprefix("/v1"), operation_id="listTables", summary="List the packaged data tables",
     description=("Every data table this service calculates with: its standard, edition, table number, title, the "
                  "quantity and unit it holds, its provenance (published, or from memory) and what it was verified "
                  "against, with its row count and the path of its rows. Cacheable: see ETag and Cache-Control."),
     responses={**error_responses(body=False),
                200: ResponseSpec(data_container=TableList, generate_examples=False,
                                  description="The packaged tables, without their rows.",
                                  examples=[Example(summary="Three of the tables (the answer lists every one)",
                                                    value=msgspec.to_builtins(table_list(_LISTED_EXAMPLE)))])},
     tags=["meta"])
async def list_tables() -> Response[TableList]:
    return _json(_encoded()[0])  # type: ignore[return-value]


@get(TABLES_PATH.removeprefix("/v1") + "/{table_id:str}", operation_id="getTable",
     summary="One packaged data table, with its rows",
     description=("One data table as packaged: its source (standard, edition, table number, provenance, what it was "
                  "verified against), the quantity and unit it holds, its column names and every row. A table_id "
                  "not packaged is a 404 naming it; GET /v1/tables lists them. Cacheable: see ETag and "
                  "Cache-Control."),
     responses={**error_responses(body=False),
                404: ResponseSpec(data_container=Problem, generate_examples=False, media_type=PROBLEM_MEDIA_TYPE,
                                  description="No table of that table_id is packaged (GET /v1/tables lists them).",
                                  examples=[Example(summary=_NOT_FOUND_TITLE,
                                                    value=msgspec.to_builtins(_NOT_FOUND_EXAMPLE))]),
                200: ResponseSpec(data_container=TableDetail, generate_examples=False,
                                  description="The table, its columns and its rows as packaged.",
                                  examples=[Example(summary="IEC 60228 Table 2 (class 2 stranded conductors)",
                                                    value=msgspec.to_builtins(_detail(load_tables()[EXAMPLE_TABLE_ID])))])},
     tags=["meta"])
async def get_table(
    request: Request,
    table_id: Annotated[str, Parameter(description="A table_id from GET /v1/tables.",
                                       examples=[Example(summary="IEC 60228 Table 2", value=EXAMPLE_TABLE_ID)],
                                       schema_extra={"enum": sorted(load_tables())})],
) -> Response[TableDetail]:
    body = _encoded()[1].get(table_id)
    if body is None:
        message = f"no data table '{table_id}' is packaged with this service"
        return problem_response(404, f"{message}; GET {TABLES_PATH} lists every table_id", request,  # type: ignore[return-value]
                                slug=_NOT_FOUND_SLUG, title=_NOT_FOUND_TITLE,
                                errors=[FieldProblem("", message, parameter="table_id")],
                                how_to_fix=_HOW_TO_FIX)
    return _json(body)  # type: ignore[return-value]


table_route_handlers = [list_tables, get_table]
