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

solve_chain() solves this network by the radial sweep (sweep.py, network/radial.py): the same equations,
O(n) a pass, without assembling a matrix; the sweep is cross-checked against solve() on random chains in
tests/unit/test_chain_sweep.py.  A round the sweep cannot answer (no convergence, a load left below its guard
voltage, an input solve() would refuse) is solved by solve() on chain_network(), which then gives the answer
or the error.
"""

from __future__ import annotations

from dataclasses import dataclass

from service.core.cords import CORD_MAX_CONDUCTOR_C
from service.core.network import CableRun, Load, Network, Solution, SolveOptions, VoltageSource, solve

from .model import Chain, Lead
from .names import appliance_id, lead_id, outlet_node
from .sweep import ChainFlow, chain_ladder, solve_by_sweep

TEMPERATURE_TOLERANCE_C = 0.5
MAX_TEMPERATURE_ROUNDS = 12
FAULT_TEMPERATURE_C = CORD_MAX_CONDUCTOR_C  # conservative: highest loop impedance in service


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
    solution: Solution | ChainFlow  # the sweep's, or the general solver's where the sweep gave no answer
    temperatures_c: tuple[float, ...]
    rounds: int
    temperatures_settled: bool


def _solve_round(chain: Chain, compiled, temperatures: tuple[float, ...], at_fault: tuple[float, ...], start):
    per_m = tuple(lead.conductor.resistance_per_m_at(t) for lead, t in zip(chain.leads, temperatures))
    swept = solve_by_sweep(chain, compiled, per_m, at_fault, start=start)
    if swept is not None:
        return swept
    network, options = chain_network(chain, temperatures)
    return solve(network, options)


def solve_chain(chain: Chain, ratings_a: tuple[float | None, ...]) -> ChainSolution:
    """Load flow with conductor temperatures iterated to agree with the lead currents.

    Starts from every lead at the cord's maximum temperature (the conservative
    end), so a chain that stops early is still judged on the high side.  Each
    round's sweep starts from the previous round's voltages.
    """
    ambient = chain.supply.ambient_c
    temperatures = tuple(max(ambient, CORD_MAX_CONDUCTOR_C) for _ in chain.leads)
    compiled = chain_ladder(chain)
    at_fault = tuple(lead.conductor.resistance_per_m_at(FAULT_TEMPERATURE_C) for lead in chain.leads)
    start = None
    for rounds in range(1, MAX_TEMPERATURE_ROUNDS + 1):
        used = temperatures
        solution = _solve_round(chain, compiled, used, at_fault, start)
        if isinstance(solution, ChainFlow):
            start = solution.flow.node_voltage_v
            currents = [abs(i) for i in solution.flow.section_current_a]
        else:
            start = None
            currents = [solution.element(lead_id(k)).current.magnitude for k in range(len(chain.leads))]
        updated = tuple(conductor_temperature(ambient, i, r) for i, r in zip(currents, ratings_a))
        moved = max(abs(a - b) for a, b in zip(updated, used))
        if moved <= TEMPERATURE_TOLERANCE_C:
            # Report the temperatures this solution's resistances were computed at.
            return ChainSolution(solution, used, rounds, True)
        temperatures = updated
    return ChainSolution(solution, used, MAX_TEMPERATURE_ROUNDS, False)
