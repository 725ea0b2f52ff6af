"""Service settings, read from environment variables once, inside create_app."""

from __future__ import annotations

import math
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
    """Most elements one network may have; an array element counts one plus one per branch.
    Past it the request gets 422 before anything is solved."""
    max_network_nodes: int = 200_000
    """Most distinct nodes one network may have, the reference node included.
    Past it the request gets 422 before anything is solved."""
    network_factor_max_bytes: int = 402_653_184
    """Most bytes the LU factors of one network solve may hold (default 384 MiB; a 200,000-node grid takes
    143 MiB DC, 238 MiB AC). Past it the request gets 422 (network-too-costly); the factorisation that
    overran is measured once made, so its own peak is not bounded, but nothing further is kept or computed."""
    metrics_enabled: bool = True
    """Serve GET /metrics (Prometheus text format: request counts and latencies by route and status, the
    network solver's iterations and network sizes). ``false`` leaves the route out (404). Accepts
    true/false, 1/0, yes/no, on/off."""
    max_chain_leads: int = 50
    """Most leads in one lead chain (POST /v1/lead-chains/analyse); more gets 422 naming /leads."""
    max_chain_appliances: int = 100
    """Most appliances on one lead chain; more gets 422 naming /appliances."""
    max_thevenin_pairs: int = 20
    """Most node pairs in one network's options.thevenin_between (each costs a solve); more gets 422."""
    network_impedance_form_ratio: float = 1e-6
    """An element impedance below this fraction of its network's median impedance is solved with its current as an
    unknown (impedance form) rather than as an admittance, which keeps its current exact beside far larger
    impedances; the answer lists such elements in notes.assumptions. 0 turns it off; at most 0.01."""
    max_fill_conductor_groups: int = 50
    """Most entries (type, size, count) in one raceway-fill request's conductors; more gets 422."""
    compute_deadline_s: float = 10.0
    """Wall-clock budget of one calculation, waiting for a compute thread included. Past it the request gets
    503 (problem type compute-deadline-exceeded); the network solver's Newton iteration also stops itself then."""
    compute_threads: int = 4
    """Worker threads that run calculations (per process). A calculation that overran its deadline keeps its
    thread until it ends, so this also bounds the CPU that abandoned work can hold."""
    body_timeout_s: float = 10.0
    """Seconds a client gets to send a whole request body once its headers are in; slower gets 408."""
    api_key_hashes: str = ""
    """Comma-separated API-key hashes, each ``[label=]<hex SHA-256 or SHA-512 of the key>``. Empty (and no
    AMPLINE_API_KEY_HASHES_FILE) leaves keys off: every caller is let in."""
    api_key_hashes_file: str = ""
    """A file of API-key hashes, one ``[label=]<hex>`` per line (``#`` comments); used together with
    AMPLINE_API_KEY_HASHES. Read once at start-up (a mounted secret)."""
    metrics_require_key: bool = False
    """With keys on, whether GET /metrics needs a key too (a Prometheus scraper then sends one)."""
    cors_allow_origins: str = ""
    """Comma-separated origins (``https://app.example.com``) browsers may call the API from; empty allows none."""
    rate_limit_requests: int = 0
    """Requests each API key (or client address, with keys off) may make per AMPLINE_RATE_LIMIT_WINDOW_S, in
    this process; past it 429 with Retry-After. 0 turns the limit off."""
    rate_limit_window_s: int = 60
    """The window of AMPLINE_RATE_LIMIT_REQUESTS, in seconds (a token bucket refilled evenly over it)."""
    rate_limit_clients: int = 10_000
    """Most callers the rate limiter remembers; past it the one seen longest ago is forgotten (bounded memory)."""
    strict_transport_security: str = ""
    """Value of the Strict-Transport-Security header (e.g. ``max-age=31536000``); empty sends none. TLS ends
    at the gateway, so set it only when every client reaches the service over HTTPS."""
    max_header_bytes: int = 65_536
    """Most bytes of an unfinished request line and header block the server holds while they arrive (uvicorn's
    h11 limit); past it the connection is answered 400 and closed, so a header that never ends costs no memory."""
    forwarded_allow_ips: str = "127.0.0.1"
    """Comma-separated proxy addresses whose X-Forwarded-For is believed for the client address (rate limits
    by address behind a gateway); ``*`` trusts any peer."""

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
        if not 1_048_576 <= self.network_factor_max_bytes <= 17_179_869_184:
            raise ValueError("AMPLINE_NETWORK_FACTOR_MAX_BYTES from 1048576 (1 MiB) to 17179869184 (16 GiB)")

        if self.max_header_bytes < 4096:
            raise ValueError("AMPLINE_MAX_HEADER_BYTES >= 4096")
        if self.max_chain_leads < 1 or self.max_chain_appliances < 0 or self.max_thevenin_pairs < 0 \
                or self.max_fill_conductor_groups < 1:
            raise ValueError("AMPLINE_MAX_CHAIN_LEADS >= 1, AMPLINE_MAX_CHAIN_APPLIANCES >= 0, "
                             "AMPLINE_MAX_THEVENIN_PAIRS >= 0, AMPLINE_MAX_FILL_CONDUCTOR_GROUPS >= 1")
        if not 0 <= self.network_impedance_form_ratio <= 0.01:
            raise ValueError("AMPLINE_NETWORK_IMPEDANCE_FORM_RATIO from 0 to 0.01")
        if not (self.compute_deadline_s > 0 and self.body_timeout_s > 0) or self.compute_threads < 1:
            raise ValueError("AMPLINE_COMPUTE_DEADLINE_S > 0, AMPLINE_BODY_TIMEOUT_S > 0, AMPLINE_COMPUTE_THREADS >= 1")
        if self.rate_limit_requests < 0 or self.rate_limit_window_s < 1 or self.rate_limit_clients < 1:
            raise ValueError("AMPLINE_RATE_LIMIT_REQUESTS >= 0, AMPLINE_RATE_LIMIT_WINDOW_S >= 1, "
                             "AMPLINE_RATE_LIMIT_CLIENTS >= 1")
        if self.strict_transport_security and not self.strict_transport_security.startswith("max-age="):
            raise ValueError("AMPLINE_STRICT_TRANSPORT_SECURITY must start with max-age=")

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
            elif f.type == "float":
                try:
                    values[f.name] = float(raw)
                except ValueError:
                    raise ValueError(f"{PREFIX}{f.name.upper()} must be a number, got {raw!r}") from None
                if not math.isfinite(values[f.name]):
                    raise ValueError(f"{PREFIX}{f.name.upper()} must be a finite number, got {raw!r}")
            else:
                values[f.name] = raw
        return cls(**values)  # type: ignore[arg-type]
