"""Service settings, read from environment variables once, inside create_app."""

from __future__ import annotations

import ipaddress
import math
import os
import re
from dataclasses import dataclass, fields
from typing import Mapping

PREFIX = "AMPLINE_"
_BOOLEANS = {"true": True, "1": True, "yes": True, "on": True, "false": False, "0": False, "no": False, "off": False}


@dataclass(frozen=True, slots=True)
class Bounds:
    """The range a numeric setting must lie in; every numeric setting has one (a huge value is a mistake, and
    a resource no one meant to hand out)."""

    low: float
    high: float
    low_exclusive: bool = False

    def admits(self, value: float) -> bool:
        above = value > self.low if self.low_exclusive else value >= self.low
        return isinstance(value, (int, float)) and not isinstance(value, bool) and above and value <= self.high

    def text(self) -> str:
        """As the field docs and the README settings table state it."""
        low, high = (f"{v:g}" if isinstance(v, float) else str(v) for v in (self.low, self.high))
        return f"above {low}, up to {high}" if self.low_exclusive else f"from {low} to {high}"


BOUNDS: dict[str, Bounds] = {
    "port": Bounds(1, 65535),
    "workers": Bounds(1, 64),
    "max_body_bytes": Bounds(1024, 16_777_216),
    "graceful_shutdown_s": Bounds(0, 300),
    "max_network_body_bytes": Bounds(1024, 134_217_728),
    "max_network_elements": Bounds(1, 2_000_000),
    "max_network_nodes": Bounds(2, 1_000_000),
    "network_factor_max_bytes": Bounds(1_048_576, 17_179_869_184),
    "network_worker_cpu_s": Bounds(1, 3600),
    "max_chain_leads": Bounds(1, 1000),
    "max_chain_appliances": Bounds(0, 1000),
    "max_thevenin_pairs": Bounds(0, 200),
    "network_impedance_form_ratio": Bounds(0, 0.01),
    "max_fill_conductor_groups": Bounds(1, 1000),
    "compute_deadline_s": Bounds(0, 300, low_exclusive=True),
    "compute_threads": Bounds(1, 64),
    "body_timeout_s": Bounds(0, 300, low_exclusive=True),
    "rate_limit_requests": Bounds(0, 1_000_000),
    "rate_limit_window_s": Bounds(1, 86_400),
    "rate_limit_clients": Bounds(1, 1_000_000),
    "max_header_bytes": Bounds(4096, 1_048_576),
    "auth_failure_limit": Bounds(1, 10_000),
    "header_timeout_s": Bounds(0, 300, low_exclusive=True),
    "max_connections": Bounds(1, 100_000),
}


@dataclass(frozen=True, slots=True)
class Settings:
    """Every knob of the service. Each field is the env var ``AMPLINE_<NAME>``."""

    host: str = "127.0.0.1"
    """Interface the server binds to (an IP address or host name). Anything but a loopback address (127.0.0.1, ::1,
    localhost) needs API keys on, or AMPLINE_ALLOW_ANONYMOUS=true."""
    port: int = 8000
    """TCP port the server listens on. Range: from 1 to 65535."""
    workers: int = 1
    """Server worker processes (the service is stateless, so any number works). Range: from 1 to 64."""
    log_level: str = "info"
    """debug, info, warning or error."""
    log_format: str = "json"
    """json (one object per line) or console (human-readable)."""
    max_body_bytes: int = 1_048_576
    """Largest accepted request body, in bytes; larger bodies get 413. Range: from 1024 to 16777216."""
    graceful_shutdown_s: int = 10
    """Seconds in-flight requests get to finish after SIGTERM. Range: from 0 to 300."""
    max_network_body_bytes: int = 33_554_432
    """Largest accepted body for POST /v1/networks/solve only, in bytes (default 32 MiB; larger
    bodies get 413). A 100,000-node resistor grid in the compact array form is about 7 MB. Range: from 1024 to
    134217728."""
    max_network_elements: int = 500_000
    """Most elements one network may have; an array element counts one plus one per branch.
    Past it the request gets 422 before anything is solved. Range: from 1 to 2000000."""
    max_network_nodes: int = 200_000
    """Most distinct nodes one network may have, the reference node included.
    Past it the request gets 422 before anything is solved. Range: from 2 to 1000000."""
    network_factor_max_bytes: int = 402_653_184
    """Most bytes the LU factors of one network solve may hold (default 384 MiB; a 200,000-node grid takes
    143 MiB DC, 238 MiB AC). Past it the request gets 422 (network-too-costly). Before factorising, the factors
    are estimated from the matrix's pattern: a network whose estimate (times 2) fits is solved in-process, any
    other in a worker process whose address space is limited to its start-up size plus twice this plus 512 MiB
    (out of it: the same 422) and which is killed at the compute deadline. Every factorisation is measured once
    made either way, and nothing further is kept or computed past this. Range: from 1048576 to 17179869184."""
    network_worker_cpu_s: int = 4
    """Most CPU seconds (whole) a network solve in a worker process may use (see network_factor_max_bytes for
    which solves go there; ordinary grids and radial networks never do). A worker that uses them up is ended and
    the request gets 422 network-too-costly: the CPU a factorisation needs belongs to the network, where the
    compute deadline's 503 also depends on the load. Keep it below AMPLINE_COMPUTE_DEADLINE_S, so that the 422
    comes first on an unloaded server (a 100,000-node grid takes about 0.5 s in a worker). Range: from 1 to
    3600."""
    metrics_enabled: bool = True
    """Serve GET /metrics (Prometheus text format: request counts and latencies by route and status, the
    network solver's iterations and network sizes). ``false`` leaves the route out (404). Accepts
    true/false, 1/0, yes/no, on/off."""
    max_chain_leads: int = 50
    """Most leads in one lead chain (POST /v1/lead-chains/analyse); more gets 422 naming /leads. Range: from 1 to
    1000."""
    max_chain_appliances: int = 100
    """Most appliances on one lead chain; more gets 422 naming /appliances. Range: from 0 to 1000."""
    max_thevenin_pairs: int = 20
    """Most node pairs in one network's options.thevenin_between (each costs a solve); more gets 422. Range: from 0
    to 200."""
    network_impedance_form_ratio: float = 1e-6
    """An element impedance below this fraction of its network's median impedance is solved with its current as an
    unknown (impedance form) rather than as an admittance, which keeps its current exact beside far larger
    impedances; the answer lists such elements in notes.assumptions. 0 turns it off. Range: from 0 to 0.01."""
    max_fill_conductor_groups: int = 50
    """Most entries (type, size, count) in one raceway-fill request's conductors; more gets 422. Range: from 1 to
    1000."""
    compute_deadline_s: float = 10.0
    """Wall-clock budget of one calculation, waiting for a compute thread included. Past it the request gets
    503 (problem type compute-deadline-exceeded); the network solver's Newton iteration also stops itself then.
    Range: above 0, up to 300."""
    compute_threads: int = 4
    """Worker threads that run calculations (per process). A calculation that overran its deadline keeps its
    thread until it ends, so this also bounds the CPU that abandoned work can hold. Range: from 1 to 64."""
    body_timeout_s: float = 10.0
    """Seconds a client gets to send a whole request body once its headers are in; slower gets 408. Range: above 0,
    up to 300."""
    api_key_hashes: str = ""
    """Comma-separated API-key hashes, each ``[label=]<hex SHA-256 or SHA-512 of the key>``; an empty entry (``a,,b``,
    a lone ``,``) stops start-up. Empty (and no AMPLINE_API_KEY_HASHES_FILE) leaves keys off: every caller is let
    in, which only a loopback AMPLINE_HOST or AMPLINE_ALLOW_ANONYMOUS=true allows."""
    api_key_hashes_file: str = ""
    """A file of API-key hashes, one ``[label=]<hex>`` per line (``#`` comments); used together with
    AMPLINE_API_KEY_HASHES. Read once at start-up (a mounted secret)."""
    metrics_require_key: bool = False
    """With keys on, whether GET /metrics needs a key too (a Prometheus scraper then sends one)."""
    cors_allow_origins: str = ""
    """Comma-separated origins (``https://app.example.com``: http or https, a host, an optional port, nothing after)
    browsers may call the API from; empty allows none. ``*``, an empty entry or anything else stops start-up."""
    rate_limit_requests: int = 0
    """Requests each API key (or client address, with keys off) may make per AMPLINE_RATE_LIMIT_WINDOW_S, in
    this process; past it 429 with Retry-After. 0 turns the limit off. Range: from 0 to 1000000."""
    rate_limit_window_s: int = 60
    """The window of AMPLINE_RATE_LIMIT_REQUESTS and AMPLINE_AUTH_FAILURE_LIMIT, in seconds (a token bucket refilled
    evenly over it). Range: from 1 to 86400."""
    rate_limit_clients: int = 10_000
    """Most callers the rate limiter remembers; past it the one seen longest ago is forgotten (bounded memory).
    Range: from 1 to 1000000."""
    strict_transport_security: str = ""
    """Value of the Strict-Transport-Security header (e.g. ``max-age=31536000``); empty sends none. TLS ends
    at the gateway, so set it only when every client reaches the service over HTTPS."""
    max_header_bytes: int = 65_536
    """Most bytes of an unfinished request line and header block the server holds while they arrive (uvicorn's
    h11 limit); past it the connection is answered 400 and closed, so a header that never ends costs no memory.
    Range: from 4096 to 1048576."""
    header_timeout_s: float = 10.0
    """Seconds a client gets to send a request line and its headers, from the connection's start (or the first
    byte of a later request on a kept-alive connection); slower gets 408 and the connection is closed. Range: above
    0, up to 300."""
    max_connections: int = 1000
    """A request that arrives when this many connections are open in the process (its own included) or this many
    requests are in progress gets 503 and its connection is closed (uvicorn's limit_concurrency). Range: from 1 to
    100000."""
    forwarded_allow_ips: str = ""
    """Comma-separated addresses or networks (``10.0.0.5``, ``10.1.0.0/16``) of the proxies whose X-Forwarded-For is
    believed for the client address (rate limits by address behind a gateway). Empty (the default) believes no
    forwarded header: the client is the TCP peer. ``*``, an empty entry or anything that is not an IP address or
    network stops start-up."""
    allow_anonymous: bool = False
    """Whether the server may bind a non-loopback AMPLINE_HOST with API keys off (anyone who reaches it may call).
    Without it, that combination stops start-up."""
    auth_failure_limit: int = 20
    """With keys on: refused or malformed keys each client address may present per AMPLINE_RATE_LIMIT_WINDOW_S
    (a token bucket, in this process); past it every request from that address gets 429 with Retry-After until
    the bucket refills, whatever key it carries. Counted apart from AMPLINE_RATE_LIMIT_REQUESTS, and on even when
    that is 0. Range: from 1 to 10000."""

    def __post_init__(self) -> None:
        if self.log_format not in ("json", "console"):
            raise ValueError("AMPLINE_LOG_FORMAT must be 'json' or 'console'")
        if self.log_level.lower() not in ("debug", "info", "warning", "error"):
            raise ValueError("AMPLINE_LOG_LEVEL must be debug, info, warning or error")
        for name, bounds in BOUNDS.items():
            value = getattr(self, name)
            if not bounds.admits(value):
                raise ValueError(f"{PREFIX}{name.upper()} must be {bounds.text()}, got {value!r}")
        if self.strict_transport_security and not _HSTS.match(self.strict_transport_security):
            raise ValueError("AMPLINE_STRICT_TRANSPORT_SECURITY must be max-age=<seconds>, optionally followed by "
                             "'; includeSubDomains' and '; preload' (RFC 6797, section 6.1)")
        _check_access(self)

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


# --------------------------------------------------------------------------- who may call (fail closed)

_ORIGIN = re.compile(r"^https?://(?:[A-Za-z0-9](?:[A-Za-z0-9-]{0,61}[A-Za-z0-9])?(?:\.[A-Za-z0-9](?:[A-Za-z0-9-]{0,61}"
                     r"[A-Za-z0-9])?)*|\[[0-9A-Fa-f:.]+\])(?::(?P<port>[0-9]{1,5}))?$")
_LOOPBACK_NAMES = {"localhost"}
_HOSTNAME = re.compile(r"^(?=.{1,253}$)[A-Za-z0-9](?:[A-Za-z0-9-]{0,61}[A-Za-z0-9])?(?:\.[A-Za-z0-9](?:[A-Za-z0-9-]{0,61}"
                       r"[A-Za-z0-9])?)*$")  # RFC 1123 section 2.1
# RFC 6797 section 6.1: max-age is required, includeSubDomains and preload optional; nothing else, so no setting
# can put a stray character (a line break) into every answer's headers.
_HSTS = re.compile(r"^max-age=[0-9]{1,10}(?:; ?includeSubDomains)?(?:; ?preload)?$", re.IGNORECASE)


def list_entries(text: str, setting: str) -> list[str]:
    """The comma-separated entries of a list setting; an empty entry (``a,,b``, a lone ``,``) is refused."""
    if not text.strip():
        return []
    entries = [e.strip() for e in text.split(",")]
    if "" in entries:
        raise ValueError(f"{PREFIX}{setting.upper()} has an empty entry (a stray comma?)")
    return entries


def is_loopback(host: str) -> bool:
    if host.strip().lower() in _LOOPBACK_NAMES:
        return True
    try:
        return ipaddress.ip_address(host.strip().strip("[]")).is_loopback
    except ValueError:
        return False  # a host name: it may resolve to anything


def keys_configured(settings: Settings) -> bool:
    """Whether keys are on. A non-empty hash setting that holds no hash stops start-up (service.api.keys), so a
    configured setting always means keys on."""
    return bool(settings.api_key_hashes.strip() or settings.api_key_hashes_file)


def _is_ip(text: str) -> bool:
    try:
        ipaddress.ip_address(text)
    except ValueError:
        return False
    return True


def _check_access(settings: Settings) -> None:
    if not (_is_ip(settings.host) or _HOSTNAME.match(settings.host)):
        raise ValueError(f"AMPLINE_HOST: {settings.host!r} is not an IP address or a host name")
    for origin in list_entries(settings.cors_allow_origins, "cors_allow_origins"):
        match = _ORIGIN.match(origin)
        if not match or not 0 < int(match["port"] or 80) < 65536:
            raise ValueError(f"AMPLINE_CORS_ALLOW_ORIGINS: {origin!r} is not an origin (scheme://host[:port], "
                             "http or https, nothing after; '*' is not allowed)")
    for proxy in list_entries(settings.forwarded_allow_ips, "forwarded_allow_ips"):
        try:
            ipaddress.ip_network(proxy) if "/" in proxy else ipaddress.ip_address(proxy)
        except ValueError:
            raise ValueError(f"AMPLINE_FORWARDED_ALLOW_IPS: {proxy!r} is not an IP address or network "
                             "('*' is not allowed: name the proxies)") from None
    if settings.api_key_hashes_file and not settings.api_key_hashes_file.strip():
        raise ValueError("AMPLINE_API_KEY_HASHES_FILE is blank")
    if not keys_configured(settings) and not is_loopback(settings.host) and not settings.allow_anonymous:
        raise ValueError(f"AMPLINE_HOST={settings.host} is not a loopback address and API keys are off: anyone who "
                         "reaches it could call. Set AMPLINE_API_KEY_HASHES or AMPLINE_API_KEY_HASHES_FILE "
                         "(python -m service.api.keys new), or AMPLINE_ALLOW_ANONYMOUS=true to mean it.")
