"""refuse_duplicate_keys: a repeated key anywhere in a body is found and named by its JSON pointer.

RFC 8259 §4 (names within an object SHOULD be unique) and RFC 6901 (JSON pointer) are the references.
"""

from __future__ import annotations

import json

import pytest
from hypothesis import given, strategies as st

from service.api.duplicate_keys import DuplicateKey, refuse_duplicate_keys

_KEYS = st.text(alphabet="abc/~", min_size=1, max_size=3)
_TREES = st.recursive(st.none() | st.integers() | st.text(max_size=3),
                      lambda inner: st.lists(inner, max_size=3) | st.dictionaries(_KEYS, inner, max_size=3),
                      max_leaves=20)


@given(_TREES)
def test_a_body_without_repeated_keys_passes(tree):
    refuse_duplicate_keys(json.dumps(tree).encode())


def _objects(tree, path=()):
    """Every object of the tree with its path, in document order."""
    if isinstance(tree, dict):
        yield tree, path
        for key, value in tree.items():
            yield from _objects(value, (*path, key))
    elif isinstance(tree, list):
        for index, value in enumerate(tree):
            yield from _objects(value, (*path, index))


def _dumps_with_repeat(tree, target):
    """JSON text of the tree, with the first key of the object ``target`` written a second time at its end."""
    if isinstance(tree, dict):
        parts = [f"{json.dumps(k)}: {_dumps_with_repeat(v, target)}" for k, v in tree.items()]
        if tree is target:
            parts.append(f"{json.dumps(next(iter(tree)))}: null")
        return "{" + ", ".join(parts) + "}"
    if isinstance(tree, list):
        return "[" + ", ".join(_dumps_with_repeat(v, target) for v in tree) + "]"
    return json.dumps(tree)


@given(_TREES, st.data())
def test_a_repeated_key_is_named_wherever_it_is(tree, data):
    candidates = [(obj, path) for obj, path in _objects(tree) if obj]
    if not candidates:
        return
    # the first object in document order that gets the repeat is the one named
    index = data.draw(st.integers(0, len(candidates) - 1))
    target, path = candidates[index]
    with pytest.raises(DuplicateKey) as found:
        refuse_duplicate_keys(_dumps_with_repeat(tree, target).encode())
    assert found.value.location == (*path, next(iter(target)))


def test_the_first_repeat_in_document_order_is_named():
    body = b'{"a": {"x": 1, "x": 2}, "b": [{"y": 1, "y": 2}], "a": 3}'
    with pytest.raises(DuplicateKey) as found:
        refuse_duplicate_keys(body)
    assert found.value.location == ("a", "x")


def test_a_body_the_scanner_cannot_read_is_refused_not_let_through():
    with pytest.raises(DuplicateKey) as found:
        refuse_duplicate_keys(b"[" * 100_000 + b"]" * 100_000)  # deeper than Python's parser goes
    assert found.value.location == ()
