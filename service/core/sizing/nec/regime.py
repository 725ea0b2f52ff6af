"""The NEC regime (NFPA 70-2023): sizing and verification of a branch circuit or feeder.

The same search (sizing.search) and result records as IEC 60364; the NEC's
own rules: 125 % of the continuous load (210.19(A), 215.2), the termination
column of 110.14(C), Table 310.16 ampacity corrected for ambient and adjusted
for more than three current-carrying conductors (310.15), overcurrent
protection with the next-size-up allowance and the small-conductor limits
(240.4), voltage drop by the network solver with the AC resistance and
reactance of Chapter 9 Table 9 (guidance of the informational notes, not a
requirement), the EGC of Table 250.122 increased when the line is upsized
(250.122(B)), the interrupting rating against the available fault current
(110.9) when that is given, and the raceway fill of Chapter 9 when a raceway
is given.  When no single conductor passes, sets in parallel (310.10(G)):
1/0 AWG and larger, fewest sets first, each set's EGC full size
(250.122(F)).
"""

from __future__ import annotations

import math
from functools import lru_cache

from service.core.conductors import Conductor, ConductorLibrary, default_library
from service.core.steps import Step

from ..circuit import Electrical, RunCase, solve_runs
from ..model import Check, Device, Factor, NotAssessed, SizeEvaluation, SizingResult, assessed_verdict
from ..search import governing_check, smallest_passing
from ..tables import default_sizing_tables
from .fill import FillConductor, FillResult, raceway_fill
from .model import RACEWAY_IMPEDANCE, SYSTEMS, NecSizingInput, System
from .plan import Candidate, Plan
from .report import assumptions, cautions, chosen_steps
from .rules import (
    EDITION,
    NEXT_SIZE_UP_LIMIT_A,
    Derating,
    blame,
    derating,
    egc_required,
    next_rating_above,
    sets_label,
    split_load,
    standard_rating,
    termination_rating,
)
from .ways_out import ways_out
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
CHECK_ORDER = ("device_rating", "breaking_capacity", "termination_ampacity", "ampacity", "overcurrent_protection",
               "small_conductor_protection", "equipment_grounding_conductor", "voltage_drop", "total_voltage_drop")
DEVICE_CHECKS = ("device_rating", "breaking_capacity")  # checks of the device alone, which no conductor changes
MAX_PARALLEL_SETS = 6  # the most conductors in parallel per line the search tries (a choice of the service)
PARALLEL_MIN_SIZE = "1/0 AWG"  # 310.10(G)(1): conductors in parallel are 1/0 AWG and larger
DEFAULT_INTERRUPTING_A = 10_000.0  # common practice for molded-case breakers (from memory), when none is given


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
        if c.installation == "free_air" and c.parallel_raceways == "shared":
            raise blame("contradictory-input", "Single conductors in free air (Table 310.17) share no raceway.",
                        "Leave parallel_raceways out for free air.",
                        (("circuit", "parallel_raceways"), "not with installation free_air"))
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
        interrupting = DEFAULT_INTERRUPTING_A if spec.interrupting_rating_a is None else spec.interrupting_rating_a
        breaking = None
        if spec.available_fault_current_a is not None:
            fault = spec.available_fault_current_a
            breaking = Check("breaking_capacity", interrupting >= fault - 1e-9, interrupting, fault, "A",
                             "interrupting rating >= available fault current at the line terminals",
                             f"{EDITION}, 110.9",
                             f"at the nominal {system.name} system; rating "
                             + ("given" if spec.interrupting_rating_a is not None else
                                f"not given: {interrupting / 1000:g} kA assumed, a rating common for molded-case "
                                "breakers (common practice, from memory); confirm the device's marked rating (240.83(C))"))
        return Plan(spec, system, load, device, insulation_c, termination_c, derate, conductors, group, limit, tuple(steps),
                    own, breaking, interrupting, spec.interrupting_rating_a is not None)

    def candidates(self, plan: Plan, sets: int = 1) -> list[Candidate]:
        """The sizes for ``sets`` conductors in parallel per line, smallest first: every tabulated size for one,
        1/0 AWG and larger for more (310.10(G)(1))."""
        material = plan.spec.circuit.material
        smallest = self.t.cmil[PARALLEL_MIN_SIZE] if sets > 1 else 0.0
        insulation = self._ampacity_table(plan)[(material, plan.insulation_c)]
        # 110.14(C)(1): the termination limit is the Table 310.16 ampacity of the termination column, whatever
        # table the conductor's own ampacity comes from (free air, Table 310.17, included).
        termination = self.t.ampacity[(material, plan.termination_c)]
        return [Candidate(line, insulation[label], termination[label], sets)
                for label, line in sorted(self.sizes[material].items(), key=lambda kv: kv[1].area_m2)
                if label in insulation and label in termination and (material, plan.impedance_group, label) in self.t.impedance
                and self.t.cmil.get(label, 0.0) >= smallest]

    def parallel_candidates(self, plan: Plan) -> list[Candidate]:
        """Two to MAX_PARALLEL_SETS sets, fewest sets first, then the smallest size."""
        return [c for n in range(2, MAX_PARALLEL_SETS + 1) for c in self.candidates(plan, n)]

    def _derate(self, plan: Plan, sets: int) -> tuple[Derating, int]:
        """Correction and adjustment for ``sets`` in parallel: all in one raceway, every conductor counts for
        310.15(C)(1); each set in its own raceway (or in free air), the single set's."""
        c = plan.spec.circuit
        if sets == 1 or c.parallel_raceways == "separate" or c.installation == "free_air":
            return plan.derate, plan.conductors
        conductors = plan.conductors + (sets - 1) * plan.own_conductors
        ambient = 30.0 if c.ambient_c is None else c.ambient_c
        return derating(self.t, plan.insulation_c, ambient, conductors), conductors

    def _ampacity_table(self, plan: Plan) -> dict:
        return self.t.free_air if plan.spec.circuit.installation == "free_air" else self.t.ampacity

    def _ampacity_table_id(self, plan: Plan) -> str:
        return FREE_AIR_TABLE if plan.spec.circuit.installation == "free_air" else AMPACITY_TABLE

    # -- checks ----------------------------------------------------------------------------------
    def _thermal(self, plan: Plan, cand: Candidate) -> tuple[float, list[Check]]:
        split, rating, n = plan.load, plan.device.rated_current_a, cand.sets
        d, conductors = self._derate(plan, n)
        material = plan.spec.circuit.material
        section = "215.2(A)(1)" if plan.spec.circuit.role == "feeder" else "210.19(A)(1)"
        # In parallel the sets share the current equally (310.10(G)(2): same length, material, size, insulation and
        # terminations), so the line's ampacity is n times one conductor's.
        derated = n * cand.insulation_a * d.ambient * d.adjustment
        termination = n * cand.termination_a
        ampacity = min(derated, termination)
        times = f"{n} x " if n > 1 else ""
        parallel = f" ({n} in parallel, {EDITION}, 310.10(G))" if n > 1 else ""
        checks = [
            Check("device_rating", rating >= split.required_a - 1e-9, rating, split.required_a, "A",
                  "device >= 1.25 x continuous + non-continuous",
                  f"{EDITION}, {'215.3' if plan.spec.circuit.role == 'feeder' else '210.20(A)'}"),
            Check("termination_ampacity", termination >= split.required_a - 1e-9, termination,
                  split.required_a, "A", f"{plan.termination_c} °C column >= 1.25 x continuous + non-continuous",
                  f"{EDITION}, {section}(a) and 110.14(C)(1); {self.t.source(AMPACITY_TABLE)}",
                  f"{times}{cand.termination_a:g} A{parallel}" if n > 1 else ""),
            Check("ampacity", derated >= split.design_current_a - 1e-9, derated, split.design_current_a, "A",
                  "corrected and adjusted ampacity >= load", f"{EDITION}, {section}(b) and 310.15",
                  f"{times}{cand.insulation_a:g} A ({plan.insulation_c} °C column) x {d.ambient:g} x {d.adjustment:g}"
                  + (f"; {conductors} current-carrying conductors in one raceway" if conductors != plan.conductors else "")
                  + parallel),
        ]
        if plan.breaking is not None:
            checks.append(plan.breaking)
        next_up = next_rating_above(self.t, ampacity)
        allowed = ampacity
        why = f"ampacity {ampacity:.4g} A = min({derated:.4g} A corrected, {termination:g} A at {plan.termination_c} °C)"
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

    def egc_count(self, plan: Plan, sets: int) -> int:
        """EGCs run: one in each parallel raceway or cable (250.122(F)(1)(b)), one where all sets share a raceway."""
        return 1 if plan.spec.circuit.parallel_raceways == "shared" and plan.spec.circuit.installation != "free_air" else sets

    def _egc(self, plan: Plan, line: Conductor, sets: int,
             minimum: tuple[Conductor, int] | None) -> tuple[Conductor, Check]:
        spec = plan.spec
        sizes = self.sizes[spec.circuit.material]
        required, basis = egc_required(self.t, sizes, plan.device.rated_current_a, spec.circuit.material, line, minimum,
                                       sets)
        if spec.egc_mode == "given":
            egc = sizes.get(spec.egc_size_label or "")
            if egc is None:
                raise blame("unknown-conductor", "The EGC size given is not a listed AWG/kcmil size.",
                            "Give an AWG or kcmil size.", (("protective_conductor", "size"), "not a listed size"))
        else:
            egc = line if spec.egc_mode == "same_as_line" else required
        have, need = self.t.cmil[egc.size_label], self.t.cmil[required.size_label]
        count = self.egc_count(plan, sets)
        check = Check("equipment_grounding_conductor", have >= need, have, need, "cmil", f"EGC {egc.size_label} >= "
                      f"{required.size_label}" + (f", in each of the {count} raceways or cables" if count > 1 else ""),
                      f"{EDITION}, 250.122(A)/(B)" + ("/(F)" if sets > 1 else ""), basis)
        return egc, check

    def _evaluate(self, plan: Plan, batch: list[Candidate], with_network: bool,
                  minimum: tuple[Conductor, int] | None) -> tuple[list[SizeEvaluation], int]:
        spec, system = plan.spec, plan.system
        material = spec.circuit.material
        prepared = []
        for cand in batch:
            ampacity, checks = self._thermal(plan, cand)
            egc, egc_check = self._egc(plan, cand.line, cand.sets, minimum)
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
                # n sets in parallel: n equal paths, R / n and X / n (mutual coupling between sets neglected)
                cases.append(RunCase(cand.line, egc, z.r_ohm_per_m / cand.sets, z.x_ohm_per_m / cand.sets))
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
                          f"X in {plan.impedance_group} conduit" + (f" / {cand.sets} sets" if cand.sets > 1 else "")
                          + ", solved network", "guidance"),
                    Check("total_voltage_drop", total <= TOTAL_DROP_PCT + 1e-12, total, TOTAL_DROP_PCT, "%",
                          "upstream + this circuit <= guidance", DROP_SOURCE,
                          f"this circuit {drop_pct:.3g} % + upstream {spec.upstream_drop_pct:g} %", "guidance"),
                ]
            checks.sort(key=lambda ch: CHECK_ORDER.index(ch.name))
            mass = self.densities[material] * spec.circuit.length_m * (
                live * cand.sets * cand.line.area_m2 + self.egc_count(plan, cand.sets) * egc.area_m2)
            found.append(SizeEvaluation(
                size_label=cand.line.size_label, area_m2=cand.line.area_m2, pe_size_label=egc.size_label,
                pe_area_m2=egc.area_m2, tabulated_capacity_a=cand.insulation_a,
                capacity_basis=(f"{self.t.tables[self._ampacity_table_id(plan)].table}, {material} {plan.insulation_c} "
                                f"°C column; termination column {plan.termination_c} °C (Table 310.16, 110.14(C)(1)): "
                                f"{cand.termination_a:g} A" + (f"; one of {cand.sets} conductors in parallel per line"
                                                               if cand.sets > 1 else "")),
                capacity_table_id=self._ampacity_table_id(plan), iz_a=ampacity, checks=tuple(checks),
                voltage_drop_v=None if run is None else run.drop_v, voltage_drop_pct=drop_pct, total_drop_pct=total,
                zs_ohm=None, earth_fault_current_a=None, metal_mass_kg=mass,
                r1_ohm=None if run is None else run.r1_ohm, r2_ohm=None, parallel_sets=cand.sets,
                not_assessed=() if plan.breaking is not None else (NotAssessed(
                    "breaking_capacity", "110.9: no available fault current given (supply.available_fault_current), "
                    "so the interrupting rating cannot be compared with it"),)))
        return found, solves

    def _ampacity_minimum(self, plan: Plan, candidates: list[Candidate]) -> tuple[Conductor, int] | None:
        """The first size (and sets) whose current-carrying checks pass: the base of 250.122(B)'s proportion."""
        return next(((c.line, c.sets) for c in candidates
                     if all(ch.passes for ch in self._thermal(plan, c)[1] if ch.name not in DEVICE_CHECKS)), None)

    def _minimum(self, plan: Plan, singles: list[Candidate]) -> tuple[Conductor, int] | None:
        return self._ampacity_minimum(plan, singles) or self._ampacity_minimum(plan, self.parallel_candidates(plan))

    def _rank(self, size_label: str, sets: int) -> tuple[int, float]:
        """The search's order: fewest sets first, then the smallest size."""
        return sets, self.t.cmil[size_label]

    # -- answers ---------------------------------------------------------------------------------
    def size(self, spec: NecSizingInput) -> SizingResult:
        plan = self.plan(spec)
        singles = self.candidates(plan)
        minimum = self._minimum(plan, singles)
        evaluate = lambda batch, net: self._evaluate(plan, list(batch), net, minimum)  # noqa: E731
        found = smallest_passing(singles, evaluate)
        chosen, rejected, solves = found.chosen, list(found.rejected), found.solves
        if chosen is None and not set(rejected[-1].failing) & set(DEVICE_CHECKS):
            # no single conductor will do, and a larger one could: sets in parallel (310.10(G)), fewest first
            more = smallest_passing(self.parallel_candidates(plan), evaluate)
            chosen, rejected, solves = more.chosen, rejected + list(more.rejected), solves + more.solves
        steps = list(plan.steps)
        if chosen is not None:
            if minimum is not None and (chosen.size_label, chosen.parallel_sets) != (minimum[0].size_label, minimum[1]):
                base = self._rank(minimum[0].size_label, minimum[1])
                forced = sorted({n for ev in rejected if self._rank(ev.size_label, ev.parallel_sets) >= base
                                 for n in ev.failing}, key=CHECK_ORDER.index)
                low = sets_label(minimum[0].size_label, minimum[1])
                steps.append(Step(f"Size raised from {low} by {', '.join(forced)}",
                                  f"{low} carries the load but fails {', '.join(forced)}",
                                  chosen.parallel_sets * self.t.cmil[chosen.size_label], "cmil"))
            governing = governing_check(rejected, CHECK_ORDER) or "smallest_listed_size"
            return self._result(plan, "size", assessed_verdict(chosen), chosen, rejected, governing, (), steps, solves)
        failing = rejected[-1].failing
        # A device check that fails binds alone: no conductor can pass it (ways_out then say what the conductor
        # would be with a device that passes).
        binding = tuple(n for n in CHECK_ORDER if n in failing and (n in DEVICE_CHECKS or not set(failing) & set(DEVICE_CHECKS)))
        return self._result(plan, "size", "no_compliant_size", None, rejected, binding[0], binding, steps, solves,
                            rejected[-1])

    def verify(self, spec: NecSizingInput, size_label: str) -> SizingResult:
        plan = self.plan(spec)
        sets = spec.parallel_sets
        if sets > 1 and self.t.cmil.get(size_label, 0.0) < self.t.cmil[PARALLEL_MIN_SIZE]:
            raise blame("contradictory-input", f"Conductors in parallel must be {PARALLEL_MIN_SIZE} or larger "
                        f"({EDITION}, 310.10(G)(1)).", f"Give a size of {PARALLEL_MIN_SIZE} or larger, or one set.",
                        (("circuit", "size"), f"below {PARALLEL_MIN_SIZE} with parallel sets"),
                        (("circuit", "parallel_sets"), f"more than one set needs {PARALLEL_MIN_SIZE} or larger"))
        singles = self.candidates(plan)
        cand = next((c for c in self.candidates(plan, sets) if c.line.size_label == size_label), None)
        if cand is None:
            raise blame("unknown-conductor", f"No {spec.circuit.material} AWG/kcmil size with Table 310.16 and Table 9 "
                        "data matches the size given.", "Give a size from 14 AWG (12 AWG aluminium) to 1000 kcmil; "
                        "700, 800 and 900 kcmil have no Table 9 values.", (("circuit", "size"), "not a tabulated size"))
        (ev,), solves = self._evaluate(plan, [cand], True, self._minimum(plan, singles))
        failing = tuple(n for n in CHECK_ORDER if n in ev.failing)
        requirements_met = all(c.passes for c in ev.checks if c.obligation == "requirement")
        verdict = assessed_verdict(ev) if ev.passes else ("meets_requirements_not_guidance" if requirements_met
                                                           else "non_compliant")
        return self._result(plan, "verify", verdict, ev, [], failing[0] if failing else None, failing,
                            list(plan.steps), solves, ev)

    def _fill(self, plan: Plan, chosen: SizeEvaluation) -> FillResult | None:
        c = plan.spec.circuit
        if c.raceway is None:
            return None
        lines = 2 if plan.system.phases == "single" else 3 + (1 if c.neutral else 0)
        in_one = chosen.parallel_sets if c.parallel_raceways == "shared" else 1  # sets in each raceway
        conductors = [FillConductor(c.conductor_type, chosen.size_label, lines * in_one)]
        conductors.append(FillConductor(c.conductor_type, chosen.pe_size_label, 1))
        return raceway_fill(self.t, c.raceway, tuple(conductors), ("circuit", "raceway"))

    def _result(self, plan: Plan, mode: str, verdict: str, chosen: SizeEvaluation | None, rejected: list[SizeEvaluation],
                governing: str | None, binding: tuple[str, ...], steps: list[Step], solves: int,
                failed: SizeEvaluation | None = None) -> SizingResult:
        spec = plan.spec
        fill = None if chosen is None else self._fill(plan, chosen)
        if chosen is not None:
            steps = steps + chosen_steps(self.t, plan, chosen, self._ampacity_table_id(plan))
            if fill is not None:
                if chosen.parallel_sets > 1:
                    shared = plan.spec.circuit.parallel_raceways == "shared"
                    steps.append(Step("Parallel sets and raceways", "all sets and one EGC in one raceway" if shared else
                                      "each raceway: one set and its EGC (250.122(F)(1)(b)); the fill below is of "
                                      "each", 1 if shared else chosen.parallel_sets, "raceways", f"{EDITION}, 310.10(G)"))
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
            ways_out=ways_out(self, plan, mode, failed, binding) if binding and failed is not None else (),
            steps=tuple(steps),
            assumptions=assumptions(plan, chosen, MAX_PARALLEL_SETS), cautions=cautions(self.t, plan, fill, self.table_ids()),
            table_ids=self.table_ids(), solves=solves, raceway=fill,
        )

@lru_cache(maxsize=1)
def nec() -> NecRegime:
    return NecRegime(default_nec_tables(), default_library(), default_sizing_tables().densities)
