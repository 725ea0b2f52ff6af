"""The words around an NEC result: the chosen size's worked steps, the assumptions and the cautions."""

from __future__ import annotations

import math

from service.core.steps import Step

from ..model import SizeEvaluation
from .fill import FillResult
from .plan import Plan
from .rules import EDITION
from .tables import IMPEDANCE_TABLE, TABLE9_POWER_FACTOR, NecTables


def chosen_steps(t: NecTables, plan: Plan, chosen: SizeEvaluation, table_id: str) -> list[Step]:
    """The chosen size's ampacity, effective Z (Table 9 Note 2) and drop, as steps."""
    material = plan.spec.circuit.material
    z = t.impedance[(material, plan.impedance_group, chosen.size_label)]
    pf = plan.spec.load.power_factor
    computed = z.r_ohm_per_m * pf + z.x_ohm_per_m * math.sin(math.acos(pf))
    note2 = (f"R cos θ + X sin θ = {z.r_ohm_per_m * 304.8:.4g} x {pf:g} + {z.x_ohm_per_m * 304.8:.4g} x "
             f"{math.sin(math.acos(pf)):.4g} ohm/kft")
    at_table_pf = math.isclose(pf, TABLE9_POWER_FACTOR, abs_tol=1e-9)
    # At 0.85 the table gives the effective Z itself (rounded from unrounded R and X); at any other power factor
    # Note 2's formula is the only basis.
    ze = z.z085_ohm_per_m if at_table_pf else computed
    sets = chosen.parallel_sets
    k = 2.0 if plan.system.phases == "single" else math.sqrt(3)
    approx = k * plan.spec.circuit.length_m * ze / sets * plan.load.design_current_a
    steps = [
        Step("Chosen size: tabulated ampacity", chosen.capacity_basis, chosen.tabulated_capacity_a, "A",
             t.source(table_id)),
        Step("Chosen size: ampacity for the conditions of use", "min(corrected and adjusted, termination column)"
             + (f", x {sets} conductors in parallel" if sets > 1 else ""),
             chosen.iz_a, "A", f"{EDITION}, 310.15 and 110.14(C)" + (", 310.10(G)" if sets > 1 else "")),
        Step("Chosen size: effective Z", "Table 9 'Effective Z at 0.85 PF' column" if at_table_pf else note2, ze,
             "ohm/m", f"{t.source(IMPEDANCE_TABLE)}" + ("" if at_table_pf else ", Note 2")),
    ]
    if at_table_pf:
        steps.append(Step("Chosen size: effective Z from R and X", note2, computed, "ohm/m",
                          f"{t.source(IMPEDANCE_TABLE)}, Note 2 (the table's Z differs by its rounding)"))
    steps.append(Step("Chosen size: voltage drop by effective Z", f"{'2' if k == 2 else '√3'} x L x Z x I"
                      + (f" / {sets} sets" if sets > 1 else "") + " (cross-check of the solved value, which uses R and X)",
                      approx, "V", f"{t.source(IMPEDANCE_TABLE)}, Note 2"))
    if chosen.voltage_drop_v is not None:
        factor = 1.0 if plan.system.phases == "single" else math.sqrt(3)
        steps.append(Step("Chosen size: voltage drop", "solved network" + (", line to line = √3 x line to neutral"
                          if factor != 1.0 else ""), chosen.voltage_drop_v * factor, "V", "service.core.network"))
    return steps

def assumptions(plan: Plan, chosen: SizeEvaluation | None, max_sets: int) -> tuple[str, ...]:
    c = plan.spec.circuit
    notes = [
        f"System {plan.system.name}: {plan.system.wires}; 60 Hz.",
        f"Line conductors: Chapter 9 Table 9 AC resistance and reactance at 75 °C for three single conductors in "
        f"{plan.impedance_group} conduit"
        + ("" if c.raceway else " (no raceway given: steel conduit values, the highest reactance)"
           if c.installation != "free_air" else " (free air: Table 9 is for conductors in conduit; the PVC "
           "values are used, which understate the reactance of spaced single conductors)")
        + "; the same values are used for a single-phase circuit's two conductors.",
        "The load draws its current at its power factor (lagging); three-phase loads balanced, so the neutral is "
        "not a current-carrying conductor (310.15(E)(1)); count it in current_carrying_conductors where the load "
        "is mostly nonlinear (310.15(E)(3)).",
        "The 240.4(B) next-size-up allowance is taken where the device is 800 A or less: it does not apply to "
        "multioutlet branch circuits supplying receptacles for cord-and-plug-connected loads (240.4(B)(1)). The "
        "next standard rating is taken among those common to fuses and breakers (Table 240.6(A)'s fuse-only 1, 3, "
        "6, 10 and 601 A are not used), the conservative reading when the device kind is not known.",
        "Sizes 700, 800 and 900 kcmil are not candidates: Chapter 9 Table 9 gives no values for them.",
        "The exceptions of 240.4(E) and (G) (tap conductors; motor, air-conditioning and other specific circuits) "
        "and of 210.19(A)(1) and 215.2(A)(1) for 100 %-rated assemblies are not applied.",
        "Conductor insulation rating from its type's dry-location rating (Table 310.4(A)); in wet locations use "
        "the wet rating (give insulation_rating).",
    ]
    if c.raceway:
        notes.append("Raceway fill counts the circuit's conductors and one insulated EGC of the same type; other "
                     "circuits sharing the raceway are not counted.")
    if plan.spec.load.continuous_share is None:
        notes.append("The whole load is taken as continuous (3 h or more): give load.continuous_share otherwise.")
    notes.append(f"Conductors in parallel (310.10(G)) are tried only when no single conductor passes: 1/0 AWG and "
                 f"larger, up to {max_sets} sets per line (a limit of the service), fewest sets first, then the "
                 "smallest size.")
    if chosen is not None and chosen.parallel_sets > 1:
        notes.append(f"{chosen.parallel_sets} conductors in parallel per line share the current equally only if, per "
                     "310.10(G)(2), they are of the same length, conductor material, size (circular mils) and "
                     "insulation type and are terminated in the same manner; per 310.10(G)(3), raceways or cables "
                     "of the sets have the same number of conductors and the same characteristics. R and X of the "
                     "sets are divided by their number (no mutual coupling between sets).")
        notes.append("All sets in one raceway: every conductor counts for the 310.15(C)(1) adjustment (310.10(G)(4)) "
                     "and one EGC "
                     "runs with them (250.122(F)(1)(a))." if c.parallel_raceways == "shared" else
                     "Each set runs in its own raceway or cable with its own full-size EGC (250.122(F)(1)(b)); the "
                     "adjustment of 310.15(C)(1) counts the conductors of one raceway. Give parallel_raceways "
                     "shared when all sets share one raceway.")
    if plan.breaking is not None and not plan.interrupting_given:
        notes.append(f"Interrupting rating not given: {plan.interrupting_rating_a / 1000:g} kA is assumed, a rating "
                     "common for molded-case circuit breakers (common practice, from memory); give "
                     "protection.interrupting_rating from the device's marking.")
    return tuple(notes)

def cautions(t: NecTables, plan: Plan, fill: FillResult | None, table_ids: tuple[str, ...]) -> tuple[str, ...]:
    notes = [
        f"Sized to {EDITION} (National Electrical Code) as published; the edition adopted where the work is done, "
        "its local amendments and the authority having jurisdiction (AHJ) decide what is accepted.",
        "Installation conditions must match the inputs: ambient, the number of current-carrying conductors in the "
        "raceway or cable, the terminations' temperature rating and the raceway decide the result.",
        "The voltage-drop limits are the guidance of informational notes (3 % for a circuit, 5 % for feeder plus "
        "branch), not requirements of the Code; the checks marked 'guidance' say so.",
    ]
    if any(t.tables[i].provenance != "published" for i in table_ids if i in t.tables):
        notes.append("Some NEC table values are from memory and not yet compared with the published tables: check "
                     "the result against NFPA 70 before relying on it (provenance in notes.sources).")
    if plan.breaking is None:
        notes.append("Not assessed: breaking_capacity (110.9, the device's interrupting rating against the fault "
                     "current available at its line terminals): give supply.available_fault_current to check it.")
    if fill is not None and fill.chosen is None:
        notes.append(f"No {fill.raceway_name} trade size held (largest "
                     f"{fill.considered[-1].trade_size}) takes these conductors within the Chapter 9 fill.")
    return tuple(notes)
