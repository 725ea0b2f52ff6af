"""What the contract says about HTTP itself, which litestar's generated document cannot: request ids, the probes'
security, and the validators and caching of the reference GETs (service/api/reference.py)."""

from __future__ import annotations

from typing import Any

from service.api.reference import REFERENCE_MAX_AGE_S, is_reference_path

REQUEST_ID = "X-Request-ID"
_REQUEST_ID_PATTERN = "^[A-Za-z0-9._:-]{1,128}$"

_REQUEST_ID_PARAMETER = {
    "name": REQUEST_ID, "in": "header", "required": False,
    "description": ("An id of your own for this call, echoed in the answer's X-Request-ID and written in the "
                    "service's log line, so one call can be traced across systems: 1 to 128 of A-Z, a-z, 0-9 "
                    "and . _ : -. Any other value (or none) is replaced by an id the service generates; it is "
                    "never refused."),
    "schema": {"type": "string"},
}
_REQUEST_ID_HEADER = {
    "description": "The request's id: the caller's X-Request-ID when it was a valid one, else a generated one. "
                   "The service's log line for the call carries the same id.",
    "schema": {"type": "string", "pattern": _REQUEST_ID_PATTERN},
}
_IF_NONE_MATCH_PARAMETER = {
    "name": "If-None-Match", "in": "header", "required": False,
    "description": ("The ETag of an answer you hold (or a list of them, or *): when it still matches, the answer is "
                    "304 Not Modified without a body (weak comparison, RFC 9110 section 13.1.2)."),
    "schema": {"type": "string"},
}
_CACHING_HEADERS = {
    "ETag": {"description": ("A weak validator derived from the data version (the packaged tables' digest and the "
                             "service version); send it back as If-None-Match to revalidate."),
             "schema": {"type": "string", "pattern": '^W/"[0-9a-f]{32}"$'}},
    "Cache-Control": {"description": f"max-age={REFERENCE_MAX_AGE_S}: the answer may be reused for that many "
                                     "seconds without asking again.",
                      "schema": {"type": "string", "pattern": "^max-age=[0-9]+$"}},
}


def document_http_conventions(document: dict[str, Any]) -> None:
    """X-Request-ID in and out of every operation; ``security: []`` where no key is ever asked (the probes);
    ETag, Cache-Control, If-None-Match and the 304 on the reference GETs."""
    for path, item in document.get("paths", {}).items():
        for method, op in item.items():
            if not isinstance(op, dict) or "responses" not in op:
                continue
            op.setdefault("parameters", []).append(dict(_REQUEST_ID_PARAMETER))
            if "401" not in op["responses"]:
                op["security"] = []  # never behind the API keys, whatever the service is configured with
            if method == "get" and is_reference_path(_template_prefix(path)):
                op["parameters"].append(dict(_IF_NONE_MATCH_PARAMETER))
                op["responses"]["200"].setdefault("headers", {}).update(_CACHING_HEADERS)
                op["responses"]["304"] = {"description": "Not Modified: the answer whose ETag you sent is still "
                                                         "current (no body).",
                                          "headers": dict(_CACHING_HEADERS)}
            for response in op["responses"].values():
                response.setdefault("headers", {})[REQUEST_ID] = _REQUEST_ID_HEADER


def _template_prefix(path: str) -> str:
    """``/v1/tables/{table_id}`` as a concrete path of that template, for the reference-path test."""
    return path.replace("{", "").replace("}", "")
