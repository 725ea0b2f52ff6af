"""schemathesis over every operation of the committed contract, against the in-process app.

Asserts no 5xx, responses (status, headers, body) conforming to the contract,
and an application/problem+json body on every 4xx.  Fixed seed, bounded
example count, so CI runs are repeatable and quick.
"""

from __future__ import annotations

import schemathesis
from hypothesis import HealthCheck, settings

from service.api.app import create_app
from service.api.contract import CONTRACT_PATH

APP = create_app()
schema = schemathesis.openapi.from_path(CONTRACT_PATH)


@schemathesis.check
def errors_are_problem_json(ctx, response, case):
    if response.status_code >= 400:
        media = response.headers.get("content-type", [""])
        media = media[0] if isinstance(media, list) else media
        assert media.split(";")[0].strip() == "application/problem+json", f"{response.status_code} answered as {media!r}"
        body = response.json()
        assert {"type", "title", "status", "detail"} <= set(body) and body["status"] == response.status_code
    return None


@schema.parametrize()
@settings(max_examples=60, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much, HealthCheck.data_too_large])
def test_every_operation_conforms(case):
    case.call_and_validate(app=APP, additional_checks=[errors_are_problem_json])
