"""A lead chain as a network for the one solver, and its conductor temperatures.

One solve carries three disjoint circuits joined only at the reference node
(a single shared node carries no current, so they do not disturb each other):

* the load flow: the socket's EMF behind its line-neutral loop impedance, each
  lead as a go-and-return cable run at its estimated conductor temperature,
  each appliance as a rated load on its outlet;
* the earth-fault loop (when the socket's line-earth impedance is known): the
  EMF behind Ze, each lead's line conductor out and protective conductor back,
  at the cord's maximum operating temperature; the Thevenin impedance between
  the last outlet's line and earth terminals is Zs there;
* the line-neutral loop, likewise, for the prospective short-circuit current.

Conductor temperature of a loaded lead, the usual estimate (BS 7671:2018
Appendix 4, section 6.1, from memory):
    t = t_ambient + (t_max - t_ambient) x (I / I_rating)^2
with I_rating the lead's effective rating (ambient and reel derating applied).
It is iterated with the load flow until no lead's estimate moves by more than
TEMPERATURE_TOLERANCE_C.
"""

from __future__ import annotations

from dataclasses import dataclass

from service.core.cords import CORD_MAX_CONDUCTOR_C
from service.core.network import CableRun, Load, Network, Solution, SolveOptions, VoltageSource, solve

from .model import Chain, Lead

TEMPERATURE_TOLERANCE_C = 0.5
MAX_TEMPERATURE_ROUNDS = 12
FAULT_TEMPERATURE_C = CORD_MAX_CONDUCTOR_C  # conservative: highest loop impedance in service


def outlet_node(k: int) -> str:
    """Node of lead k's outlet (k = -1 is the origin socket)."""
    return f"L{k + 1}"


def lead_id(k: int) -> str:
    return f"lead{k}"


def appliance_id(j: int) -> str:
    return f"appliance{j}"


def _lead_runs(prefix_line: str, prefix_return: str, leads: tuple[Lead, ...], return_start: str) -> list:
    """Line conductors out and return conductors back, one way each, at the fault temperature."""
    runs = []
    for k, lead in enumerate(leads):
        r = lead.conductor.resistance_per_m_at(FAULT_TEMPERATURE_C)
        back_from = return_start if k == 0 else f"{prefix_return}{k}"
        runs.append(CableRun(f"{prefix_line}-run{k}", f"{prefix_line}{k}", f"{prefix_line}{k + 1}", lead.length_m, r))
        runs.append(CableRun(f"{prefix_return}-run{k}", back_from, f"{prefix_return}{k + 1}", lead.length_m, r))
    return runs


def chain_network(chain: Chain, temperatures_c: tuple[float, ...],
                  with_fault_loops: bool = True) -> tuple[Network, SolveOptions]:
    """The chain as one network: the load flow, and (unless left out) the two fault loops beside it."""
    supply, leads = chain.supply, chain.leads
    n = len(leads)
    elements: list = [
        VoltageSource("supply", outlet_node(-1), "0", supply.nominal_voltage_v,
                      internal_resistance_ohm=supply.line_neutral.resistance_ohm,
                      internal_reactance_ohm=supply.line_neutral.reactance_ohm)
    ]
    for k, (lead, t) in enumerate(zip(leads, temperatures_c)):
        elements.append(CableRun(lead_id(k), outlet_node(k - 1), outlet_node(k), lead.length_m,
                                 lead.conductor.resistance_per_m_at(t), go_and_return=True))
    for j, a in enumerate(chain.appliances):
        elements.append(Load(appliance_id(j), outlet_node(a.outlet), "0", a.rated_power_w, a.rated_voltage_v,
                             a.power_factor, a.leading, a.model))
    pairs = []
    if not with_fault_loops:
        return Network(elements=tuple(elements), frequency_hz=supply.frequency_hz), SolveOptions()
    # Line-neutral loop: EMF between FN0 and the reference, neutral conductors back from the reference.
    elements.append(VoltageSource("loop-ln", "FN0", "0", supply.nominal_voltage_v,
                                  internal_resistance_ohm=supply.line_neutral.resistance_ohm,
                                  internal_reactance_ohm=supply.line_neutral.reactance_ohm))
    elements += _lead_runs("FN", "FNN", leads, "0")
    pairs.append((f"FN{n}", f"FNN{n}"))
    if supply.line_earth is not None:
        elements.append(VoltageSource("loop-le", "FE0", "0", supply.nominal_voltage_v,
                                      internal_resistance_ohm=supply.line_earth.resistance_ohm,
                                      internal_reactance_ohm=supply.line_earth.reactance_ohm))
        elements += _lead_runs("FE", "FEE", leads, "0")
        pairs.append((f"FE{n}", f"FEE{n}"))
    network = Network(elements=tuple(elements), frequency_hz=supply.frequency_hz)
    return network, SolveOptions(thevenin_between=tuple(pairs))


def conductor_temperature(ambient_c: float, current_a: float, rating_a: float | None) -> float:
    if rating_a is None:  # no rating at this ambient: assume the hottest permitted
        return max(ambient_c, CORD_MAX_CONDUCTOR_C)
    return ambient_c + (CORD_MAX_CONDUCTOR_C - ambient_c) * (current_a / rating_a) ** 2


@dataclass(frozen=True, slots=True)
class ChainSolution:
    solution: Solution
    temperatures_c: tuple[float, ...]
    rounds: int
    temperatures_settled: bool


def solve_chain(chain: Chain, ratings_a: tuple[float | None, ...]) -> ChainSolution:
    """Load flow with conductor temperatures iterated to agree with the lead currents.

    Starts from every lead at the cord's maximum temperature (the conservative
    end), so a chain that stops early is still judged on the high side.
    """
    ambient = chain.supply.ambient_c
    temperatures = tuple(max(ambient, CORD_MAX_CONDUCTOR_C) for _ in chain.leads)
    for rounds in range(1, MAX_TEMPERATURE_ROUNDS + 1):
        used = temperatures
        network, options = chain_network(chain, used)
        solution = solve(network, options)
        currents = [solution.element(lead_id(k)).current.magnitude for k in range(len(chain.leads))]
        updated = tuple(conductor_temperature(ambient, i, r) for i, r in zip(currents, ratings_a))
        moved = max(abs(a - b) for a, b in zip(updated, used))
        if moved <= TEMPERATURE_TOLERANCE_C:
            # Report the temperatures this solution's resistances were computed at.
            return ChainSolution(solution, used, rounds, True)
        temperatures = updated
    return ChainSolution(solution, used, MAX_TEMPERATURE_ROUNDS, False)
