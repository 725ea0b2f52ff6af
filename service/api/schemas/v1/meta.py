"""Schemas of the operational and meta endpoints."""

from __future__ import annotations

from service.api.schemas.v1.common import Out


class TableInfo(Out):
    table_id: str
    standard: str
    edition: str
    table: str
    title: str
    quantity: str
    unit: str
    provenance: str
    """'published' when every value was compared with the published table, otherwise says which are from memory."""
    rows: int


class ServiceMeta(Out):
    service_version: str
    api_version: str
    tables: list[TableInfo]
    cautions: list[str]


class Health(Out):
    status: str
