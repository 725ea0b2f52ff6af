"""Prometheus metrics: GET /metrics, request counts and latencies by route, and the network solver's figures.

Request counts and latency histograms come from litestar's Prometheus middleware, labelled by method, route
template (``/v1/networks/solve``, never a raw path with its parameters, so the number of series stays fixed)
and status.  The solver histograms below are recorded by the network route after each successful solve; the
core knows nothing of Prometheus.

The metric objects live in prometheus_client's default registry, one per process: with ``AMPLINE_WORKERS``
above 1, a scrape of ``/metrics`` describes the worker process that answered it.  Run one worker per
container or pod and scrape each one (see README.md, "Scaling out").
"""

from __future__ import annotations

from litestar.handlers import HTTPRouteHandler
from litestar.middleware.base import DefineMiddleware
from litestar.plugins.prometheus import PrometheusConfig, PrometheusController
from prometheus_client import Histogram

PREFIX = "ampline"
METRICS_PATH = "/metrics"

# Request latency buckets, seconds: a bare probe answers in about 1 ms, a lead chain in a few, a
# 100,000-node network in about a second.
LATENCY_BUCKETS = (0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1.0, 2.5, 5.0, 10.0, 30.0)

# Linear solves per network: 1 for a linear network, 1 + Newton steps with constant-power/-current loads
# (the solver stops at 30 by default).
SOLVER_ITERATIONS = Histogram(
    f"{PREFIX}_network_solver_iterations",
    "Linear solves done for one network (1 when linear; 1 + Newton steps otherwise), per successful solve.",
    labelnames=("analysis",),
    buckets=(1, 2, 3, 4, 5, 6, 8, 10, 15, 20, 30, 50),
)
NETWORK_NODES = Histogram(
    f"{PREFIX}_network_nodes",
    "Distinct nodes of a solved network, the reference included.",
    labelnames=("analysis",),
    buckets=(2, 5, 10, 30, 100, 300, 1_000, 3_000, 10_000, 30_000, 100_000, 300_000, 1_000_000),
)
NETWORK_ELEMENTS = Histogram(
    f"{PREFIX}_network_elements",
    "Elements of a solved network, each branch of a resistor array counted.",
    labelnames=("analysis",),
    buckets=(1, 3, 10, 30, 100, 300, 1_000, 3_000, 10_000, 30_000, 100_000, 300_000, 1_000_000),
)


def observe_network_solve(analysis: str, iterations: int, nodes: int, elements: int) -> None:
    """Record one successful solve (``analysis`` is ``dc`` or ``ac``)."""
    SOLVER_ITERATIONS.labels(analysis).observe(iterations)
    NETWORK_NODES.labels(analysis).observe(nodes)
    NETWORK_ELEMENTS.labels(analysis).observe(elements)


class MetricsController(PrometheusController):
    """GET /metrics in the Prometheus text format; operational, so kept out of the OpenAPI document."""

    path = METRICS_PATH
    include_in_schema = False


def metrics_middleware() -> DefineMiddleware:
    """Counts and latency histograms of every request, by method, route template and status."""
    return PrometheusConfig(
        app_name="ampline",
        prefix=PREFIX,
        group_path=True,  # label by route template, not by raw path
        buckets=list(LATENCY_BUCKETS),
    ).middleware


def metrics_route_handlers() -> list[type[PrometheusController] | HTTPRouteHandler]:
    return [MetricsController]
