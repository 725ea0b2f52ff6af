"""gzip for answers of 1 KiB or more, when the client accepts it (RFC 9110, sections 8.4 and 12.5.3).

litestar's CompressionConfig was not used: it compresses whenever "gzip" appears anywhere in Accept-Encoding
(``gzip;q=0``, which refuses gzip, included), sends ``Vary: Accept-Encoding`` only on the answers it
compressed (a cache then keeps a small identity answer for clients that asked for gzip: harmless, but the
validators' 304 would lack it), and runs inside routing, so it never sees the 404/405 and access-guard answers.
This one wraps the whole app, so every answer says ``Vary: Accept-Encoding``.  A body under the threshold
(a probe, most problems, a short result) is sent as it is: compressing it costs more than the bytes it saves.
Large bodies are compressed in a thread (zlib releases the GIL), so a multi-megabyte network answer does not
hold up the event loop and the probes behind it.
"""

from __future__ import annotations

import asyncio
import gzip
from collections.abc import Callable

from litestar.types import ASGIApp, Message, Receive, Scope, Send

GZIP_MIN_BYTES = 1024
"""Smallest body compressed: below about 1 KiB a JSON answer gains a few hundred bytes at most."""
GZIP_LEVEL = 6
"""zlib's default: level 9 took about twice the time for 2-3 % fewer bytes on the contract's JSON."""
GZIP_IN_THREAD_BYTES = 262_144
"""From this size on, compression runs in a worker thread rather than on the event loop."""
_SKIPPED_STATUSES = frozenset({204, 304})


def accepts_gzip(field_values: list[str]) -> bool:
    """Whether Accept-Encoding admits gzip: listed (or ``x-gzip``, or ``*`` when gzip is not) with q above 0."""
    gzip_q: float | None = None
    any_q: float | None = None
    for part in ",".join(field_values).split(","):
        name, *params = part.split(";")
        name = name.strip().lower()
        q = 1.0
        for param in params:
            key, _, value = param.partition("=")
            if key.strip().lower() == "q":
                try:
                    q = float(value.strip())
                except ValueError:
                    q = 0.0
        if name in ("gzip", "x-gzip"):
            gzip_q = q if gzip_q is None else max(gzip_q, q)
        elif name == "*":
            any_q = q
    chosen = gzip_q if gzip_q is not None else any_q
    return chosen is not None and chosen > 0


def _with_vary(headers: list[tuple[bytes, bytes]]) -> list[tuple[bytes, bytes]]:
    vary = [v.decode("latin-1").lower() for k, v in headers if k.lower() == b"vary"]
    fields = {f.strip() for value in vary for f in value.split(",")}
    if "accept-encoding" in fields or "*" in fields:
        return headers
    return [*headers, (b"vary", b"Accept-Encoding")]


def compress(body: bytes) -> bytes:
    return gzip.compress(body, compresslevel=GZIP_LEVEL, mtime=0)  # mtime 0: the same body, the same bytes


GZIP_CACHE_ENTRIES = 256
"""Compressed reference answers kept: they are a few hundred distinct bodies at most (every table, the lists,
the conductor filters, the contract), so each is compressed once, not per request (the table list took 4.5 ms
and the contract's JSON about ten times that)."""


def gzip_middleware(app: ASGIApp, cacheable: Callable[[str], bool] = lambda _path: False) -> ASGIApp:
    """``cacheable(path)``: whether that path's 200 answers are reference data, whose compressed bytes are kept
    (keyed on the body itself, so a changed body is compressed anew)."""
    cache: dict[bytes, bytes] = {}

    async def packed(body: bytes, keep: bool) -> bytes:
        if keep and (hit := cache.get(body)) is not None:
            return hit
        out = await asyncio.to_thread(compress, body) if len(body) >= GZIP_IN_THREAD_BYTES else compress(body)
        if keep and len(cache) < GZIP_CACHE_ENTRIES:
            cache[body] = out
        return out

    async def middleware(scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http":
            await app(scope, receive, send)
            return
        wanted = accepts_gzip([v.decode("latin-1") for k, v in scope.get("headers", ()) if k.lower() == b"accept-encoding"])
        held: Message | None = None
        chunks: list[bytes] = []

        async def send_compressed(message: Message) -> None:
            nonlocal held
            if message["type"] == "http.response.start":
                headers = _with_vary(list(message.get("headers", [])))
                message = {**message, "headers": headers}
                already = any(k.lower() == b"content-encoding" for k, _ in headers)
                if wanted and not already and message["status"] not in _SKIPPED_STATUSES:
                    held = message  # until the body is complete: its size decides
                    return
            elif message["type"] == "http.response.body" and held is not None:
                chunks.append(message.get("body", b""))
                if message.get("more_body", False):
                    return
                start, held = held, None
                body = b"".join(chunks)
                if len(body) >= GZIP_MIN_BYTES:
                    body = await packed(body, start["status"] == 200 and cacheable(scope["path"]))
                    headers = [(k, v) for k, v in start["headers"] if k.lower() != b"content-length"]
                    start = {**start, "headers": [*headers, (b"content-encoding", b"gzip"),
                                                  (b"content-length", str(len(body)).encode("ascii"))]}
                await send(start)
                message = {"type": "http.response.body", "body": body, "more_body": False}
            await send(message)

        await app(scope, receive, send_compressed)

    return middleware
