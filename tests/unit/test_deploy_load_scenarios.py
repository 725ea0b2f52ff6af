"""The load-test mix (load_tests/scenarios.py) stays valid against the API, and `make load`'s driver runs.

Nothing here times anything: figures come from `make load` / `make soak` and live in docs/performance.md.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest
from litestar.testing import TestClient

from service.api.app import create_app

ROOT = Path(__file__).resolve().parents[2]
LOAD_TESTS = ROOT / "load_tests"
sys.path.insert(0, str(LOAD_TESTS))

import scenarios  # noqa: E402


@pytest.fixture(scope="module")
def client():
    with TestClient(create_app()) as c:
        yield c


def _requests():
    for entry in scenarios.active_entries():
        if entry.method == "GET":
            for query in entry.queries:
                yield pytest.param(entry, query, None, id=f"{entry.name}{query}")
        else:
            for k, body in enumerate(entry.encoded()):
                yield pytest.param(entry, "", body, id=f"{entry.name}#{k}")


@pytest.mark.parametrize(("entry", "query", "body"), list(_requests()))
def test_every_scenario_is_answered_200(client, entry, query, body):
    if body is None:
        answer = client.get(entry.path + query)
    else:
        answer = client.post(entry.path, content=body, headers={"content-type": "application/json"})
    assert answer.status_code == 200, answer.text[:500]


def test_entries_are_named_uniquely_and_weighted():
    names = [e.name for e in scenarios.ENTRIES]
    assert len(names) == len(set(names)) and scenarios.BARE not in names
    for e in scenarios.ENTRIES:
        assert e.weight > 0 and e.method in ("GET", "POST")
        assert e.pending or (e.bodies if e.method == "POST" else e.queries), e.name


def test_the_locustfile_builds_a_task_for_every_active_entry():
    # In a child process: importing locust patches the standard library for gevent.
    code = ("import locustfile as lf; "
            "print(sorted(t.__name__ for t in lf.Mix.tasks)); print([t.__name__ for t in lf.Bare.tasks])")
    done = subprocess.run([sys.executable, "-c", code], cwd=LOAD_TESTS, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    mix, bare = done.stdout.strip().splitlines()[-2:]
    for entry in scenarios.active_entries():
        assert "task_" + "".join(ch if ch.isalnum() else "_" for ch in entry.name) in mix
    assert "healthz" in bare


@pytest.mark.slow
def test_the_load_driver_runs_end_to_end_briefly():
    """`make load`'s script with tiny durations: a real server, locust, the tables and the verdicts."""
    entry = "POST /v1/lead-chains/analyse"
    done = subprocess.run(
        [sys.executable, str(LOAD_TESTS / "load.py"), "run", "--duration", "3", "--mix-duration", "3",
         "--warmup", "1", "--users", "2", "--mix-users", "2", "--pacing", "0.2", "--entries", entry],
        cwd=ROOT, capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stdout[-3000:] + done.stderr[-3000:]
    out = done.stdout
    assert "| endpoint (alone) | req/s |" in out and "| endpoint (in the mix) | req/s |" in out
    assert f"| {entry} |" in out and f"| {scenarios.BARE} |" in out
    assert "- zero errors: met" in out
