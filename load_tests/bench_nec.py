"""Benchmark of NEC conductor sizing and raceway fill, in process (a script, not a test).

    .venv/bin/python load_tests/bench_nec.py [--repeats N]

Scenarios (our own): the Texas dental clinic's 480Y/277 V feeder (150 A, 120 A continuous, 180 ft in EMT at
40 °C: one solve) and the Vermont barn sub-panel (240 V, 60 A, 250 ft of aluminium in PVC, the size forced up by
the drop: two solves), and a raceway fill of five conductors.  Measured in the same run:
  in-process   the NEC regime's size() / raceway_fill() on the typed core input (median per call);
  edge+core    the route function on a decoded request (unit parsing, sizing, response mapping).
HTTP is measured for the IEC regime by bench_sizing.py; the NEC routes share its path.
"""

from __future__ import annotations

import argparse

import msgspec

from benchlib import median_seconds

from service.api.nec_input import to_fill_conductors, to_nec_input
from service.api.routes.v1.raceways import compute_fill
from service.api.routes.v1.sizing import compute_size
from service.api.schemas.v1.raceways import RacewayFillRequest
from service.api.schemas.v1.sizing import SizingRequest
from service.core.sizing.nec import default_nec_tables, nec, raceway_fill

CLINIC = {"regime": "nec", "load": {"design_current": "150 A", "continuous_share": 0.8, "power_factor": 0.9},
          "circuit": {"length": "180 ft", "raceway": "emt", "ambient_temperature": "40 degC", "role": "feeder"},
          "supply": {"system": "480Y/277V"}}
BARN = {"regime": "nec", "load": {"design_current": "60 A", "continuous_share": 0.0},
        "circuit": {"length": "250 ft", "material": "aluminium", "conductor_type": "XHHW-2", "raceway": "pvc_40",
                    "role": "feeder"}, "supply": {"system": "240V"}, "limits": {"upstream_drop": 1.0}}
FILL = {"raceway": "emt", "conductors": [{"type": "THHN", "size": "1/0 AWG", "count": 4},
                                         {"type": "THHN", "size": "6 AWG", "count": 1}]}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--repeats", type=int, default=300)
    args = ap.parse_args()
    print(f"{'scenario':<30} {'solves':>6} {'in-process ms':>14} {'edge+core ms':>13}")
    for name, body in (("clinic feeder", CLINIC), ("barn sub-panel (drop)", BARN)):
        request = msgspec.json.decode(msgspec.json.encode(body), type=SizingRequest)
        spec, _ = to_nec_input(request)
        solves = nec().size(spec).solves
        core = median_seconds(lambda: nec().size(spec), args.repeats)
        edge = median_seconds(lambda: compute_size(request), args.repeats)
        print(f"{name:<30} {solves:>6} {core * 1e3:>14.3f} {edge * 1e3:>13.3f}")
    request = msgspec.json.decode(msgspec.json.encode(FILL), type=RacewayFillRequest)
    conductors = to_fill_conductors(request)
    core = median_seconds(lambda: raceway_fill(default_nec_tables(), "emt", conductors), args.repeats)
    edge = median_seconds(lambda: compute_fill(request), args.repeats)
    print(f"{'raceway fill (5 conductors)':<30} {'':>6} {core * 1e3:>14.3f} {edge * 1e3:>13.3f}")


if __name__ == "__main__":
    main()
