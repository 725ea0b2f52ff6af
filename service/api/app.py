"""create_app: the only place routes, handlers, middleware and limits are wired."""

from __future__ import annotations

from litestar import Litestar, Router
from litestar.config.cors import CORSConfig
from litestar.datastructures import State
from litestar.openapi import OpenAPIConfig
from service.api.contract import FinishedJsonRenderPlugin, FinishedYamlRenderPlugin
from litestar.openapi.spec import Contact, Tag

from service import API_VERSION
from service.api.access import access_middleware
from service.api.compression import gzip_middleware
from service.api.compute import ComputePool
from service.api.cors import cors_refusals_as_problems
from service.api.headers import security_headers_middleware
from service.api.observability import configure_logging, request_logging_middleware
from service.api.metrics import metrics_middleware, metrics_route_handlers
from service.api.problems import EXCEPTION_HANDLERS, PROBLEM_BASE, Problem, body_guard
from service.api.reference import (head_as_get_middleware, is_reference_path, reference_caching_middleware,
                                   schema_not_found_as_problem)
from service.api.routes.operational import healthz, readyz
from service.api.routes.v1.chains import analyse_lead_chain
from service.api.routes.v1.conductors import compute_run_resistance_route, list_conductors
from service.api.routes.v1.meta import service_meta
from service.api.routes.v1.networks import network_route_handlers
from service.api.routes.v1.raceways import raceway_fill_route
from service.api.routes.v1.sizing import sizing_route_handlers
from service.api.routes.v1.tables import table_route_handlers
from service.api.settings import Settings
from service.core.conductors import default_library
from service.core.cord_conductors import default_cord_conductors
from service.core.cords import default_cords
from service.core.sizing.nec import nec
from service.core.sizing.regime import iec60364
from service.core.protection import default_plug_fuses, default_protection
from service.core.data import load_tables

API_DESCRIPTION = (
    "Electrical calculations as a service for electricians, contractors, estimators and designers: "
    "conductor data and run resistance, with every step, assumption and source shown. "
    "Physical inputs take a number in the documented unit or a string with a unit (\"30 m\", \"98 ft\"). "
    "Numeric outputs are SI and the field name ends with the unit. Errors are RFC 9457 problem+json. "
    "Results are design aids: local wiring regulations and a qualified, licensed person decide."
)


def validate_data() -> None:
    """Load and validate every data table and the libraries built from them; DataTableError on a defect."""
    load_tables()
    default_library()
    default_cords()
    default_cord_conductors()
    default_protection()
    default_plug_fuses()
    iec60364()
    nec()


def _load_data(app: Litestar) -> None:
    """Validate every data table before serving; a defect stops start-up."""
    validate_data()
    app.state.ready = True


def openapi_config() -> OpenAPIConfig:
    return OpenAPIConfig(
        title="Ampline API",
        version=API_VERSION,
        description=API_DESCRIPTION,
        contact=Contact(name="Ampline engineering"),
        tags=[
            Tag(name="conductors", description="Conductor library: sizes, materials, resistance."),
            Tag(name="lead-chains", description="Chained extension leads and cable reels: drop, heat, protection."),
            Tag(name="meta", description="Service version and data sources."),
            Tag(name="networks", description="Circuit networks: node voltages, currents and powers, DC or AC."),
            Tag(name="operations", description="Liveness and readiness probes."),
            Tag(name="raceways", description="Raceway fill to NEC Chapter 9: the smallest trade size for the conductors."),
            Tag(name="sizing", description="Conductor sizing and verification to IEC 60364 or the NEC: ampacity, drop, "
                                           "protection, fault loop or EGC."),
        ],
        path="/schema",
        render_plugins=[FinishedJsonRenderPlugin(), FinishedYamlRenderPlugin()],
    )


def cors_config(settings: Settings) -> CORSConfig | None:
    """Browser apps from the listed origins only; none listed, no CORS headers at all (browsers refuse)."""
    origins = [o.strip() for o in settings.cors_allow_origins.split(",") if o.strip()]
    if not origins:
        return None
    return CORSConfig(allow_origins=origins, allow_methods=["GET", "POST"],
                      allow_headers=["authorization", "content-type", "x-request-id", "if-none-match"],
                      expose_headers=["x-request-id", "retry-after", "etag"], allow_credentials=False, max_age=600)


def create_app(settings: Settings | None = None) -> Litestar:
    settings = settings or Settings.from_env()
    configure_logging(settings)
    compute = ComputePool(settings)
    access = access_middleware(settings)  # API keys and rate limit; None when neither is configured
    v1 = Router(path="/v1", route_handlers=[service_meta, list_conductors, compute_run_resistance_route,
                                            *network_route_handlers(settings), analyse_lead_chain,
                                            *sizing_route_handlers, raceway_fill_route, *table_route_handlers])
    app = Litestar(
        route_handlers=[healthz, readyz, v1, *(metrics_route_handlers() if settings.metrics_enabled else [])],
        # GET /metrics (AMPLINE_METRICS_ENABLED) outermost, so refusals by the access guard are counted too
        middleware=[*([metrics_middleware()] if settings.metrics_enabled else []), *([access] if access else [])],
        cors_config=cors_config(settings),
        exception_handlers=EXCEPTION_HANDLERS,
        before_request=body_guard,
        on_startup=[_load_data],
        on_shutdown=[lambda _: compute.shutdown()],
        openapi_config=openapi_config(),
        request_max_body_size=settings.max_body_bytes,
        state=State({"ready": False, "settings": settings, "compute": compute, "access": access}),
        debug=False,
    )
    # Wrapped outside litestar's router so 404/405 answers are logged and carry a request id and the security
    # headers too (and are compressed, and answer HEAD, like the rest).
    handler = cors_refusals_as_problems(app.asgi_handler) if app.cors_config else app.asgi_handler
    handler = reference_caching_middleware(schema_not_found_as_problem(handler, Problem, PROBLEM_BASE))
    handler = head_as_get_middleware(gzip_middleware(handler, cacheable=is_reference_path))
    app.asgi_handler = security_headers_middleware(request_logging_middleware(handler), settings)
    return app
