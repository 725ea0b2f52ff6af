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

from service.api.schemas.v1.common import Strict

CONTRACT_PATH = Path(__file__).resolve().parents[2] / "openapi" / "v1" / "openapi.yaml"


def _strict_struct_names() -> set[str]:
    names: set[str] = set()
    pending = list(Strict.__subclasses__())
    while pending:
        cls = pending.pop()
        names.add(cls.__name__)
        pending.extend(cls.__subclasses__())
    return names


def finish_contract(document: dict[str, Any]) -> dict[str, Any]:
    """Return a copy of the generated document with request structs closed to unknown fields."""
    finished = msgspec.json.decode(msgspec.json.encode(document))  # plain builtins, a deep copy
    strict = _strict_struct_names()
    for name, schema in finished.get("components", {}).get("schemas", {}).items():
        if name.split("_")[-1] in strict or name in strict:
            schema["additionalProperties"] = False
    return finished


def contract_of(app: Litestar) -> dict[str, Any]:
    return finish_contract(app.openapi_schema.to_schema())


def contract_yaml(app: Litestar) -> str:
    return yaml.safe_dump(contract_of(app), sort_keys=True, allow_unicode=True, width=100)


class FinishedJsonRenderPlugin(JsonRenderPlugin):
    def render(self, request: Request, openapi_schema: dict[str, Any]) -> bytes:
        return msgspec.json.encode(finish_contract(openapi_schema))


class FinishedYamlRenderPlugin(YamlRenderPlugin):
    def render(self, request: Request, openapi_schema: dict[str, Any]) -> bytes:
        return yaml.safe_dump(finish_contract(openapi_schema), sort_keys=True, allow_unicode=True).encode()


def main() -> None:
    """Write the committed contract: ``python -m service.api.contract``."""
    from service.api.app import create_app

    CONTRACT_PATH.parent.mkdir(parents=True, exist_ok=True)
    CONTRACT_PATH.write_text(contract_yaml(create_app()), encoding="utf-8")
    sys.stdout.write(f"wrote {CONTRACT_PATH}\n")


if __name__ == "__main__":
    main()
