"""The foundation end to end through the ASGI app: probes, meta, conductor routes, errors, logging."""

from __future__ import annotations

import pytest
from litestar.testing import TestClient
from structlog.testing import capture_logs

from service.api.app import create_app
from service.api.settings import Settings

PROBLEM = "application/problem+json"
RESISTANCE = "/v1/conductors/resistance"


@pytest.fixture(scope="module")
def client():
    with TestClient(create_app(Settings())) as c:
        yield c


def problem(response, status: int) -> dict:
    assert response.status_code == status, response.text
    assert response.headers["content-type"].startswith(PROBLEM)
    body = response.json()
    assert body["status"] == status and body["type"].startswith("https://") and body["title"] and body["detail"]
    text = response.text
    assert "Traceback" not in text and ".py" not in text and "site-packages" not in text
    return body


def pointers(body: dict) -> list[str]:
    return [e["pointer"] for e in body.get("errors", [])]


def test_probes(client):
    assert client.get("/healthz").json() == {"status": "ok"}
    assert client.get("/readyz").json() == {"status": "ready"}


def test_meta_lists_every_table_with_its_source(client):
    meta = client.get("/v1/meta").json()
    tables = {t["table_id"]: t for t in meta["tables"]}
    assert {"iec60228-table1", "iec60228-table2", "iec60228-table3", "nec-ch9-table8", "conductor-materials"} <= set(tables)
    assert tables["iec60228-table2"]["standard"] == "IEC 60228" and tables["iec60228-table2"]["table"] == "Table 2"
    assert tables["nec-ch9-table8"]["table"] == "Chapter 9, Table 8"
    assert all(t["edition"] and t["provenance"] and t["rows"] > 0 for t in meta["tables"])
    assert meta["cautions"] and meta["api_version"].count(".") == 2


def test_list_conductors_filters(client):
    flexible = client.get("/v1/conductors", params={"conductor_class": 5}).json()
    assert flexible["count"] == len(flexible["conductors"]) > 0
    assert {c["conductor_class"] for c in flexible["conductors"]} == {5}
    assert {c["material"] for c in flexible["conductors"]} == {"copper"}  # IEC 60228 Table 3 is copper only
    awg_al = client.get("/v1/conductors", params={"size_system": "awg", "material": "aluminium"}).json()
    assert {c["size_system"] for c in awg_al["conductors"]} == {"awg"}
    assert "4/0 AWG" in {c["size_label"] for c in awg_al["conductors"]}


def test_length_in_feet_gives_the_same_resistance_as_in_metres(client):
    by_feet = client.post(RESISTANCE, json={"size": "2.5 mm^2", "length": "100 ft"}).json()
    by_metres = client.post(RESISTANCE, json={"size": "2.5 mm^2", "length": 30.48}).json()
    assert by_feet["loop_ohm"] == pytest.approx(by_metres["loop_ohm"], rel=1e-12)
    # IEC 60228:2004, Table 2: 2.5 mm² class 2 copper, 7.41 ohm/km at 20 °C
    assert by_metres["one_way_ohm"] == pytest.approx(7.41e-3 * 30.48, rel=1e-12)


def test_resistance_answer_shows_steps_sources_and_cautions(client):
    body = client.post(RESISTANCE, json={"size": "12 AWG", "length": "50 ft", "conductor_temperature": "75 degC"}).json()
    # NEC Chapter 9, Table 8: 12 AWG stranded uncoated copper 1.98 ohm/kft at 75 °C
    assert body["one_way_ohm"] == pytest.approx(1.98 * 0.050, rel=1e-9)
    notes = body["notes"]
    assert notes["steps"] and notes["assumptions"] and notes["cautions"]
    assert "nec-ch9-table8" in {s["table_id"] for s in notes["sources"]}


@pytest.mark.parametrize(
    ("body", "status", "pointer"),
    [
        ({"size": "2.5 mm^2", "length": -3}, 422, "/length"),
        ({"size": "2.5 mm^2", "length": 0}, 422, "/length"),
        ({"size": "2.5 mm^2", "length": "-3 m"}, 422, "/length"),
        ({"size": "2.5 mm^2", "length": "30 kg"}, 422, "/length"),
        ({"size": "2.5 mm^2", "length": "NaN"}, 422, "/length"),
        ({"size": "3 mm^2", "length": "30 m"}, 422, "/size"),
        ({"size": "2.5 mm^2", "length": "30 m", "colour": "grey"}, 400, "/colour"),
        ({"length": "30 m"}, 400, "/size"),
        ({"size": "2.5 mm^2", "length": True}, 400, "/length"),
        ({"size": "2.5 mm^2", "length": "30 m", "material": "gold"}, 400, "/material"),
        ({"size": "2.5 mm^2", "length": "30 m", "conductor_temperature": "30 V"}, 422, "/conductor_temperature"),
    ],
)
def test_bad_input_gets_problem_json_naming_the_field(client, body, status, pointer):
    found = problem(client.post(RESISTANCE, json=body), status)
    assert pointer in pointers(found), found


def test_several_bad_fields_are_reported_at_once(client):
    found = problem(client.post(RESISTANCE, json={"size": "2.5 m", "length": "30 kg"}), 422)
    assert set(pointers(found)) == {"/size", "/length"}


@pytest.mark.parametrize("token", [b"NaN", b"Infinity", b"-Infinity", b"1e999"])
def test_non_finite_json_numbers_are_refused_naming_the_field(client, token):
    raw = b'{"size": "2.5 mm^2", "length": ' + token + b"}"
    response = client.post(RESISTANCE, content=raw, headers={"content-type": "application/json"})
    assert response.status_code in (400, 422)
    assert "/length" in pointers(problem(response, response.status_code))


def test_malformed_json_is_400(client):
    problem(client.post(RESISTANCE, content=b'{"size": ', headers={"content-type": "application/json"}), 400)


def test_oversize_body_is_413(client):
    raw = b'{"size": "2.5 mm^2", "length": "30 m", "pad": "' + b"x" * 1_100_000 + b'"}'
    problem(client.post(RESISTANCE, content=raw, headers={"content-type": "application/json"}), 413)


def test_wrong_content_type_is_415(client):
    problem(client.post(RESISTANCE, content=b"size=2.5", headers={"content-type": "application/x-www-form-urlencoded"}), 415)


def test_unknown_route_and_method_are_problem_json(client):
    problem(client.get("/v1/no-such-thing"), 404)
    problem(client.delete(RESISTANCE), 405)


def test_request_id_is_echoed_or_generated(client):
    assert client.get("/healthz", headers={"x-request-id": "quote-2291.a"}).headers["x-request-id"] == "quote-2291.a"
    generated = client.get("/healthz", headers={"x-request-id": "bad id with spaces"}).headers["x-request-id"]
    assert generated != "bad id with spaces" and len(generated) == 32


def test_one_structured_log_line_per_request_without_the_body(client):
    with capture_logs() as logs:
        client.post(RESISTANCE, json={"size": "2.5 mm^2", "length": "30 m"}, headers={"x-request-id": "hall-7"})
    lines = [entry for entry in logs if entry.get("event") == "request"]
    assert len(lines) == 1
    line = lines[0]
    assert (line["method"], line["route"], line["status"], line["log_level"]) == ("POST", RESISTANCE, 200, "info")
    assert line["request_id"] == "hall-7" and line["duration_ms"] >= 0
    assert "2.5 mm^2" not in repr(line)


def test_an_unexpected_defect_is_a_500_problem_without_internals(monkeypatch, client):
    import service.api.routes.v1.conductors as route

    def broken(*_args, **_kwargs):
        raise RuntimeError("/secret/path.py exploded")

    monkeypatch.setattr(route, "run_resistance", broken)
    with capture_logs():
        body = problem(client.post(RESISTANCE, json={"size": "2.5 mm^2", "length": "30 m"}), 500)
    assert "secret" not in body["detail"] and "exploded" not in repr(body)


@pytest.mark.parametrize(
    ("field", "value"),
    [("conductor_class", "2"), ("conductor_class", True), ("material", 1)],
)
def test_values_that_fit_only_by_coercion_are_refused(client, field, value):
    # The contract says integer / enum of strings: "2", true and 1 are not those, though a lax decoder would take them.
    body = {"size": "2.5 mm^2", "length": "30 m", field: value}
    assert f"/{field}" in pointers(problem(client.post(RESISTANCE, json=body), 400))


def test_an_integral_number_written_with_a_point_is_an_integer(client):
    # JSON Schema: 2.0 is an integer (the contract's conductor_class is an integer enum).
    assert client.post(RESISTANCE, json={"size": "2.5 mm^2", "length": "30 m", "conductor_class": 2.0}).status_code == 200


@pytest.mark.parametrize(("raw", "where"), [
    # RFC 8259 §4: names within an object SHOULD be unique; a repeated one is refused, not last-one-wins
    (b'{"size": "2.5 mm^2", "length": "30 m", "length": "3 m"}', "/length"),
    (b'{"size": "2.5 mm^2", "size": "2.5 mm^2", "length": "30 m"}', "/size"),
])
def test_a_key_given_twice_is_a_400_naming_it(client, raw, where):
    found = problem(client.post(RESISTANCE, content=raw, headers={"content-type": "application/json"}), 400)
    assert pointers(found) == [where] and "duplicate key" in found["detail"]


def test_a_key_repeated_inside_a_nested_object_is_named_by_its_full_pointer(client):
    # RFC 6901: the pointer of the repeated key, inside the second lead of the chain
    socket = '{"loop_impedance": {"resistance": "0.45 ohm"}, "earth_loop_impedance": {"resistance": "0.7 ohm"}}'
    lead = '{"length": "10 m", "size": "1.5 mm^2"}'
    twice = '{"length": "10 m", "size": "1.5 mm^2", "length": "20 m"}'
    raw = ('{"supply": ' + socket + ', "leads": [' + lead + ", " + twice + "]}").encode()
    chains = "/v1/lead-chains/analyse"
    assert client.post(chains, content=raw.replace(b', "length": "20 m"', b""),
                       headers={"content-type": "application/json"}).status_code == 200
    found = problem(client.post(chains, content=raw, headers={"content-type": "application/json"}), 400)
    assert pointers(found) == ["/leads/1/length"]
