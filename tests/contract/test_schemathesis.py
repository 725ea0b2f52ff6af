"""schemathesis over every operation of the committed contract, against the in-process app.

Positive and negative data (schemathesis.toml: ``mode = "all"``): asserts no 5xx,
responses (status, headers, body) conforming to the contract, every invalid
input refused with a 4xx (negative_data_rejection), and an
application/problem+json body on every 4xx.  Then the stateful run follows the
contract's links (a listed conductor into the resistance calculation) over
sequences of calls on one app.  Fixed seed, bounded example count, so CI runs
are repeatable and quick.
"""

from __future__ import annotations

import sys
from collections import Counter
from pathlib import Path

import schemathesis
import yaml
from hypothesis import HealthCheck, settings

from service.api.app import create_app
from service.api.contract import CONTRACT_PATH

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "tools"))
from fuzz_hooks import errors_are_problem_json  # noqa: E402  (the same check `make fuzz` runs)

APP = create_app()
schema = schemathesis.openapi.from_path(CONTRACT_PATH)

SEEN: Counter[tuple[str, str]] = Counter()  # (operation id, generation mode) -> cases run


@schema.parametrize()
@settings(max_examples=60, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much, HealthCheck.data_too_large])
def test_every_operation_conforms(case):
    SEEN[(case.operation.definition.raw["operationId"], str(case.meta.generation.mode))] += 1
    case.call_and_validate(app=APP, additional_checks=[errors_are_problem_json])


def test_every_operation_with_inputs_got_negative_cases():
    """Guards the run above: a config change that silently dropped negative data would fail here."""
    document = yaml.safe_load(CONTRACT_PATH.read_text(encoding="utf-8"))
    operations = [op for item in document["paths"].values() for op in item.values()]
    assert SEEN, "run the whole module: the conformance test records what it generated"
    for op in operations:
        name = op["operationId"]
        assert SEEN[(name, "positive")] > 0, name
        if op.get("requestBody") or op.get("parameters"):  # an operation without inputs has nothing to make invalid
            assert SEEN[(name, "negative")] > 0, name


class StatefulCalls(schema.as_state_machine()):
    def get_call_kwargs(self, case):
        return {"app": APP}

    def validate_response(self, response, case, additional_checks=None, **kwargs):
        super().validate_response(response, case, additional_checks=[errors_are_problem_json], **kwargs)


TestStatefulCalls = StatefulCalls.TestCase
TestStatefulCalls.settings = settings(max_examples=30, stateful_step_count=6, deadline=None, derandomize=True,
                                      suppress_health_check=list(HealthCheck))
