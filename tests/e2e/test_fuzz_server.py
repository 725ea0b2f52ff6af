"""`make fuzz` (tools/fuzz_server.py) with a tiny time budget: it starts a real server with keys on, runs the
schemathesis CLI over the contract and reads back what it ran (the 600 s figures are in docs/performance.md)."""

from __future__ import annotations

import json
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "tools"))
import fuzz_server  # noqa: E402


@pytest.mark.slow
def test_a_short_fuzz_run_against_a_real_server_passes_and_counts_its_cases():
    summary = fuzz_server.run(seconds=3, seed=21)
    assert summary["ok"], summary
    assert summary["cases"] > 50 and summary["answers_5xx"] == 0
    # Every phase's checks ran, the project's own problem+json check among them, and the key was accepted
    # (positive cases got 200s, which a refused key would have turned into 401/403).
    assert {"not_a_server_error", "response_schema_conformance", "negative_data_rejection",
            "errors_are_problem_json"} <= set(summary["checks"])
    assert summary["answers"].get("200", 0) > 0 and "401" not in summary["answers"] and "403" not in summary["answers"]


def _scenario(status: int, check_status: str) -> dict:
    return {"ScenarioFinished": {"recorder": {
        "label": "POST /v1/conductors/resistance",
        "cases": {"c1": {"value": {}}},
        "interactions": {"c1": {"response": {"status_code": status}}},
        "checks": {"c1": [{"name": "not_a_server_error", "status": check_status,
                           "failure_info": {"failure": {"title": "Server error"}} if check_status == "failure" else None}]},
    }}}


def test_the_event_reader_counts_cases_and_finds_a_5xx_and_a_failed_check(tmp_path):
    events = tmp_path / "events.ndjson"
    events.write_text("\n".join(json.dumps(e) for e in [_scenario(200, "success"), _scenario(500, "failure")]))
    found = fuzz_server.read_events(events)
    assert found["cases"] == 2
    assert found["statuses"] == {"200": 1, "500": 1}
    assert found["failures"] == {"POST /v1/conductors/resistance: not_a_server_error: Server error": 1}
