"""Service settings, read from environment variables once, inside create_app."""

from __future__ import annotations

import os
from dataclasses import dataclass, fields
from typing import Mapping

PREFIX = "AMPLINE_"
_BOOLEANS = {"true": True, "1": True, "yes": True, "on": True, "false": False, "0": False, "no": False, "off": False}


@dataclass(frozen=True, slots=True)
class Settings:
    """Every knob of the service. Each field is the env var ``AMPLINE_<NAME>``."""

    host: str = "127.0.0.1"
    """Interface the server binds to."""
    port: int = 8000
    """TCP port the server listens on."""
    workers: int = 1
    """Server worker processes (the service is stateless, so any number works)."""
    log_level: str = "info"
    """debug, info, warning or error."""
    log_format: str = "json"
    """json (one object per line) or console (human-readable)."""
    max_body_bytes: int = 1_048_576
    """Largest accepted request body, in bytes; larger bodies get 413."""
    graceful_shutdown_s: int = 10
    """Seconds in-flight requests get to finish after SIGTERM."""
    max_network_body_bytes: int = 33_554_432
    """Largest accepted body for POST /v1/networks/solve only, in bytes (default 32 MiB; larger
    bodies get 413). A 100,000-node resistor grid in the compact array form is about 7 MB."""
    max_network_elements: int = 500_000
    """Most elements one network may have; each branch of an array element counts as one.
    Past it the request gets 422 before anything is solved."""
    max_network_nodes: int = 200_000
    """Most distinct nodes one network may have, the reference node included.
    Past it the request gets 422 before anything is solved."""
    metrics_enabled: bool = True
    """Serve GET /metrics (Prometheus text format: request counts and latencies by route and status, the
    network solver's iterations and network sizes). ``false`` leaves the route out (404). Accepts
    true/false, 1/0, yes/no, on/off."""

    def __post_init__(self) -> None:
        if self.log_format not in ("json", "console"):
            raise ValueError("AMPLINE_LOG_FORMAT must be 'json' or 'console'")
        if self.log_level.lower() not in ("debug", "info", "warning", "error"):
            raise ValueError("AMPLINE_LOG_LEVEL must be debug, info, warning or error")
        if not 1 <= self.port <= 65535:
            raise ValueError("AMPLINE_PORT must be 1-65535")
        if self.max_body_bytes < 1024 or self.workers < 1 or self.graceful_shutdown_s < 0:
            raise ValueError("AMPLINE_MAX_BODY_BYTES >= 1024, AMPLINE_WORKERS >= 1, AMPLINE_GRACEFUL_SHUTDOWN_S >= 0")
        if self.max_network_body_bytes < 1024 or self.max_network_elements < 1 or self.max_network_nodes < 2:
            raise ValueError(
                "AMPLINE_MAX_NETWORK_BODY_BYTES >= 1024, AMPLINE_MAX_NETWORK_ELEMENTS >= 1, AMPLINE_MAX_NETWORK_NODES >= 2"
            )

    @classmethod
    def from_env(cls, env: Mapping[str, str] | None = None) -> Settings:
        env = os.environ if env is None else env
        values: dict[str, object] = {}
        for f in fields(cls):
            raw = env.get(PREFIX + f.name.upper())
            if raw is None:
                continue
            if f.type == "bool":
                flag = _BOOLEANS.get(raw.strip().lower())
                if flag is None:
                    raise ValueError(f"{PREFIX}{f.name.upper()} must be true or false, got {raw!r}")
                values[f.name] = flag
            elif f.type == "int":
                try:
                    values[f.name] = int(raw)
                except ValueError:
                    raise ValueError(f"{PREFIX}{f.name.upper()} must be a whole number, got {raw!r}") from None
            else:
                values[f.name] = raw
        return cls(**values)  # type: ignore[arg-type]
