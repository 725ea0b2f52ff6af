"""Who may call: API keys (optional) and the per-caller rate limit, before any route runs.

Probes are always let through (an orchestrator has no key); /metrics too unless
AMPLINE_METRICS_REQUIRE_KEY.  Refusals are raised as HTTP exceptions, so they
come out as problem+json like every other error (and carry CORS headers for
browser apps).  The presented key is never logged or echoed: only the label of
the hash it matched is bound to the request's log line.
"""

from __future__ import annotations

import structlog
from litestar.exceptions import HTTPException
from litestar.middleware.base import DefineMiddleware
from litestar.types import ASGIApp, Receive, Scope, Send

from service.api.keys import BEARER_TOKEN, KeyRing
from service.api.metrics import METRICS_PATH
from service.api.ratelimit import RateLimiter, retry_after_header
from service.api.settings import Settings

PROBE_PATHS = frozenset({"/healthz", "/readyz"})
_CHALLENGE = 'Bearer realm="ampline"'


def _bearer_token(scope: Scope) -> str | None:
    """The token of ``Authorization: Bearer <token>``; None when absent; "" when malformed."""
    values = [v for k, v in scope.get("headers", ()) if k == b"authorization"]
    if not values:
        return None
    scheme, _, token = values[0].decode("latin-1").strip().partition(" ")
    token = token.strip()
    if len(values) > 1 or scheme.lower() != "bearer" or not BEARER_TOKEN.match(token):
        return ""
    return token


def _caller(scope: Scope, keys: KeyRing, address: str) -> tuple[str, HTTPException | None, bool]:
    """Who is calling (for the rate limit), the refusal if the key does not let them in, and whether that
    refusal is a failed authentication (a key presented and refused, as opposed to none sent)."""
    if not keys.enabled:
        return address, None, False
    token = _bearer_token(scope)
    if token is None:
        return address, HTTPException(status_code=401, detail="Send an API key: Authorization: Bearer <key>.",
                                      headers={"WWW-Authenticate": _CHALLENGE}), False
    if token == "":
        return address, HTTPException(status_code=401, detail="The Authorization header must be 'Bearer <key>'.",
                                      headers={"WWW-Authenticate": f'{_CHALLENGE}, error="invalid_request"'}), True
    label = keys.match(token)
    if label is None:  # unknown keys share their address's bucket, so guessing is rate limited too
        return address, HTTPException(status_code=403, detail="This API key is not accepted here."), True
    return f"key:{label}", None, False


def _too_many(wait_s: float, detail: str) -> HTTPException:
    return HTTPException(status_code=429, detail=detail, headers={"Retry-After": retry_after_header(wait_s)})


def access_guard(app: ASGIApp, keys: KeyRing, limiter: RateLimiter | None, failures: RateLimiter | None,
                 metrics_require_key: bool) -> ASGIApp:
    """``failures`` counts failed authentications per client address: once an address has spent its
    allowance, every request from it is refused with 429 before its key is even looked at, so a correct
    guess is not told apart from a wrong one until the bucket refills."""

    async def guard(scope: Scope, receive: Receive, send: Send) -> None:
        path = scope.get("path", "")
        if scope["type"] != "http" or path in PROBE_PATHS or (path == METRICS_PATH and not metrics_require_key):
            await app(scope, receive, send)
            return
        refusal = _decide(scope, keys, limiter, failures)
        if refusal is not None:
            raise refusal
        await app(scope, receive, send)

    return guard


def _decide(scope: Scope, keys: KeyRing, limiter: RateLimiter | None, failures: RateLimiter | None
            ) -> HTTPException | None:
    """The guard's answer for one request: None to let it in, else the refusal (spending what it spends)."""
    client = scope.get("client")  # the TCP peer, or a trusted proxy's X-Forwarded-For (AMPLINE_FORWARDED_ALLOW_IPS)
    address = f"address:{client[0] if client else 'unknown'}"
    if failures is not None and (wait := failures.wait(address)) > 0:
        structlog.contextvars.bind_contextvars(caller=address)
        return _too_many(wait, "Too many refused API keys from this address; retry later.")
    caller, refusal, failed_authentication = _caller(scope, keys, address)
    structlog.contextvars.bind_contextvars(caller=caller)
    if limiter is not None and (wait := limiter.take(caller)) > 0:
        return _too_many(wait, "Too many requests from this caller; retry later.")
    if refusal is not None and failures is not None and failed_authentication:
        failures.take(address)
    return refusal


def access_middleware(settings: Settings) -> DefineMiddleware | None:
    """The guard for an app, or None when neither keys nor a rate limit are configured; logs which it is."""
    keys = KeyRing.from_settings(settings)
    limiter = failures = None
    if settings.rate_limit_requests:
        limiter = RateLimiter(settings.rate_limit_requests, settings.rate_limit_window_s, settings.rate_limit_clients)
    if keys.enabled:
        failures = RateLimiter(settings.auth_failure_limit, settings.rate_limit_window_s, settings.rate_limit_clients)
    _log_access(settings, keys)
    if not keys.enabled and limiter is None:
        return None
    return DefineMiddleware(access_guard, keys=keys, limiter=limiter, failures=failures,
                            metrics_require_key=settings.metrics_require_key)


def _log_access(settings: Settings, keys: KeyRing) -> None:
    """One start-up line saying whether keys are on (a warning when they are off), never a key or a hash."""
    log = structlog.get_logger("ampline.access")
    facts = {"api_keys": "on" if keys.enabled else "off", "api_key_count": len(keys),
             "rate_limit_requests": settings.rate_limit_requests, "rate_limit_window_s": settings.rate_limit_window_s,
             "trusted_proxies": settings.forwarded_allow_ips or "none"}
    if keys.enabled:
        log.info("access_control", auth_failure_limit=settings.auth_failure_limit, **facts)
    else:
        log.warning("access_control", detail="API keys are off: every caller that reaches the service is let in",
                    **facts)


def refusal_without_route(scope: Scope, access: DefineMiddleware | None) -> HTTPException | None:
    """The guard's answer for a request no route took (a 404 or 405), so unknown paths look like known ones.

    The guard runs after routing, so without this an anonymous caller got 404 for an unknown path and 401 for a
    real one, and could map the routes.  With keys on, a caller the guard would refuse gets the same refusal
    (rate limit and failed-authentication count included); a caller with a valid key still gets the 404 or 405.
    """
    if access is None or scope["type"] != "http":
        return None
    keys: KeyRing = access.kwargs["keys"]
    path = scope.get("path", "")
    if not keys.enabled or path in PROBE_PATHS or (path == METRICS_PATH and not access.kwargs["metrics_require_key"]):
        return None
    return _decide(scope, keys, access.kwargs["limiter"], access.kwargs["failures"])
