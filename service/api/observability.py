"""Structured logging: one JSON line per request, with a request id.

The request id comes from the client's X-Request-ID header when it is a sane
token (so a caller can trace a call across systems) or is generated, and is
echoed in the response.  Bodies are never logged.
"""

from __future__ import annotations

import logging
import re
import sys
import time
import uuid

import structlog
from litestar.types import ASGIApp, Message, Receive, Scope, Send

from service.api.settings import Settings

REQUEST_ID_HEADER = b"x-request-id"
_SAFE_REQUEST_ID = re.compile(rb"^[A-Za-z0-9._:-]{1,128}$")
_QUIET_PATHS = ("/healthz", "/readyz")


def _renderer(settings: Settings):
    return structlog.processors.JSONRenderer() if settings.log_format == "json" else structlog.dev.ConsoleRenderer(colors=False)


_SHARED_PROCESSORS = (
    structlog.contextvars.merge_contextvars,
    structlog.processors.add_log_level,
    structlog.processors.TimeStamper(fmt="iso", utc=True),
)


MAX_LOGGED_TRACEBACK = 4096
"""Characters of a logged traceback kept: its start (where it entered our code) and its end (what was raised).
A RecursionError's traceback ran to 182 KB a request, which let a 1 KB body write a log line of 182 KB."""
_TRACEBACK_HEAD = 1024


def cap_traceback(_logger: object, _method: str, event_dict: dict) -> dict:
    """Shorten the formatted ``exception`` of a log line to MAX_LOGGED_TRACEBACK characters, saying so."""
    text = event_dict.get("exception")
    if isinstance(text, str) and len(text) > MAX_LOGGED_TRACEBACK:
        tail = MAX_LOGGED_TRACEBACK - _TRACEBACK_HEAD
        event_dict["exception"] = (f"{text[:_TRACEBACK_HEAD]}\n[... {len(text) - MAX_LOGGED_TRACEBACK} characters "
                                   f"of traceback left out ...]\n{text[-tail:]}")
    return event_dict


def configure_logging(settings: Settings) -> None:
    structlog.configure(
        processors=[*_SHARED_PROCESSORS, structlog.processors.format_exc_info, cap_traceback, _renderer(settings)],
        wrapper_class=structlog.make_filtering_bound_logger(getattr(logging, settings.log_level.upper())),
        logger_factory=structlog.PrintLoggerFactory(sys.stdout),
        cache_logger_on_first_use=False,
    )


def _request_id(scope: Scope) -> str:
    for name, value in scope.get("headers", ()):
        if name == REQUEST_ID_HEADER and _SAFE_REQUEST_ID.match(value):
            return value.decode("ascii")
    return uuid.uuid4().hex


def request_logging_middleware(app: ASGIApp) -> ASGIApp:
    """ASGI middleware: request id in, request id out, one log line per request."""

    async def middleware(scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http":
            await app(scope, receive, send)
            return
        request_id = _request_id(scope)
        structlog.contextvars.clear_contextvars()
        structlog.contextvars.bind_contextvars(request_id=request_id)
        started = time.perf_counter()
        status = 500

        async def send_with_id(message: Message) -> None:
            nonlocal status
            if message["type"] == "http.response.start":
                status = message["status"]
                message["headers"] = [*message.get("headers", []), (REQUEST_ID_HEADER, request_id.encode("ascii"))]
            await send(message)

        try:
            await app(scope, receive, send_with_id)
        finally:
            path = scope.get("path", "")
            level = "debug" if path in _QUIET_PATHS and status < 400 else "info"
            getattr(structlog.get_logger("ampline.access"), level)(
                "request",
                request_id=request_id,  # explicit too, so processors that skip contextvars keep it
                method=scope.get("method"),
                # The matched route's template only: a raw path is the client's text (an unknown URL may carry a
                # pasted API key or be kilobytes long), so unmatched paths are not written out.
                route=scope.get("path_template") or (path if path in _QUIET_PATHS else "(no route)"),
                status=status,
                duration_ms=round((time.perf_counter() - started) * 1000, 3),
            )

    return middleware


def server_log_config(settings: Settings) -> dict:
    """logging.dictConfig for the server's own loggers (start-up, shutdown, errors), in our format.

    uvicorn's lines then come out as the same JSON objects (or console lines) as
    ours, so a log collector sees one format on stdout.
    """
    return {
        "version": 1,
        "disable_existing_loggers": False,
        "formatters": {
            "ampline": {
                "()": structlog.stdlib.ProcessorFormatter,
                "processors": [structlog.stdlib.ProcessorFormatter.remove_processors_meta, _renderer(settings)],
                "foreign_pre_chain": [*_SHARED_PROCESSORS, structlog.stdlib.add_logger_name],
            }
        },
        "handlers": {"stdout": {"class": "logging.StreamHandler", "formatter": "ampline", "stream": "ext://sys.stdout"}},
        "loggers": {
            name: {"handlers": ["stdout"], "level": settings.log_level.upper(), "propagate": False}
            for name in ("uvicorn", "uvicorn.error", "uvicorn.access")
        },
    }
