"""The costly shapes load_tests/survival.py sends are the shapes they claim to be (issue 21), so that a passing
survival run says something about the bounds in the README's Security section."""

from __future__ import annotations

import json
import random
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "load_tests"))
import survival  # noqa: E402

from service.api.settings import Settings
from service.units import MAX_QUANTITY_TEXT


def test_the_long_strings_are_just_past_the_cap_or_far_past_it():
    assert len(survival.OVER_64) == MAX_QUANTITY_TEXT + 1
    assert len(survival.SPACED) > 100_000
    routes = {item[2] for item in survival.costly_shapes(random.Random(1), {"long-strings": 6})}
    assert routes == {"/v1/conductors/resistance", "/v1/raceways/fill", "/v1/networks/solve"}


def test_the_empty_array_network_fits_the_body_limit_and_is_all_empty_arrays():
    body = survival._empty_arrays()
    assert len(body) <= Settings().max_network_body_bytes  # else it would test the 413, not the array checks
    elements = json.loads(body)["elements"]
    assert len(elements) == survival.EMPTY_ARRAY_ELEMENTS
    assert all(e["type"] == "resistor_array" and e["a"] == e["b"] == e["resistance"] == [] for e in elements)


def test_the_high_fill_network_is_connected_with_the_stated_size():
    network = json.loads(survival._high_fill(random.Random(3)))
    mesh = next(e for e in network["elements"] if e["type"] == "resistor_array")
    assert len(mesh["a"]) == len(mesh["b"]) == len(mesh["resistance"]) == survival.HIGH_FILL_BRANCHES
    assert all(a != b for a, b in zip(mesh["a"], mesh["b"]))
    # A spanning tree first: every node from 2 up joins one below it, so the whole mesh is one component.
    parent = {a: b for a, b in zip(mesh["a"][:survival.HIGH_FILL_NODES - 1], mesh["b"])}
    assert set(parent) == set(range(2, survival.HIGH_FILL_NODES + 1)) and all(parent[n] < n for n in parent)


def test_the_nesting_is_500_deep():
    for _, _, _, body, _ in survival.costly_shapes(random.Random(1), {"nesting-500": 2}):
        depth = deepest = 0
        for byte in body:
            depth += byte in b"[{"
            depth -= byte in b"]}"
            deepest = max(deepest, depth)
        assert deepest >= 500
