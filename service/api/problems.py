"""RFC 9457 problem+json: the body of every 4xx and 5xx answer.

Status policy: 400 for a body that is not valid JSON or does not fit the schema's
shape (wrong type, unknown field, missing field); 422 for a well-formed body whose
values cannot be used (out-of-range value, whether refused by the decoder's bounds
or by the unit parser; wrong unit dimension; unknown conductor size; a network
that admits no solution); 413 and 415 for size and
content type; 500 only for our own defects, with no internals in the body.
"""

from __future__ import annotations

import asyncio
import json
import math
import re
from typing import Any, Iterable

import msgspec
import structlog
from litestar import MediaType, Request, Response
from litestar.exceptions import HTTPException, InternalServerException, ValidationException
from litestar.openapi.datastructures import ResponseSpec
from litestar.status_codes import (
    HTTP_400_BAD_REQUEST,
    HTTP_422_UNPROCESSABLE_ENTITY,
    HTTP_500_INTERNAL_SERVER_ERROR,
    HTTP_503_SERVICE_UNAVAILABLE,
)

from litestar.utils.scope.state import ScopeState

from service.api.access import refusal_without_route
from service.api.compute import ComputeDeadlineExceeded
from service.api.duplicate_keys import DuplicateKey, refuse_duplicate_keys
from service.core.errors import CalcError

PROBLEM_MEDIA_TYPE = "application/problem+json"
PROBLEM_BASE = "https://ampline.invalid/problems/"


class FieldProblem(msgspec.Struct, frozen=True, omit_defaults=True):
    pointer: str
    """JSON pointer (RFC 6901) into the request body, e.g. /elements/3/resistance ("" is the whole body)."""
    message: str
    parameter: str | None = None
    """For a query or path parameter, its name (pointer is then "")."""


class Problem(msgspec.Struct, frozen=True, omit_defaults=True):
    type: str
    title: str
    status: int
    detail: str
    instance: str | None = None
    errors: list[FieldProblem] | None = None
    how_to_fix: str | None = None


class RequestInvalid(Exception):
    """Raised by the edge when values in a well-formed body cannot be used (422)."""

    def __init__(self, problems: Iterable[tuple[str, str]]) -> None:
        self.problems = [FieldProblem(pointer, message) for pointer, message in problems]
        super().__init__("; ".join(f"{p.pointer}: {p.message}" for p in self.problems))


def pointer(*parts: str | int) -> str:
    """JSON pointer from path parts, escaping '~' and '/' per RFC 6901."""
    return "".join("/" + str(p).replace("~", "~0").replace("/", "~1") for p in parts)


MAX_BODY_DEPTH = 32
"""Deepest nesting of arrays and objects read in a body: no request of the v1 contract nests more than 6 levels."""


class BodyTooDeep(Exception):
    """A body nested deeper than MAX_BODY_DEPTH (400): refused before anything walks it."""

    def __init__(self, path: tuple[str | int, ...] = ()) -> None:
        self.pointer = pointer(*path)
        super().__init__(f"arrays and objects nested deeper than {MAX_BODY_DEPTH} levels: no request of this "
                         "service nests so deep")


_TITLES = {
    400: "The request body does not fit the schema",
    401: "Authentication required",
    403: "Not allowed",
    404: "No such resource",
    405: "Method not allowed",
    408: "Request body not received in time",
    413: "Request body too large",
    415: "Unsupported media type",
    422: "The request cannot be calculated",
    429: "Too many requests",
    500: "Internal error",
    503: "Service not ready",
}
_SLUGS = {400: "invalid-body", 401: "api-key-required", 403: "api-key-refused", 404: "not-found",
          405: "method-not-allowed", 408: "body-timeout", 413: "body-too-large", 415: "unsupported-media-type",
          422: "unprocessable", 429: "rate-limited", 500: "internal-error", 503: "not-ready"}
DEADLINE_SLUG = "compute-deadline-exceeded"
DEADLINE_TITLE = "Calculation deadline exceeded"


def problem_response(status: int, detail: str, request: Request | None = None, *, slug: str | None = None,
                     errors: list[FieldProblem] | None = None, how_to_fix: str | None = None,
                     headers: dict[str, str] | None = None, title: str | None = None) -> Response[Problem]:
    body = Problem(
        type=PROBLEM_BASE + (slug or _SLUGS.get(status, f"http-{status}")),
        title=title or _TITLES.get(status, "Request failed"),
        status=status,
        detail=detail,
        instance=request.url.path if request is not None else None,
        errors=errors or None,
        how_to_fix=how_to_fix,
    )
    return Response(body, status_code=status, media_type=PROBLEM_MEDIA_TYPE, headers=headers)


_MSGSPEC_PATH = re.compile(r" - at `\$(?P<path>[^`]*)`$")
_PATH_PART = re.compile(r"\.(?P<key>[^.\[]+)|\[(?P<index>\d+)\]")
_NAMED_FIELD = re.compile(r"Object (?:contains unknown|missing required) field `(?P<name>[^`]+)`")


def _path_pointer(path: str) -> str:
    """msgspec's "$.a[0].b" (without the "$") as the JSON pointer "/a/0/b"."""
    parts = [m["key"] if m["key"] is not None else int(m["index"]) for m in _PATH_PART.finditer(path)]
    return pointer(*parts)


def _body_problem(key: str, message: str) -> FieldProblem:
    """One body error: litestar gives the failing path after 'data' as ``key``, or 'data' for the root."""
    where = "" if key in ("data", "") else _path_pointer("." + key.removeprefix("data."))
    if match := _MSGSPEC_PATH.search(message):  # a path inside the message wins: it is the full one
        where, message = _path_pointer(match["path"]), message[: match.start()]
    if named := _NAMED_FIELD.match(message):
        where += pointer(named["name"])
        message = ("unknown field: not accepted (check the spelling against the schema)"
                   if "unknown" in message else "required field is missing")
    return FieldProblem(where, message)


def _validation_problems(exc: ValidationException) -> list[FieldProblem]:
    extra = exc.extra if isinstance(exc.extra, list) else [exc.extra] if exc.extra else []
    problems = []
    for item in extra:
        if not isinstance(item, dict):
            problems.append(FieldProblem("", str(item)))
        elif item.get("source", "body") == "body":
            problems.append(_body_problem(str(item.get("key", "")), str(item.get("message", ""))))
        else:
            problems.append(FieldProblem("", str(item.get("message", "")), parameter=str(item.get("key"))))
    if not problems:
        problems.append(_body_problem("", exc.detail or "invalid request"))
    return problems


def _non_finite_numbers(body: bytes) -> list[FieldProblem]:
    """Pointers to NaN, Infinity or overflowing numbers in a body strict JSON refused.

    Clients serialising floats often emit NaN/Infinity tokens (not JSON) or 1e999;
    Python's lenient parser reads them so the client can be told *which* field.
    """
    found: list[FieldProblem] = []

    def walk(value: Any, path: tuple[str | int, ...]) -> None:
        if isinstance(value, float) and not math.isfinite(value):
            found.append(FieldProblem(pointer(*path), "must be a finite number (NaN and infinity are not accepted)"))
        elif isinstance(value, dict):
            for key, item in value.items():
                walk(item, (*path, key))
        elif isinstance(value, list):
            for index, item in enumerate(value):
                walk(item, (*path, index))

    try:
        walk(json.loads(body), ())
    except (ValueError, RecursionError):
        return []
    return found


def _received_body(request: Request) -> bytes:
    body = ScopeState.from_scope(request.scope).body
    return body if isinstance(body, bytes) else b""


# msgspec's messages for a value of the right type outside its declared bounds
# ("Expected `float` > 0.0", "Expected `array` of length >= 1"): the body has the
# right shape but a value that cannot be used, which is a 422 like the same
# value written with a unit and refused by the unit parser.
_OUT_OF_BOUNDS = re.compile(r"^Expected `[a-z]+` (?:[<>]=? |of length |matching regex )")


def handle_validation(request: Request, exc: ValidationException) -> Response[Problem]:
    problems = _validation_problems(exc)
    if not exc.extra:  # the body was not even JSON: find NaN/Infinity to name the field
        problems = _non_finite_numbers(_received_body(request)) or problems
    summary = "; ".join(f"{p.parameter or p.pointer or '(body)'}: {p.message}" for p in problems)
    out_of_bounds = all(p.parameter is None and _OUT_OF_BOUNDS.match(p.message) for p in problems)
    if out_of_bounds:
        return problem_response(HTTP_422_UNPROCESSABLE_ENTITY, summary, request, slug="invalid-value", errors=problems)
    return problem_response(HTTP_400_BAD_REQUEST, summary, request, errors=problems)


def handle_http(request: Request, exc: HTTPException) -> Response[Problem]:
    status = exc.status_code
    if status in (404, 405) and (refusal := refusal_without_route(request.scope, request.app.state.get("access"))):
        exc, status = refusal, refusal.status_code  # with keys on, no route is revealed to a caller without one
    if status == HTTP_400_BAD_REQUEST:  # a body strict JSON refused: say which field if it is NaN/Infinity
        if found := _non_finite_numbers(_received_body(request)):
            summary = "; ".join(f"{p.pointer or '(body)'}: {p.message}" for p in found)
            return problem_response(HTTP_400_BAD_REQUEST, summary, request, errors=found)
    detail = exc.detail if status < 500 else "The service could not complete the request."
    return problem_response(status, detail or _TITLES.get(status, "Request failed"), request, headers=exc.headers)


def handle_request_invalid(request: Request, exc: RequestInvalid) -> Response[Problem]:
    return problem_response(HTTP_422_UNPROCESSABLE_ENTITY, str(exc), request, slug="invalid-value", errors=exc.problems)


def handle_duplicate_key(request: Request, exc: DuplicateKey) -> Response[Problem]:
    if not exc.location:
        return problem_response(HTTP_400_BAD_REQUEST, "The body could not be checked for duplicate keys.", request)
    where = pointer(*exc.location)
    message = f"duplicate key: '{exc.location[-1]}' is given more than once in the same object; give it once"
    return problem_response(HTTP_400_BAD_REQUEST, f"{where}: {message}", request, errors=[FieldProblem(where, message)])


def handle_calc_error(request: Request, exc: CalcError) -> Response[Problem]:
    errors = [FieldProblem(pointer(*b.location), b.message) for b in exc.blames]
    return problem_response(HTTP_422_UNPROCESSABLE_ENTITY, exc.detail, request, slug=exc.code,
                            errors=errors, how_to_fix=exc.how_to_fix or None)


def handle_deadline(request: Request, exc: ComputeDeadlineExceeded) -> Response[Problem]:
    return problem_response(HTTP_503_SERVICE_UNAVAILABLE, str(exc), request, slug=DEADLINE_SLUG, title=DEADLINE_TITLE,
                            how_to_fix="Send a smaller calculation (fewer elements, leads or node pairs), or ask the "
                                       "operator for a longer AMPLINE_COMPUTE_DEADLINE_S.")


def handle_body_too_deep(request: Request, exc: BodyTooDeep) -> Response[Problem]:
    return problem_response(HTTP_400_BAD_REQUEST, str(exc), request, slug="body-too-deep",
                            errors=[FieldProblem(exc.pointer, str(exc))])


def handle_unexpected(request: Request, exc: Exception) -> Response[Problem]:
    structlog.get_logger("ampline.error").error("unhandled_exception", exc_info=exc, path=request.url.path)
    return problem_response(HTTP_500_INTERNAL_SERVER_ERROR, "The service could not complete the request.", request)


EXCEPTION_HANDLERS: dict[Any, Any] = {
    ValidationException: handle_validation,
    HTTPException: handle_http,
    RequestInvalid: handle_request_invalid,
    DuplicateKey: handle_duplicate_key,
    BodyTooDeep: handle_body_too_deep,
    CalcError: handle_calc_error,
    ComputeDeadlineExceeded: handle_deadline,
    HTTP_500_INTERNAL_SERVER_ERROR: handle_unexpected,
    Exception: handle_unexpected,
}


def _spec(description: str, example: Problem) -> ResponseSpec:
    from litestar.openapi.spec import Example

    return ResponseSpec(data_container=Problem, description=description, media_type=PROBLEM_MEDIA_TYPE, generate_examples=False,
                        examples=[Example(summary=example.title, value=msgspec.to_builtins(example))])


def error_responses(*statuses: int, body: bool = True, guarded: bool = True,
                    compute: bool = False) -> dict[int, ResponseSpec]:
    """Documented problem+json responses for a route: 400 and 500 always; 408, 413 and 415 when it takes a body;
    401, 403 and 429 when it is behind the API keys and rate limit (``guarded``: all but the probes); 503 with
    the deadline problem for a calculation (``compute``)."""
    examples = {
        400: Problem(PROBLEM_BASE + "invalid-body", _TITLES[400], 400, "/length: Expected `float | str`, got `bool`",
                     errors=[FieldProblem("/length", "Expected `float | str`, got `bool`")]),
        401: Problem(PROBLEM_BASE + "api-key-required", _TITLES[401], 401,
                     "Send an API key: Authorization: Bearer <key>."),
        403: Problem(PROBLEM_BASE + "api-key-refused", _TITLES[403], 403, "This API key is not accepted here."),
        408: Problem(PROBLEM_BASE + "body-timeout", _TITLES[408], 408,
                     "The request body did not arrive within 10 s."),
        429: Problem(PROBLEM_BASE + "rate-limited", _TITLES[429], 429, "Too many requests from this caller; retry later."),
        413: Problem(PROBLEM_BASE + "body-too-large", _TITLES[413], 413, "Request Entity Too Large"),
        415: Problem(PROBLEM_BASE + "unsupported-media-type", _TITLES[415], 415, "Send the body as application/json."),
        422: Problem(PROBLEM_BASE + "invalid-value", _TITLES[422], 422, "/length: 'kg' is not a unit of length (expected something like '30 m')",
                     errors=[FieldProblem("/length", "'kg' is not a unit of length (expected something like '30 m')")]),
        500: Problem(PROBLEM_BASE + "internal-error", _TITLES[500], 500, "The service could not complete the request."),
        503: Problem(PROBLEM_BASE + "not-ready", _TITLES[503], 503, "Data tables are not loaded yet."),
    }
    if compute:
        examples[503] = Problem(PROBLEM_BASE + DEADLINE_SLUG, DEADLINE_TITLE, 503,
                                "The calculation did not finish within this service's 10 s deadline (while calculating).")
    wanted = sorted({400, 500, *((408, 413, 415) if body else ()), *((401, 403, 429) if guarded else ()),
                     *((503,) if compute else ()), *statuses})
    descriptions = {**_TITLES, 503: DEADLINE_TITLE if compute else _TITLES[503],
                    401: "API key missing or malformed (only when the service has keys configured)",
                    403: "API key not accepted (only when the service has keys configured)",
                    429: "Rate limit reached (only when one is configured); see the Retry-After header"}
    return {s: _spec(descriptions[s], examples[s]) for s in wanted if s in examples}


_STRICT_DECODERS: dict[Any, tuple[msgspec.json.Decoder, Any] | None] = {}
_FLOAT_FOR_INT = re.compile(r"^Expected `int[^`]*`, got `float`")


def _strict_decoder(handler: Any) -> tuple[msgspec.json.Decoder, Any] | None:
    """A strict decoder for the handler's body type and the type (cached per handler); None without a body."""
    if handler not in _STRICT_DECODERS:
        data = handler.parsed_fn_signature.parameters.get("data")
        _STRICT_DECODERS[handler] = None if data is None else (
            msgspec.json.Decoder(data.annotation, strict=True), data.annotation)
    return _STRICT_DECODERS[handler]


def _integral_floats_as_ints(body: Any) -> Any:
    """``body`` with integral floats as ints, walked with a stack of its own (a recursive walk overflowed the
    interpreter's stack on a 1 KB body of 487 nested arrays), refusing nesting past MAX_BODY_DEPTH."""
    holder = [body]
    pending: list[tuple[Any, Any, tuple[str | int, ...]]] = [(holder, 0, ())]
    while pending:
        container, key, path = pending.pop()
        value = container[key]
        if isinstance(value, float) and value.is_integer() and abs(value) < 2**53:
            container[key] = int(value)
        elif isinstance(value, (dict, list)):
            if len(path) >= MAX_BODY_DEPTH:
                raise BodyTooDeep(path)
            keys = value.keys() if isinstance(value, dict) else range(len(value))
            pending.extend((value, k, (*path, k)) for k in keys)
    return holder[0]


def _strictly_valid(body: bytes, decoder: msgspec.json.Decoder, annotation: Any) -> Any:
    """Raise msgspec.ValidationError unless ``body`` fits ``annotation`` without coercion.

    JSON Schema counts 32.0 as an integer, msgspec's strict mode does not: only
    when that is the complaint is the body checked again with integral numbers
    read as integers (a walk over the body, so not paid by every request); the
    normalised body is returned then, for the route to use, else None.
    """
    try:
        decoder.decode(body)
    except msgspec.ValidationError as exc:
        if not _FLOAT_FOR_INT.match(str(exc)):
            raise
        normalised = _integral_floats_as_ints(msgspec.json.decode(body))
        msgspec.convert(normalised, annotation, strict=True)
        return normalised
    return None


_QUERY_PARAMETERS: dict[Any, frozenset[str]] = {}
UTF8_BOM = b"\xef\xbb\xbf"
_MALFORMED = "JSON is malformed"


def _query_parameters(request: Request) -> frozenset[str]:
    """The query parameters the route declares (cached per handler): litestar ignores any other one silently."""
    handler = request.route_handler
    if handler not in _QUERY_PARAMETERS:
        model = handler.create_kwargs_model(path_parameters=dict.fromkeys(request.path_params))  # type: ignore[arg-type]
        _QUERY_PARAMETERS[handler] = frozenset(p.field_alias for p in model.expected_query_params)
    return _QUERY_PARAMETERS[handler]


UNKNOWN_QUERY_SLUG = "unknown-query-parameter"
_UNKNOWN_QUERY = "unknown query parameter: not accepted (check the spelling against the schema)"


def unknown_query_parameters(request: Request) -> Response[Problem] | None:
    """400 naming every query parameter the route does not take, as an unknown body field is refused: a
    misspelt filter (``?materal=copper``) would otherwise answer the unfiltered list as if it were filtered.
    Probes and /schema too: one rule for every route."""
    unknown = [name for name in dict.fromkeys(request.query_params) if name not in _query_parameters(request)]
    if not unknown:
        return None
    problems = [FieldProblem("", _UNKNOWN_QUERY, parameter=name[:100]) for name in unknown[:20]]
    return problem_response(HTTP_400_BAD_REQUEST, "; ".join(f"{p.parameter}: {p.message}" for p in problems),
                            request, slug=UNKNOWN_QUERY_SLUG, title="The request does not fit the schema",
                            errors=problems)


def _malformed_detail(exc: msgspec.DecodeError) -> str:
    message = str(exc)  # msgspec says "JSON is malformed: ..." itself for some defects, not for others
    return message if message.startswith(_MALFORMED) else f"{_MALFORMED}: {message}"


async def body_guard(request: Request) -> Response[Problem] | None:
    """Refuse a body that is not JSON (415), and one that only fits the schema by coercion (400).

    litestar converts request bodies with msgspec's lax mode, which would take
    "0.9" for a number, 0 for false or "1" for true.  A contract that says
    boolean means boolean, so the body is first decoded strictly against the
    route's request type; only a body that passes reaches litestar's own
    conversion (and so the handler).
    """
    if (refusal := unknown_query_parameters(request)) is not None:
        return refusal
    if request.method not in ("POST", "PUT", "PATCH"):
        return None
    content_type = request.headers.get("content-type", "")
    media = content_type.split(";", 1)[0].strip().lower()
    if media != MediaType.JSON and not (media.startswith("application/") and media.endswith("+json")):
        raise HTTPException(status_code=415, detail="Send the body as application/json.")
    strict = _strict_decoder(request.route_handler)
    if strict is None:
        return None
    timeout_s = request.app.state.settings.body_timeout_s
    try:  # over the size limit: 413 here; a body trickled in slower than the timeout (slowloris): 408
        body = await asyncio.wait_for(request.body(), timeout_s)
    except TimeoutError:
        raise HTTPException(status_code=408, detail=f"The request body did not arrive within {timeout_s:g} s.",
                            headers={"Connection": "close"}) from None
    except InternalServerException:  # litestar's word for a client gone before its body was complete: not our fault
        raise HTTPException(status_code=HTTP_400_BAD_REQUEST, detail="The request body ended before it was complete.",
                            headers={"Connection": "close"}) from None
    if body.startswith(UTF8_BOM):  # RFC 8259, section 8.1: implementations must not add one
        raise HTTPException(status_code=HTTP_400_BAD_REQUEST,
                            detail="the body starts with a UTF-8 byte-order mark; send JSON without it")
    try:
        normalised = _strictly_valid(body, *strict)
    except RecursionError:  # msgspec's decoder meets the interpreter's own limit first (about 1,000 levels)
        raise BodyTooDeep() from None
    except msgspec.ValidationError as exc:
        raise ValidationException(detail="body does not fit the schema",
                                  extra=[{"key": "data", "message": str(exc), "source": "body"}]) from None
    except msgspec.DecodeError as exc:
        raise HTTPException(status_code=HTTP_400_BAD_REQUEST, detail=_malformed_detail(exc)) from None
    refuse_duplicate_keys(body)  # both decoders keep the last of a repeated key silently
    if normalised is not None:  # litestar's request.json() reads this instead of decoding the body again
        ScopeState.from_scope(request.scope).json = normalised
    return None
