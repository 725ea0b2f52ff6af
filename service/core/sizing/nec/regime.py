"""The NEC regime (NFPA 70-2023): sizing and verification of a branch circuit or feeder.

The same search (sizing.search) and result records as IEC 60364; the NEC's
own rules: 125 % of the continuous load (210.19(A), 215.2), the termination
column of 110.14(C), Table 310.16 ampacity corrected for ambient and adjusted
for more than three current-carrying conductors (310.15), overcurrent
protection with the next-size-up allowance and the small-conductor limits
(240.4), voltage drop by the network solver with the AC resistance and
reactance of Chapter 9 Table 9 (guidance of the informational notes, not a
requirement), the EGC of Table 250.122 increased when the line is upsized
(250.122(B)), and the raceway fill of Chapter 9 when a raceway is given.
"""

from __future__ import annotations

import math
from functools import lru_cache

from service.core.conductors import Conductor, ConductorLibrary, default_library
from service.core.steps import Step

from ..circuit import Electrical, RunCase, solve_runs
from ..model import Check, Device, Factor, SizeEvaluation, SizingResult
from ..search import governing_check, smallest_passing
from ..tables import default_sizing_tables
from .fill import FillConductor, FillResult, raceway_fill
from .model import RACEWAY_IMPEDANCE, SYSTEMS, NecSizingInput, System
from .plan import Candidate, Plan
from .report import assumptions, cautions, chosen_steps
from .rules import (
    EDITION,
    NEXT_SIZE_UP_LIMIT_A,
    blame,
    derating,
    egc_required,
    next_rating_above,
    split_load,
    standard_rating,
    termination_rating,
)
from .tables import (
    ADJUSTMENT_TABLE,
    AMBIENT_TABLE,
    AMPACITY_TABLE,
    FREE_AIR_TABLE,
    NEC_TABLES,
    RATINGS_TABLE,
    SMALL_CONDUCTOR_TABLE,
    TYPE_TABLE,
    NecTables,
    default_nec_tables,
)

NAME = f"{EDITION} (NEC)"
FREQUENCY_HZ = 60.0  # Chapter 9 Table 9 is for 60 Hz
TABLE9_TEMPERATURE_C = 75.0
BRANCH_DROP_PCT = 3.0  # 210.19(A) Informational Note No. 4; 215.2(A)(2) Informational Note No. 2 (feeders)
TOTAL_DROP_PCT = 5.0
DROP_SOURCE = (f"{EDITION}, 210.19(A) Informational Note No. 4 and 215.2(A)(2) Informational Note No. 2 "
               "(guidance, not a requirement)")
CHECK_ORDER = ("device_rating", "termination_ampacity", "ampacity", "overcurrent_protection",
               "small_conductor_protection", "equipment_grounding_conductor", "voltage_drop", "total_voltage_drop")
WAYS_OUT = {
    "device_rating": "Give a device rated at least 125 % of the continuous load plus the non-continuous load, or leave "
                     "the rating out for the service to choose it.",
    "termination_ampacity": "Use equipment with terminations listed for 75 °C, or a larger conductor.",
    "ampacity": "Reduce the number of current-carrying conductors in the raceway, keep the run out of the heat, or run "
                "conductors in parallel (310.10(G)).",
    "overcurrent_protection": "Choose a smaller device if the load allows it, or a larger conductor.",
    "small_conductor_protection": "Use a larger conductor: 240.4(D) caps the device on 14, 12 and 10 AWG.",
    "equipment_grounding_conductor": "Use an EGC at least the Table 250.122 size (increased per 250.122(B)).",
    "voltage_drop": "Shorten the run, run conductors in parallel, or serve the load at a higher voltage.",
    "total_voltage_drop": "Reduce the drop upstream (the feeder), or of this circuit.",
}


class NecRegime:
    key = "nec"
    name = NAME

    def __init__(self, tables: NecTables, library: ConductorLibrary, densities: dict[str, float]) -> None:
        self.t = tables
        self.densities = densities
        self.sizes = {m: {c.size_label: c for c in library.select(material=m, conductor_class=2)
                          if c.size_system in ("awg", "kcmil")} for m in ("copper", "aluminium")}

    def table_ids(self) -> tuple[str, ...]:
        return (*NEC_TABLES, "nec-ch9-table8", "iec60028-density", "iec60889-density")

    # -- what the request fixes ------------------------------------------------------------------
    def _design_current(self, spec: NecSizingInput, system: System) -> Step:
        load = spec.load
        if sum(x is not None for x in (load.design_current_a, load.power_w, load.apparent_power_va)) != 1:
            raise blame("invalid-input", "Give either the design current or the power of the load.",
                        "Give load.design_current, or load.power with its power_factor.", (("load",), "exactly one"))
        if load.design_current_a is not None:
            return Step("Load current", "given", load.design_current_a, "A")
        v = system.nominal_v
        three = system.phases != "single"
        root, k = ("√3 ", math.sqrt(3)) if three else ("", 1.0)
        basis = (f"V = {v:g} V, the nominal system voltage (220.5(A))"
                 + ("" if load.voltage_v is None else f"; load voltage given {load.voltage_v:g} V"))
        if load.apparent_power_va is not None:
            s = load.apparent_power_va
            ib = s / (k * v)
            over = f"(√3 V) = {s:g} / (√3 x {v:g})" if three else f"V = {s:g} / {v:g}"
            formula = (f"I = S / {over}; apparent power S given "
                       f"(P = S pf = {s * load.power_factor:g} W); {basis}")
            return Step("Load current", formula, ib, "A", "common practice: S = √3 V I three-phase, S = V I single-phase")
        ib = load.power_w / (load.efficiency * k * v * load.power_factor)
        formula = (f"I = P / (η {root}V pf) = {load.power_w:g} / ({load.efficiency:g} x {'√3 x ' if three else ''}{v:g} x "
                   f"{load.power_factor:g}); active power P given; {basis}")
        return Step("Load current", formula, ib, "A", "P is the output power when an efficiency is given")

    def plan(self, spec: NecSizingInput) -> Plan:
        c = spec.circuit
        system = SYSTEMS[spec.system]
        kind = self.t.types[c.conductor_type]
        insulation_c = c.insulation_rating_c or kind.dry_rating_c
        if insulation_c > kind.dry_rating_c:
            raise blame("contradictory-input", f"Type {kind.name} is rated {kind.dry_rating_c} °C (Table 310.4(A)), "
                        f"not {insulation_c} °C.", "Leave insulation_rating out, or choose a type rated for it.",
                        (("circuit", "insulation_rating"), f"type {kind.name} is rated {kind.dry_rating_c} °C"))
        own = 2 if system.phases == "single" else 3
        if c.installation == "free_air" and c.raceway is not None:
            raise blame("contradictory-input", "Single conductors in free air (Table 310.17) are not in a raceway.",
                        "Leave raceway out, or choose installation raceway_or_cable.",
                        (("circuit", "raceway"), "not with installation free_air"),
                        (("circuit", "installation"), "free air has no raceway"))
        if c.installation == "free_air" and c.current_carrying_conductors is not None:
            raise blame("contradictory-input", "The adjustment of Table 310.15(C)(1) is for conductors in a raceway or "
                        "cable; Table 310.17 is for single conductors in free air.",
                        "Leave current_carrying_conductors out for free air.",
                        (("circuit", "current_carrying_conductors"), "not with installation free_air"))
        conductors = c.current_carrying_conductors or own
        if conductors < own:
            raise blame("contradictory-input", f"The circuit itself has {own} current-carrying conductors.",
                        f"Give at least {own}, counting every circuit in the raceway or cable.",
                        (("circuit", "current_carrying_conductors"), f"at least {own}"))
        ib_step = self._design_current(spec, system)
        share = 1.0 if spec.load.continuous_share is None else spec.load.continuous_share
        load = split_load(ib_step.value, share)
        given = spec.rated_current_a
        if given is not None and not any(math.isclose(given, r, rel_tol=1e-9) for r in self.t.ratings):
            listed = ", ".join(f"{r:g}" for r in self.t.ratings)
            raise blame("non-standard-rating", f"{given:g} A is not a standard ampere rating of a fuse or inverse-time "
                        f"circuit breaker: {self.t.source(RATINGS_TABLE)} lists {listed} A.",
                        "Give a rating of Table 240.6(A), or leave rated_current out to let the service choose.",
                        (("protection", "device", "rated_current"), f"{given:g} A is not in Table 240.6(A)"))
        rating = standard_rating(self.t, load.required_a) if given is None else given
        device = Device("overcurrent_device", rating, given is None,
                        f"{rating:g} A fuse or inverse-time circuit breaker", None, None, None)
        termination_c, termination_why = termination_rating(c.termination_rating_c, rating, insulation_c)
        ambient = 30.0 if c.ambient_c is None else c.ambient_c
        derate = derating(self.t, insulation_c, ambient, conductors)
        section = "215.2(A)(1)" if c.role == "feeder" else "210.19(A)(1)"
        device_section = "215.3" if c.role == "feeder" else "210.20(A)"
        limit = BRANCH_DROP_PCT if spec.drop_limit_pct is None else spec.drop_limit_pct
        group = "pvc" if c.installation == "free_air" else RACEWAY_IMPEDANCE.get(c.raceway or "", "steel")
        steps = [
            ib_step,
            Step("Continuous part of the load", f"share {share:g} of the load (3 h or more)", load.continuous_a, "A",
                 f"{EDITION}, Article 100 'Continuous Load'"),
            Step("Required ampacity before correction", f"1.25 x {load.continuous_a:.4g} + {load.non_continuous_a:.4g}",
                 load.required_a, "A", f"{EDITION}, {section}(a)"),
            Step("Overcurrent device rating", ("smallest standard rating >= 1.25 x continuous + non-continuous"
                                              if given is None else "given"), rating, "A",
                 f"{EDITION}, {device_section}; {self.t.source(RATINGS_TABLE)}"),
            Step("Insulation temperature rating", f"type {kind.name}" + (" (given)" if c.insulation_rating_c else ""),
                 insulation_c, "°C", self.t.source(TYPE_TABLE)),
            Step("Termination temperature column", termination_why, termination_c, "°C", f"{EDITION}, 110.14(C)(1)"),
            Step("Ambient correction factor", derate.ambient_basis, derate.ambient, "1", self.t.source(AMBIENT_TABLE)),
            Step("Adjustment factor", derate.adjustment_basis, derate.adjustment, "1", self.t.source(ADJUSTMENT_TABLE)),
            Step("Voltage-drop guidance, this circuit", "given" if spec.drop_limit_pct is not None else
                 f"{'feeder' if c.role == 'feeder' else 'branch circuit'}: 3 %", limit, "%", DROP_SOURCE),
            Step("Voltage-drop guidance, feeder plus branch", "5 % in total", TOTAL_DROP_PCT, "%", DROP_SOURCE),
        ]
        if spec.upstream_drop_pct:
            steps.append(Step("Drop already used upstream", "given", spec.upstream_drop_pct, "%"))
        return Plan(spec, system, load, device, insulation_c, termination_c, derate, conductors, group, limit, tuple(steps))

    def candidates(self, plan: Plan) -> list[Candidate]:
        material = plan.spec.circuit.material
        table = self._ampacity_table(plan)
        insulation = table[(material, plan.insulation_c)]
        termination = table[(material, plan.termination_c)]
        return [Candidate(line, insulation[label], termination[label])
                for label, line in sorted(self.sizes[material].items(), key=lambda kv: kv[1].area_m2)
                if label in insulation and (material, plan.impedance_group, label) in self.t.impedance]

    def _ampacity_table(self, plan: Plan) -> dict:
        return self.t.free_air if plan.spec.circuit.installation == "free_air" else self.t.ampacity

    def _ampacity_table_id(self, plan: Plan) -> str:
        return FREE_AIR_TABLE if plan.spec.circuit.installation == "free_air" else AMPACITY_TABLE

    # -- checks ----------------------------------------------------------------------------------
    def _thermal(self, plan: Plan, cand: Candidate) -> tuple[float, list[Check]]:
        d, split, rating = plan.derate, plan.load, plan.device.rated_current_a
        material = plan.spec.circuit.material
        section = "215.2(A)(1)" if plan.spec.circuit.role == "feeder" else "210.19(A)(1)"
        derated = cand.insulation_a * d.ambient * d.adjustment
        ampacity = min(derated, cand.termination_a)
        checks = [
            Check("device_rating", rating >= split.required_a - 1e-9, rating, split.required_a, "A",
                  "device >= 1.25 x continuous + non-continuous",
                  f"{EDITION}, {'215.3' if plan.spec.circuit.role == 'feeder' else '210.20(A)'}"),
            Check("termination_ampacity", cand.termination_a >= split.required_a - 1e-9, cand.termination_a,
                  split.required_a, "A", f"{plan.termination_c} °C column >= 1.25 x continuous + non-continuous",
                  f"{EDITION}, {section}(a) and 110.14(C); {self.t.source(self._ampacity_table_id(plan))}"),
            Check("ampacity", derated >= split.design_current_a - 1e-9, derated, split.design_current_a, "A",
                  "corrected and adjusted ampacity >= load", f"{EDITION}, {section}(b) and 310.15",
                  f"{cand.insulation_a:g} A ({plan.insulation_c} °C column) x {d.ambient:g} x {d.adjustment:g}"),
        ]
        next_up = next_rating_above(self.t, ampacity)
        allowed = ampacity
        why = f"ampacity {ampacity:.4g} A = min({derated:.4g} A corrected, {cand.termination_a:g} A at {plan.termination_c} °C)"
        if rating <= NEXT_SIZE_UP_LIMIT_A and next_up is not None and not any(math.isclose(ampacity, r) for r in self.t.ratings):
            allowed = min(next_up, NEXT_SIZE_UP_LIMIT_A)
            why += f"; next standard rating up {allowed:g} A allowed, 240.4(B)"
        checks.append(Check("overcurrent_protection", rating <= allowed + 1e-9, rating, allowed, "A",
                            "device <= conductor ampacity (or the next standard rating up to 800 A)",
                            f"{EDITION}, 240.4(B)/(C); {self.t.source(RATINGS_TABLE)}", why))
        small = self.t.small_conductor.get((material, cand.line.size_label))
        if small is not None:
            checks.append(Check("small_conductor_protection", rating <= small + 1e-9, rating, small, "A",
                                f"{cand.line.size_label} {material}: device <= {small:g} A",
                                self.t.source(SMALL_CONDUCTOR_TABLE)))
        return ampacity, checks

    def _egc(self, plan: Plan, line: Conductor, minimum: Conductor | None) -> tuple[Conductor, Check]:
        spec = plan.spec
        sizes = self.sizes[spec.circuit.material]
        required, basis = egc_required(self.t, sizes, plan.device.rated_current_a, spec.circuit.material, line, minimum)
        if spec.egc_mode == "given":
            egc = sizes.get(spec.egc_size_label or "")
            if egc is None:
                raise blame("unknown-conductor", "The EGC size given is not a listed AWG/kcmil size.",
                            "Give an AWG or kcmil size.", (("protective_conductor", "size"), "not a listed size"))
        else:
            egc = line if spec.egc_mode == "same_as_line" else required
        have, need = self.t.cmil[egc.size_label], self.t.cmil[required.size_label]
        check = Check("equipment_grounding_conductor", have >= need, have, need, "cmil", f"EGC {egc.size_label} >= "
                      f"{required.size_label}", f"{EDITION}, 250.122(A)/(B)", basis)
        return egc, check

    def _evaluate(self, plan: Plan, batch: list[Candidate], with_network: bool,
                  minimum: Conductor | None) -> tuple[list[SizeEvaluation], int]:
        spec, system = plan.spec, plan.system
        material = spec.circuit.material
        prepared = []
        for cand in batch:
            ampacity, checks = self._thermal(plan, cand)
            egc, egc_check = self._egc(plan, cand.line, minimum)
            prepared.append((cand, ampacity, checks + [egc_check], egc))
        runs = [None] * len(batch)
        solves = 0
        electrical = Electrical(system.phases, system.source_v, FREQUENCY_HZ, spec.circuit.length_m,
                                plan.load.design_current_a, spec.load.power_factor, 0.0, TABLE9_TEMPERATURE_C, 0.0,
                                fault_loop=False)
        if with_network and batch:
            cases = []
            for cand, _, _, egc in prepared:
                z = self.t.impedance[(material, plan.impedance_group, cand.line.size_label)]
                cases.append(RunCase(cand.line, egc, z.r_ohm_per_m, z.x_ohm_per_m))
            runs = solve_runs(cases, electrical)
            solves = 1
        live = 2 if system.phases == "single" else 3 + (1 if spec.circuit.neutral else 0)
        found = []
        for (cand, ampacity, checks, egc), run in zip(prepared, runs):
            drop_pct = total = None
            if run is not None:
                drop_pct = 100.0 * run.drop_v / system.source_v
                total = drop_pct + spec.upstream_drop_pct
                checks = checks + [
                    Check("voltage_drop", drop_pct <= plan.drop_limit_pct + 1e-12, drop_pct, plan.drop_limit_pct, "%",
                          "this circuit's drop <= guidance",
                          DROP_SOURCE if spec.drop_limit_pct is None else "limit given in the request (guidance)",
                          f"{run.drop_v:.3g} V of {system.source_v:g} V (line to neutral for three-phase), Table 9 R and "
                          f"X in {plan.impedance_group} conduit, solved network", "guidance"),
                    Check("total_voltage_drop", total <= TOTAL_DROP_PCT + 1e-12, total, TOTAL_DROP_PCT, "%",
                          "upstream + this circuit <= guidance", DROP_SOURCE,
                          f"this circuit {drop_pct:.3g} % + upstream {spec.upstream_drop_pct:g} %", "guidance"),
                ]
            checks.sort(key=lambda ch: CHECK_ORDER.index(ch.name))
            mass = self.densities[material] * spec.circuit.length_m * (live * cand.line.area_m2 + egc.area_m2)
            found.append(SizeEvaluation(
                size_label=cand.line.size_label, area_m2=cand.line.area_m2, pe_size_label=egc.size_label,
                pe_area_m2=egc.area_m2, tabulated_capacity_a=cand.insulation_a,
                capacity_basis=(f"{self.t.tables[self._ampacity_table_id(plan)].table}, {material} {plan.insulation_c} "
                                f"°C column; termination column {plan.termination_c} °C: {cand.termination_a:g} A"),
                capacity_table_id=self._ampacity_table_id(plan), iz_a=ampacity, checks=tuple(checks),
                voltage_drop_v=None if run is None else run.drop_v, voltage_drop_pct=drop_pct, total_drop_pct=total,
                zs_ohm=None, earth_fault_current_a=None, metal_mass_kg=mass,
                r1_ohm=None if run is None else run.r1_ohm, r2_ohm=None))
        return found, solves

    def _ampacity_minimum(self, plan: Plan, candidates: list[Candidate]) -> Conductor | None:
        """The smallest size whose current-carrying checks pass: the base of 250.122(B)'s proportion."""
        return next((c.line for c in candidates if all(ch.passes for ch in self._thermal(plan, c)[1])), None)

    # -- answers ---------------------------------------------------------------------------------
    def size(self, spec: NecSizingInput) -> SizingResult:
        plan = self.plan(spec)
        candidates = self.candidates(plan)
        minimum = self._ampacity_minimum(plan, candidates)
        found = smallest_passing(candidates, lambda batch, net: self._evaluate(plan, list(batch), net, minimum))
        chosen, rejected = found.chosen, list(found.rejected)
        steps = list(plan.steps)
        if chosen is not None:
            if minimum is not None and chosen.size_label != minimum.size_label:
                forced = sorted({n for ev in rejected if self.t.cmil[ev.size_label] >= self.t.cmil[minimum.size_label]
                                 for n in ev.failing}, key=CHECK_ORDER.index)
                steps.append(Step(f"Size raised from {minimum.size_label} by {', '.join(forced)}",
                                  f"{minimum.size_label} carries the load but fails {', '.join(forced)}",
                                  self.t.cmil[chosen.size_label], "cmil"))
            governing = governing_check(rejected, CHECK_ORDER) or "smallest_listed_size"
            return self._result(plan, "size", "compliant", chosen, rejected, governing, (), steps, found.solves)
        binding = tuple(n for n in CHECK_ORDER if n in rejected[-1].failing)
        return self._result(plan, "size", "no_compliant_size", None, rejected, binding[0], binding, steps, found.solves)

    def verify(self, spec: NecSizingInput, size_label: str) -> SizingResult:
        plan = self.plan(spec)
        candidates = self.candidates(plan)
        cand = next((c for c in candidates if c.line.size_label == size_label), None)
        if cand is None:
            raise blame("unknown-conductor", f"No {spec.circuit.material} AWG/kcmil size with Table 310.16 and Table 9 "
                        "data matches the size given.", "Give a size from 14 AWG (12 AWG aluminium) to 1000 kcmil; "
                        "700, 800 and 900 kcmil have no Table 9 values.", (("circuit", "size"), "not a tabulated size"))
        (ev,), solves = self._evaluate(plan, [cand], True, self._ampacity_minimum(plan, candidates))
        failing = tuple(n for n in CHECK_ORDER if n in ev.failing)
        requirements_met = all(c.passes for c in ev.checks if c.obligation == "requirement")
        verdict = "compliant" if ev.passes else "meets_requirements_not_guidance" if requirements_met else "non_compliant"
        return self._result(plan, "verify", verdict, ev, [], failing[0] if failing else None, failing,
                            list(plan.steps), solves)

    def _fill(self, plan: Plan, chosen: SizeEvaluation) -> FillResult | None:
        c = plan.spec.circuit
        if c.raceway is None:
            return None
        lines = 2 if plan.system.phases == "single" else 3 + (1 if c.neutral else 0)
        conductors = [FillConductor(c.conductor_type, chosen.size_label, lines)]
        conductors.append(FillConductor(c.conductor_type, chosen.pe_size_label, 1))
        return raceway_fill(self.t, c.raceway, tuple(conductors), ("circuit", "raceway"))

    def _result(self, plan: Plan, mode: str, verdict: str, chosen: SizeEvaluation | None, rejected: list[SizeEvaluation],
                governing: str | None, binding: tuple[str, ...], steps: list[Step], solves: int) -> SizingResult:
        spec = plan.spec
        fill = None if chosen is None else self._fill(plan, chosen)
        if chosen is not None:
            steps = steps + chosen_steps(self.t, plan, chosen, self._ampacity_table_id(plan))
            if fill is not None:
                steps += list(fill.steps)
        factors = (Factor("ambient", plan.derate.ambient, plan.derate.ambient_basis, self.t.source(AMBIENT_TABLE),
                          AMBIENT_TABLE),
                   Factor("adjustment", plan.derate.adjustment, plan.derate.adjustment_basis,
                          self.t.source(ADJUSTMENT_TABLE), ADJUSTMENT_TABLE))
        product = plan.derate.ambient * plan.derate.adjustment
        return SizingResult(
            mode=mode, regime=self.name, verdict=verdict, design_current_a=plan.load.design_current_a,
            device=plan.device, factors=factors, factor_product=product, required_tabulated_a=plan.load.required_a,
            drop_limit_pct=plan.drop_limit_pct, drop_limit_source=DROP_SOURCE,
            available_drop_pct=min(plan.drop_limit_pct, TOTAL_DROP_PCT - spec.upstream_drop_pct),
            disconnection_time_s=None, disconnection_source=None, chosen=chosen, governing_check=governing,
            rejected=tuple(rejected), binding_checks=binding,
            ways_out=tuple(WAYS_OUT[n] for n in CHECK_ORDER if n in binding), steps=tuple(steps),
            assumptions=assumptions(plan), cautions=cautions(self.t, plan, fill, self.table_ids()),
            table_ids=self.table_ids(), solves=solves, raceway=fill,
        )

@lru_cache(maxsize=1)
def nec() -> NecRegime:
    return NecRegime(default_nec_tables(), default_library(), default_sizing_tables().densities)
