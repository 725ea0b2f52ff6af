"""Fuzzing every request decoder: any JSON body, or a valid example with one value replaced, gets a
clean answer (2xx, or a 4xx problem+json), never a 5xx."""

from __future__ import annotations

import copy
import json

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from litestar.testing import TestClient

from service.api.app import create_app
from service.api.contract import CONTRACT_PATH
from service.api.settings import Settings

DOCUMENT = yaml.safe_load(CONTRACT_PATH.read_text(encoding="utf-8"))
POSTS = {path: op for path, item in DOCUMENT["paths"].items() for method, op in item.items() if method == "post"}
EXAMPLES = {path: [e["value"] for e in op["requestBody"]["content"]["application/json"]["examples"].values()]
            for path, op in POSTS.items()}

json_leaf = st.one_of(st.none(), st.booleans(), st.integers(-2**70, 2**70), st.floats(), st.text(max_size=30),
                      st.sampled_from(["30 kg", "-1 m", "1e999 V", "NaN", "12 AWG", "0", "", "∞", "\x00"]))
json_value = st.recursive(json_leaf, lambda inner: st.one_of(st.lists(inner, max_size=4),
                                                             st.dictionaries(st.text(max_size=12), inner, max_size=4)),
                          max_leaves=20)


@pytest.fixture(scope="module")
def client():
    with TestClient(create_app(Settings()), raise_server_exceptions=False) as c:
        yield c


def post(client, path, body):
    # json.dumps writes NaN and Infinity as bare tokens, as careless clients do: those must be refused cleanly too.
    return client.post(path, content=json.dumps(body), headers={"content-type": "application/json"})


def assert_clean(response) -> None:
    assert response.status_code < 500, response.text[:500]
    if response.status_code >= 400:
        assert response.headers["content-type"].startswith("application/problem+json"), response.text[:200]


def _paths(value, prefix=()):
    yield prefix
    if isinstance(value, dict):
        for k, v in value.items():
            yield from _paths(v, (*prefix, k))
    elif isinstance(value, list):
        for i, v in enumerate(value):
            yield from _paths(v, (*prefix, i))


def _replaced(body, path, new):
    if not path:
        return new
    body = copy.deepcopy(body)
    target = body
    for part in path[:-1]:
        target = target[part]
    target[path[-1]] = new
    return body


FUZZ = settings(max_examples=60, deadline=None, derandomize=True,
                suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])


@pytest.mark.parametrize("path", sorted(POSTS))
@FUZZ
@given(body=json_value)
def test_any_json_body_is_answered_cleanly(client, path, body):
    assert_clean(post(client, path, body))


@pytest.mark.parametrize("path", sorted(POSTS))
@FUZZ
@given(data=st.data(), new=json_value)
def test_a_valid_body_with_one_value_replaced_is_answered_cleanly(client, path, data, new):
    example = data.draw(st.sampled_from(EXAMPLES[path]))
    where = data.draw(st.sampled_from(list(_paths(example))))
    assert_clean(post(client, path, _replaced(example, where, new)))


def test_every_route_that_takes_a_body_is_fuzzed_here():
    """The fuzzing above covers the contract's POST operations: every body-taking route must be one, with examples."""
    app = create_app(Settings())
    with_body = {route.path for route in app.routes for handler in getattr(route, "route_handlers", [])
                 if "data" in handler.parsed_fn_signature.parameters}
    assert with_body and with_body == set(POSTS)
    assert all(EXAMPLES[path] for path in with_body)
