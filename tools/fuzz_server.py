"""schemathesis against a real server for a bounded time (``make fuzz``; figures in docs/performance.md).

    .venv/bin/python tools/fuzz_server.py                  # FUZZ_SECONDS=600 by default
    .venv/bin/python tools/fuzz_server.py --seconds 30

Starts ``python -m service`` as ``make run`` does, on a free 127.0.0.1 port, with API keys on (a throwaway key
made for this run; its hash is the only thing the server is given), waits for /readyz, then runs the
schemathesis CLI (``st run``) over the committed contract ``openapi/v1/openapi.yaml`` with every phase
(examples, coverage, fuzzing, stateful), positive and negative data, every check schemathesis has (no 5xx,
status, headers and body conforming to the contract, invalid input refused, valid input accepted, auth not
ignored) plus the project's own (every error is problem+json: tools/fuzz_hooks.py), and ``--max-time`` as
the budget: fuzzing and the stateful phase repeat until it is spent. The
expected statuses of the acceptance and rejection checks come from ``schemathesis.toml``, as in
tests/contract/test_schemathesis.py. Then it stops the server, prints a JSON summary (cases run, failures,
5xx answers) and exits 1 if there was a failure, a 5xx or an unhandled exception in the server's log.

CI keeps its shorter, in-process run (tests/contract/test_schemathesis.py).
"""

from __future__ import annotations

import argparse
import hashlib
import json
import os
import secrets
import subprocess
import sys
import tempfile
import time
from collections import Counter
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "load_tests"))
from survival import start_server, stop_server  # noqa: E402  (one way to start and stop a real server)

CONTRACT = ROOT / "openapi" / "v1" / "openapi.yaml"
ST = Path(sys.executable).with_name("st")
PHASES = "examples,coverage,fuzzing,stateful"
# Wrong keys are part of the run (the ignored_auth check): the fuzzer's one address must not use up the
# failed-authentication allowance, which would turn every later answer into a 429.
AUTH_FAILURE_LIMIT = 10_000


def server_crashed(log_text: str) -> bool:
    return "Traceback" in log_text or "unhandled_exception" in log_text


def _events(path: Path):
    with path.open(encoding="utf-8") as stream:  # hundreds of MB for a 10-minute run: one event at a time
        for line in stream:
            if line.strip():
                yield json.loads(line)


def read_events(path: Path) -> dict:
    """Cases, 5xx answers and failures from schemathesis' NDJSON event stream."""
    cases = 0
    statuses: Counter[str] = Counter()
    failures: Counter[str] = Counter()
    checks: set[str] = set()
    errors: list[str] = []
    for event in _events(path):
        for name, body in event.items():
            if name == "ScenarioFinished":
                recorder = body.get("recorder") or {}
                cases += len(recorder.get("cases", {}))
                for interaction in recorder.get("interactions", {}).values():
                    response = interaction.get("response") or {}
                    if "status_code" in response:
                        statuses[str(response["status_code"])] += 1
                label = recorder.get("label", "")
                for check_list in recorder.get("checks", {}).values():
                    for check in check_list:
                        checks.add(check.get("name", ""))
                        if str(check.get("status")).lower() == "failure":
                            failure = (check.get("failure_info") or {}).get("failure") or {}
                            title = failure.get("title") if isinstance(failure, dict) else None
                            failures[f"{label}: {check.get('name')}: {title or str(failure)[:200]}"] += 1
            elif name in ("NonFatalError", "FatalError"):
                errors.append(str(body.get("info", body))[:300])
    return {"cases": cases, "statuses": statuses, "failures": dict(failures), "errors": errors,
            "checks": sorted(checks)}


def run(seconds: int, seed: int | None = None, workers: int = 1) -> dict:
    key = secrets.token_urlsafe(32)
    key_hash = hashlib.sha256(key.encode()).hexdigest()  # the server is given only the hash
    with tempfile.TemporaryDirectory() as tmp:
        log = Path(tmp) / "server.log"
        events = Path(tmp) / "events.ndjson"
        process, base = start_server(log, {"AMPLINE_API_KEY_HASHES": f"fuzz={key_hash}",
                                           "AMPLINE_AUTH_FAILURE_LIMIT": str(AUTH_FAILURE_LIMIT)})
        command = [str(ST), "run", str(CONTRACT), "--url", base, "--phases", PHASES, "--mode", "all",
                   "--checks", "all", "--max-time", str(seconds), "--workers", str(workers),
                   "--header", f"Authorization: Bearer {key}", "--request-timeout", "30",
                   "--suppress-health-check", "all", "--generation-database", "none", "--no-color",
                   "--report", "ndjson", "--report-ndjson-path", str(events)]
        if seed is not None:
            command += ["--seed", str(seed)]
        started = time.monotonic()
        try:
            # cwd=ROOT: schemathesis reads schemathesis.toml from there (the expected statuses).
            # SCHEMATHESIS_HOOKS adds the project's own check (every error is problem+json: tools/fuzz_hooks.py).
            hooks_env = {**os.environ, "SCHEMATHESIS_HOOKS": "fuzz_hooks",
                         "PYTHONPATH": os.pathsep.join(filter(None, [str(ROOT / "tools"), os.environ.get("PYTHONPATH")]))}
            cli = subprocess.run(command, cwd=ROOT, env=hooks_env, capture_output=True, text=True,
                                 timeout=seconds * 3 + 300)
        finally:
            duration = time.monotonic() - started
            stop_server(process)
        server_log = log.read_text(errors="replace")
        found = read_events(events) if events.exists() else {"cases": 0, "statuses": Counter(), "failures": {},
                                                              "errors": ["no event stream written"], "checks": []}
    five_xx = sum(n for status, n in found["statuses"].items() if status.startswith("5"))
    summary = {
        "command": f"python tools/fuzz_server.py --seconds {seconds}" + (f" --seed {seed}" if seed is not None else ""),
        "phases": PHASES,
        "duration_s": round(duration, 1),
        "cases": found["cases"],
        "answers": dict(sorted(found["statuses"].items())),
        "answers_5xx": five_xx,
        "failures": found["failures"],  # "operation: check: title" -> how many cases
        "errors": found["errors"],
        "checks": found["checks"],
        "server_crashed": server_crashed(server_log),
        "st_exit_code": cli.returncode,
        "st_summary": cli.stdout[cli.stdout.rfind("SUMMARY"):][-1500:] + cli.stderr[-1500:],
    }
    summary["ok"] = (cli.returncode == 0 and not found["failures"] and not found["errors"] and five_xx == 0
                     and found["cases"] > 0 and not summary["server_crashed"])
    return summary


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n", 1)[0])
    parser.add_argument("--seconds", type=int, default=int(os.environ.get("FUZZ_SECONDS", "600")),
                        help="time budget of the schemathesis run (default FUZZ_SECONDS or 600)")
    parser.add_argument("--seed", type=int, default=None)
    parser.add_argument("--workers", type=int, default=1, help="schemathesis workers (default 1)")
    args = parser.parse_args()
    summary = run(args.seconds, args.seed, args.workers)
    print(json.dumps(summary, indent=2))
    return 0 if summary["ok"] else 1


if __name__ == "__main__":
    sys.exit(main())
