"""Start the service: ``python -m service`` (settings from AMPLINE_* variables).

uvicorn is the server: on the 2-core target both uvicorn and granian serve a
bare endpoint at about the same rate, and uvicorn's behaviour is the one we
need and know: SIGTERM drains in-flight requests for a bounded time
(timeout_graceful_shutdown), --workers forks a supervised process pool, and it
runs the ASGI lifespan so start-up table validation fails fast.
"""

from __future__ import annotations

import functools
import re
import sys

import structlog
import uvicorn

from service.api.observability import configure_logging, server_log_config
from service.api.server_protocol import HardenedH11Protocol
from service.api.settings import Settings
from service.core.errors import DataTableError


def _refuse_defective_tables(settings: Settings) -> None:
    """Exit 1 with one log line naming the file when a data table is defective (not a traceback per worker)."""
    try:
        from service.api.app import validate_data  # importing the routes builds their examples from the tables

        validate_data()
    except DataTableError as exc:
        configure_logging(settings)
        structlog.get_logger().critical("startup_refused", reason="defective data table", detail=str(exc))
        sys.exit(1)


_SETTING_NAME = re.compile(r"AMPLINE_[A-Z0-9_]+")


def _settings_or_refuse() -> Settings:
    """The settings from the environment; a refused one exits 1 with one ``startup_refused`` log line naming the
    settings concerned (not a traceback): a non-loopback AMPLINE_HOST with keys off, a value out of range..."""
    try:
        return Settings.from_env()
    except ValueError as exc:
        configure_logging(Settings())  # the defaults: the refused settings may be the log format itself
        structlog.get_logger().critical("startup_refused", reason="invalid setting",
                                        settings=list(dict.fromkeys(_SETTING_NAME.findall(str(exc)))),
                                        detail=str(exc))
        sys.exit(1)


def main() -> None:
    settings = _settings_or_refuse()
    _refuse_defective_tables(settings)
    uvicorn.run(
        "service.api.app:create_app",
        factory=True,
        host=settings.host,
        port=settings.port,
        workers=settings.workers,
        log_level=settings.log_level.lower(),
        log_config=server_log_config(settings),
        access_log=False,  # our own middleware logs one structured line per request
        timeout_graceful_shutdown=settings.graceful_shutdown_s,
        server_header=False,  # no version banner
        # h11, not httptools: httptools buffers a request's header block without limit (measured: four
        # connections sending 50 MB header lines added 190 MB to the process); h11 refuses past this size.
        # Our subclass adds a header-read timeout and refuses Content-Length with Transfer-Encoding.
        # Our subclass also caps connections (503 past AMPLINE_MAX_CONNECTIONS, uvicorn's limit_concurrency rule).
        http=functools.partial(HardenedH11Protocol, header_timeout_s=settings.header_timeout_s,  # type: ignore[arg-type]
                               max_connections=settings.max_connections),
        h11_max_incomplete_event_size=settings.max_header_bytes,
        # X-Forwarded-For is believed only from the proxies the operator lists (none by default): uvicorn would
        # otherwise trust loopback, and any local caller could rotate the header past the rate limits.
        proxy_headers=bool(settings.forwarded_allow_ips),
        forwarded_allow_ips=settings.forwarded_allow_ips or [],
    )


if __name__ == "__main__":
    main()
