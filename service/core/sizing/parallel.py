"""Conductors in parallel: IEC 60364-5-52:2009, 523.7, with IEC 60364-4-43:2008, 433.4.

The rule implemented here (a choice of the service, stated in the answer):

* Parallel sets are tried only when no single conductor passes, from 2 to
  ``MAX_SETS`` sets; every set has the same size, material, length and route
  (523.7 a: equal sharing), and is not smaller than 50 mm² copper or 70 mm²
  aluminium (a conservative choice of the service: small conductors in parallel
  are avoided, common practice).  Single-core sets above those sizes need the
  special arrangement of 523.7 that shares the current equally (said as a caution).
* Iz of the run is the sum of the sets' capacities (433.4.1); It is stated per set.
* Each set counts as a circuit of the group for the grouping factor: the group
  is the circuits given plus (sets - 1).  A circuit given alone becomes a group
  of its own sets, laid bunched in air, or with touching ducts or cables buried
  (the closest, most conservative spacing).
* Resistance and reactance of the run are a set's divided by the number of sets.
  Each set carries its own protective conductor (same as the line, or the
  Table 54.2 minimum of a set), except a protective conductor given in the
  request, which is one conductor for all sets.
* The adiabatic checks compare the whole fault energy with one conductor of one
  set (a fault on one set near its origin is fed mostly through that set:
  conservative).
"""

from __future__ import annotations

from dataclasses import replace

from service.core.conductors import Conductor
from service.core.errors import CalcError

from .model import BURIED_METHODS, SizeEvaluation, SizingInput
from .regime import Capacity

MAX_SETS = 4
MIN_SET_AREA_MM2 = {"copper": 50.0, "aluminium": 70.0}  # the service's choice (see above)
# 523.7 (from memory): non-twisted single-core sets share equally without a special arrangement up to these sizes.
SINGLE_CORE_PLAIN_UP_TO_MM2 = {"copper": 50.0, "aluminium": 70.0}
SOURCE = "IEC 60364-5-52:2009, 523.7; IEC 60364-4-43:2008, 433.4.1"
MM2 = 1.0e-6


def grouped_spec(spec: SizingInput, sets: int) -> SizingInput:
    """The request with each parallel set counted as a circuit of the group."""
    c = spec.circuit
    changes: dict = {"grouped_circuits": c.grouped_circuits + sets - 1}
    if c.grouped_circuits == 1:
        changes["arrangement"] = "buried" if c.method in BURIED_METHODS else "bunched"
        if c.method in BURIED_METHODS:
            changes["spacing"] = "touching"
    return replace(spec, circuit=replace(c, **changes))


def one_set(line: Conductor, sets: int) -> Conductor:
    """A set as the network sees it: the resistance of ``sets`` equal conductors in parallel, the area of one."""
    return replace(line, resistance_ohm_per_m=line.resistance_ohm_per_m / sets)


def as_sets(line: Conductor, capacity: Capacity, sets: int) -> tuple[Conductor, Capacity]:
    """One size as ``sets`` parallel sets: the run's resistance, and It of all sets (433.4.1: Iz is their sum)."""
    return one_set(line, sets), replace(capacity, value_a=capacity.value_a * sets,
                                        basis=f"{sets} sets x It {capacity.value_a:g} A per set ({capacity.basis})")


def candidates(sizes: list[tuple[Conductor, Capacity]], sets: int, material: str) -> list[tuple[Conductor, Capacity]]:
    """The sizes the service offers in parallel: from MIN_SET_AREA_MM2 of the material up."""
    smallest = MIN_SET_AREA_MM2[material] * MM2 * (1 - 1e-9)
    return [as_sets(line, cap, sets) for line, cap in sizes if line.area_m2 >= smallest]


def pe_rule(pe_for, sets: int, mode: str):
    """The protective conductor of a run of parallel sets (one per set unless given)."""
    def rule(line: Conductor) -> tuple[Conductor, str]:
        pe, basis = pe_for(line)
        if mode == "given":
            return pe, basis + "; one protective conductor for all sets"
        if mode == "minimum":
            return one_set(pe, sets), basis + f"; one per set ({sets} in parallel)"
        return pe, basis + f"; one per set ({sets} in parallel)"
    return rule


def finish(ev: SizeEvaluation, per_set: Capacity, sets: int, live: int, density: float, length_m: float,
           pe_mode: str) -> SizeEvaluation:
    """The evaluation with It per set, the number of sets, and the metal of every set."""
    pes = 1 if pe_mode == "given" else sets
    mass = density * length_m * (live * sets * ev.area_m2 + pes * ev.pe_area_m2)
    return replace(ev, tabulated_capacity_a=per_set.value_a / sets, parallel_sets=sets, metal_mass_kg=mass,
                   capacity_basis=per_set.basis)


def assumptions(chosen: SizeEvaluation | None) -> tuple[str, ...]:
    if chosen is None or chosen.parallel_sets == 1:
        return ()
    return (f"{chosen.parallel_sets} equal sets in parallel ({SOURCE}): same size, material, length and route, "
            "sharing the load equally; each set counts as a circuit of the group; resistance and reactance of the run "
            "are a set's divided by the number of sets; the adiabatic checks take the whole fault energy in one "
            "conductor of one set (conservative); It is per set, Iz, R1, R2, Zs, the drop and the mass are of the "
            "whole run.",)


def cautions(spec: SizingInput, chosen: SizeEvaluation) -> tuple[str, ...]:
    notes = ["Parallel conductors must be of the same material, cross-sectional area and length, with no branch "
             "circuits along them, so that they share the load equally (IEC 60364-5-52:2009, 523.7)."]
    limit = SINGLE_CORE_PLAIN_UP_TO_MM2[spec.circuit.material]
    if spec.circuit.cable == "single_core" and chosen.area_m2 / MM2 > limit + 1e-9:
        notes.append(f"Single-core sets above {limit:g} mm² {spec.circuit.material} share the current equally only "
                     "in the special arrangement 523.7 calls for (phases grouped and transposed between sets): lay "
                     "them so, or run multicore cables.")
    return tuple(notes)


def label(ev: SizeEvaluation) -> str:
    return ev.size_label if ev.parallel_sets == 1 else f"{ev.parallel_sets} x {ev.size_label} in parallel"


def usable(exc: CalcError) -> bool:
    """A grouping the tables do not reach for this many sets ends the parallel search, it is not an error."""
    return exc.code in ("outside-table", "contradictory-input", "invalid-input")
