"""Liveness and readiness, outside the versioned API."""

from __future__ import annotations

from litestar import Request, get
from litestar.exceptions import HTTPException

from service.api.problems import error_responses
from service.api.schemas.v1.meta import Health


@get("/healthz", operation_id="getLiveness", summary="Liveness",
     description="Answers 200 while the process serves requests.", tags=["operations"],
     responses=error_responses(body=False, guarded=False))
async def healthz() -> Health:
    return Health(status="ok")


@get("/readyz", operation_id="getReadiness", summary="Readiness",
     description="Answers 200 once the data tables are loaded and validated; 503 before.", tags=["operations"],
     responses=error_responses(503, body=False, guarded=False))
async def readyz(request: Request) -> Health:
    if not getattr(request.app.state, "ready", False):
        raise HTTPException(status_code=503, detail="Data tables are not loaded yet.")
    return Health(status="ready")
