"""The service over real HTTP, started the way `make run` starts it."""

from __future__ import annotations

import json

import httpx
import pytest

from tests.e2e.conftest import CLEAN_EXITS, start_server


def test_probes_and_a_calculation_over_http(live_server):
    base = live_server.base_url
    assert httpx.get(base + "/healthz").json() == {"status": "ok"}
    answer = httpx.post(base + "/v1/conductors/resistance", json={"size": "1.5 mm^2", "length": "18 m"})
    assert answer.status_code == 200
    # IEC 60228:2004, Table 2: 1.5 mm² class 2 copper 12.1 ohm/km at 20 °C
    assert answer.json()["loop_ohm"] == pytest.approx(2 * 12.1e-3 * 18, rel=1e-12)
    assert "server" not in answer.headers  # no version banner


def test_errors_over_http_are_problem_json(live_server):
    bad = httpx.post(live_server.base_url + "/v1/conductors/resistance", json={"size": "1.5 mm^2", "length": "18 kg"})
    assert bad.status_code == 422 and bad.headers["content-type"].startswith("application/problem+json")
    assert bad.json()["errors"][0]["pointer"] == "/length"


def test_json_log_lines_carry_request_id_and_timing():
    server = start_server(log_format="json")
    try:
        httpx.post(server.base_url + "/v1/conductors/resistance", json={"size": "4 mm^2", "length": "9 m"},
                   headers={"x-request-id": "stall-42"})
    finally:
        assert server.stop() in CLEAN_EXITS
    records = [json.loads(line) for line in server.output().splitlines() if line.startswith("{")]
    ours = [r for r in records if r.get("request_id") == "stall-42"]
    assert len(ours) == 1
    assert ours[0]["status"] == 200 and ours[0]["route"] == "/v1/conductors/resistance" and ours[0]["duration_ms"] > 0
    assert "4 mm^2" not in json.dumps(ours[0])
    lines = [line for line in server.output().splitlines() if line.strip()]
    assert all(line.startswith("{") for line in lines), lines  # the server's own lines are JSON too
    assert any("Finished server process" in r.get("event", "") for r in records)  # uvicorn's graceful shutdown ran
