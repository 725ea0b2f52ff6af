"""POST /v1/networks/solve over real HTTP: `python -m service` (uvicorn) on a free port, as `make run` starts it."""

from __future__ import annotations

import httpx
import msgspec
import numpy as np
import pytest

from service.api.routes.v1.networks import _EXAMPLES
from tests.e2e.conftest import CLEAN_EXITS, start_server


def test_networks_over_http_then_a_clean_stop():
    server = start_server(log_level="warning", max_network_nodes="5000")
    try:
        base = server.base_url + "/v1/networks/solve"
        (hall,) = [r for name, r in _EXAMPLES.items() if name.startswith("Village hall")]
        answer = httpx.post(base, json=msgspec.to_builtins(hall), timeout=30)
        assert answer.status_code == 200 and answer.headers["content-type"].startswith("application/json")
        body = answer.json()
        assert body["converged"] and body["power_balance_residual_va"] < 1e-6
        assert any("qualified, licensed person" in c for c in body["notes"]["cautions"])

        # A 60 x 60 grid of 1-ohm resistors, compact form, 1 V across opposite corners.  Worked by hand from
        # symmetry: mirroring about the main diagonal fixes both corners, so V(i, j) = V(j, i); a half turn swaps
        # the corners, so V(i, j) = 1 V - V(n-1-i, n-1-j).  On the anti-diagonal (i, n-1-i) both give V = 0.5 V.
        side = 60
        lab = np.arange(side * side).reshape(side, side) + 1
        lab[-1, -1] = 0
        a = np.concatenate([lab[:, :-1].ravel(), lab[:-1, :].ravel()]).tolist()
        b = np.concatenate([lab[:, 1:].ravel(), lab[1:, :].ravel()]).tolist()
        net = {"frequency": 0, "elements": [
            {"type": "resistor_array", "id": "mesh", "a": a, "b": b, "resistance": [1.0] * len(a)},
            {"type": "voltage_source", "id": "E", "pos": "1", "neg": "0", "voltage": 1}],
            "options": {"node_voltages": "columns"}}
        cols = httpx.post(base, json=net, timeout=60).json()["node_voltage_columns"]
        v = dict(zip(cols["nodes"], cols["magnitude_v"]))
        for i in range(side):
            assert v[str(int(lab[i, side - 1 - i]))] == pytest.approx(0.5, abs=1e-9)
        assert max(v.values()) == pytest.approx(1.0) and min(v.values()) > 0

        # The node limit given by AMPLINE_MAX_NETWORK_NODES holds over HTTP too.
        bigger = dict(net, elements=[{"type": "resistor_array", "id": "m", "a": list(range(1, 6001)),
                                      "b": list(range(2, 6002)), "resistance": [1.0] * 6000}, net["elements"][1]])
        refused = httpx.post(base, json=bigger, timeout=30)
        assert refused.status_code == 422 and refused.headers["content-type"].startswith("application/problem+json")
        assert refused.json()["errors"][0]["pointer"] == "/elements" and "at most 5000" in refused.json()["detail"]
        assert httpx.get(server.base_url + "/healthz").json() == {"status": "ok"}
    finally:
        assert server.stop() in CLEAN_EXITS
