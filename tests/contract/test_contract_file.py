"""The committed OpenAPI contract is the app's, and it documents every operation."""

from __future__ import annotations

import re

import pytest
import yaml

from service.api.app import create_app
from service.api.contract import CONTRACT_PATH, contract_of, contract_yaml

HTTP_METHODS = ("get", "post", "put", "patch", "delete")
UNVERSIONED = {"/healthz", "/readyz"}


@pytest.fixture(scope="module")
def document() -> dict:
    return contract_of(create_app())


def test_committed_contract_equals_the_generated_one():
    committed = CONTRACT_PATH.read_text(encoding="utf-8")
    assert committed == contract_yaml(create_app()), "run `make contract` and commit openapi/v1/openapi.yaml"


def test_info_version_is_semantic(document):
    assert re.fullmatch(r"\d+\.\d+\.\d+", document["info"]["version"])


def test_every_path_is_versioned_except_the_probes(document):
    for path in document["paths"]:
        assert path.startswith("/v1/") or path in UNVERSIONED, path


def _operations(document):
    for path, item in document["paths"].items():
        for method in HTTP_METHODS:
            if method in item:
                yield path, method, item[method]


def test_every_operation_has_id_summary_description_and_tag(document):
    ids = []
    for path, method, op in _operations(document):
        assert op.get("operationId"), (path, method)
        assert op.get("summary") and op.get("description"), (path, method)
        assert op.get("tags"), (path, method)
        ids.append(op["operationId"])
    assert len(ids) == len(set(ids))


def test_every_v1_operation_documents_problem_json_errors(document):
    for path, method, op in _operations(document):
        if path in UNVERSIONED:
            continue
        errors = {code: r for code, r in op["responses"].items() if code.startswith(("4", "5"))}
        assert {"400", "500"} <= set(errors), (path, method)
        for code, response in errors.items():
            assert list(response["content"]) == ["application/problem+json"], (path, method, code)
            assert response["content"]["application/problem+json"].get("examples"), (path, method, code)


def test_every_body_and_success_response_has_examples(document):
    for path, method, op in _operations(document):
        if "requestBody" in op:
            content = op["requestBody"]["content"]["application/json"]
            assert content.get("examples"), (path, method)
        if method == "post":
            ok = op["responses"]["200"]["content"]["application/json"]
            assert ok.get("examples"), (path, method)


def test_request_structs_are_closed_to_unknown_fields(document):
    schemas = document["components"]["schemas"]
    for path, method, op in _operations(document):
        if "requestBody" not in op:
            continue
        ref = op["requestBody"]["content"]["application/json"]["schema"]["$ref"]
        assert schemas[ref.rsplit("/", 1)[-1]].get("additionalProperties") is False, path


def test_committed_file_is_valid_yaml_with_openapi_3_1():
    assert yaml.safe_load(CONTRACT_PATH.read_text(encoding="utf-8"))["openapi"].startswith("3.1")


def test_no_two_schemas_share_a_title(document):
    # Client generators name models by title (openapi-python-client drops operations on duplicates, common practice).
    titles = [s.get("title") for s in document["components"]["schemas"].values() if isinstance(s, dict) and s.get("title")]
    assert len(titles) > 50
    assert sorted({t for t in titles if titles.count(t) > 1}) == []
