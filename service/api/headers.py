"""Security headers on every response, errors and CORS preflights included.

The service answers JSON only, so the policy is the strictest one: nothing may be loaded, framed or sniffed
from its answers, and no answer is cached (results depend on the request body, and a shared cache keyed on
the URL would hand one caller's result to another).  A header a route set itself is left as it is: the
reference GETs' ``Cache-Control: max-age`` (``reference.py``: the same for every caller, and revalidated by ETag).
Strict-Transport-Security is a setting: TLS ends at the gateway, which knows whether every client uses it.
"""

from __future__ import annotations

from litestar.types import ASGIApp, Message, Receive, Scope, Send

from service.api.settings import Settings

BASE_HEADERS: tuple[tuple[bytes, bytes], ...] = (
    (b"x-content-type-options", b"nosniff"),
    (b"referrer-policy", b"no-referrer"),
    (b"x-frame-options", b"DENY"),
    (b"content-security-policy", b"default-src 'none'; frame-ancestors 'none'"),
    (b"cache-control", b"no-store"),
)


def security_headers_middleware(app: ASGIApp, settings: Settings) -> ASGIApp:
    added = BASE_HEADERS
    if settings.strict_transport_security:
        added = (*added, (b"strict-transport-security", settings.strict_transport_security.encode("latin-1")))

    async def middleware(scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http":
            await app(scope, receive, send)
            return

        async def send_with_headers(message: Message) -> None:
            if message["type"] == "http.response.start":
                headers = list(message.get("headers", []))
                present = {name.lower() for name, _ in headers}
                headers += [(name, value) for name, value in added if name not in present]
                message["headers"] = headers
            await send(message)

        await app(scope, receive, send_with_headers)

    return middleware
