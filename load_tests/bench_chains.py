"""Benchmark of the lead-chain analysis (a script, not a test).

    .venv/bin/python load_tests/bench_chains.py [--repeats N]

Chain: a socket (B16 with a 30 mA RCD, measured loop impedances), ten 10 m leads of 1.5 mm² flexible cord
end to end, one appliance on each outlet (a mix of heaters, lamps and regulated electronics: constant
impedance, constant current and constant power). Measured in the same run:
  in-process   analyse_chain() on the typed model (the edge's parsing excluded);
  edge+core    the route function on a decoded request (unit parsing, analysis, response mapping);
  HTTP         POST /v1/lead-chains/analyse to a real server over loopback, client to client;
  baseline     GET /healthz on the same server: the bare endpoint, the fixed cost of one HTTP round trip.
Medians; ratios are ratios of medians.
"""

from __future__ import annotations

import argparse

import msgspec

from benchlib import BenchServer, median_seconds

from service.api.routes.v1.chains import analyse
from service.api.schemas.v1.chains import LeadChainRequest
from service.api.chain_input import to_chain
from service.core.chains import analyse_chain

MODELS = ("constant_impedance", "constant_current", "constant_power")


def request_body() -> dict:
    return {
        "supply": {"loop_impedance": {"resistance": "0.45 ohm", "reactance": "0.03 ohm"},
                   "earth_loop_impedance": {"resistance": "0.7 ohm", "reactance": "0.03 ohm"},
                   "device": {"type": "B", "rated_current": "16 A"}, "rcd": {"rated_residual_current": "30 mA"}},
        "leads": [{"name": f"lead {k}", "length": "10 m", "size": "1.5 mm^2"} for k in range(10)],
        "appliances": [{"name": f"appliance {k}", "outlet": k, "rated_power": 80 + 20 * k, "power_factor": 0.95,
                        "model": MODELS[k % 3]} for k in range(10)],
    }


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--repeats", type=int, default=200)
    args = ap.parse_args()
    body = request_body()
    raw = msgspec.json.encode(body)
    request = msgspec.json.decode(raw, type=LeadChainRequest)
    chain = to_chain(request)
    core = median_seconds(lambda: analyse_chain(chain), args.repeats)
    edge = median_seconds(lambda: analyse(request), args.repeats)
    server = BenchServer()
    try:
        http = median_seconds(lambda: server.post("/v1/lead-chains/analyse", raw), args.repeats)
        bare = median_seconds(lambda: server.client.get(server.base + "/healthz"), args.repeats)
    finally:
        server.close()
    print(f"{'measure':<12} {'median ms':>10} {'/ baseline':>11}")
    for name, value in (("in-process", core), ("edge+core", edge), ("HTTP", http), ("baseline", bare)):
        print(f"{name:<12} {value * 1e3:>10.3f} {value / bare:>11.2f}")
    print(f"target: in-process under 1 ms -> {'met' if core < 1e-3 else 'not met'} ({core * 1e3:.2f} ms)")


if __name__ == "__main__":
    main()
