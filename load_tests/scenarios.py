"""The request mix of the load tests: scenarios of our own, as plain JSON, one row of the report per entry.

Plain data and the standard library only, so that the locust process (load_tests/locustfile.py) does not load
the service's own modules.  tests/unit/test_deploy_load_scenarios.py checks that every body here is answered
200 by the app, so the mix cannot drift away from the API unnoticed.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field

BARE = "GET /healthz"


@dataclass(frozen=True)
class Entry:
    """One row of the load report: requests to one endpoint, its bodies rotated."""

    name: str
    method: str
    path: str  # GET entries rotate query strings in ``queries``; POST entries rotate ``bodies``
    weight: int  # share in the realistic mix
    bodies: tuple[dict, ...] = ()
    queries: tuple[str, ...] = ("",)
    calculation: bool = True  # held to the throughput target against the bare endpoint
    pending: str = ""  # non-empty: the route is not served yet; the entry is skipped and this is printed

    def encoded(self) -> tuple[bytes, ...]:
        return tuple(json.dumps(b, separators=(",", ":")).encode() for b in self.bodies)


SOCKET_16A = {  # a 16 A socket on a type B breaker with a 30 mA RCD; loop impedances as measured there
    "loop_impedance": {"resistance": "0.5 ohm"}, "earth_loop_impedance": {"resistance": "0.8 ohm"},
    "device": {"type": "B", "rated_current": "16 A"}, "rcd": {"rated_residual_current": "30 mA"},
}

LEAD_CHAINS = (
    {  # market stall: a reel half on its drum, a counter lead, a chest freezer and the lights
        "supply": {**SOCKET_16A, "ambient_temperature": "22 degC"},
        "leads": [{"name": "stall reel", "length": "25 m", "size": "1.5 mm^2", "reel": {"wound": "partly", "layers_on_drum": 2}},
                  {"name": "counter lead", "length": "5 m", "size": "1.5 mm^2", "plug_fuse": "13 A"}],
        "appliances": [{"name": "chest freezer", "rated_power": "400 W", "power_factor": 0.8, "model": "constant_current"},
                       {"name": "LED lights", "rated_power": "120 W", "power_factor": 0.9, "model": "constant_power", "outlet": 0}],
    },
    {  # workshop feed: a bench grinder and a fan heater on 15 m of 2.5 mm² flexible cord
        "supply": {"prospective_fault_current": "1.1 kA", "prospective_earth_fault_current": "600 A", "earthing": "TN-C-S",
                   "device": {"type": "B", "rated_current": "20 A"}},
        "leads": [{"name": "workshop lead", "length": "15 m", "size": "2.5 mm^2", "plug_fuse": "13 A"}],
        "appliances": [{"name": "bench grinder", "rated_power": "550 W", "power_factor": 0.75, "model": "constant_current"},
                       {"name": "fan heater", "rated_power": "2 kW", "heating": {"energy": "1.5 kWh"}, "hours_per_year": 300}],
        "limits": {"tariff_per_kwh": 0.3},
    },
    {  # village hall refit: a floor sander and work lights through a fully unwound reel and two leads
        "supply": {**SOCKET_16A, "ambient_temperature": "18 degC"},
        "leads": [{"name": "site reel", "length": "30 m", "size": "2.5 mm^2", "reel": {"wound": "none"}, "plug_fuse": "13 A"},
                  {"name": "stage lead", "length": "10 m", "size": "1.5 mm^2", "plug_fuse": "13 A"},
                  {"name": "hall lead", "length": "10 m", "size": "1.5 mm^2", "plug_fuse": "13 A"}],
        "appliances": [{"name": "floor sander", "rated_power": "1.5 kW", "power_factor": 0.8, "model": "constant_current"},
                       {"name": "work lights", "outlet": 1, "rated_power": "200 W", "power_factor": 0.9, "model": "constant_power"}],
    },
)

RESISTANCE_RUNS = (
    {"size": "2.5 mm^2", "length": "25 m", "material": "copper", "conductor_class": 5, "conductor_temperature": "70 degC"},
    {"size": "12 AWG", "length": "98 ft", "conductor_temperature": 60},
    {"size": "16 mm^2", "length": "40 m", "material": "aluminium", "conductor_class": 2},
)

SMALL_NETWORKS = (
    {  # garden workshop: 30 m of 6 mm² from the house, a heater and a compressor
        "frequency": "50 Hz",
        "elements": [
            {"type": "voltage_source", "id": "supply", "pos": "cu", "neg": "0", "voltage": "230 V", "internal_resistance": "0.3 ohm"},
            {"type": "cable_run", "id": "feed", "a": "cu", "b": "shed", "length": "30 m", "size": "6 mm^2", "go_and_return": True},
            {"type": "load", "id": "heater", "a": "shed", "b": "0", "rated_power": "2 kW", "rated_voltage": "230 V"},
            {"type": "load", "id": "compressor", "a": "shed", "b": "0", "rated_power": "1.1 kW", "rated_voltage": "230 V",
             "power_factor": 0.8, "model": "constant_power"},
        ],
        "options": {"thevenin_between": [{"a": "shed", "b": "0"}]},
    },
    {  # market stall on a 12 V battery: LED strip and a till (DC)
        "frequency": 0, "reference_node": "neg",
        "elements": [
            {"type": "voltage_source", "id": "battery", "pos": "pos", "neg": "neg", "voltage": "12.6 V", "internal_resistance": "0.02 ohm"},
            {"type": "cable_run", "id": "feed", "a": "pos", "b": "stall", "length": "6 m", "size": "2.5 mm^2",
             "conductor_class": 5, "go_and_return": True},
            {"type": "load", "id": "led_strip", "a": "stall", "b": "neg", "rated_power": "36 W", "rated_voltage": "12 V"},
            {"type": "load", "id": "till", "a": "stall", "b": "neg", "rated_power": "24 W", "rated_voltage": "12 V", "model": "constant_power"},
        ],
    },
    {  # village hall refit: 25 m of 10 mm² sub-main, water heater, lighting, dishwasher
        "frequency": "50 Hz", "reference_node": "N",
        "elements": [
            {"type": "voltage_source", "id": "supply", "pos": "origin", "neg": "N", "voltage": "230 V",
             "internal_resistance": "0.25 ohm", "internal_reactance": "0.15 ohm"},
            {"type": "cable_run", "id": "sub_main", "a": "origin", "b": "hall_db", "length": "25 m", "size": "10 mm^2",
             "conductor_temperature": "70 degC", "go_and_return": True, "reactance_per_length": "0.08 mohm/m"},
            {"type": "load", "id": "water_heater", "a": "hall_db", "b": "N", "rated_power": "3 kW", "rated_voltage": "230 V"},
            {"type": "load", "id": "lighting", "a": "hall_db", "b": "N", "rated_power": "1.2 kW", "rated_voltage": "230 V",
             "power_factor": 0.95, "model": "constant_power"},
            {"type": "load", "id": "dishwasher", "a": "hall_db", "b": "N", "rated_power": "2.2 kW", "rated_voltage": "230 V",
             "power_factor": 0.9, "model": "constant_current"},
        ],
        "options": {"thevenin_between": [{"a": "hall_db", "b": "N"}]},
    },
)


def market_hall_feeder(stalls: int = 24) -> dict:
    """A covered market: a 10 mm² feeder along the hall, a 6 m drop of 2.5 mm² to each stall, each stall with
    a refrigerated counter (constant power) and lighting (constant impedance): about a hundred elements."""
    elements: list[dict] = [
        {"type": "voltage_source", "id": "supply", "pos": "j0", "neg": "N", "voltage": "230 V",
         "internal_resistance": "0.2 ohm", "internal_reactance": "0.1 ohm"},
    ]
    for k in range(stalls):
        elements += [
            {"type": "cable_run", "id": f"feeder_{k}", "a": f"j{k}", "b": f"j{k + 1}", "length": "4 m", "size": "10 mm^2",
             "conductor_temperature": "50 degC", "go_and_return": True},
            {"type": "cable_run", "id": f"drop_{k}", "a": f"j{k + 1}", "b": f"stall_{k}", "length": "6 m", "size": "2.5 mm^2",
             "conductor_class": 5, "go_and_return": True},
            {"type": "load", "id": f"counter_{k}", "a": f"stall_{k}", "b": "N", "rated_power": f"{300 + 25 * (k % 9)} W",
             "rated_voltage": "230 V", "power_factor": 0.85, "model": "constant_power"},
            {"type": "load", "id": f"lights_{k}", "a": f"stall_{k}", "b": "N", "rated_power": "80 W", "rated_voltage": "230 V"},
        ]
    return {"frequency": "50 Hz", "reference_node": "N", "elements": elements,
            "options": {"thevenin_between": [{"a": f"stall_{stalls - 1}", "b": "N"}]}}


def workshop_floor_mesh(side: int = 40) -> dict:
    """A workshop floor's bonding mesh as a resistor grid (side x side nodes, 0.02 ohm per bar), 1 A injected at
    one corner and taken out at the far one (DC): about 3,100 branches in the compact array form."""
    label = [[1 + i * side + j for j in range(side)] for i in range(side)]
    label[-1][-1] = 0
    a, b = [], []
    for i in range(side):
        for j in range(side):
            if j + 1 < side:
                a.append(label[i][j]); b.append(label[i][j + 1])  # noqa: E702
            if i + 1 < side:
                a.append(label[i][j]); b.append(label[i + 1][j])  # noqa: E702
    return {"frequency": 0, "elements": [
        {"type": "resistor_array", "id": "mesh", "a": a, "b": b, "resistance": [0.02] * len(a)},
        {"type": "current_source", "id": "fault", "a": "0", "b": "1", "current": 1.0}],
        "options": {"node_voltages": "columns"}}


MEDIUM_NETWORKS = (market_hall_feeder(), workshop_floor_mesh())

SIZINGS = (
    {  # market supply pillar: 32 A single-phase to the stalls' board, 45 m clipped to a wall
        "load": {"design_current": "32 A", "power_factor": 0.9},
        "circuit": {"length": "45 m", "method": "C"},
        "protection": {"device": {"type": "B", "rated_current": "32 A"}, "circuit_kind": "distribution"},
        "supply": {"ze": "0.35 ohm", "prospective_fault_current": "4 kA"},
    },
    {  # garden workshop feed: 7 kW single-phase, 30 m buried in a duct, the service picks the device
        "load": {"power": "7 kW", "power_factor": 0.95},
        "circuit": {"length": "30 m", "method": "D1", "ambient_temperature": "15 degC"},
        "protection": {"device": {"type": "C"}, "rcd": {"rated_residual_current": "30 mA"}},
        "supply": {"ze": "0.8 ohm"},
    },
    {  # village hall refit: stage lighting, 3 kW on 18 m in conduit, multicore in conduit, grouped with two other circuits
        "load": {"power": "3 kW"},
        "circuit": {"length": "18 m", "method": "B2", "ambient_temperature": "30 degC",
                    "grouping": {"circuits": 3, "arrangement": "bunched"}},
        "protection": {"device": {"type": "B", "rated_current": "16 A"}, "circuit_kind": "fixed_equipment"},
        "supply": {"ze": "0.35 ohm"},
        "limits": {"use": "lighting"},
    },
)

VERIFICATIONS = (
    {  # workshop feed as installed: 6 mm² on a 32 A type B, 30 m clipped direct
        "load": {"design_current": "28 A"},
        "circuit": {"length": "30 m", "method": "C", "size": "6 mm^2"},
        "protection": {"device": {"type": "B", "rated_current": "32 A"}, "circuit_kind": "fixed_equipment"},
        "supply": {"ze": "0.35 ohm", "prospective_fault_current": "3 kA"},
    },
    {  # market stall sockets: 2.5 mm² on a 20 A type B with a 30 mA RCD, 25 m of multicore in conduit
        "load": {"design_current": "16 A"},
        "circuit": {"length": "25 m", "method": "B2", "size": "2.5 mm^2"},
        "protection": {"device": {"type": "B", "rated_current": "20 A"}, "circuit_kind": "socket_outlets",
                       "rcd": {"rated_residual_current": "30 mA"}},
        "supply": {"ze": "0.8 ohm"},
    },
)

ENTRIES: tuple[Entry, ...] = (
    Entry("GET /v1/meta", "GET", "/v1/meta", weight=1, calculation=False),
    Entry("GET /v1/conductors", "GET", "/v1/conductors", weight=3, calculation=False,
          queries=("", "?material=copper&conductor_class=5", "?size_system=awg", "?material=aluminium")),
    Entry("POST /v1/conductors/resistance", "POST", "/v1/conductors/resistance", weight=2, bodies=RESISTANCE_RUNS),
    Entry("POST /v1/lead-chains/analyse", "POST", "/v1/lead-chains/analyse", weight=4, bodies=LEAD_CHAINS),
    Entry("POST /v1/networks/solve small", "POST", "/v1/networks/solve", weight=3, bodies=SMALL_NETWORKS),
    Entry("POST /v1/networks/solve medium", "POST", "/v1/networks/solve", weight=1, bodies=MEDIUM_NETWORKS),
    # Conductor sizing and verification: written while those routes were still being finished; the report skips
    # an entry whose route the server does not serve (see load.py), and the unit test checks every body.
    Entry("POST /v1/conductors/size", "POST", "/v1/conductors/size", weight=4, bodies=SIZINGS),
    Entry("POST /v1/conductors/verify", "POST", "/v1/conductors/verify", weight=3, bodies=VERIFICATIONS),
)


def active_entries(names: list[str] | None = None) -> list[Entry]:
    """Entries that can run (not pending), optionally only those named."""
    chosen = [e for e in ENTRIES if not e.pending]
    if names is not None:
        chosen = [e for e in chosen if e.name in names]
    return chosen


def by_name(name: str) -> Entry:
    for e in ENTRIES:
        if e.name == name:
            return e
    raise KeyError(name)
