"""Size a conductor (the smallest that passes every check) or verify a chosen one.

Both run the same pipeline (checks.py).  Sizing checks the table conditions
on every size first (no solve), then solves the network only for sizes that
pass them: the smallest such size alone, and if it fails a network check, all
the remaining ones together, so a sizing needs one or two solves.
"""

from __future__ import annotations

import dataclasses
import math

from service.core.conductors import Conductor
from service.core.errors import CalcError, calc_error
from service.core.protection import CircuitBreaker, GGFuse, ResidualCurrentDevice, required_disconnection_time

from .checks import CHECK_ORDER, THERMAL_CHECKS, Context, evaluate, request_blames
from .circuit import Electrical
from .model import Device, SizeEvaluation, SizingInput, SizingResult, Step
from .regime import Capacity, Regime, iec60364
from . import harmonics, parallel, ways_out
from .search import Search, governing_check, smallest_passing

MM2 = 1.0e-6


_fail = calc_error


def design_current(spec: SizingInput) -> tuple[float, Step]:
    load, u0 = spec.load, spec.supply.u0_v
    if (load.design_current_a is None) == (load.power_w is None):
        raise _fail("invalid-input", "Give either the design current or the power of the load.",
                    "Give load.design_current, or load.power (with power_factor and, if not U0, voltage).",
                    (("load",), "design current or power, exactly one"))
    if load.design_current_a is not None:
        return load.design_current_a, Step("Design current Ib", "given", load.design_current_a, "A")
    if load.phases == "single":
        u = load.voltage_v or u0
        ib = load.power_w / (load.efficiency * u * load.power_factor)
        formula = f"Ib = P / (η U cos φ) = {load.power_w:g} / ({load.efficiency:g} x {u:g} x {load.power_factor:g})"
    else:
        u = load.voltage_v or math.sqrt(3) * u0
        ib = load.power_w / (load.efficiency * math.sqrt(3) * u * load.power_factor)
        formula = (f"Ib = P / (η √3 U cos φ) = {load.power_w:g} / ({load.efficiency:g} x √3 x {u:.4g} x "
                   f"{load.power_factor:g})")
    return ib, Step("Design current Ib", formula, ib, "A", "P is the output power when an efficiency is given")


def _device(spec: SizingInput, regime: Regime, ib: float) -> tuple[Device, CircuitBreaker | GGFuse]:
    p = spec.protection
    rating = p.rated_current_a
    chosen = rating is None
    if chosen:
        ratings = regime.device_ratings(p.device_type)
        rating = next((r for r in ratings if r >= ib - 1e-9), None)
        if rating is None:
            raise _fail("no-standard-rating",
                        f"No standard {p.device_type} rating reaches Ib = {ib:.4g} A (largest {ratings[-1]:g} A).",
                        "Use gG fuses (to 1250 A), split the load, or give the device and its rating.",
                        (("protection", "device", "type"), f"no rating of at least {ib:.4g} A"))
    device = GGFuse(rating) if p.device_type == "gG" else CircuitBreaker(p.device_type, rating)
    conventional = regime.conventional_current(p.device_type, rating)
    return Device(p.device_type, rating, chosen, device.label, conventional.i2_a, conventional.multiple,
                  conventional.source), device


def _pe_rule(spec: SizingInput, regime: Regime):
    pc, material = spec.protective_conductor, spec.circuit.material
    if pc.mode == "given":
        if pc.area_m2 is None:
            raise _fail("missing-input", "The protective conductor mode 'given' needs its size.",
                        "Give protective_conductor.size, or another mode.", (("protective_conductor", "size"), "missing"))
        try:
            given = regime.conductor(pc.area_m2, material)
        except CalcError as exc:
            raise _fail(exc.code, exc.detail, exc.how_to_fix, (("protective_conductor", "size"), "not a listed size")) from None
        return lambda line: (given, "given in the request")
    if pc.mode == "minimum":
        return regime.protective_conductor_minimum
    return lambda line: (line, "same size as the line conductors")


def context(spec: SizingInput, regime: Regime) -> tuple[Context, list[Step]]:
    c = spec.circuit
    regime.validate(c)
    ib, ib_step = design_current(spec)
    device, protective = _device(spec, regime, ib)
    rcd = None
    if spec.protection.rcd_residual_current_a is not None:
        rcd = ResidualCurrentDevice(spec.protection.rcd_residual_current_a)
    factors = regime.correction_factors(c) + harmonics.line_factor(harmonics.rule(spec, regime.t, ib))
    product = math.prod(f.value for f in factors)
    required_iz = max(device.rated_current_a, device.conventional_current_a / regime.overload_factor)
    drop = regime.drop_limit(spec.limits, c.length_m)
    if spec.protection.required_time_s is not None:
        t, t_source = spec.protection.required_time_s, "given in the request"
    else:
        with request_blames():
            dt = required_disconnection_time(spec.supply.earthing, spec.supply.u0_v, spec.protection.circuit_kind,
                                             device.rated_current_a)
        t, t_source = dt.time_s, f"{dt.source}: {dt.note}"
    loaded = 2 if spec.load.phases == "single" else 3
    live = 2 if loaded == 2 else 3 + (1 if c.neutral else 0)
    electrical = Electrical(spec.load.phases, spec.supply.u0_v, spec.supply.frequency_hz, c.length_m, ib,
                            spec.load.power_factor, spec.supply.ze_ohm, regime.operating_temperature_c(c.insulation),
                            regime.reactance_ohm_per_m)
    ctx = Context(spec, regime, loaded, ib, device, protective, rcd, factors, product, required_iz,
                  drop.limit_pct, t, electrical, _pe_rule(spec, regime), live)
    steps = [ib_step,
             Step("Rated current In", "smallest standard rating >= Ib" if device.chosen_by_service else "given",
                  device.rated_current_a, "A", device.label),
             Step("Conventional operating current I2", f"I2 = {device.conventional_multiple:g} x In",
                  device.conventional_current_a, "A", device.conventional_source)]
    steps += [Step(f"Correction factor: {f.name.replace('_', ' ')}", f.basis, f.value, "1", f.source) for f in factors]
    steps += [Step("Product of correction factors", " x ".join(f"{f.value:g}" for f in factors), product, "1"),
              Step("Required Iz", "max(In, I2 / 1.45)", required_iz, "A", "IEC 60364-4-43:2008, 433.1"),
              Step("Required tabulated capacity It", "It >= max(In, I2 / 1.45) / product of factors",
                   required_iz / product, "A")]
    steps += list(drop.steps)
    if spec.limits.upstream_drop_pct:
        steps.append(Step("Drop already used upstream", "given", spec.limits.upstream_drop_pct, "%"))
    steps.append(Step("Required disconnection time", t_source, t, "s"))
    return ctx, steps


def _sizes(ctx: Context) -> list[tuple[Conductor, Capacity]]:
    c = ctx.spec.circuit
    found = []
    for line in ctx.regime.sizes(c, ctx.loaded):
        capacity = ctx.regime.tabulated_capacity(c, ctx.loaded, line.area_m2)
        if capacity is not None:
            found.append((line, capacity))
    if not found:
        raise _fail("no-data", f"No current-carrying capacities are held for {c.material} {c.insulation} conductors by "
                    f"method {c.method} with {ctx.loaded} loaded conductors.",
                    "Choose another method, material or insulation.", (("circuit", "method"), "no table data"))
    return found


def _assumptions(ctx: Context) -> tuple[str, ...]:
    e = ctx.electrical
    return (
        f"Conductors: IEC 60228 class 2 maximum resistance, taken at the insulation's maximum operating temperature "
        f"({e.temperature_c:g} °C) for both the voltage drop and the earth-fault loop (conservative).",
        f"Reactance {ctx.regime.reactance_ohm_per_m * 1000:g} mΩ/m per conductor ({ctx.regime.reactance_source}).",
        "The load draws the design current at its power factor (lagging), phase referred to the supply EMF; "
        + ("three-phase load balanced, so no neutral current and no neutral drop." if e.phases == "three" else
           "single-phase: line and neutral of the same size."),
        "Ze is taken as resistive and Zs = Ze + R1 + R2 (cable reactance left out of the loop, common practice).",
        "Protective conductor k from IEC 60364-5-54 Table A.54.4 (a core of the cable, or bunched with it).",
        "Fault energy I²t = I² x t with t the time the devices are guaranteed to clear within (an upper bound). "
        "At the origin of the circuit the device's let-through I²t is used when given; without it, a prospective "
        "fault current cleared within 0.1 s is not assessed (only the maker's let-through figure is meaningful there).",
        "Correction factors between tabulated rows take the next worse row (conservative).",
        "A service-chosen gG rating is the smallest standard rating with IEC 60269-1 gates held (16 A and up).",
        harmonics.assumption(ctx.spec, harmonics.rule(ctx.spec, ctx.regime.t, ctx.design_current_a)),
    )


def _cautions(ctx: Context) -> tuple[str, ...]:
    notes = ["Installation conditions must match the inputs: method, ambient, grouping, thermal insulation and soil "
             "decide the rating, and a run that meets worse conditions anywhere along it must be sized for them."]
    if any(t.provenance != "published" for t in (ctx.regime.t.tables[i] for i in ctx.regime.table_ids())):
        notes.append("Some table values are from memory and not yet compared with the published tables: check the "
                     "result against the standard before relying on it (provenance in notes.sources).")
    if ctx.spec.protection.let_through_i2t_a2s is None:
        notes.append("Short-circuit withstand at the origin of the circuit is checked only with the device's "
                     "let-through I²t (give protection.let_through_energy from the maker's data) or for faults "
                     "cleared slower than 0.1 s.")
    if ctx.rcd is None and ctx.spec.protection.circuit_kind == "socket_outlets":
        notes.append("Socket-outlet circuits generally need additional protection by a 30 mA RCD (IEC 60364-4-41 411.3.3).")
    return tuple(notes)


def _governing(rejected: list[SizeEvaluation]) -> str | None:
    return governing_check(rejected, CHECK_ORDER)


def _result(ctx: Context, mode: str, verdict: str, chosen: SizeEvaluation | None, rejected: list[SizeEvaluation],
            governing: str | None, binding: tuple[str, ...], steps: list[Step], solves: int,
            ways: tuple[str, ...] = ()) -> SizingResult:
    if chosen is not None:
        per = " per set" if chosen.parallel_sets > 1 else ""
        steps = steps + [
            Step(f"Chosen size: tabulated capacity It{per}", chosen.capacity_basis, chosen.tabulated_capacity_a, "A"),
            Step("Chosen size: Iz", "Iz = It x product of factors" + (f" x {chosen.parallel_sets} sets" if per else ""),
                 chosen.iz_a, "A", parallel.SOURCE if per else ""),
        ]
        if chosen.total_drop_pct is not None:
            steps.append(Step("Chosen size: voltage drop", "solved network, U0 - Re(V at the load)", chosen.voltage_drop_v,
                              "V", "service.core.network"))
            steps.append(Step("Chosen size: Zs", "Thevenin impedance of the loop, Ze + R1 + R2", chosen.zs_ohm, "ohm",
                              "service.core.network"))
    cautions = _cautions(ctx) + harmonics.cautions(ctx.spec, harmonics.rule(ctx.spec, ctx.regime.t, ctx.design_current_a))
    if chosen is not None and chosen.parallel_sets > 1:
        cautions += parallel.cautions(ctx.spec, chosen)
    return SizingResult(
        mode=mode, regime=ctx.regime.name, verdict=verdict, design_current_a=ctx.design_current_a, device=ctx.device,
        factors=ctx.factors, factor_product=ctx.factor_product, required_tabulated_a=ctx.required_iz_a / ctx.factor_product,
        drop_limit_pct=ctx.drop_limit_pct,
        drop_limit_source=ctx.regime.drop_limit(ctx.spec.limits, ctx.spec.circuit.length_m).source,
        available_drop_pct=ctx.drop_limit_pct - ctx.spec.limits.upstream_drop_pct,
        disconnection_time_s=ctx.disconnection_time_s,
        disconnection_source=next(s.formula for s in steps if s.name == "Required disconnection time"),
        chosen=chosen, governing_check=governing, rejected=tuple(rejected), binding_checks=binding, ways_out=ways,
        steps=tuple(steps), assumptions=_assumptions(ctx) + parallel.assumptions(chosen), cautions=cautions,
        table_ids=ctx.regime.table_ids(), solves=solves,
    )


def _evaluator(ctx: Context, sets: int = 1):
    """evaluate() with the harmonic neutral check and, for parallel sets, the per-set figures."""
    rule = harmonics.rule(ctx.spec, ctx.regime.t, ctx.design_current_a)
    density, _ = ctx.regime.metal_density(ctx.spec.circuit.material)

    def run(batch, with_network: bool) -> tuple[list[SizeEvaluation], int]:
        found, solves = evaluate(ctx, list(batch), with_network)
        found = harmonics.with_neutral_check(rule, found)
        if sets > 1:
            found = [parallel.finish(ev, cap, sets, ctx.live_conductors, density, ctx.spec.circuit.length_m,
                                     ctx.spec.protective_conductor.mode) for ev, (_, cap) in zip(found, batch)]
        return found, solves
    return run


def _parallel_context(spec: SizingInput, regime: Regime, sets: int) -> tuple[Context, list[Step]] | None:
    """The context of ``sets`` parallel sets (each a circuit of the group), None where the tables stop."""
    try:
        ctx, steps = context(parallel.grouped_spec(spec, sets), regime)
    except CalcError as exc:
        if parallel.usable(exc):
            return None
        raise
    e = ctx.electrical
    ctx = dataclasses.replace(ctx, electrical=dataclasses.replace(e, reactance_ohm_per_m=e.reactance_ohm_per_m / sets),
                              pe_for=parallel.pe_rule(ctx.pe_for, sets, spec.protective_conductor.mode))
    steps.append(Step("Parallel sets", f"{sets} equal sets, each counted as a circuit of the group "
                      f"({ctx.spec.circuit.grouped_circuits} circuits); Iz = sum of the sets", sets, "1", parallel.SOURCE))
    return ctx, steps


@dataclasses.dataclass(frozen=True, slots=True)
class _Found:
    ctx: Context
    steps: list[Step]
    search: Search
    rejected: list[SizeEvaluation]  # every candidate tried below the chosen one, single conductors first
    solves: int


def _search(spec: SizingInput, regime: Regime) -> _Found:
    """The smallest single size that passes; when none does, the fewest parallel sets of the smallest size."""
    ctx, steps = context(spec, regime)
    found = smallest_passing(_sizes(ctx), _evaluator(ctx))
    rejected, solves = list(found.rejected), found.solves
    if found.chosen is not None:
        return _Found(ctx, steps, found, rejected, solves)
    last = _Found(ctx, steps, found, rejected, solves)
    for sets in range(2, parallel.MAX_SETS + 1):
        attempt = _parallel_context(spec, regime, sets)
        if attempt is None:
            break
        ctx_n, steps_n = attempt
        offered = parallel.candidates(_sizes(ctx_n), sets, spec.circuit.material)
        if not offered:
            break
        found_n = smallest_passing(offered, _evaluator(ctx_n, sets))
        rejected += found_n.rejected
        solves += found_n.solves
        last = _Found(ctx_n if found_n.chosen is not None else ctx, steps_n if found_n.chosen is not None else steps,
                      found_n, rejected, solves)
        if found_n.chosen is not None:
            break
    return last


def size_conductor(spec: SizingInput, regime: Regime | None = None) -> SizingResult:
    """The smallest size that passes every check, every smaller size with the check it fails."""
    regime = regime or iec60364()
    f = _search(spec, regime)
    ctx, steps, chosen, rejected = f.ctx, f.steps, f.search.chosen, f.rejected
    if chosen is not None:
        ampacity_size = next((ev for ev in f.search.table_only if ev.passes), chosen)
        if ampacity_size.size_label != chosen.size_label:
            forced = sorted({n for ev in f.search.rejected for n in ev.failing if n not in THERMAL_CHECKS},
                            key=CHECK_ORDER.index)
            steps.append(Step(f"Size forced up from {ampacity_size.size_label} by {', '.join(forced)}",
                              f"{ampacity_size.size_label} meets the current-carrying checks but fails "
                              f"{', '.join(forced)}", chosen.area_m2 / MM2, "mm²"))
        governing = _governing(rejected) or "smallest_listed_size"
        return _result(ctx, "size", "compliant", chosen, rejected, governing, (), steps, f.solves)
    largest = rejected[-1]
    binding = tuple(n for n in CHECK_ORDER if n in largest.failing)
    steps.append(Step("Parallel sets tried", f"up to {parallel.MAX_SETS} sets of {parallel.MIN_SET_AREA_MM2[spec.circuit.material]:g} "
                      f"mm² and up, where the grouping tables reach; none passes", largest.parallel_sets, "1", parallel.SOURCE))
    ways = ways_out.suggest(ctx, "size", largest, binding, _Tools(regime, spec))
    return _result(ctx, "size", "no_compliant_size", None, rejected, binding[0], binding, steps, f.solves, ways)


def evaluate_size(spec: SizingInput, area_m2: float, regime: Regime, sets: int = 1
                  ) -> tuple[Context, list[Step], SizeEvaluation, int]:
    """Every check on one size (of ``sets`` parallel sets), one solve."""
    if sets > 1:
        attempt = _parallel_context(spec, regime, sets)
        if attempt is None:
            raise _fail("outside-table", f"The grouping tables do not reach {sets} parallel sets in this group.",
                        "Give fewer sets, or a smaller group.", (("circuit", "parallel_sets"), "grouping out of table"))
        ctx, steps = attempt
    else:
        ctx, steps = context(spec, regime)
    line = regime.conductor(area_m2, spec.circuit.material)
    capacity = regime.tabulated_capacity(spec.circuit, ctx.loaded, line.area_m2)
    if capacity is None:
        raise _fail("no-data", f"No tabulated capacity for {line.size_label} {spec.circuit.material} by method "
                    f"{spec.circuit.method} with {ctx.loaded} loaded conductors.",
                    "Choose a size the method's table lists.", (("circuit", "size"), "no tabulated capacity"))
    batch = [(line, capacity) if sets == 1 else parallel.as_sets(line, capacity, sets)]
    (ev,), solves = _evaluator(ctx, sets)(batch, True)
    return ctx, steps, ev, solves


class _Tools:
    """What ways_out may run: the size search and a verification, under the request's conditions."""

    def __init__(self, regime: Regime, spec: SizingInput) -> None:
        self.regime, self.spec = regime, spec

    def smallest(self, spec: SizingInput) -> SizeEvaluation | None:
        return _search(spec, self.regime).search.chosen

    def verify(self, spec: SizingInput, area_m2: float, sets: int) -> SizeEvaluation:
        return evaluate_size(spec, area_m2, self.regime, sets)[2]


def verify_conductor(spec: SizingInput, area_m2: float, regime: Regime | None = None, sets: int | None = None
                     ) -> SizingResult:
    """Every check on the size given (in ``sets`` parallel sets, default the circuit's): a verdict, never an
    exception, for a size that does not comply."""
    regime = regime or iec60364()
    sets = spec.circuit.parallel_sets if sets is None else sets
    ctx, steps, ev, solves = evaluate_size(spec, area_m2, regime, sets)
    failing = tuple(n for n in CHECK_ORDER if n in ev.failing)
    verdict = "compliant" if ev.passes else "non_compliant"
    ways = ways_out.suggest(ctx, "verify", ev, failing, _Tools(regime, spec)) if failing else ()
    return _result(ctx, "verify", verdict, ev, [], failing[0] if failing else None, failing, steps, solves, ways)
