"""Benchmark of conductor sizing (a script, not a test).

    .venv/bin/python load_tests/bench_sizing.py [--repeats N] [--seconds S]

Scenario: a workshop sub-main, 22 kW three-phase at 0.85, 60 m clipped direct in a group of three, XLPE,
a gG fuse chosen by the service (one solve), and a 140 m single-phase run whose size the voltage drop forces
up (two solves).  Measured in the same run:
  in-process   size_conductor() on the typed core input (median per sizing);
  edge+core    the route function on a decoded request (unit parsing, sizing, response mapping);
  HTTP         POST /v1/conductors/size to a real server (python -m service, uvicorn, loopback): requests/s
               of sequential keep-alive requests for a fixed time, and the median latency;
  baseline     GET /healthz on the same server, the same way: the bare endpoint.
Ratios are of medians (latency) and of rates (throughput).
"""

from __future__ import annotations

import argparse
import time

import msgspec

from benchlib import BenchServer, median_seconds

from service.api.routes.v1.sizing import compute_size
from service.api.schemas.v1.sizing import SizingRequest
from service.api.sizing_input import to_sizing_input
from service.core.sizing import size_conductor

SUB_MAIN = {
    "load": {"phases": "three", "power": "22 kW", "power_factor": 0.85},
    "circuit": {"length": "60 m", "method": "C", "insulation": "xlpe_epr_90",
                "grouping": {"circuits": 3, "arrangement": "single_layer_wall"}},
    "protection": {"device": {"type": "gG"}, "circuit_kind": "distribution"},
    "supply": {"ze": "0.2 ohm", "prospective_fault_current": "8 kA"},
}
LONG_RUN = {
    "load": {"design_current": "20 A", "power_factor": 0.95},
    "circuit": {"length": "140 m", "method": "C"},
    "supply": {"ze": "0.35 ohm"},
}


def rate(fn, seconds: float) -> float:
    """Sequential calls per second for about ``seconds`` (bounded in time and count)."""
    for _ in range(20):
        fn()
    count, started = 0, time.perf_counter()
    while time.perf_counter() - started < seconds and count < 200_000:
        fn()
        count += 1
    return count / (time.perf_counter() - started)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--repeats", type=int, default=300)
    ap.add_argument("--seconds", type=float, default=5.0)
    args = ap.parse_args()
    rows = []
    for name, body in (("sub-main (1 solve)", SUB_MAIN), ("long run (2 solves)", LONG_RUN)):
        raw = msgspec.json.encode(body)
        request = msgspec.json.decode(raw, type=SizingRequest)
        spec, _ = to_sizing_input(request)
        solves = size_conductor(spec).solves
        core = median_seconds(lambda: size_conductor(spec), args.repeats)
        edge = median_seconds(lambda: compute_size(request), args.repeats)
        rows.append((name, solves, core, edge, raw))
    server = BenchServer()
    try:
        http = [(name, median_seconds(lambda: server.post("/v1/conductors/size", raw), args.repeats),
                 rate(lambda: server.post("/v1/conductors/size", raw), args.seconds)) for name, _, _, _, raw in rows]
        bare_latency = median_seconds(lambda: server.client.get(server.base + "/healthz"), args.repeats)
        bare_rate = rate(lambda: server.client.get(server.base + "/healthz"), args.seconds)
    finally:
        server.close()
    print(f"{'scenario':<22} {'solves':>6} {'in-process ms':>14} {'edge+core ms':>13} {'HTTP ms':>8} {'HTTP req/s':>11} "
          f"{'/ baseline req/s':>17}")
    for (name, solves, core, edge, _), (_, latency, per_s) in zip(rows, http):
        print(f"{name:<22} {solves:>6} {core * 1e3:>14.3f} {edge * 1e3:>13.3f} {latency * 1e3:>8.3f} {per_s:>11.0f} "
              f"{per_s / bare_rate:>17.2f}")
    print(f"{'baseline GET /healthz':<22} {'':>6} {'':>14} {'':>13} {bare_latency * 1e3:>8.3f} {bare_rate:>11.0f} "
          f"{1.0:>17.2f}")


if __name__ == "__main__":
    main()
