"""uvicorn's h11 protocol with two refusals it lacks: a header-read timeout and ambiguous message framing.

uvicorn times out a kept-alive connection only between requests and never while a request line and headers
arrive, so a client that trickles header bytes holds its connection for ever (measured: 50 such connections
stayed open past 60 s). Here a timer runs from the connection's start, and from the first byte of each later
request, until h11 has the whole request line and header block; past it the connection gets 408 (or, when not
one byte has arrived, is simply closed) and is closed. The body has its own timeout in the app.

h11 accepts a request with both Content-Length and Transfer-Encoding (it goes by Transfer-Encoding) and keeps
the connection open, which is how requests are smuggled past a proxy that goes by Content-Length. RFC 9112,
section 6.3, item 3, lets a server refuse such a message or close after it: it is refused here with 400 and the
connection closed, so nothing sent after it in the same packet is answered.

It also caps connections and requests in progress as uvicorn's limit_concurrency does, but answers the 503 as
problem+json with Retry-After (a probe shares the cap).

Handed to uvicorn as ``functools.partial(HardenedH11Protocol, header_timeout_s=..., max_connections=...)`` in service/__main__.py
(a partial of a module-level class pickles, so worker processes get it too). Nothing here depends on the app.
"""

from __future__ import annotations

import asyncio
import json
from typing import Any

import h11
from uvicorn.protocols.http.h11_impl import H11Protocol

from service.api.headers import BASE_HEADERS
from service.api.problems import PROBLEM_BASE

# h11's own default, which uvicorn also uses when no limit is configured.
_DEFAULT_MAX_INCOMPLETE_EVENT_SIZE = 16 * 1024


class FramingStrictConnection(h11.Connection):
    """An h11 server connection that refuses a request carrying both Content-Length and Transfer-Encoding."""

    def next_event(self) -> Any:
        event = super().next_event()
        if isinstance(event, h11.Request):
            names = {name for name, _ in event.headers}  # h11 gives header names lower-cased
            if b"content-length" in names and b"transfer-encoding" in names:
                # uvicorn answers a RemoteProtocolError with 400 and "Connection: close", then closes.
                raise h11.RemoteProtocolError("Content-Length together with Transfer-Encoding (RFC 9112, 6.3)", 400)
        return event


def _problem(status: int, slug: str, title: str, detail: str) -> tuple[list[tuple[bytes, bytes]], bytes]:
    """Headers and body of a problem+json answer given before the app is reached, closing the connection."""
    body = json.dumps({"type": PROBLEM_BASE + slug, "title": title, "status": status, "detail": detail}).encode()
    headers = [(b"content-type", b"application/problem+json"), (b"content-length", str(len(body)).encode()),
               (b"connection", b"close"), *BASE_HEADERS]
    return headers, body


def _timeout_response(header_timeout_s: float) -> bytes:
    headers, body = _problem(408, "header-timeout", "Request Timeout",
                             f"The request line and headers did not arrive within {header_timeout_s:g} s.")
    head = b"".join(name + b": " + value + b"\r\n" for name, value in headers)
    return b"HTTP/1.1 408 Request Timeout\r\n" + head + b"\r\n" + body


_BUSY_HEADERS, _BUSY_BODY = _problem(503, "server-busy", "Service Unavailable",
                                     "The server has as many connections or requests as it takes; retry later.")


async def _server_busy(scope: Any, receive: Any, send: Any) -> None:
    await send({"type": "http.response.start", "status": 503, "headers": [*_BUSY_HEADERS, (b"retry-after", b"1")]})
    await send({"type": "http.response.body", "body": _BUSY_BODY, "more_body": False})


class HardenedH11Protocol(H11Protocol):
    def __init__(self, *args: Any, header_timeout_s: float, max_connections: int, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        # uvicorn's own limit_concurrency answers text/plain; this cap is the same rule with a problem+json 503.
        self.limit_concurrency = None
        self._max_connections = max_connections
        self.app = self._app_within_cap
        limit = self.config.h11_max_incomplete_event_size
        self.conn = FramingStrictConnection(h11.SERVER, _DEFAULT_MAX_INCOMPLETE_EVENT_SIZE if limit is None else limit)
        self._header_timeout_s = header_timeout_s
        self._header_timer: asyncio.TimerHandle | None = None

    async def _app_within_cap(self, scope: Any, receive: Any, send: Any) -> None:
        # Runs as the request's task, which self.tasks already holds: "> cap" is uvicorn's ">= cap" of the others.
        if len(self.connections) >= self._max_connections or len(self.tasks) > self._max_connections:
            self.logger.warning("Exceeded concurrency limit.")
            await _server_busy(scope, receive, send)
        else:
            await self.config.loaded_app(scope, receive, send)

    def connection_made(self, transport: asyncio.Transport) -> None:  # type: ignore[override]
        super().connection_made(transport)
        self._arm_header_timer()

    def data_received(self, data: bytes) -> None:
        if self._header_timer is None and self.conn.their_state is h11.IDLE:
            self._arm_header_timer()  # the first bytes of the next request on a kept-alive connection
        super().data_received(data)
        if self.conn.their_state is not h11.IDLE:
            self._cancel_header_timer()  # the request line and headers are in (or the connection is done)

    def connection_lost(self, exc: Exception | None) -> None:
        self._cancel_header_timer()
        super().connection_lost(exc)

    def _arm_header_timer(self) -> None:
        self._header_timer = self.loop.call_later(self._header_timeout_s, self._header_timed_out)

    def _cancel_header_timer(self) -> None:
        if self._header_timer is not None:
            self._header_timer.cancel()
            self._header_timer = None

    def _header_timed_out(self) -> None:
        self._header_timer = None
        if self.transport.is_closing() or self.conn.their_state is not h11.IDLE:
            return
        if self.conn.trailing_data[0]:  # part of a request arrived: say why it is cut off
            self.logger.warning("Request headers not received within %g s.", self._header_timeout_s)
            self.transport.write(_timeout_response(self._header_timeout_s))
        self.transport.close()
