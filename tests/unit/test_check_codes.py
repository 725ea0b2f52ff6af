"""Every check a sizing regime can produce has a code in the contract's CheckCode enum."""

from __future__ import annotations

import ast
from pathlib import Path

from service.core.sizing.codes import CHECK_CODES

SIZING = Path(__file__).resolve().parents[2] / "service" / "core" / "sizing"
# The functions that make a check, and the position of the check's name among their arguments.
MAKERS = {"Check": 0, "_check": 0, "check": 0, "_adiabatic": 1}


def _literal_names() -> set[tuple[str, str]]:
    found = set()
    for path in SIZING.rglob("*.py"):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if not isinstance(node, ast.Call) or not node.args:
                continue
            fn = node.func.id if isinstance(node.func, ast.Name) else getattr(node.func, "attr", None)
            at = MAKERS.get(fn)
            if at is None or len(node.args) <= at:
                continue
            arg = node.args[at]
            if isinstance(arg, ast.Constant) and isinstance(arg.value, str):
                found.add((path.name, arg.value))
    return found


def test_every_check_name_in_the_core_is_a_listed_code():
    names = _literal_names()
    assert len(names) >= 10  # the scan sees the checks (a scan that finds nothing would prove nothing)
    unlisted = sorted(n for n in names if n[1] not in CHECK_CODES)
    assert not unlisted, f"check names missing from a regime's CHECK_ORDER: {unlisted}"


def test_codes_are_unique_snake_case():
    assert len(set(CHECK_CODES)) == len(CHECK_CODES)
    assert all(c.replace("_", "").isalnum() and c == c.lower() for c in CHECK_CODES)
