"""The committed contract passes an OpenAPI validator and a linter with the OpenAPI ruleset (0 errors)."""

from __future__ import annotations

import json
import sys
from collections import Counter
from pathlib import Path

import pytest

from tests.clients.conftest import CONTRACT, HERE, NODE_BIN, ROOT, ContractDefect, contract_defect, node, run, tool

REDOCLY_CONFIG = HERE / "redocly.yaml"


def test_openapi_spec_validator_accepts_the_contract():
    validator = tool(Path(sys.executable).parent / "openapi-spec-validator")
    done = run([validator, CONTRACT])
    assert done.returncode == 0, done.stdout + done.stderr
    assert "OK" in done.stdout  # the validator's own word that it checked the file


@pytest.fixture(scope="module")
def redocly_problems() -> list[dict]:
    node()
    done = run([tool(NODE_BIN / "redocly"), "lint", "--config", REDOCLY_CONFIG, "--format", "json",
                "--max-problems", "100000", CONTRACT], cwd=ROOT)
    report = json.loads(done.stdout)  # the report is printed whatever the verdict; no report is a harness failure
    assert report["totals"]["errors"] == sum(p["severity"] == "error" for p in report["problems"])
    return report["problems"]


def test_redocly_recommended_ruleset_reports_no_error(redocly_problems):
    errors = [p for p in redocly_problems if p["severity"] == "error"]
    if errors:
        by_rule = Counter(p["ruleId"] for p in errors)
        where = sorted({p["location"][0]["pointer"] for p in errors})
        raise ContractDefect(f"{len(errors)} errors {dict(by_rule)} at {where}")


@contract_defect("response examples leave out fields that are required (and nullable): "
                 "Redocly's no-invalid-media-type-examples")
def test_every_response_example_matches_its_schema(redocly_problems):
    invalid = [p for p in redocly_problems if p["ruleId"] == "no-invalid-media-type-examples"]
    if invalid:
        where = Counter(p["location"][0]["pointer"].split("/content/")[0] for p in invalid)
        raise ContractDefect(f"{len(invalid)} examples do not match their schemas, by operation: {dict(where)}")
