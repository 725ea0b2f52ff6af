"""Reference answers a client may cache: ETag, If-None-Match and Cache-Control; HEAD wherever GET works.

The reference GETs (``/v1/meta``, ``/v1/conductors``, ``/v1/tables``, ``/v1/tables/{table_id}`` and the
contract under ``/schema``) change only when the packaged data or the service does, so their ETag is derived
from the data version: the digest of the tables' manifest (``MANIFEST.sha256``, which start-up checks every
table file against) and the service and API versions.  The tag is weak (``W/"..."``): a gzip-compressed and
an identity answer are the same representation to a client, and RFC 9110 section 8.8.1 gives one strong tag
to one byte sequence only.  ``If-None-Match`` is compared the weak way (RFC 9110 section 13.1.2), lists and
``*`` included, and a match is a 304 without a body.  The 304 is decided on the answer the route gave, so a
caller the API keys refuse still gets the 401, never a 304.

Calculation answers are not cached at all (``Cache-Control: no-store`` from ``headers.py``): they depend on
the request body.
"""

from __future__ import annotations

import hashlib
import re
from functools import lru_cache
from importlib import resources

import msgspec
from litestar.types import ASGIApp, Message, Receive, Scope, Send

from service import API_VERSION, __version__
from service.core.data.digests import MANIFEST_NAME

REFERENCE_MAX_AGE_S = 300
"""How long a client may use a reference answer without asking again (Cache-Control max-age). The data only
change with a new deployment; five minutes bounds how long a client can miss one, and after that the ETag
makes asking again a 304 without a body."""

_REFERENCE_PATHS = frozenset({"/v1/meta", "/v1/conductors", "/v1/tables", "/schema"})
_REFERENCE_PREFIXES = ("/v1/tables/", "/schema/")
# A 304 carries the validators and caching headers of the 200 it stands for, not its representation metadata
# (RFC 9110, section 15.4.5).
_NOT_FOR_304 = frozenset({b"content-type", b"content-length", b"content-encoding", b"content-language"})
_ENTITY_TAG = re.compile(r'(?:W/)?"([^"]*)"')


def is_reference_path(path: str) -> bool:
    return path in _REFERENCE_PATHS or path.startswith(_REFERENCE_PREFIXES)


@lru_cache(maxsize=1)
def data_version() -> str:
    """The packaged tables' manifest digest with the service and API versions: what a reference answer depends on."""
    manifest = (resources.files("service.core.data") / MANIFEST_NAME).read_bytes()
    versions = f"\nservice {__version__}\napi {API_VERSION}\n".encode("ascii")
    return hashlib.sha256(manifest + versions).hexdigest()[:32]


def entity_tag() -> str:
    return f'W/"{data_version()}"'


def none_match(field_values: list[str], opaque_tag: str) -> bool:
    """Whether If-None-Match (every line of it) matches: ``*``, or a listed tag equal by weak comparison."""
    for value in field_values:
        if value.strip() == "*" or opaque_tag in _ENTITY_TAG.findall(value):
            return True
    return False


def _headers_named(scope: Scope, name: bytes) -> list[str]:
    return [v.decode("latin-1") for k, v in scope.get("headers", ()) if k.lower() == name]


def _without(headers: list[tuple[bytes, bytes]], names: frozenset[bytes]) -> list[tuple[bytes, bytes]]:
    return [(k, v) for k, v in headers if k.lower() not in names]


def reference_caching_middleware(app: ASGIApp) -> ASGIApp:
    """ETag and Cache-Control on the 200 answers of the reference GETs, and 304 when If-None-Match matches.
    The tag is read on first use (data_version is cached): start-up has checked the manifest by then."""
    replaced = frozenset({b"etag", b"cache-control"})
    cache_control = f"max-age={REFERENCE_MAX_AGE_S}".encode("ascii")

    async def middleware(scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http" or scope["method"] != "GET" or not is_reference_path(scope["path"]):
            await app(scope, receive, send)
            return
        added = [(b"etag", entity_tag().encode("ascii")), (b"cache-control", cache_control)]
        matched = none_match(_headers_named(scope, b"if-none-match"), data_version())
        not_modified = False

        async def send_with_validators(message: Message) -> None:
            nonlocal not_modified
            if message["type"] == "http.response.start" and message["status"] == 200:
                headers = [*_without(list(message.get("headers", [])), replaced), *added]
                if matched:
                    not_modified = True
                    message = {"type": "http.response.start", "status": 304, "headers": _without(headers, _NOT_FOR_304)}
                else:
                    message = {**message, "headers": headers}
            elif message["type"] == "http.response.body" and not_modified:
                if message.get("more_body", False):
                    return
                message = {"type": "http.response.body", "body": b"", "more_body": False}
            await send(message)

        await app(scope, receive, send_with_validators)

    return middleware


def head_as_get_middleware(app: ASGIApp) -> ASGIApp:
    """HEAD wherever GET works (probes, reference data, /schema): the GET's status and headers, no body.

    The app sees a GET (litestar routes HEAD only to handlers that declare it); the server's own scope keeps
    HEAD, and the request's log line says HEAD.  Content-Length stays the GET's, as RFC 9110 section 9.3.2 allows.
    """

    async def middleware(scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http" or scope["method"] != "HEAD":
            await app(scope, receive, send)
            return

        async def send_without_body(message: Message) -> None:
            if message["type"] == "http.response.body":
                if message.get("more_body", False):
                    return
                message = {"type": "http.response.body", "body": b"", "more_body": False}
            await send(message)

        as_get = {**scope, "method": "GET"}
        try:
            await app(as_get, receive, send_without_body)
        finally:  # the route litestar matched, for the request's log line
            if "path_template" in as_get:
                scope["path_template"] = as_get["path_template"]

    return middleware


def schema_not_found_as_problem(app: ASGIApp, problem: type[msgspec.Struct], problem_base: str) -> ASGIApp:
    """An unknown path under /schema/ as a 404 problem+json: litestar's contract router answers it with an HTML
    page of its own. The route is behind the access guard like every other, so with keys on a caller without
    one still gets the 401 first."""

    async def middleware(scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http" or not scope["path"].startswith("/schema/"):
            await app(scope, receive, send)
            return
        rewritten = False

        async def send_problem(message: Message) -> None:
            nonlocal rewritten
            if message["type"] == "http.response.start" and message["status"] == 404:
                types = [v for k, v in message.get("headers", []) if k.lower() == b"content-type"]
                if types and types[0].startswith(b"text/html"):
                    rewritten = True
                    body = msgspec.json.encode(problem(
                        type=problem_base + "not-found", title="No such resource", status=404,
                        detail="No such document under /schema/: the contract is /schema/openapi.json or "
                               "/schema/openapi.yaml.", instance=scope["path"][:200]))
                    headers = [*_without(list(message.get("headers", [])), frozenset({b"content-type", b"content-length"})),
                               (b"content-type", b"application/problem+json"),
                               (b"content-length", str(len(body)).encode("ascii"))]
                    await send({"type": "http.response.start", "status": 404, "headers": headers})
                    await send({"type": "http.response.body", "body": body, "more_body": False})
                    return
            if rewritten and message["type"] == "http.response.body":
                return  # the HTML page's body
            await send(message)

        await app(scope, receive, send_problem)

    return middleware
