"""issue 16, items 6 and 7: what the committed contract says about HTTP itself, checked against what the app does.

Request ids, the probes' ``security: []``, and the validators and caching headers of the reference GETs were
all sent by the service but absent from the contract, so a generated client could not read them.
"""

from __future__ import annotations

import re

import pytest
import yaml
from litestar.testing import TestClient

from service.api.app import create_app
from service.api.contract import CONTRACT_PATH
from service.api.settings import Settings

PROBES = {"getLiveness", "getReadiness"}
REFERENCE = {"getServiceMeta", "listConductors", "listTables", "getTable"}


@pytest.fixture(scope="module")
def document() -> dict:
    return yaml.safe_load(CONTRACT_PATH.read_text(encoding="utf-8"))


def operations(document: dict):
    for path, item in document["paths"].items():
        for method, op in item.items():
            yield path, method, op


def test_every_operation_documents_x_request_id_in_and_out(document):
    for path, method, op in operations(document):
        (param,) = [p for p in op.get("parameters", []) if p["name"] == "X-Request-ID"]
        assert param["in"] == "header" and param["required"] is False and param["description"], (path, method)
        for status, response in op["responses"].items():
            assert "X-Request-ID" in response.get("headers", {}), (path, method, status)


def test_the_documented_request_id_pattern_is_what_the_service_echoes(document):
    pattern = document["paths"]["/healthz"]["get"]["responses"]["200"]["headers"]["X-Request-ID"]["schema"]["pattern"]
    with TestClient(create_app(Settings())) as c:
        assert c.get("/healthz", headers={"x-request-id": "quote-2291.a:b_c"}).headers["x-request-id"] == \
            "quote-2291.a:b_c"
        replaced = c.get("/healthz", headers={"x-request-id": "not valid!"}).headers["x-request-id"]
    assert re.fullmatch(pattern, replaced) and replaced != "not valid!"


def test_probes_say_no_security_and_every_other_operation_takes_the_optional_key(document):
    # Every guarded operation works with keys off too, so "no key" is one of the document's alternatives; it is
    # said once, at the root, where openapi-python-client reads the empty alternative (not at an operation).
    assert document["security"] == [{"apiKey": []}, {}]
    ids = set()
    for _path, _method, op in operations(document):
        ids.add(op["operationId"])
        if op["operationId"] in PROBES:
            assert op["security"] == [] and "401" not in op["responses"]
        else:
            assert "security" not in op and "401" in op["responses"]
    assert PROBES <= ids


def test_the_reference_gets_document_their_validators_and_the_304(document):
    found = set()
    for path, method, op in operations(document):
        if op["operationId"] not in REFERENCE:
            assert "304" not in op["responses"] and "ETag" not in op["responses"].get("200", {}).get("headers", {})
            continue
        found.add(op["operationId"])
        assert method == "get"
        assert "If-None-Match" in {p["name"] for p in op["parameters"]}
        for status in ("200", "304"):
            headers = op["responses"][status]["headers"]
            assert {"ETag", "Cache-Control"} <= set(headers), (path, status)
        assert "content" not in op["responses"]["304"]
    assert found == REFERENCE


def test_the_documented_caching_headers_match_the_answers(document):
    headers = document["paths"]["/v1/tables"]["get"]["responses"]["200"]["headers"]
    with TestClient(create_app(Settings())) as c:
        answer = c.get("/v1/tables")
    assert re.fullmatch(headers["ETag"]["schema"]["pattern"], answer.headers["etag"])
    assert re.fullmatch(headers["Cache-Control"]["schema"]["pattern"], answer.headers["cache-control"])


def test_the_table_path_parameter_lists_exactly_the_packaged_tables(document):
    from service.core.data import load_tables

    (param,) = [p for p in document["paths"]["/v1/tables/{table_id}"]["get"]["parameters"] if p["name"] == "table_id"]
    assert param["in"] == "path" and sorted(param["schema"]["enum"]) == sorted(load_tables())


def test_table_schemas_describe_every_field(document):
    schemas = document["components"]["schemas"]
    for name in ("TableSummary", "TableList", "TableDetail"):
        assert schemas[name]["title"] == name
        for field, schema in schemas[name]["properties"].items():
            assert schema.get("description"), (name, field)


def test_the_committed_contract_has_no_yaml_aliases():
    # the X-Request-ID header, shared by every response, came out as &id001 / *id001 aliases
    text = CONTRACT_PATH.read_text(encoding="utf-8")
    assert not re.search(r"[&*]id\d{3}\b", text)
