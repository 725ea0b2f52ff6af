"""Benchmark of the lead-chain analysis (a script, not a test).

    .venv/bin/python load_tests/bench_chains.py [--repeats N]

Chain: a socket (B16 with a 30 mA RCD, measured loop impedances), ten 10 m leads of 1.5 mm² flexible cord
end to end, one appliance on each outlet (a mix of heaters, lamps and regulated electronics: constant
impedance, constant current and constant power). Measured in the same run:
  in-process   analyse_chain() on the typed model (the edge's parsing excluded);
  edge+core    the route function on a decoded request (unit parsing, analysis, response mapping);
  HTTP         POST /v1/lead-chains/analyse to a real server over loopback, client to client;
  baseline     GET /healthz on the same server: the bare endpoint, the fixed cost of one HTTP round trip.
Then the radial sweep against the general network solver, in the same run, samples interleaved (one of each
in turn, so the machine's load drifts over both alike): the whole analysis, solve_chain() (the load flow with
conductor temperatures and the fault loops) and the length search (length_limits()), each once as the service
runs it (the sweep, service/core/network/radial.py) and once with every ladder solve refused, so that each
solve goes to the general solver (service/core/network), as before the sweep.
Medians; ratios are ratios of medians.
"""

from __future__ import annotations

import argparse
import statistics
import time
from unittest import mock

import msgspec

from benchlib import BenchServer, median_seconds

from service.api.routes.v1.chains import analyse
from service.api.schemas.v1.chains import LeadChainRequest
from service.api.chain_input import to_chain
from service.core.chains import analyse_chain
from service.core.chains.circuit import solve_chain
from service.core.chains.lengths import length_limits
from service.core.chains.ratings import chain_ratings
from service.core.cords import default_cords
from service.core.network.radial import Ladder

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


def general_solver_only():
    """Every ladder solve declined: the chain code then solves each network with the general solver."""
    return mock.patch.object(Ladder, "solve", lambda self, *args, **kwargs: None)


def interleaved_medians(pairs: dict, repeats: int) -> dict:
    """Median seconds of each (sweep, general) pair of callables, one sample of each in turn."""
    samples = {name: ([], []) for name in pairs}
    for _ in range(3):  # warm-up
        for sweep, general in pairs.values():
            sweep()
            with general_solver_only():
                general()
    for _ in range(repeats):
        for name, (sweep, general) in pairs.items():
            started = time.perf_counter()
            sweep()
            samples[name][0].append(time.perf_counter() - started)
            with general_solver_only():
                started = time.perf_counter()
                general()
                samples[name][1].append(time.perf_counter() - started)
    return {name: (statistics.median(a), statistics.median(b)) for name, (a, b) in samples.items()}


def sweep_against_general(chain, repeats: int) -> dict:
    ratings = tuple(r.effective_a for r in chain_ratings(chain, default_cords()))
    fault = analyse_chain(chain).fault
    jobs = {
        "analysis": lambda: analyse_chain(chain),
        "solve_chain": lambda: solve_chain(chain, ratings),
        "length search": lambda: length_limits(chain, fault),
    }
    return interleaved_medians({name: (job, job) for name, job in jobs.items()}, repeats)


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
    compared = sweep_against_general(chain, args.repeats)
    print()
    print(f"{'in-process':<14} {'sweep ms':>9} {'general ms':>11} {'general / sweep':>16}")
    for name, (sweep, general) in compared.items():
        print(f"{name:<14} {sweep * 1e3:>9.3f} {general * 1e3:>11.3f} {general / sweep:>16.2f}")
    search = compared["length search"][0]
    print(f"target: length search under 2 ms -> {'met' if search < 2e-3 else 'not met'} ({search * 1e3:.2f} ms)")


if __name__ == "__main__":
    main()
