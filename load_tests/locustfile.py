"""Locust users for the load tests; run by load_tests/load.py (``make load``, ``make soak``), not by hand.

Two user classes:

* ``Bare``: GET /healthz only, the baseline every figure is compared with;
* ``Mix``: the entries of load_tests/scenarios.py, weighted by their ``weight`` (or only those named in
  AMPLINE_LOAD_ENTRIES, comma-separated), each entry's bodies rotated.

Settings come from the environment (load.py sets them):

* AMPLINE_LOAD_PACING: seconds between the starts of one user's requests (0 = back to back, a closed loop
  that measures capacity; > 0 = a fixed offered load of users / pacing requests per second);
* AMPLINE_LOAD_ENTRIES: entry names for ``Mix``, comma-separated (default: every entry not pending);
* AMPLINE_LOAD_OUT: a JSON file for every request's outcome (name, end time, latency in ms, failed), which
  load.py turns into exact percentiles (locust's own summary rounds them to whole milliseconds and coarser).
"""

from __future__ import annotations

import json
import os
import random
import sys
import time
from pathlib import Path

from locust import FastHttpUser, constant, constant_pacing, events, task

sys.path.insert(0, str(Path(__file__).resolve().parent))
from scenarios import BARE, active_entries  # noqa: E402

PACING = float(os.environ.get("AMPLINE_LOAD_PACING", "0"))
WAIT = constant_pacing(PACING) if PACING > 0 else constant(0)
HEADERS = {"content-type": "application/json"}
_records: list[tuple[str, float, float, bool]] = []


@events.request.add_listener
def _record(request_type, name, response_time, response_length, exception, **_kw) -> None:
    _records.append((name, time.time(), response_time, exception is not None))


@events.quitting.add_listener
def _dump(environment, **_kw) -> None:
    out = os.environ.get("AMPLINE_LOAD_OUT")
    if out:
        Path(out).write_text(json.dumps(_records), encoding="utf-8")


def _check(response) -> None:
    """200 and JSON, or the request counts as a failure."""
    if response.status_code != 200:
        response.failure(f"HTTP {response.status_code}: {response.text[:200] if response.text else ''}")
    elif not response.headers.get("content-type", "").startswith(("application/json", "text/plain")):
        response.failure(f"unexpected content-type {response.headers.get('content-type')!r}")


def _entry_task(entry):
    bodies = entry.encoded()

    def run(user: FastHttpUser) -> None:
        if entry.method == "GET":
            url = entry.path + random.choice(entry.queries)
            with user.client.get(url, name=entry.name, catch_response=True) as response:
                _check(response)
        else:
            body = random.choice(bodies)
            with user.client.post(entry.path, data=body, headers=HEADERS, name=entry.name, catch_response=True) as response:
                _check(response)

    run.__name__ = "task_" + "".join(ch if ch.isalnum() else "_" for ch in entry.name)
    return run


_names = os.environ.get("AMPLINE_LOAD_ENTRIES")
_chosen = active_entries(_names.split(",") if _names else None)


class Bare(FastHttpUser):
    """The bare endpoint alone: the baseline."""

    wait_time = WAIT

    @task
    def healthz(self) -> None:
        with self.client.get("/healthz", name=BARE, catch_response=True) as response:
            _check(response)


class Mix(FastHttpUser):
    """The realistic mix of our own scenarios (or the entries named in AMPLINE_LOAD_ENTRIES)."""

    wait_time = WAIT
    tasks = {_entry_task(e): e.weight for e in _chosen}
