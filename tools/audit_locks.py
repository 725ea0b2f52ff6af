"""pip-audit over the hash-pinned locks, saying plainly whether the advisories were really checked.

    .venv/bin/python tools/audit_locks.py            # make audit; also the last step of make test

pip-audit answers "No known vulnerabilities found" and exits 0 even when every package was skipped because
the advisory service did not know it (a mirror without the per-version JSON API) — a pass that checked
nothing.  This script reads pip-audit's JSON report instead and decides:

* a known vulnerability in a locked package: exit 1, always;
* pip-audit failing for another reason than the network: exit 1;
* no advisory service reachable (PyPI's JSON API, then OSV), or every package skipped: print
  "pip-audit: advisory service unreachable, NOT checked" and exit 0, or exit 1 when AMPLINE_AUDIT_REQUIRED=1
  (set it where CI can reach the services; on a machine that cannot, failing would block every change
  without checking anything);
* some packages skipped: list them as NOT checked (same exit rule).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable

ROOT = Path(__file__).resolve().parents[1]
LOCKS = tuple(ROOT / "requirements" / name for name in ("run.lock", "test.lock", "generators.lock"))
SERVICES = ("pypi", "osv")
_NETWORK_SIGNS = ("ConnectionError", "NameResolutionError", "Max retries exceeded", "timed out", "Temporary failure",
                  "Network is unreachable", "ConnectTimeout", "ReadTimeout", "SSLError", "ProxyError")


@dataclass
class Audit:
    lock: str
    service: str
    vulnerable: list[str] = field(default_factory=list)  # "name version: ID, ID"
    unchecked: list[str] = field(default_factory=list)   # "name version: reason"
    audited: int = 0
    unreachable: bool = False
    error: str = ""


Runner = Callable[[list[str]], subprocess.CompletedProcess]


def _run(command: list[str]) -> subprocess.CompletedProcess:
    return subprocess.run(command, capture_output=True, text=True, timeout=600)


def audit_lock(lock: Path, service: str, runner: Runner = _run) -> Audit:
    result = Audit(lock=lock.name, service=service)
    with tempfile.TemporaryDirectory() as tmp:
        report = Path(tmp) / "report.json"
        done = runner([sys.executable, "-m", "pip_audit", "--requirement", str(lock), "--require-hashes",
                       "--disable-pip", "--vulnerability-service", service, "--format", "json",
                       "--output", str(report), "--progress-spinner", "off"])
        text = report.read_text(encoding="utf-8") if report.exists() else ""
    if not text:
        output = (done.stderr or "") + (done.stdout or "")
        if any(sign in output for sign in _NETWORK_SIGNS):
            result.unreachable = True
        else:
            result.error = output.strip()[-1500:] or f"pip-audit exited {done.returncode} without a report"
        return result
    for dep in json.loads(text).get("dependencies", []):
        name = f"{dep.get('name')} {dep.get('version', '?')}"
        if "skip_reason" in dep:
            result.unchecked.append(f"{name}: {dep['skip_reason']}")
            continue
        result.audited += 1
        if dep.get("vulns"):
            result.vulnerable.append(f"{name}: " + ", ".join(v.get("id", "?") for v in dep["vulns"]))
    if result.unchecked and not result.audited:
        result.unreachable = True  # nothing known to the service: it is not a real advisory source here
    return result


def audit_all(locks=LOCKS, services=SERVICES, runner: Runner = _run) -> tuple[int, list[str]]:
    """(exit code, lines to print) over every lock, each with the first service that could check it."""
    required = os.environ.get("AMPLINE_AUDIT_REQUIRED", "") not in ("", "0", "false")
    lines: list[str] = []
    failed = not_checked = False
    for lock in locks:
        tried = []
        for service in services:
            result = audit_lock(Path(lock), service, runner)
            tried.append(result)
            if not result.unreachable:
                break
        result = tried[-1]
        if result.error:
            failed = True
            lines.append(f"pip-audit: {result.lock}: pip-audit failed ({result.service}):\n{result.error}")
            continue
        if result.unreachable:
            not_checked = True
            lines.append(f"pip-audit: advisory service unreachable, NOT checked: {result.lock} "
                         f"(tried {', '.join(r.service for r in tried)})")
            continue
        for entry in result.vulnerable:
            failed = True
            lines.append(f"pip-audit: {result.lock}: VULNERABLE {entry}")
        for entry in result.unchecked:
            not_checked = True
            lines.append(f"pip-audit: {result.lock}: NOT checked {entry}")
        if not result.vulnerable:
            lines.append(f"pip-audit: {result.lock}: {result.audited} packages checked against {result.service}, "
                         "no known vulnerabilities")
    if not_checked and required:
        failed = True
        lines.append("pip-audit: AMPLINE_AUDIT_REQUIRED is set, so an unchecked audit fails")
    return (1 if failed else 0), lines


def main() -> int:
    code, lines = audit_all()
    print("\n".join(lines))
    return code


if __name__ == "__main__":
    sys.exit(main())
