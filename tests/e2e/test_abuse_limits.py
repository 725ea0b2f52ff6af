"""Abuse limits: list lengths set by settings, and the compute deadline, each answered as problem+json."""

from __future__ import annotations

import pytest
from litestar.testing import TestClient

from service.api.app import create_app
from service.api.compute import ComputeDeadlineExceeded
from service.api.routes.v1.networks import solve_network
from service.api.schemas.v1 import networks as s
from service.api.settings import Settings

SOCKET = {"loop_impedance": {"resistance": "0.45 ohm"}, "earth_loop_impedance": {"resistance": "0.7 ohm"}}
LEAD = {"length": "2 m", "size": "1.5 mm^2"}
LAMP = {"rated_power": "10 W"}


def client(**settings) -> TestClient:
    return TestClient(create_app(Settings(**settings)), raise_server_exceptions=False)


def problem(response, status: int) -> dict:
    assert response.status_code == status, response.text
    assert response.headers["content-type"].startswith("application/problem+json")
    return response.json()


def chain(leads: int, appliances: int) -> dict:
    return {"supply": SOCKET, "leads": [LEAD] * leads, "appliances": [LAMP] * appliances}


def test_chain_limits_are_the_documented_defaults():
    with client() as c:
        assert c.post("/v1/lead-chains/analyse", json=chain(50, 100)).status_code == 200
        body = problem(c.post("/v1/lead-chains/analyse", json=chain(51, 101)), 422)
    messages = {e["pointer"]: e["message"] for e in body["errors"]}
    assert set(messages) == {"/leads", "/appliances"}
    assert "51 items" in messages["/leads"] and "AMPLINE_MAX_CHAIN_LEADS" in messages["/leads"]
    assert "at most 100" in messages["/appliances"] and "AMPLINE_MAX_CHAIN_APPLIANCES" in messages["/appliances"]


def test_chain_limits_follow_their_settings():
    with client(max_chain_leads=2, max_chain_appliances=1) as c:
        assert c.post("/v1/lead-chains/analyse", json=chain(2, 1)).status_code == 200
        body = problem(c.post("/v1/lead-chains/analyse", json=chain(3, 1)), 422)
        assert [e["pointer"] for e in body["errors"]] == ["/leads"]
        body = problem(c.post("/v1/lead-chains/analyse", json=chain(1, 2)), 422)
        assert [e["pointer"] for e in body["errors"]] == ["/appliances"]


def divider(pairs: int) -> dict:
    return {"frequency": 0, "elements": [
        {"type": "voltage_source", "id": "v", "pos": "a", "neg": "0", "voltage": 10},
        {"type": "resistor", "id": "r1", "a": "a", "b": "b", "resistance": 1},
        {"type": "resistor", "id": "r2", "a": "b", "b": "0", "resistance": 1},
    ], "options": {"thevenin_between": [{"a": "b", "b": "0"}] * pairs}}


def test_thevenin_pairs_are_a_batch_limited_by_a_setting():
    with client() as c:
        answer = c.post("/v1/networks/solve", json=divider(20))
        assert answer.status_code == 200 and len(answer.json()["thevenin"]) == 20
        body = problem(c.post("/v1/networks/solve", json=divider(21)), 422)
        assert body["errors"][0]["pointer"] == "/options/thevenin_between"
        assert "AMPLINE_MAX_THEVENIN_PAIRS" in body["errors"][0]["message"]
    with client(max_thevenin_pairs=1) as c:
        assert problem(c.post("/v1/networks/solve", json=divider(2)), 422)["errors"][0]["pointer"] == \
            "/options/thevenin_between"


def grid(n: int) -> dict:
    """An n x n resistor grid in the compact form: big enough to take far longer than 1 ms to solve."""
    a, b = [], []
    for r in range(n):
        for col in range(n):
            node = r * n + col + 1
            if col + 1 < n:
                a.append(node), b.append(node + 1)
            if r + 1 < n:
                a.append(node), b.append(node + n)
    return {"frequency": 0, "reference_node": "0", "elements": [
        {"type": "voltage_source", "id": "v", "pos": "1", "neg": "0", "voltage": 1},
        {"type": "resistor", "id": "r", "a": str(n * n), "b": "0", "resistance": 1},
        {"type": "resistor_array", "id": "grid", "a": a, "b": b, "resistance": [1.0] * len(a)},
    ], "options": {"node_voltages": "omit"}}


def test_a_calculation_past_the_deadline_gets_503_with_our_problem_type():
    with client(compute_deadline_s=0.001) as c:
        body = problem(c.post("/v1/networks/solve", json=grid(150)), 503)
        assert body["type"].endswith("/compute-deadline-exceeded")
        assert body["title"] == "Calculation deadline exceeded" and "0.001 s" in body["detail"]
        assert c.get("/healthz").status_code == 200  # the service itself is fine
    with client() as c:  # the same request inside the default deadline is answered
        assert c.post("/v1/networks/solve", json=grid(150)).status_code == 200


def test_the_solvers_own_deadline_gives_the_same_answer():
    """Newton is told the deadline too (it stops rather than running on in its thread)."""
    import msgspec

    network = msgspec.convert({"frequency": 50, "elements": [
        {"type": "voltage_source", "id": "v", "pos": "a", "neg": "0", "voltage": 230, "internal_resistance": 0.5},
        {"type": "load", "id": "motor", "a": "a", "b": "0", "rated_power": 3000, "rated_voltage": 230,
         "model": "constant_power"},
    ]}, s.NetworkSolveRequest)
    with pytest.raises(ComputeDeadlineExceeded):
        solve_network(network, Settings(compute_deadline_s=1e-9))
    assert solve_network(network, Settings()).converged


def fill(groups: int) -> dict:
    return {"raceway": "emt", "conductors": [{"type": "THHN", "size": "12 AWG", "count": 1}] * groups}


def test_raceway_fill_conductor_groups_are_limited_by_a_setting():
    with client() as c:  # default 50
        assert c.post("/v1/raceways/fill", json=fill(3)).status_code == 200
        body = problem(c.post("/v1/raceways/fill", json=fill(51)), 422)
    assert [e["pointer"] for e in body["errors"]] == ["/conductors"]
    assert "AMPLINE_MAX_FILL_CONDUCTOR_GROUPS" in body["errors"][0]["message"]
    with client(max_fill_conductor_groups=2) as c:
        assert c.post("/v1/raceways/fill", json=fill(2)).status_code == 200
        assert problem(c.post("/v1/raceways/fill", json=fill(3)), 422)["errors"][0]["pointer"] == "/conductors"


def _mesh(a, b, last: int) -> dict:
    return {"frequency": 0, "reference_node": "0", "elements": [
        {"type": "voltage_source", "id": "v", "pos": "1", "neg": "0", "voltage": 1},
        {"type": "resistor", "id": "r", "a": str(last), "b": "0", "resistance": 1},
        {"type": "resistor_array", "id": "mesh", "a": a, "b": b, "resistance": [1.0] * len(a)},
    ], "options": {"node_voltages": "omit"}}


def test_a_network_whose_factors_outgrow_the_memory_setting_gets_422():
    """Issue 21, item 4: a random topology's LU factors grow far faster than a grid's (George & Liu 1981, from
    memory); above AMPLINE_NETWORK_FACTOR_MAX_BYTES the answer is a 422 naming the network, a grid with more
    nodes and branches under the same setting is solved."""
    import random

    rnd = random.Random(7)
    n = 3000
    a = list(range(1, n)) + [rnd.randint(1, n) for _ in range(n)]
    b = list(range(2, n + 1)) + [rnd.randint(1, n) for _ in range(n)]
    pairs = [(x, y) for x, y in zip(a, b) if x != y]
    with client(network_factor_max_bytes=4 * 2**20) as c:
        body = problem(c.post("/v1/networks/solve", json=_mesh([p[0] for p in pairs], [p[1] for p in pairs], n)), 422)
        assert body["type"].endswith("/network-too-costly") and "4 MiB" in body["detail"]
        assert [e["pointer"] for e in body["errors"]] == ["/elements"]
        assert c.post("/v1/networks/solve", json=grid(60)).status_code == 200  # 3,600 nodes, 7,080 branches
