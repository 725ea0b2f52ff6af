"""issue 16, items 6 and 7: reference data as a resource, validators and caching, HEAD, gzip, and the small HTTP
conventions (unknown query parameters, a byte-order mark, unknown /schema/ paths), through the in-process app
and, where the server itself takes part (HEAD, compression), over a real one."""

from __future__ import annotations

import gzip
import hashlib
import json

import httpx
import pytest
from litestar.testing import TestClient
from structlog.testing import capture_logs

from service import API_VERSION, __version__
from service.api import reference
from service.api.app import create_app
from service.api.compression import GZIP_MIN_BYTES, accepts_gzip
from service.api.keys import hash_key
from service.api.reference import REFERENCE_MAX_AGE_S, data_version, none_match
from service.api.settings import Settings
from service.core.data import load_tables
from service.core.data.digests import MANIFEST_NAME

PROBLEM = "application/problem+json"
IDENTITY = {"accept-encoding": "identity"}
KEY = "reference-reader-key-5c81e0"
REFERENCE_GETS = ["/v1/meta", "/v1/conductors", "/v1/conductors?material=copper", "/v1/tables",
                  "/v1/tables/iec60228-table2", "/schema/openapi.json", "/schema/openapi.yaml"]
RESISTANCE = {"size": "2.5 mm^2", "length": "25 m"}


@pytest.fixture(scope="module")
def client():
    with TestClient(create_app(Settings())) as c:
        yield c


def keyed() -> TestClient:
    return TestClient(create_app(Settings(api_key_hashes=f"reader={hash_key(KEY)}")), raise_server_exceptions=False)


def problem(response, status: int) -> dict:
    assert response.status_code == status, response.text
    assert response.headers["content-type"].startswith(PROBLEM)
    body = response.json()
    assert body["status"] == status and body["title"] and body["detail"]
    return body


# --------------------------------------------------------------------------- GET /v1/tables, /v1/tables/{id}

def test_the_list_names_every_packaged_table_with_its_source(client):
    answer = client.get("/v1/tables", headers=IDENTITY)
    assert answer.status_code == 200
    listing = answer.json()
    packaged = load_tables()
    assert listing["count"] == len(packaged) == len(listing["tables"])
    assert [t["table_id"] for t in listing["tables"]] == sorted(packaged)
    for entry in listing["tables"]:
        table = packaged[entry["table_id"]]
        assert (entry["standard"], entry["edition"], entry["table"], entry["title"], entry["provenance"],
                entry["verified_against"], entry["row_count"]) == (
            table.standard, table.edition, table.table, table.title, table.provenance, table.verified_against,
            len(table.rows))
        assert entry["href"] == f"/v1/tables/{entry['table_id']}"
    assert listing["data_version"] == data_version()


def test_a_table_reads_as_packaged_and_as_published(client):
    detail = client.get("/v1/tables/iec60228-table2").json()
    table = load_tables()["iec60228-table2"]
    assert detail["columns"] == list(table.columns) and detail["rows"] == [list(r) for r in table.rows]
    assert (detail["standard"], detail["table"], detail["unit"]) == ("IEC 60228", "Table 2", "ohm/km")
    rows = {row[0]: dict(zip(detail["columns"], row)) for row in detail["rows"]}
    # IEC 60228:2004, Table 2 (class 2, maximum resistance at 20 °C, ohm/km): 2.5 mm² plain copper 7.41,
    # 16 mm² aluminium 1.91
    assert rows[2.5]["copper_plain"] == 7.41 and rows[16]["aluminium"] == 1.91
    ampacity = client.get("/v1/tables/nec-table310-16").json()
    by_size = {row[0]: dict(zip(ampacity["columns"], row)) for row in ampacity["rows"]}
    # NFPA 70-2023 (NEC), Table 310.16: 12 AWG copper, 75 °C column, 25 A
    assert by_size["12"]["copper_75"] == 25 and ampacity["unit"] == "A"


def test_every_listed_table_can_be_read(client):
    for entry in client.get("/v1/tables").json()["tables"]:
        detail = client.get(entry["href"]).json()
        assert detail["table_id"] == entry["table_id"] and len(detail["rows"]) == entry["row_count"]


def test_an_unknown_table_is_a_404_problem_naming_it_and_where_the_ids_are(client):
    body = problem(client.get("/v1/tables/iec60228-table9"), 404)
    assert "iec60228-table9" in body["detail"] and "GET /v1/tables" in body["detail"]
    assert body["errors"] == [{"pointer": "", "parameter": "table_id",
                               "message": "no data table 'iec60228-table9' is packaged with this service"}]
    assert "/v1/tables" in body["how_to_fix"]


def test_the_answers_are_built_once_from_what_the_loader_holds(client, monkeypatch):
    first = client.get("/v1/tables/nec-table310-16", headers=IDENTITY).content

    def no_reading(*_args, **_kwargs):
        raise AssertionError("a request re-read the tables")

    monkeypatch.setattr("service.api.routes.v1.tables.load_tables", no_reading)
    monkeypatch.setattr("service.core.data.read_tables", no_reading)
    assert client.get("/v1/tables/nec-table310-16", headers=IDENTITY).content == first
    assert client.get("/v1/tables").status_code == 200


# --------------------------------------------------------------------------- ETag, If-None-Match, Cache-Control

def test_the_etag_is_derived_from_the_manifest_and_the_versions():
    manifest = (reference.resources.files("service.core.data") / MANIFEST_NAME).read_bytes()
    expected = hashlib.sha256(manifest + f"\nservice {__version__}\napi {API_VERSION}\n".encode()).hexdigest()[:32]
    assert data_version() == expected


def test_another_manifest_gives_another_etag(monkeypatch, tmp_path):
    (tmp_path / MANIFEST_NAME).write_bytes(b"0" * 64 + b"  another.json\n")
    before = data_version()
    monkeypatch.setattr(reference.resources, "files", lambda _package: tmp_path)
    reference.data_version.cache_clear()
    try:
        assert data_version() != before
    finally:
        monkeypatch.undo()
        reference.data_version.cache_clear()
    assert data_version() == before


@pytest.mark.parametrize("path", REFERENCE_GETS)
def test_reference_gets_carry_an_etag_and_cache_control_and_answer_304(client, path):
    answer = client.get(path)
    assert answer.status_code == 200
    tag = answer.headers["etag"]
    assert tag == f'W/"{data_version()}"'
    assert answer.headers["cache-control"] == f"max-age={REFERENCE_MAX_AGE_S}"
    opaque = tag.removeprefix("W/")
    # RFC 9110, section 13.1.2: If-None-Match uses the weak comparison, takes a list, and * matches any
    for sent in (tag, opaque, f'"stale", {tag}', "*", f'W/"x" , {opaque}'):
        again = client.get(path, headers={"if-none-match": sent})
        assert again.status_code == 304, sent
        assert again.content == b"" and again.headers["etag"] == tag
        assert again.headers["cache-control"] == f"max-age={REFERENCE_MAX_AGE_S}"
        assert "content-length" not in again.headers or again.headers["content-length"] == "0"
    assert client.get(path, headers={"if-none-match": 'W/"stale", "other"'}).status_code == 200


def test_calculations_probes_and_errors_are_never_cacheable(client):
    answers = [client.post("/v1/conductors/resistance", json=RESISTANCE), client.get("/healthz"),
               client.get("/v1/tables/nope"), client.get("/v1/meta?stale=1")]
    assert [a.status_code for a in answers] == [200, 200, 404, 400]
    for answer in answers:
        assert "etag" not in answer.headers and answer.headers["cache-control"] == "no-store"
    assert client.post("/v1/conductors/resistance", json=RESISTANCE, headers={"if-none-match": "*"}).status_code == 200


def test_a_caller_without_a_key_gets_401_not_304():
    with keyed() as c:
        assert problem(c.get("/v1/tables", headers={"if-none-match": "*"}), 401)
        tag = c.get("/v1/tables", headers={"authorization": f"Bearer {KEY}"}).headers["etag"]
        assert c.get("/v1/tables", headers={"if-none-match": tag}).status_code == 401
        assert c.get("/v1/tables", headers={"if-none-match": tag, "authorization": f"Bearer {KEY}"}).status_code == 304


def test_none_match_follows_rfc_9110():
    assert none_match(['W/"abc"'], "abc") and none_match(['"abc"'], "abc") and none_match(["*"], "abc")
    assert none_match(['"x"', 'W/"y", "abc"'], "abc")  # several field lines make one list
    assert not none_match(['"abcd"', 'W/"ab"', "abc"], "abc")  # a bare token is not an entity tag
    assert not none_match([], "abc")


# --------------------------------------------------------------------------- HEAD

HEAD_PATHS = ["/healthz", "/readyz", "/metrics", *REFERENCE_GETS, "/v1/tables/nope", "/nowhere"]


@pytest.mark.parametrize("path", HEAD_PATHS)
def test_head_answers_as_get_does_without_a_body(client, path):
    for encoding in ("identity", "gzip"):
        got = client.get(path, headers={"accept-encoding": encoding})
        head = client.head(path, headers={"accept-encoding": encoding})
        assert head.status_code == got.status_code != 405
        assert head.content == b""
        for name in ("content-type", "content-length", "content-encoding", "etag", "cache-control", "vary"):
            if name == "content-length" and path == "/metrics":
                continue  # the counters moved between the two requests
            assert head.headers.get(name) == got.headers.get(name), (encoding, name)


@pytest.mark.parametrize(("path", "route"), [("/v1/tables", "/v1/tables"), ("/metrics", "/metrics"),
                                             ("/v1/tables/nec-ch9-table8", "/v1/tables/{table_id}")])
def test_head_is_logged_as_head_with_its_route(client, path, route):
    with capture_logs() as logs:
        client.head(path)
    (line,) = [r for r in logs if r.get("event") == "request"]
    assert line["method"] == "HEAD" and line["status"] == 200 and line["route"] == route


def test_head_on_a_post_only_route_is_405_like_get(client):
    assert client.head("/v1/conductors/resistance").status_code == client.get("/v1/conductors/resistance").status_code == 405


# --------------------------------------------------------------------------- gzip

def test_a_large_answer_is_gzipped_when_accepted(client):
    plain = client.get("/v1/tables", headers=IDENTITY)
    assert len(plain.content) > GZIP_MIN_BYTES and "content-encoding" not in plain.headers
    packed = client.get("/v1/tables", headers={"accept-encoding": "gzip"})
    assert packed.headers["content-encoding"] == "gzip"
    assert int(packed.headers["content-length"]) < len(plain.content) / 2
    assert packed.content == plain.content  # httpx decompressed it: the same JSON
    assert packed.headers["vary"] == plain.headers["vary"] == "Accept-Encoding"


@pytest.mark.parametrize(("accept", "gzipped"), [
    ("gzip", True), ("deflate, gzip;q=0.5", True), ("*", True), ("x-gzip", True), ("GZIP", True),
    ("gzip;q=0", False), ("identity", False), ("br", False), ("*, gzip;q=0", False), ("*;q=0", False),
])
def test_accept_encoding_is_read_with_its_q_values(client, accept, gzipped):
    # RFC 9110, section 12.5.3: q=0 means "not acceptable"; * stands for any coding not listed
    assert accepts_gzip([accept]) is gzipped
    answer = client.get("/v1/meta", headers={"accept-encoding": accept})
    assert (answer.headers.get("content-encoding") == "gzip") is gzipped


def test_small_answers_are_not_compressed_but_still_vary(client):
    for answer in (client.get("/healthz", headers={"accept-encoding": "gzip"}),
                   client.post("/v1/conductors/resistance", json={"size": 1}, headers={"accept-encoding": "gzip"})):
        assert len(answer.content) < GZIP_MIN_BYTES and "content-encoding" not in answer.headers
        assert answer.headers["vary"] == "Accept-Encoding"


def test_a_304_carries_vary_and_no_body_when_gzip_is_accepted(client):
    tag = client.get("/v1/tables").headers["etag"]
    answer = client.get("/v1/tables", headers={"accept-encoding": "gzip", "if-none-match": tag})
    assert answer.status_code == 304 and answer.content == b""
    assert answer.headers["vary"] == "Accept-Encoding" and "content-encoding" not in answer.headers


def test_over_a_real_server_head_and_gzip_keep_the_framing(live_server):
    with httpx.Client(base_url=live_server.base_url, timeout=10) as http:
        got = http.get("/v1/tables", headers={"accept-encoding": "gzip"})
        assert got.status_code == 200 and got.headers["content-encoding"] == "gzip"
        assert got.json()["count"] == len(load_tables())
        head = http.head("/v1/tables", headers={"accept-encoding": "gzip"})
        assert head.status_code == 200 and head.content == b""
        assert head.headers["content-length"] == got.headers["content-length"]
        with http.stream("GET", "/v1/tables/iec60228-table2", headers={"accept-encoding": "gzip"}) as stream:
            packed = b"".join(stream.iter_raw())
        assert len(packed) == int(stream.headers["content-length"])
        assert json.loads(gzip.decompress(packed))["table_id"] == "iec60228-table2"
        assert http.get("/v1/tables", headers={"if-none-match": got.headers["etag"]}).status_code == 304
        assert http.get("/healthz").status_code == 200  # the connection is still in step after a HEAD and a 304


# --------------------------------------------------------------------------- issue 16, item 7

@pytest.mark.parametrize(("method", "path"), [
    ("GET", "/healthz?verbose=1"), ("GET", "/readyz?verbose=1"), ("GET", "/v1/meta?verbose=1"),
    ("GET", "/v1/conductors?material=copper&materal=copper"), ("GET", "/v1/tables?verbose=1"),
    ("GET", "/v1/tables/iec60228-table2?verbose=1"), ("GET", "/schema/openapi.json?verbose=1"),
    ("POST", "/v1/conductors/resistance?verbose=1"), ("POST", "/v1/networks/solve?verbose=1"),
])
def test_an_unknown_query_parameter_is_a_400_naming_it(client, method, path):
    # before issue 16 these were answered as if the parameter had not been sent (a misspelt filter: unfiltered)
    name = path.rsplit("&", 1)[-1].rsplit("?", 1)[-1].split("=")[0]
    body = problem(client.request(method, path, json=RESISTANCE if method == "POST" else None), 400)
    assert body["type"].endswith("/unknown-query-parameter")
    assert body["errors"] == [{"pointer": "", "parameter": name,
                               "message": "unknown query parameter: not accepted (check the spelling against the schema)"}]


def test_declared_query_parameters_still_pass(client):
    assert client.get("/v1/conductors?material=copper&conductor_class=2&size_system=metric").status_code == 200


def test_with_keys_on_an_unknown_query_parameter_without_a_key_is_401_first():
    with keyed() as c:
        assert problem(c.get("/v1/meta?verbose=1"), 401)
        assert problem(c.get("/v1/meta?verbose=1", headers={"authorization": f"Bearer {KEY}"}), 400)


def test_a_byte_order_mark_gets_a_clear_400(client):
    body = problem(client.post("/v1/conductors/resistance", content=b"\xef\xbb\xbf" + json.dumps(RESISTANCE).encode(),
                               headers={"content-type": "application/json"}), 400)
    assert body["detail"] == "the body starts with a UTF-8 byte-order mark; send JSON without it"


@pytest.mark.parametrize("raw", [b'\x01{"size": 1}', b'{"size": x}', b'{"size": "2.5 mm^2"'])
def test_malformed_json_says_so_once(client, raw):
    body = problem(client.post("/v1/conductors/resistance", content=raw, headers={"content-type": "application/json"}),
                   400)
    assert body["detail"].startswith("JSON is malformed: ") and body["detail"].count("JSON is malformed") == 1


@pytest.mark.parametrize("path", ["/schema/nope", "/schema/openapi.xml", "/schema/a/b"])
def test_unknown_schema_paths_are_problem_json(client, path):
    body = problem(client.get(path), 404)
    assert body["type"].endswith("/not-found")
    assert "<html" not in client.get(path).text.lower()


def test_with_keys_on_unknown_schema_paths_are_401_without_a_key_and_404_with_one():
    with keyed() as c:
        for path in ("/schema/nope", "/schema/a/b"):
            problem(c.get(path), 401)
            problem(c.get(path, headers={"authorization": f"Bearer {KEY}"}), 404)


def test_a_reference_answer_is_compressed_once_and_a_calculation_each_time(monkeypatch):
    from service.api import compression

    calls: list[int] = []
    real = compression.compress
    monkeypatch.setattr(compression, "compress", lambda body: calls.append(len(body)) or real(body))
    # a ladder of our own: 12 V across 40 one-ohm resistors in series and a one-ohm load
    rungs = [{"type": "resistor", "id": f"r{i}", "a": f"n{i}", "b": f"n{i + 1}", "resistance": 1} for i in range(40)]
    big_network = {"frequency": 0, "reference_node": "gnd", "elements": [
        {"type": "voltage_source", "id": "v", "pos": "n0", "neg": "gnd", "voltage": 12}, *rungs,
        {"type": "resistor", "id": "load", "a": "n40", "b": "gnd", "resistance": 1}]}
    with TestClient(create_app(Settings())) as c:
        answers = [c.get("/v1/tables", headers={"accept-encoding": "gzip"}) for _ in range(3)]
        assert all(a.headers["content-encoding"] == "gzip" for a in answers) and len(calls) == 1
        assert len({a.content for a in answers}) == 1
        solved = [c.post("/v1/networks/solve", json=big_network, headers={"accept-encoding": "gzip"}) for _ in range(2)]
    assert [s.status_code for s in solved] == [200, 200], solved[0].text
    assert all(s.headers["content-encoding"] == "gzip" for s in solved) and len(calls) == 3


def test_a_browser_app_can_read_the_etag_and_send_it_back():
    origin = "https://quotes.example.org"
    with TestClient(create_app(Settings(cors_allow_origins=origin))) as c:
        answer = c.get("/v1/tables", headers={"origin": origin})
        assert "etag" in answer.headers["access-control-expose-headers"].lower()
        allowed = c.options("/v1/tables", headers={"origin": origin, "access-control-request-method": "GET",
                                                   "access-control-request-headers": "if-none-match"})
        assert allowed.status_code == 204 and "if-none-match" in allowed.headers["access-control-allow-headers"].lower()
