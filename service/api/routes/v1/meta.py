"""What this service is and which published tables it uses."""

from __future__ import annotations

from litestar import get

from service import API_VERSION, __version__
from service.api.problems import error_responses
from service.api.schemas.v1.common import GENERAL_CAUTIONS
from service.api.schemas.v1.meta import ServiceMeta, TableInfo
from service.core.data import load_tables


@get("/meta", operation_id="getServiceMeta", summary="Service version and data sources",
     description="The service and API versions, and every packaged data table with its standard, edition, "
                 "table number and provenance.",
     responses=error_responses(body=False), tags=["meta"])
async def service_meta() -> ServiceMeta:
    tables = [
        TableInfo(table_id=t.table_id, standard=t.standard, edition=t.edition, table=t.table, title=t.title,
                  quantity=t.quantity, unit=t.unit, provenance=t.provenance, rows=len(t.rows))
        for t in load_tables().values()
    ]
    return ServiceMeta(service_version=__version__, api_version=API_VERSION, tables=tables,
                       cautions=list(GENERAL_CAUTIONS))
