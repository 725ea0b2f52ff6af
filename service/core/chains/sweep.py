"""A lead chain by the radial sweep (network/radial.py), read back like the general solver's Solution.

The chain is the ladder chain_network() builds for the general solver: the socket's EMF behind its
line-neutral impedance, lead k a go-and-return section of 2 x length x R/m at its temperature (node L{k} to
L{k+1}), each appliance a Load on its outlet.  The two fault loops carry no current, so each is a plain series
sum: Z(socket) + the line and the return conductor of every lead at the fault temperature, seen with the EMF
as its open-circuit voltage.  :class:`ChainFlow` answers element(), voltage() and thevenin as the
Solution of solve(chain_network(...)) does for the load flow's elements ("supply", "lead{k}", "appliance{j}")
and nodes ("L{k}"), and for the fault loops through thevenin only, so the analysis reads either.
When the sweep gives no answer (module radial), :func:`solve_by_sweep` returns None and the caller solves the
network with solve().
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from service.core.network import Load, SolveOptions
from service.core.network.radial import Ladder, LadderFlow, ladder
from service.core.network.results import ElementResult, NodeVoltage, Phasor, TheveninEquivalent
from service.core.network.results import _pf  # the general solver's power-factor rule, for the same records

from .model import Chain, Lead
from .names import appliance_id, lead_id, outlet_node

_LEAD_PREFIX, _APPLIANCE_PREFIX = lead_id(0)[:-1], appliance_id(0)[:-1]


def _appliance_loads(chain: Chain, outlet_of=None) -> list[tuple[int, Load]]:
    return [(a.outlet + 1 if outlet_of is None else outlet_of, Load(appliance_id(j), "", "0", a.rated_power_w,
             a.rated_voltage_v, a.power_factor, a.leading, a.model)) for j, a in enumerate(chain.appliances)]


def chain_ladder(chain: Chain, all_on_first_outlet: bool = False) -> Ladder:
    """The chain's load-flow ladder; with ``all_on_first_outlet`` one section with every appliance at its end."""
    s = chain.supply
    sections = 1 if all_on_first_outlet else len(chain.leads)
    loads = _appliance_loads(chain, 1 if all_on_first_outlet else None)
    return ladder(s.nominal_voltage_v, s.line_neutral.resistance_ohm, s.line_neutral.reactance_ohm, sections,
                  loads, s.frequency_hz)


def lead_section_ohm(lead: Lead, resistance_per_m: float, length_m: float | None = None) -> complex | None:
    """Line and neutral of one lead as the general solver's go-and-return CableRun (no reactance given).

    None for a length or resistance solve() would refuse (length > 0, R/m >= 0, finite), so that it says so.
    """
    length = lead.length_m if length_m is None else length_m
    if not (math.isfinite(length) and length > 0 and math.isfinite(resistance_per_m) and resistance_per_m >= 0):
        return None
    return complex(length * 2.0 * resistance_per_m, 0.0)


def _loop(chain: Chain, resistance_ohm: float, reactance_ohm: float, per_m: tuple[float, ...]) -> complex:
    z = complex(resistance_ohm, reactance_ohm if chain.supply.frequency_hz else 0.0)
    for lead, r in zip(chain.leads, per_m):
        z += lead.length_m * r + lead.length_m * r  # line out, return conductor back (two one-way runs)
    return z


def _loops_valid(chain: Chain, per_m_at_fault: tuple[float, ...]) -> bool:
    """The fault loops hold values solve() accepts (R >= 0, finite; at DC no capacitive reactance)."""
    dc = not chain.supply.frequency_hz
    for z in (chain.supply.line_neutral, chain.supply.line_earth):
        if z is not None and not (math.isfinite(z.resistance_ohm) and z.resistance_ohm >= 0
                                  and math.isfinite(z.reactance_ohm) and not (dc and z.reactance_ohm < 0)):
            return False
    return all(math.isfinite(r) and r >= 0 for r in per_m_at_fault)


def fault_loops(chain: Chain, per_m_at_fault: tuple[float, ...]) -> tuple[TheveninEquivalent, ...]:
    """The far-end line-neutral loop (and the line-earth loop, when Ze is known) as Thevenin equivalents."""
    s, n = chain.supply, len(chain.leads)
    e = complex(s.nominal_voltage_v, 0.0)
    found = []
    for impedance, a, b in ((s.line_neutral, f"FN{n}", f"FNN{n}"), (s.line_earth, f"FE{n}", f"FEE{n}")):
        if impedance is None:
            continue
        z = _loop(chain, impedance.resistance_ohm, impedance.reactance_ohm, per_m_at_fault)
        isc = Phasor.of(e / z) if z != 0 else None
        found.append(TheveninEquivalent(a, b, Phasor.of(e), z.real, z.imag, math.hypot(z.real, z.imag), isc, z))
    return tuple(found)


@dataclass(frozen=True, slots=True, eq=False)
class ChainFlow:
    """The sweep's solution, with the accessors of network.Solution the chain analysis uses."""

    chain: Chain
    flow: LadderFlow
    sections: tuple[complex, ...]
    source_impedance_ohm: complex
    thevenin: tuple[TheveninEquivalent, ...]
    converged: bool = True
    guarded_loads: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()
    assumptions: tuple[str, ...] = ()

    @property
    def iterations(self) -> int:
        """Sweep passes (each one O(n) ladder solve), where Solution counts Newton solves."""
        return self.flow.passes

    @property
    def max_kcl_residual_a(self) -> float:
        return self.flow.kcl_mismatch_a

    @property
    def final_mismatch_a(self) -> float:
        return self.flow.kcl_mismatch_a

    @property
    def frequency_hz(self) -> float:
        return float(self.chain.supply.frequency_hz or 0.0)

    @property
    def power_balance_residual_va(self) -> float:
        f = self.flow
        supplied = f.node_voltage_v[0] * f.source_current_a.conjugate()
        absorbed = sum((self._load_node_v(j) * i.conjugate() for j, i in enumerate(f.load_current_a)), 0j)
        absorbed += sum((self._section_v(k) * i.conjugate() for k, i in enumerate(f.section_current_a)), 0j)
        r = supplied - absorbed
        return math.hypot(r.real, r.imag)

    def _load_node_v(self, j: int) -> complex:
        return self.flow.node_voltage_v[self.chain.appliances[j].outlet + 1]

    def _section_v(self, k: int) -> complex:
        """V across lead k: Z x I (the same as the node-voltage difference, without its cancellation)."""
        return self.sections[k] * self.flow.section_current_a[k]

    def voltage(self, node: str) -> NodeVoltage:
        if node.startswith("L") and node[1:].isdigit() and int(node[1:]) < len(self.flow.node_voltage_v):
            return NodeVoltage(node, Phasor.of(self.flow.node_voltage_v[int(node[1:])]))
        raise KeyError(f"no node {node!r} in the chain's load flow")

    def element(self, element_id: str) -> ElementResult:
        f = self.flow
        if element_id == "supply":
            v, i = f.node_voltage_v[0], -f.source_current_a
            return _result("supply", "voltage_source", outlet_node(-1), "0", v, i, supplied=True,
                           internal_loss_w=_squared(i) * self.source_impedance_ohm.real)
        for prefix in (_LEAD_PREFIX, _APPLIANCE_PREFIX):
            tail = element_id[len(prefix):]
            if element_id.startswith(prefix) and tail.isdigit():
                k = int(tail)
                if prefix == _LEAD_PREFIX and k < len(f.section_current_a):
                    return _result(element_id, "cable_run", outlet_node(k - 1), outlet_node(k), self._section_v(k),
                                   f.section_current_a[k])
                if prefix == _APPLIANCE_PREFIX and k < len(f.load_current_a):
                    a = self.chain.appliances[k]
                    v, i = self._load_node_v(k), f.load_current_a[k]
                    p = (v * i.conjugate()).real
                    extra = {"load_model": a.model, "rated_power_fraction": p / a.rated_power_w}
                    return _result(element_id, "load", outlet_node(a.outlet), "0", v, i, **extra)
        raise KeyError(f"no element {element_id!r} in the chain's load flow")


def _squared(z: complex) -> float:
    h = math.hypot(z.real, z.imag)
    return h * h


def _result(element_id: str, kind: str, a: str, b: str, v: complex, i: complex, supplied: bool = False,
            **extra) -> ElementResult:
    """An ElementResult as results._element_result builds it (passive sign convention)."""
    sc = v * i.conjugate()
    pf, sense = _pf(sc.real, sc.imag)
    if supplied:
        extra["supplied_w"], extra["supplied_var"] = -sc.real, -sc.imag
    return ElementResult(element_id, kind, a, b, Phasor.of(v), Phasor.of(i), sc.real, sc.imag,
                         math.hypot(sc.real, sc.imag), pf, sense, **extra)


def solve_by_sweep(chain: Chain, compiled: Ladder, per_m: tuple[float, ...], per_m_at_fault: tuple[float, ...],
                   options: SolveOptions | None = None, start=None) -> ChainFlow | None:
    """The chain's load flow with leads at these per-metre resistances, and its fault loops; None: use solve()."""
    sections = tuple(lead_section_ohm(lead, r) for lead, r in zip(chain.leads, per_m))
    if None in sections or not _loops_valid(chain, per_m_at_fault):
        return None
    flow = compiled.solve(sections, options, start)
    if flow is None:
        return None
    return ChainFlow(chain, flow, sections, compiled.source_impedance_ohm, fault_loops(chain, per_m_at_fault))
