"""The greatest length of each lead type that still meets the drop limit and disconnects a fault, by route.

For every conductor type in the chain: one lead of that type plugged into the
origin socket with every appliance at its outlet, conductors at the cord's
maximum operating temperature (conservative).  The drop limit is found by a
bracketing search on the solved one-lead ladder (the drop grows with length;
each probe one radial sweep, see _DropProbe); the disconnection limits follow
from the loop being linear in length, |Z_source + 2 r L| <= Z,max, for each
protection route on its own: the overcurrent device for earth faults and for
line-neutral faults, the RCD for earth faults only.
"""

from __future__ import annotations

import math
from dataclasses import replace

from service.core.network import NetworkError

from service.core.network import prepare

from .circuit import FAULT_TEMPERATURE_C, chain_network, lead_id
from .model import Chain, Lead
from .report import FaultReport, LengthLimit
from .sweep import chain_ladder, lead_section_ohm

MAX_SEARCH_LENGTH_M = 10_000.0
LENGTH_TOLERANCE_M = 0.05
MAX_SEARCH_SOLVES = 40


class _DropProbe:
    """Chain drop with one lead of a given length feeding every appliance; inf when it cannot be supplied.

    Each probe is one radial sweep of the one-lead ladder (sweep.py).  A length the sweep gives no answer for
    is solved by the general solver on the one-lead network, prepared once on first need (validation and
    topology), with only the lead's length changed from probe to probe (PreparedNetwork.replace); its error
    means the appliances cannot be supplied at that length.
    """

    def __init__(self, chain: Chain, lead: Lead) -> None:
        self._chain = chain
        self._ladder = chain_ladder(chain, all_on_first_outlet=True)
        self._lead = lead
        self._per_m = lead.conductor.resistance_per_m_at(FAULT_TEMPERATURE_C)
        self._prepared = None
        self._run = None
        self._nominal_v = chain.supply.nominal_voltage_v

    def _general(self, length_m: float) -> tuple[float, float]:
        if self._prepared is None:
            chain, lead = self._chain, self._lead
            single = replace(chain, leads=(replace(lead, length_m=max(lead.length_m, 1.0), reel=None),),
                             appliances=tuple(replace(a, outlet=0) for a in chain.appliances))
            network, options = chain_network(single, (FAULT_TEMPERATURE_C,), with_fault_loops=False)
            self._run = next(e for e in network.elements if e.id == lead_id(0))
            self._prepared = prepare(network, options)
        solution = self._prepared.replace(replace(self._run, length_m=length_m)).solve()
        return solution.voltage("L0").voltage.magnitude, solution.voltage("L1").voltage.magnitude

    def __call__(self, length_m: float) -> float:
        section = lead_section_ohm(self._lead, self._per_m, length_m)
        flow = None if section is None else self._ladder.solve((section,))
        try:
            socket, far = (abs(flow.node_voltage_v[0]), abs(flow.node_voltage_v[1])) if flow is not None \
                else self._general(length_m)
        except NetworkError:
            return math.inf
        lowest = min(far, socket)
        return 100.0 * (socket - lowest) / self._nominal_v


def _by_drop(chain: Chain, lead: Lead) -> float | None:
    """Longest length whose drop stays within the limit, or None if none is reached by MAX_SEARCH_LENGTH_M.

    The drop is nearly proportional to length, so a first guess scaled from one
    solve is close; the Illinois variant of regula falsi then keeps a bracket
    [low, high] with f(low) <= 0 < f(high) and converges in a few solves, where
    bisection would need a dozen or more.
    """
    limit = chain.limits.voltage_drop_pct
    if not chain.appliances:
        return None
    drop_pct = _DropProbe(chain, lead)
    excess = lambda length: drop_pct(length) - limit  # noqa: E731
    low, f_low = 0.0, -limit
    probe = max(1.0, lead.length_m)
    f_probe = excess(probe)
    solves = 1
    if f_probe <= 0:
        guess = probe * limit / max(limit + f_probe, 1e-12)  # proportional extrapolation
        low, f_low = probe, f_probe
        high = min(max(guess * 1.02, probe * 1.5), MAX_SEARCH_LENGTH_M)
        f_high = excess(high)
        solves += 1
        while f_high <= 0:
            if high >= MAX_SEARCH_LENGTH_M:
                return None
            low, f_low = high, f_high
            high = min(high * 2.0, MAX_SEARCH_LENGTH_M)
            f_high = excess(high)
            solves += 1
    else:
        high, f_high = probe, f_probe
    side = 0
    while high - low > LENGTH_TOLERANCE_M and solves < MAX_SEARCH_SOLVES:
        if math.isfinite(f_high):
            mid = (low * f_high - high * f_low) / (f_high - f_low)
            mid = min(max(mid, low + LENGTH_TOLERANCE_M / 2), high - LENGTH_TOLERANCE_M / 2)
        else:  # the appliances could not be supplied at `high`: bisect until they can
            mid = 0.5 * (low + high)
        f_mid = excess(mid)
        solves += 1
        if f_mid <= 0:
            low, f_low = mid, f_mid
            if side == -1:
                f_high *= 0.5
            side = -1
        else:
            high, f_high = mid, f_mid
            if side == 1:
                f_low *= 0.5
            side = 1
        if abs(f_mid) < 1e-6 * limit:
            return mid if f_mid <= 0 else low
    return low


def _longest(zmax_ohm: float, source_resistance_ohm: float, source_reactance_ohm: float, per_m_ohm: float) -> float:
    """Longest L with |Z_source + per_m x L| <= zmax (the added conductors are resistive)."""
    room = zmax_ohm**2 - source_reactance_ohm**2
    if room <= 0:
        return 0.0
    return max(0.0, (math.sqrt(room) - source_resistance_ohm) / per_m_ohm)


def _by_route(chain: Chain, lead: Lead, fault: FaultReport) -> dict[str, float | None]:
    """The length limit of each protection route; None where the route is not there or not assessed.

    Earth faults: Zs,max of the overcurrent device and of the RCD, each against Ze (line out, protective
    conductor back).  Line-neutral faults: only the overcurrent device sees them, Z(line-neutral),max = Cmin U0 / Ia.
    """
    per_m = 2.0 * lead.conductor.resistance_per_m_at(FAULT_TEMPERATURE_C)  # out and back
    check, ze, zln = fault.earth_fault, chain.supply.line_earth, chain.supply.line_neutral
    found: dict[str, float | None] = dict.fromkeys(("earth_fault_overcurrent", "earth_fault_rcd",
                                                    "line_neutral_overcurrent"))
    if check is not None and ze is not None:
        for name, route in (("earth_fault_overcurrent", check.overcurrent), ("earth_fault_rcd", check.rcd)):
            if route is not None:
                found[name] = _longest(route.max_zs_ohm, ze.resistance_ohm, ze.reactance_ohm, per_m)
    ln = fault.line_neutral
    if ln is not None:
        zmax = ln.cmin * chain.supply.nominal_voltage_v / ln.operating.current_a
        found["line_neutral_overcurrent"] = _longest(zmax, zln.resistance_ohm, zln.reactance_ohm, per_m)
    return found


def _missing(chain: Chain, fault: FaultReport) -> tuple[str, ...]:
    missing = []
    if fault.line_neutral is None:
        missing.append("supply.device")
    if fault.earth_fault is None and chain.supply.line_earth is None:
        missing.append("supply.earth_loop_impedance")
    return tuple(missing)


def length_limits(chain: Chain, fault: FaultReport) -> tuple[LengthLimit, ...]:
    groups: dict[tuple, list[int]] = {}
    for k, lead in enumerate(chain.leads):
        c = lead.conductor
        groups.setdefault((c.size_label, c.material.name, c.conductor_class), []).append(k)
    missing = _missing(chain, fault)
    limits = []
    for indices in groups.values():
        lead = chain.leads[indices[0]]
        drop = _by_drop(chain, lead)
        routes = _by_route(chain, lead, fault)
        # An earth fault is cleared by either device; a line-neutral fault only by the overcurrent device.
        earth = [(v, name) for name in ("earth_fault_overcurrent", "earth_fault_rcd") if (v := routes[name]) is not None]
        known = [(drop, "voltage_drop")] if drop is not None else []
        known += [max(earth)] if earth else []
        if routes["line_neutral_overcurrent"] is not None:
            known.append((routes["line_neutral_overcurrent"], "line_neutral_overcurrent"))
        greatest, governed = min(known) if known else (None, None)
        limits.append(LengthLimit(
            tuple(indices), lead.conductor.size_label, drop, routes["earth_fault_overcurrent"],
            routes["earth_fault_rcd"], routes["line_neutral_overcurrent"], greatest, governed, missing))
    return tuple(limits)
