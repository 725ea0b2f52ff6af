"""The OpenAPI contract: litestar's generated document plus what it cannot say.

litestar does not emit ``additionalProperties: false`` for structs that forbid
unknown fields, so this module adds it; everything else is as generated.  The
same function feeds the served /schema/openapi.(json|yaml) and the committed
openapi/v1/openapi.yaml, so the two cannot differ.
"""

from __future__ import annotations

import sys
from pathlib import Path
from typing import Any

import msgspec
import yaml
from litestar import Litestar, Request
from litestar.openapi.plugins import JsonRenderPlugin, YamlRenderPlugin

from litestar.openapi.spec import Example

from service.api.contract_http import document_http_conventions
from service.api.contract_schemas import finish_schemas
from service.api.schemas.v1.common import Strict

CONTRACT_PATH = Path(__file__).resolve().parents[2] / "openapi" / "v1" / "openapi.yaml"

# operationId -> {summary: request value}: litestar only writes request-body
# examples into the schema, without their names; the contract moves them to the
# media type, where OpenAPI keeps a summary for each scenario.
_REQUEST_EXAMPLES: dict[str, dict[str, Any]] = {}


def request_examples(operation_id: str, named: dict[str, msgspec.Struct]) -> list[Example]:
    """Register a route's named request examples; returns them for ``Body(examples=...)``."""
    values = {name: msgspec.to_builtins(value) for name, value in named.items()}
    _REQUEST_EXAMPLES[operation_id] = values
    return [Example(summary=name, value=value) for name, value in values.items()]


def _example_key(summary: str) -> str:
    return "-".join("".join(ch if ch.isalnum() else " " for ch in summary.lower()).split())[:60]


def _name_request_examples(document: dict[str, Any]) -> None:
    for item in document.get("paths", {}).values():
        for op in item.values():
            named = _REQUEST_EXAMPLES.get(op.get("operationId", "")) if isinstance(op, dict) else None
            if not named or "requestBody" not in op:
                continue
            media = op["requestBody"]["content"]["application/json"]
            schema = media["schema"]
            schema.pop("examples", None)
            if list(schema) == ["allOf"] and len(schema["allOf"]) == 1:
                media["schema"] = schema["allOf"][0]
            media["examples"] = {_example_key(name): {"summary": name, "value": value} for name, value in named.items()}


def _strict_structs() -> dict[str, type[Strict]]:
    found: dict[str, type[Strict]] = {}
    pending = list(Strict.__subclasses__())
    while pending:
        cls = pending.pop()
        found[cls.__name__] = cls
        pending.extend(cls.__subclasses__())
    return found


_CONSTRAINTS = ("minimum", "maximum", "exclusiveMinimum", "exclusiveMaximum", "minLength", "maxLength",
                "pattern", "minItems", "maxItems")


def _leaves(schema: dict[str, Any]) -> list[dict[str, Any]]:
    """The member schemas of a union, nested unions flattened (an optional quantity is ((number | string) | null))."""
    branches = schema.get("oneOf") or schema.get("anyOf")
    if not branches:
        return [schema]
    return [leaf for branch in branches for leaf in _leaves(branch)]


def _type_key(schema: dict[str, Any]) -> Any:
    kind = schema.get("type")
    return tuple(kind) if isinstance(kind, list) else kind


def _copy_constraints(ours: dict[str, Any], theirs: dict[str, Any]) -> None:
    """Copy the bounds of each member of ``theirs`` onto the member of ``ours`` of the same type (and list items)."""
    their_leaves: dict[Any, list[dict[str, Any]]] = {}
    for leaf in _leaves(theirs):
        their_leaves.setdefault(_type_key(leaf), []).append(leaf)
    for leaf in _leaves(ours):
        matches = their_leaves.get(_type_key(leaf), [])
        if len(matches) != 1:  # no member, or two of one type: nothing to tell them apart by
            continue
        leaf.update({k: v for k, v in matches[0].items() if k in _CONSTRAINTS and k not in leaf})
        if isinstance(leaf.get("items"), dict) and isinstance(matches[0].get("items"), dict):
            _copy_constraints(leaf["items"], matches[0]["items"])


def _copy_union_constraints(ours: dict[str, Any], msgspec_schema: dict[str, Any]) -> None:
    """litestar drops the bounds of union members (number | string) and of list items; msgspec's schema keeps them."""
    for name, prop in ours.get("properties", {}).items():
        theirs = msgspec_schema.get("properties", {}).get(name)
        if theirs is not None and "$ref" not in theirs:
            _copy_constraints(prop, theirs)


EXAMPLE_DIGITS = 6
# Below this (in any SI unit) a computed example value is round-off: KCL and power-balance residuals, the
# reactive power of a resistor. Its digits change with the BLAS build and thread count, so it is shown as 0.
ROUND_OFF = 1e-9


def _rounded(value: Any) -> Any:
    if isinstance(value, float):
        return 0.0 if abs(value) < ROUND_OFF else float(f"{value:.{EXAMPLE_DIGITS}g}")
    if isinstance(value, dict):
        return {k: _rounded(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_rounded(v) for v in value]
    return value


def _round_response_examples(document: dict[str, Any]) -> None:
    """Computed example answers to 6 significant figures: the last bits of a solve may differ between CPUs.

    Otherwise the committed contract would drift on a machine whose vector
    instructions sum in another order, with nothing changed in the service.
    """
    for item in document.get("paths", {}).values():
        for op in item.values():
            if not isinstance(op, dict):
                continue
            for response in op.get("responses", {}).values():
                for media in response.get("content", {}).values():
                    for example in media.get("examples", {}).values():
                        if "value" in example:
                            example["value"] = _rounded(example["value"])


SECURITY_SCHEME = "apiKey"
_ACCESS_HEADERS = {
    "401": {"WWW-Authenticate": {"description": "The Bearer challenge (RFC 6750).", "schema": {"type": "string"}}},
    "429": {"Retry-After": {"description": "Seconds until the caller may send again.",
                            "schema": {"type": "string", "pattern": "^[0-9]+$"}}},
}


def _document_access(document: dict[str, Any]) -> None:
    """The optional API key as a security scheme, and the headers of the 401 and 429 answers.

    litestar's ResponseSpec carries no headers, and the key is optional (off unless configured), so the
    document's security accepts either the key or nothing: ``[{apiKey: []}, {}]``, at the root (Python's generator
    reads the empty alternative only there; at an operation it demands an authenticated client), and the
    operations that never need a key (the probes) say ``security: []``.
    """
    guarded = False
    for item in document.get("paths", {}).values():
        for op in item.values():
            if not isinstance(op, dict):
                continue
            if "401" not in op.get("responses", {}):
                op["security"] = []
                continue
            guarded = True
            op.pop("security", None)
            for status, headers in _ACCESS_HEADERS.items():
                if status in op["responses"]:
                    op["responses"][status]["headers"] = headers
    if guarded:
        document["security"] = [{SECURITY_SCHEME: []}, {}]
        document.setdefault("components", {}).setdefault("securitySchemes", {})[SECURITY_SCHEME] = {
            "type": "http", "scheme": "bearer",
            "description": ("An API key issued by the operator, as `Authorization: Bearer <key>`. Needed only when "
                            "the service is configured with key hashes (AMPLINE_API_KEY_HASHES); the probes never "
                            "need one."),
        }


# OpenAPI links: what one answer lets a client ask next.  The service keeps no state, so these are the
# hand-overs a client really makes (a size picked from the library, then its run resistance); they also give
# schemathesis' stateful tests their transitions.
_LINKS = {
    ("listConductors", "200"): {
        "ResistanceOfAListedConductor": {
            "operationId": "computeRunResistance",
            "description": "The run resistance of the first conductor listed, 10 m at its table temperature.",
            "requestBody": {"size": "$response.body#/conductors/0/size_label", "length": 10,
                            "material": "$response.body#/conductors/0/material",
                            "conductor_class": "$response.body#/conductors/0/conductor_class"},
        },
    },
}


def _add_links(document: dict[str, Any]) -> None:
    for item in document.get("paths", {}).values():
        for op in item.values():
            if isinstance(op, dict):
                for status, response in op.get("responses", {}).items():
                    if links := _LINKS.get((op.get("operationId"), status)):
                        response["links"] = links


def _msgspec_component(components: dict[str, Any], name: str) -> dict[str, Any]:
    """msgspec's schema of litestar's component ``name``: two Structs of one name would be ``chains_X`` there and
    ``service.api.schemas.v1.chains.X`` in msgspec's components (every Struct has a name of its own today, and a
    test keeps titles unique)."""
    if name in components:
        return components[name]
    qualified = [k for k in components if k.endswith("." + name.replace("_", "."))]
    return components[qualified[0]] if len(qualified) == 1 else {}


def finish_contract(document: dict[str, Any]) -> dict[str, Any]:
    """Return a copy of the generated document with request structs closed to unknown fields."""
    finished = msgspec.json.decode(msgspec.json.encode(document))  # plain builtins, a deep copy
    _name_request_examples(finished)
    _round_response_examples(finished)
    _document_access(finished)
    document_http_conventions(finished)
    _add_links(finished)
    strict = _strict_structs()
    _, msgspec_components = msgspec.json.schema_components(list(strict.values()))
    for name, schema in finished.get("components", {}).get("schemas", {}).items():
        struct_name = name if name in strict else name.split("_")[-1]
        if struct_name in strict:
            schema["additionalProperties"] = False
            _copy_union_constraints(schema, _msgspec_component(msgspec_components, name))
    finish_schemas(finished)
    return finished


def contract_of(app: Litestar) -> dict[str, Any]:
    return finish_contract(app.openapi_schema.to_schema())


class _WithoutAliases(yaml.SafeDumper):
    """Every shared piece written out in full: ``&id001``/``*id001`` aliases are valid YAML, but several OpenAPI
    tools (and readers) do not follow them."""

    def ignore_aliases(self, data: Any) -> bool:
        return True


def dump_contract(document: dict[str, Any], **options: Any) -> str:
    return yaml.dump(document, Dumper=_WithoutAliases, sort_keys=True, allow_unicode=True, **options)


def contract_yaml(app: Litestar) -> str:
    return dump_contract(contract_of(app), width=100)


class FinishedJsonRenderPlugin(JsonRenderPlugin):
    """The contract as JSON, rendered once per app (finishing it took 40 ms a request): it cannot change."""

    _rendered: bytes | None = None

    def render(self, request: Request, openapi_schema: dict[str, Any]) -> bytes:
        if self._rendered is None:
            self._rendered = msgspec.json.encode(finish_contract(openapi_schema))
        return self._rendered


class FinishedYamlRenderPlugin(YamlRenderPlugin):
    """The contract as YAML, rendered once per app."""

    _rendered: bytes | None = None

    def render(self, request: Request, openapi_schema: dict[str, Any]) -> bytes:
        if self._rendered is None:
            self._rendered = dump_contract(finish_contract(openapi_schema)).encode()
        return self._rendered


def main() -> None:
    """Write the committed contract: ``python -m service.api.contract``."""
    # Import this module by name: run as __main__ it is a second copy whose
    # example registry the routes never filled.
    from service.api import contract
    from service.api.app import create_app

    CONTRACT_PATH.parent.mkdir(parents=True, exist_ok=True)
    CONTRACT_PATH.write_text(contract.contract_yaml(create_app()), encoding="utf-8")
    sys.stdout.write(f"wrote {CONTRACT_PATH}\n")


if __name__ == "__main__":
    main()
