"""tools/audit_locks.py: how pip-audit's report is judged (pip-audit itself replaced by a recorded answer)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "tools"))
import audit_locks  # noqa: E402

LOCK = Path("requirements/run.lock")


def fake(reports: dict[str, object], stderr: str = "", returncode: int = 0):
    """A runner answering per vulnerability service: a report (dependencies list) or None for no report."""
    calls = []

    def run(command):
        service = command[command.index("--vulnerability-service") + 1]
        calls.append(service)
        report = reports.get(service)
        if report is not None:
            Path(command[command.index("--output") + 1]).write_text(json.dumps({"dependencies": report}))
        return subprocess.CompletedProcess(command, returncode, "", stderr)

    run.calls = calls
    return run


CLEAN = [{"name": "litestar", "version": "2.25.0", "vulns": []}, {"name": "msgspec", "version": "0.23.0", "vulns": []}]
SKIPPED = [{"name": "litestar", "skip_reason": "Dependency not found on PyPI and could not be audited: litestar (2.25.0)"}]


def test_a_clean_report_passes_and_says_how_many_were_checked():
    code, lines = audit_locks.audit_all([LOCK], runner=fake({"pypi": CLEAN}))
    assert code == 0 and lines == ["pip-audit: run.lock: 2 packages checked against pypi, no known vulnerabilities"]


def test_a_known_vulnerability_fails():
    report = [*CLEAN, {"name": "jinja2", "version": "2.10", "vulns": [{"id": "PYSEC-2019-217"}]}]
    code, lines = audit_locks.audit_all([LOCK], runner=fake({"pypi": report}))
    assert code == 1 and "VULNERABLE jinja2 2.10: PYSEC-2019-217" in lines[0]


def test_every_package_skipped_is_unreachable_not_a_pass_and_osv_is_tried(monkeypatch):
    monkeypatch.delenv("AMPLINE_AUDIT_REQUIRED", raising=False)
    runner = fake({"pypi": SKIPPED}, stderr="NameResolutionError: api.osv.dev", returncode=1)
    code, lines = audit_locks.audit_all([LOCK], runner=runner)
    assert runner.calls == ["pypi", "osv"]
    assert lines == ["pip-audit: advisory service unreachable, NOT checked: run.lock (tried pypi, osv)"]
    assert code == 0


def test_unchecked_fails_when_the_audit_is_required(monkeypatch):
    monkeypatch.setenv("AMPLINE_AUDIT_REQUIRED", "1")
    code, lines = audit_locks.audit_all([LOCK], runner=fake({}, stderr="ConnectionError: Max retries exceeded"))
    assert code == 1 and "NOT checked" in lines[0] and "AMPLINE_AUDIT_REQUIRED" in lines[-1]


def test_osv_answering_after_pypi_could_not_is_a_real_check():
    code, lines = audit_locks.audit_all([LOCK], runner=fake({"pypi": SKIPPED, "osv": CLEAN}))
    assert code == 0 and "checked against osv" in lines[0]


def test_pip_audit_failing_for_another_reason_fails():
    code, lines = audit_locks.audit_all([LOCK], runner=fake({}, stderr="error: invalid requirement 'x=='",
                                                            returncode=1))
    assert code == 1 and "pip-audit failed" in lines[0] and "invalid requirement" in lines[0]


@pytest.mark.parametrize("partial", [[*CLEAN, *SKIPPED]])
def test_some_packages_skipped_are_listed_as_not_checked(partial, monkeypatch):
    monkeypatch.delenv("AMPLINE_AUDIT_REQUIRED", raising=False)
    code, lines = audit_locks.audit_all([LOCK], runner=fake({"pypi": partial}))
    assert code == 0 and any(line.startswith("pip-audit: run.lock: NOT checked litestar") for line in lines)
