"""Voltage drop and earth-fault loop of candidate sizes, by the one network solver.

For each candidate size the network holds two circuits, and all candidates of
a batch go into one solve: disjoint circuits joined only at the reference node
carry no current between them, so they do not disturb each other (the pattern
of service/core/chains/circuit.py).

* Load flow: an ideal EMF U0 (single-phase) or a star of three (three-phase)
  feeds the run; the load is a current source drawing Ib at the power-factor
  angle (lagging), so the drop is the design current's.  Single-phase: one
  go-and-return cable run (line and neutral); three-phase, balanced: one run
  per line, the currents returning through the star point (no neutral
  current).  Line conductors at the impedance the regime gives (RunCase).
  Drop = U0 - Re(V at the load), line to neutral: the part of the load voltage
  in phase with the supply EMF, the quantity IEC 60364-5-52 Annex G's formula
  gives (it differs from U0 - |V| by second-order terms, and unlike it keeps
  rising when a run is so long that the load voltage turns over).
* Earth-fault loop: the EMF U0 behind Ze, the line conductor out and the
  protective conductor back, both at the maximum operating temperature; the
  Thevenin impedance between the far-end line and protective-conductor nodes
  is Zs = Ze + R1 + R2.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from service.core.conductors import Conductor
from service.core.network import CableRun, CurrentSource, Network, SolveOptions, ThreePhaseSupply, VoltageSource, solve


@dataclass(frozen=True, slots=True)
class RunCase:
    line: Conductor
    pe: Conductor
    # The line's AC resistance and reactance for the load flow (NEC: Chapter 9 Table 9; IEC: by arrangement,
    # service.core.cable_impedance); otherwise its DC resistance at the operating temperature and the one reactance
    # of Electrical are used.
    line_r_ohm_per_m: float | None = None
    line_x_ohm_per_m: float | None = None
    # The line's resistance in the earth-fault loop, when it differs from the load flow's (IEC: the DC resistance at
    # the maximum operating temperature while the drop may be at an estimated one); None: as the load flow's.
    loop_r_ohm_per_m: float | None = None

    def line_r(self, temperature_c: float) -> float:
        return self.line.resistance_per_m_at(temperature_c) if self.line_r_ohm_per_m is None else self.line_r_ohm_per_m

    def loop_r(self, temperature_c: float) -> float:
        return self.line_r(temperature_c) if self.loop_r_ohm_per_m is None else self.loop_r_ohm_per_m


@dataclass(frozen=True, slots=True)
class RunSolution:
    drop_v: float
    zs_ohm: float | None  # None when the regime asks for no earth-fault loop
    r1_ohm: float
    r2_ohm: float


@dataclass(frozen=True, slots=True)
class Electrical:
    """What every candidate of one sizing shares."""

    phases: str
    u0_v: float
    frequency_hz: float
    length_m: float
    design_current_a: float
    power_factor: float
    ze_ohm: float
    temperature_c: float
    reactance_ohm_per_m: float
    fault_loop: bool = True  # build the earth-fault loop too (IEC 60364-4-41); the NEC regime does not check Zs


def _elements(k: int, case: RunCase, e: Electrical) -> tuple[list, tuple[str, str] | None]:
    p = f"s{k}"
    r_line = case.line_r(e.temperature_c)
    x_line = e.reactance_ohm_per_m if case.line_x_ohm_per_m is None else case.line_x_ohm_per_m
    r_pe = case.pe.resistance_per_m_at(e.temperature_c)
    lag = -math.degrees(math.acos(e.power_factor))
    elements: list = []
    if e.phases == "single":
        elements += [
            VoltageSource(f"{p}-src", f"{p}-o", "0", e.u0_v),
            CableRun(f"{p}-run", f"{p}-o", f"{p}-l", e.length_m, r_line, x_line, go_and_return=True),
            CurrentSource(f"{p}-load", f"{p}-l", "0", e.design_current_a, lag),
        ]
    else:
        lines = ("1", "2", "3")
        elements.append(ThreePhaseSupply(f"{p}-src", *(f"{p}-o{n}" for n in lines), "0", e.u0_v))
        for n, shift in zip(lines, (0.0, -120.0, 120.0)):
            elements += [
                CableRun(f"{p}-run{n}", f"{p}-o{n}", f"{p}-l{n}", e.length_m, r_line, x_line),
                CurrentSource(f"{p}-load{n}", f"{p}-l{n}", "0", e.design_current_a, shift + lag),
            ]
    if not e.fault_loop:
        return elements, None
    elements += [
        VoltageSource(f"{p}-fault", f"{p}-f0", "0", e.u0_v, internal_resistance_ohm=e.ze_ohm),
        CableRun(f"{p}-r1", f"{p}-f0", f"{p}-f1", e.length_m, case.loop_r(e.temperature_c)),
        CableRun(f"{p}-r2", "0", f"{p}-pe", e.length_m, r_pe),
    ]
    return elements, (f"{p}-f1", f"{p}-pe")


def load_node(k: int, phases: str) -> str:
    return f"s{k}-l" if phases == "single" else f"s{k}-l1"


def solve_runs(cases: list[RunCase], e: Electrical) -> list[RunSolution]:
    """One solve for every case: the drop at the design current and Zs of each."""
    elements: list = []
    pairs = []
    for k, case in enumerate(cases):
        els, pair = _elements(k, case, e)
        elements += els
        if pair is not None:
            pairs.append(pair)
    solution = solve(Network(elements=tuple(elements), frequency_hz=e.frequency_hz),
                     SolveOptions(thevenin_between=tuple(pairs)))
    thevenins = solution.thevenin if e.fault_loop else [None] * len(cases)
    found = []
    for k, (case, thevenin) in enumerate(zip(cases, thevenins)):
        v_load = solution.voltage(load_node(k, e.phases)).voltage.real  # the EMF is at 0 degrees
        found.append(RunSolution(
            drop_v=e.u0_v - v_load,
            zs_ohm=None if thevenin is None else thevenin.impedance_ohm,
            r1_ohm=case.loop_r(e.temperature_c) * e.length_m,
            r2_ohm=case.pe.resistance_per_m_at(e.temperature_c) * e.length_m,
        ))
    return found
