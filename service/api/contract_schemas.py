"""Schema shapes the client generators need and litestar does not emit.

Three rewrites of the generated components, each for a generator a caller uses as it is:

* every closed set with a ``title`` (a ``Literal`` alias with ``Meta(title=...)``) becomes a named enum component,
  referenced wherever the set appears, and a nullable one is ``oneOf: [{$ref}, {type: 'null'}]``: inline, Python's
  generator makes three identical classes of each nullable enum and TypeScript's a plain string;
* every ``oneOf`` of tagged structs gets a ``discriminator`` with its mapping, so a caller narrows on ``type``;
* a ``default`` moves into the field's description (``Default: ...``): openapi-typescript makes a field with a
  default required, so a request that leaves it out would not compile, although the service fills it in.
"""

from __future__ import annotations

import json
from typing import Any, Iterator

COMPONENTS = "#/components/schemas/"


def _nodes(value: Any) -> Iterator[dict[str, Any]]:
    """Every schema object below ``value``, parents before children, in a fixed order."""
    if isinstance(value, dict):
        yield value
        for key in sorted(value):
            yield from _nodes(value[key])
    elif isinstance(value, list):
        for item in value:
            yield from _nodes(item)


def _enum_component(schema: dict[str, Any]) -> dict[str, Any]:
    values = [v for v in schema["enum"] if v is not None]
    kinds = sorted({"string" if isinstance(v, str) else "integer" if isinstance(v, int) else "number" for v in values})
    component: dict[str, Any] = {"title": schema["title"], "enum": values,
                                 "type": kinds[0] if len(kinds) == 1 else kinds}
    return component


def _titled_enum(node: dict[str, Any]) -> bool:
    return isinstance(node.get("enum"), list) and isinstance(node.get("title"), str) and len(node["enum"]) > 1


def hoist_named_enums(document: dict[str, Any]) -> None:
    """Move every titled enum to ``components/schemas/<title>`` and reference it; two sets of one title are an error."""
    schemas = document.setdefault("components", {}).setdefault("schemas", {})
    found: dict[str, dict[str, Any]] = {}
    for node in list(_nodes(document.get("paths", {}))) + list(_nodes(schemas)):
        if not _titled_enum(node):
            continue
        component = _enum_component(node)
        title = component["title"]
        if title in found and found[title]["enum"] != component["enum"]:
            raise ValueError(f"two closed sets are both titled {title!r}: {found[title]['enum']} and {component['enum']}")
        if title in schemas and title not in found:
            raise ValueError(f"the enum title {title!r} is also the name of a component")
        if title not in found:
            component["description"] = node.get("description", f"One of the {title} values.")
            found[title] = component
        nullable = None in node["enum"]
        keep = {k: v for k, v in node.items() if k in ("description", "default", "examples")}
        node.clear()
        ref = {"$ref": COMPONENTS + title}
        node.update({"oneOf": [ref, {"type": "null"}]} if nullable else ref)
        node.update(keep)
    for title, component in found.items():
        schemas[title] = component


def _collapse_nullable_unions(document: dict[str, Any]) -> None:
    """``oneOf: [{oneOf: [$ref, null]}, null]`` (a nullable alias made optional again) to one level."""
    for node in _nodes(document):
        branches = node.get("oneOf")
        if not isinstance(branches, list):
            continue
        flat: list[Any] = []
        for branch in branches:
            inner = branch.get("oneOf") if isinstance(branch, dict) and set(branch) == {"oneOf"} else None
            flat.extend(inner if inner else [branch])
        unique = [json.loads(s) for s in dict.fromkeys(json.dumps(b, sort_keys=True) for b in flat)]
        node["oneOf"] = unique


def _tag_of(component: dict[str, Any]) -> str | None:
    tag = component.get("properties", {}).get("type", {})
    if "const" in tag:
        return tag["const"]
    values = tag.get("enum")
    return values[0] if isinstance(values, list) and len(values) == 1 else None


def add_discriminators(document: dict[str, Any]) -> None:
    """A ``discriminator`` on every union whose members are all structs tagged by a ``type`` they require."""
    schemas = document.get("components", {}).get("schemas", {})
    for node in _nodes(document):
        branches = node.get("oneOf")
        if not isinstance(branches, list) or len(branches) < 2 or "discriminator" in node:
            continue
        mapping: dict[str, str] = {}
        for branch in branches:
            ref = branch.get("$ref", "") if isinstance(branch, dict) else ""
            component = schemas.get(ref.removeprefix(COMPONENTS)) if ref.startswith(COMPONENTS) else None
            tag = _tag_of(component) if component else None
            if tag is None or "type" not in component.get("required", []) or tag in mapping:
                break
            mapping[tag] = ref
        else:
            node["discriminator"] = {"propertyName": "type", "mapping": mapping}


def _shown(value: Any) -> str:
    return json.dumps(value, ensure_ascii=False)


def defaults_into_descriptions(document: dict[str, Any]) -> None:
    """Every property's ``default`` stated in its description instead (see the module docstring)."""
    for schema in document.get("components", {}).get("schemas", {}).values():
        for prop in schema.get("properties", {}).values():
            if "default" not in prop:
                continue
            default = prop.pop("default")
            if default is None:
                continue  # an optional field left out: "absent" says it
            text = prop.get("description", "").rstrip()
            prop["description"] = (text + " " if text else "") + f"Default: {_shown(default)}."


def finish_schemas(document: dict[str, Any]) -> None:
    hoist_named_enums(document)
    _collapse_nullable_unions(document)
    add_discriminators(document)
    defaults_into_descriptions(document)
