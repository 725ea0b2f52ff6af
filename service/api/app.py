"""create_app: the only place routes, handlers, middleware and limits are wired."""

from __future__ import annotations

from litestar import Litestar, Router
from litestar.datastructures import State
from litestar.openapi import OpenAPIConfig
from service.api.contract import FinishedJsonRenderPlugin, FinishedYamlRenderPlugin
from litestar.openapi.spec import Contact, Tag

from service import API_VERSION
from service.api.observability import configure_logging, request_logging_middleware
from service.api.metrics import metrics_middleware, metrics_route_handlers
from service.api.problems import EXCEPTION_HANDLERS, body_guard
from service.api.routes.operational import healthz, readyz
from service.api.routes.v1.chains import analyse_lead_chain
from service.api.routes.v1.conductors import compute_run_resistance_route, list_conductors
from service.api.routes.v1.meta import service_meta
from service.api.routes.v1.networks import network_route_handlers
from service.api.routes.v1.sizing import sizing_route_handlers
from service.api.settings import Settings
from service.core.conductors import default_library
from service.core.cords import default_cords
from service.core.sizing.regime import iec60364
from service.core.protection import default_protection
from service.core.data import load_tables

API_DESCRIPTION = (
    "Electrical calculations as a service for electricians, contractors, estimators and designers: "
    "conductor data and run resistance, with every step, assumption and source shown. "
    "Physical inputs take a number in the documented unit or a string with a unit (\"30 m\", \"98 ft\"). "
    "Numeric outputs are SI and the field name ends with the unit. Errors are RFC 9457 problem+json. "
    "Results are design aids: local wiring regulations and a qualified, licensed person decide."
)


def _load_data(app: Litestar) -> None:
    """Load and validate every data table before serving; a defect stops start-up."""
    load_tables()
    default_library()
    default_cords()
    default_protection()
    iec60364()
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
            Tag(name="sizing", description="Conductor sizing and verification to IEC 60364: capacity, drop, fault loop."),
        ],
        path="/schema",
        render_plugins=[FinishedJsonRenderPlugin(), FinishedYamlRenderPlugin()],
    )


def create_app(settings: Settings | None = None) -> Litestar:
    settings = settings or Settings.from_env()
    configure_logging(settings)
    v1 = Router(path="/v1", route_handlers=[service_meta, list_conductors, compute_run_resistance_route,
                                            *network_route_handlers(settings), analyse_lead_chain,
                                            *sizing_route_handlers])
    app = Litestar(
        route_handlers=[healthz, readyz, v1, *(metrics_route_handlers() if settings.metrics_enabled else [])],
        middleware=[metrics_middleware()] if settings.metrics_enabled else [],  # GET /metrics (AMPLINE_METRICS_ENABLED)
        exception_handlers=EXCEPTION_HANDLERS,
        before_request=body_guard,
        on_startup=[_load_data],
        openapi_config=openapi_config(),
        request_max_body_size=settings.max_body_bytes,
        state=State({"ready": False, "settings": settings}),
        debug=False,
    )
    # Wrapped outside litestar's router so 404/405 answers are logged and carry a request id too.
    app.asgi_handler = request_logging_middleware(app.asgi_handler)
    return app
