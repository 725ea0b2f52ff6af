"""Architecture rules that code review alone would let slip."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

CORE = Path(__file__).resolve().parents[2] / "service" / "core"
FORBIDDEN_IN_CORE = {"litestar", "msgspec", "structlog", "pint", "uvicorn", "httpx", "yaml"}


def _imported_roots(path: Path) -> set[str]:
    roots = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            roots |= {alias.name.split(".")[0] for alias in node.names}
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            roots.add(node.module.split(".")[0])
    return roots


@pytest.mark.parametrize("path", sorted(CORE.rglob("*.py")), ids=lambda p: str(p.relative_to(CORE)))
def test_core_imports_no_http_serialisation_units_or_logging_library(path):
    assert not (_imported_roots(path) & FORBIDDEN_IN_CORE)


def test_core_does_not_import_the_http_layer():
    for path in CORE.rglob("*.py"):
        text = path.read_text(encoding="utf-8")
        assert "service.api" not in text and "service.units" not in text, path
