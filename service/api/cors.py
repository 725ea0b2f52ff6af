"""Refused CORS preflights answered as problem+json (the allowed origins: ``cors_config`` in app.py).

litestar's CORS layer answers a refused preflight itself, as ``400 text/plain``
("Disallowed CORS Origin"), outside every exception handler; every other error of
the service is RFC 9457 problem+json, so the refusal is rewritten on its way out.
"""

from __future__ import annotations

import msgspec
from litestar.types import ASGIApp, Message, Receive, Scope, Send

from service.api.problems import PROBLEM_BASE, PROBLEM_MEDIA_TYPE, Problem

_REFUSED_PREFIX = "Disallowed CORS "


def _refusal_body(text: str, path: str) -> bytes:
    refused = text.removeprefix(_REFUSED_PREFIX).lower() if text.startswith(_REFUSED_PREFIX) else "request"
    return msgspec.json.encode(Problem(
        type=PROBLEM_BASE + "cors-preflight-refused", title="CORS preflight refused", status=400,
        detail=f"The CORS preflight was refused; not allowed here: {refused} (the service's allowed origins are "
               "AMPLINE_CORS_ALLOW_ORIGINS).", instance=path))


def cors_refusals_as_problems(app: ASGIApp) -> ASGIApp:
    """Rewrite a refused preflight (an OPTIONS with an Origin answered 400) as problem+json."""

    async def middleware(scope: Scope, receive: Receive, send: Send) -> None:
        is_preflight = scope["type"] == "http" and scope.get("method") == "OPTIONS" and any(
            name == b"origin" for name, _ in scope.get("headers", ()))
        if not is_preflight:
            await app(scope, receive, send)
            return
        start: Message | None = None
        text = bytearray()

        async def rewrite(message: Message) -> None:
            nonlocal start
            if message["type"] == "http.response.start" and message["status"] == 400:
                start = message  # held until the body is complete
                return
            if start is None:
                await send(message)
                return
            text.extend(message.get("body", b""))
            if message.get("more_body", False):
                return
            body = _refusal_body(text.decode("utf-8", "replace"), scope.get("path", ""))
            headers = [(k, v) for k, v in start.get("headers", []) if k.lower() not in (b"content-type", b"content-length")]
            headers += [(b"content-type", PROBLEM_MEDIA_TYPE.encode()), (b"content-length", str(len(body)).encode())]
            await send({**start, "headers": headers})
            await send({"type": "http.response.body", "body": body, "more_body": False})

        await app(scope, receive, rewrite)

    return middleware
