"""GET /metrics over real HTTP: Prometheus text format, request counts and latencies by route, solver figures."""

from __future__ import annotations

import httpx
import msgspec
import pytest
from prometheus_client.parser import text_string_to_metric_families

from service.api.routes.v1.networks import _EXAMPLES
from tests.e2e.conftest import CLEAN_EXITS, start_server


def scrape(base_url: str) -> dict[str, dict[tuple, float]]:
    """{sample name: {sorted label items: value}} from one scrape, parsed by prometheus_client's own parser."""
    answer = httpx.get(base_url + "/metrics", timeout=10)
    assert answer.status_code == 200
    assert answer.headers["content-type"].startswith("text/plain")
    samples: dict[str, dict[tuple, float]] = {}
    for family in text_string_to_metric_families(answer.text):
        for s in family.samples:
            samples.setdefault(s.name, {})[tuple(sorted(s.labels.items()))] = s.value
    return samples


def value(samples, name: str, **labels) -> float:
    """The sample whose labels include ``labels`` (0 when absent: a series is born on its first observation)."""
    want = set(labels.items())
    found = [v for key, v in samples.get(name, {}).items() if want <= set(key)]
    assert len(found) <= 1, (name, labels, found)
    return found[0] if found else 0.0


def test_request_counts_and_latency_histograms_go_up_by_route_and_status(live_server):
    base = live_server.base_url
    before = scrape(base)
    for _ in range(3):
        assert httpx.get(base + "/v1/meta").status_code == 200
    assert httpx.get(base + "/v1/conductors", params={"material": "copper"}).status_code == 200
    bad = httpx.post(base + "/v1/conductors/resistance", json={"size": "1.5 mm^2", "length": "18 kg"})
    assert bad.status_code == 422
    after = scrape(base)

    meta = dict(method="GET", path="/v1/meta", status_code="200")
    assert value(after, "ampline_requests_total", **meta) - value(before, "ampline_requests_total", **meta) == 3
    assert (value(after, "ampline_request_duration_seconds_count", **meta)
            - value(before, "ampline_request_duration_seconds_count", **meta)) == 3
    assert (value(after, "ampline_request_duration_seconds_bucket", le="+Inf", **meta)
            - value(before, "ampline_request_duration_seconds_bucket", le="+Inf", **meta)) == 3
    assert value(after, "ampline_request_duration_seconds_sum", **meta) > value(before, "ampline_request_duration_seconds_sum", **meta)
    refused = dict(method="POST", path="/v1/conductors/resistance", status_code="422")
    assert value(after, "ampline_requests_total", **refused) - value(before, "ampline_requests_total", **refused) == 1
    # The route template labels the series, never the raw request target with its query string.
    paths = {dict(key)["path"] for key in after["ampline_requests_total"]}
    assert "/v1/conductors" in paths and not any("?" in p for p in paths)


def test_a_network_solve_records_its_iterations_and_size(live_server):
    base = live_server.base_url
    # The contract's village hall refit: constant-power lighting, so Newton iterates.
    (hall,) = [r for name, r in _EXAMPLES.items() if name.startswith("Village hall")]
    network = msgspec.to_builtins(hall)
    before = scrape(base)
    answer = httpx.post(base + "/v1/networks/solve", json=network, timeout=30)
    assert answer.status_code == 200
    solved = answer.json()
    assert solved["iterations"] > 1  # constant-power load: Newton steps after the first solve
    after = scrape(base)

    def delta(name: str) -> float:
        return value(after, name, analysis="ac") - value(before, name, analysis="ac")

    assert delta("ampline_network_solver_iterations_count") == 1
    assert delta("ampline_network_solver_iterations_sum") == solved["iterations"]
    assert delta("ampline_network_nodes_sum") == solved["node_count"]
    assert delta("ampline_network_elements_sum") == len(network["elements"])
    le = next(b for b in (1, 2, 3, 4, 5, 6, 8, 10, 15, 20, 30, 50) if b >= solved["iterations"])
    bucket = f"{float(le)}"
    assert (value(after, "ampline_network_solver_iterations_bucket", analysis="ac", le=bucket)
            - value(before, "ampline_network_solver_iterations_bucket", analysis="ac", le=bucket)) == 1

    # A network refused before solving (422) observes nothing.
    floating = {"frequency": 0, "elements": [{"type": "resistor", "id": "r", "a": "x", "b": "y", "resistance": 1}]}
    assert httpx.post(base + "/v1/networks/solve", json=floating, timeout=30).status_code == 422
    again = scrape(base)
    assert value(again, "ampline_network_solver_iterations_count", analysis="dc") == value(
        after, "ampline_network_solver_iterations_count", analysis="dc")


def test_the_whole_exposition_parses_and_names_what_we_export(live_server):
    httpx.get(live_server.base_url + "/healthz")
    text = httpx.get(live_server.base_url + "/metrics").text
    families = {f.name: f for f in text_string_to_metric_families(text)}  # raises on a malformed line
    assert families["ampline_requests"].type == "counter"
    for name in ("ampline_request_duration_seconds", "ampline_network_solver_iterations",
                 "ampline_network_nodes", "ampline_network_elements"):
        assert families[name].type == "histogram", name
        assert families[name].documentation


def test_metrics_are_not_in_the_openapi_document(live_server):
    document = httpx.get(live_server.base_url + "/schema/openapi.json").json()
    assert "/metrics" not in document["paths"]
    assert "/v1/meta" in document["paths"]  # the document itself is the real one


@pytest.mark.parametrize("flag", ["false", "0"])
def test_metrics_can_be_switched_off(flag):
    server = start_server(metrics_enabled=flag, log_level="warning")
    try:
        assert httpx.get(server.base_url + "/metrics").status_code == 404
        assert httpx.get(server.base_url + "/v1/meta").status_code == 200
    finally:
        assert server.stop() in CLEAN_EXITS


def test_a_bad_metrics_setting_stops_start_up():
    with pytest.raises(RuntimeError) as exc:
        start_server(metrics_enabled="maybe")
    assert "AMPLINE_METRICS_ENABLED must be true or false" in str(exc.value)
