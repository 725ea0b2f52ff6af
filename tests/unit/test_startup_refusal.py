"""A refused setting stops `python -m service` with one JSON log line naming it, not a traceback.

issue 16, item 8: an open network bind (a non-loopback AMPLINE_HOST with API keys off) was refused, but as a
Python traceback on stderr, which a log collector splits into a dozen lines and no alert matches; a defective
table already stopped start-up with one `startup_refused` line (tests/e2e/test_server_hardening.py).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]


def _start(**settings: str) -> subprocess.CompletedProcess:
    env = {k: v for k, v in os.environ.items() if not k.startswith("AMPLINE_")}
    env.update({"AMPLINE_PORT": "8000", "AMPLINE_LOG_FORMAT": "json", **settings})
    return subprocess.run([sys.executable, "-m", "service"], cwd=ROOT, env=env, capture_output=True, text=True,
                          timeout=60)


def _one_refusal(done: subprocess.CompletedProcess) -> dict:
    assert done.returncode == 1, done.stdout + done.stderr
    assert "Traceback" not in done.stdout + done.stderr and done.stderr == ""
    lines = done.stdout.splitlines()
    assert len(lines) == 1, done.stdout
    record = json.loads(lines[0])
    assert record["event"] == "startup_refused" and record["level"] == "critical"
    return record


@pytest.mark.parametrize("host", ["0.0.0.0", "192.0.2.10", "::"])
def test_an_open_network_bind_without_keys_is_refused_naming_the_setting_that_allows_it(host):
    record = _one_refusal(_start(AMPLINE_HOST=host))
    assert "AMPLINE_HOST" in record["settings"] and "AMPLINE_ALLOW_ANONYMOUS" in record["settings"]
    assert "AMPLINE_ALLOW_ANONYMOUS=true" in record["detail"] and "API keys are off" in record["detail"]


def test_any_other_refused_setting_is_one_line_naming_it_too():
    record = _one_refusal(_start(AMPLINE_HOST="127.0.0.1", AMPLINE_PORT="0"))
    assert record["settings"] == ["AMPLINE_PORT"] and "from 1 to 65535" in record["detail"]


def test_a_refused_log_format_is_reported_in_the_default_json_format():
    record = _one_refusal(_start(AMPLINE_HOST="127.0.0.1", AMPLINE_LOG_FORMAT="xml"))
    assert record["settings"] == ["AMPLINE_LOG_FORMAT"]
