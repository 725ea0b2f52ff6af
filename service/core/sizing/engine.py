"""Size a conductor (the smallest that passes every check) or verify a chosen one.

Both run the same pipeline (checks.py).  Sizing checks the table conditions
on every size first (no solve), then solves the network only for sizes that
pass them: the smallest such size alone, and if it fails a network check, all
the remaining ones together, so a sizing needs one or two solves.
"""

from __future__ import annotations

import math

from service.core.conductors import Conductor
from service.core.errors import CalcError, calc_error
from service.core.protection import (
    CircuitBreaker,
    GGFuse,
    ResidualCurrentDevice,
    default_protection,
    required_disconnection_time,
)

from .checks import (
    CHECK_ORDER,
    THERMAL_CHECKS,
    Context,
    breaking_rating,
    evaluate,
    origin_fault_current,
    pe_role,
    request_blames,
)
from .circuit import Electrical
from .model import Device, SizeEvaluation, SizingInput, SizingResult, Step
from .regime import Capacity, Regime, iec60364
from .search import governing_check, smallest_passing

MM2 = 1.0e-6
WAYS_OUT = {
    "design_current_within_rating": "Choose a protective device rated at least the design current Ib.",
    "ampacity": "Run conductors in parallel, choose a reference method that sheds heat better (clipped direct, free "
                "air), reduce the grouping, or use XLPE/EPR insulation.",
    "conventional_current": "Use a circuit-breaker (I2 = 1.45 In) instead of a gG fuse, or conductors in parallel.",
    "voltage_drop": "Shorten the run, run conductors in parallel, feed the load three-phase, or move the point of "
                    "supply closer; check the drop already used upstream.",
    "earth_fault_loop": "Add an RCD (it disconnects at a far higher loop impedance), choose a device that trips "
                        "instantaneously at a lower current (type B, or a lower rating), enlarge the protective "
                        "conductor, or shorten the run.",
    "protective_conductor_adiabatic": "Enlarge the protective conductor, or choose a device that clears faults faster "
                                      "or limits the let-through energy.",
    "line_conductor_adiabatic": "Choose a current-limiting device, or reduce the prospective fault current.",
    "protective_conductor_minimum": "Use a separate protective conductor of at least the 543.1.3 minimum, or protect "
                                    "it against mechanical damage (copper 2.5 mm² then suffices).",
    "breaking_capacity": "Choose a device whose rated breaking capacity is at least the prospective fault current, or "
                         "provide back-up protection by an upstream device (IEC 60364-4-43 434.5.1).",
}


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
    device = GGFuse(rating, p.fuse_system) if p.device_type == "gG" else CircuitBreaker(p.device_type, rating)
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
        if (pc.kind or "cable_core") == "cable_core":
            return regime.protective_conductor_minimum
        floor_mm2 = default_protection().separate_pe_minimum_mm2[(material, bool(pc.mechanically_protected))]

        def separate(line: Conductor) -> tuple[Conductor, str]:
            pe, basis = regime.protective_conductor_minimum(line)
            if pe.area_m2 >= floor_mm2 * MM2 * (1 - 1e-9):
                return pe, basis
            return regime.conductor(floor_mm2 * MM2, material), (
                f"{basis}; raised to {floor_mm2:g} mm², the minimum of a separate protective conductor "
                "(IEC 60364-5-54 543.1.3)")
        return separate
    return lambda line: (line, "same size as the line conductors")


def context(spec: SizingInput, regime: Regime) -> tuple[Context, list[Step]]:
    c = spec.circuit
    regime.validate(c)
    ib, ib_step = design_current(spec)
    device, protective = _device(spec, regime, ib)
    rcd = None
    if spec.protection.rcd_residual_current_a is not None:
        rcd = ResidualCurrentDevice(spec.protection.rcd_residual_current_a)
    factors = regime.correction_factors(c)
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
        f"Protective conductor k by its kind: {pe_role(ctx)[2]} (IEC 60364-5-54 Annex A: Table A.54.4 a core of the "
        "cable, A.54.2 separate insulated, A.54.3 bare touching a cable covering, A.54.5 bare).",
        "Fault energy I²t = I² x t with t the time the devices are guaranteed to clear within (an upper bound). "
        "An RCD is credited for earth faults only; a line-to-neutral or line-to-line fault is cleared by the "
        "overcurrent device alone (IEC 60364-4-43 434.5.2). At the origin of the circuit the device's let-through "
        "I²t is used when given, else the energy-limiting class when given (EN 60898-1 Annex ZA, no class is "
        "assumed); a bound I² x 0.1 s that fails, or a gG fuse-link cleared within 0.1 s, is reported as not "
        "assessed.",
        "gG fuse-links: the maximum operating characteristic is taken as straight in log-log between the IEC 60269-1 "
        "gates Imax(5 s) and Imax(0.1 s)" + (" and the published 0.4 s points of BS 88-2 (BS 7671 Table 41.2)"
                                              if ctx.spec.protection.fuse_system == "bs88_2" else "")
        + ", for Ia at the required time and for clearing times; published characteristics are convex in log-log, "
        "so the chord is on the slow, conservative side (common practice).",
        f"Prospective fault current at the origin: {origin_fault_current(ctx.spec)[1]}.",
        "Correction factors between tabulated rows take the next worse row (conservative).",
        "A service-chosen gG rating is the smallest standard rating with IEC 60269-1 gates held (16 A and up).",
        "Harmonic currents in the neutral (IEC 60364-5-52 Annex E) are not considered.",
    )


def _cautions(ctx: Context) -> tuple[str, ...]:
    notes = ["Installation conditions must match the inputs: method, ambient, grouping, thermal insulation and soil "
             "decide the rating, and a run that meets worse conditions anywhere along it must be sized for them."]
    used = {**ctx.regime.t.tables, **default_protection().tables}
    if any(used[i].provenance != "published" for i in _table_ids(ctx)):
        notes.append("Some table values are from memory and not yet compared with the published tables: check the "
                     "result against the standard before relying on it (provenance in notes.sources).")
    if ctx.spec.protection.breaking_capacity_a is None:
        notes.append(f"Breaking capacity: {breaking_rating(ctx)[1]}.")
    if ctx.rcd is None and ctx.spec.protection.circuit_kind == "socket_outlets":
        notes.append("Socket-outlet circuits generally need additional protection by a 30 mA RCD (IEC 60364-4-41 411.3.3).")
    return tuple(notes)


def _table_ids(ctx: Context) -> tuple[str, ...]:
    """The regime's tables and the protection tables the checks read (each with its provenance in the answer)."""
    return tuple(dict.fromkeys((*ctx.regime.table_ids(), *default_protection().tables)))


def _governing(rejected: list[SizeEvaluation]) -> str | None:
    return governing_check(rejected, CHECK_ORDER)


def _result(ctx: Context, mode: str, verdict: str, chosen: SizeEvaluation | None, rejected: list[SizeEvaluation],
            governing: str | None, binding: tuple[str, ...], steps: list[Step], solves: int) -> SizingResult:
    if chosen is not None:
        steps = steps + [
            Step("Chosen size: tabulated capacity It", chosen.capacity_basis, chosen.tabulated_capacity_a, "A"),
            Step("Chosen size: Iz", "Iz = It x product of factors", chosen.iz_a, "A"),
        ]
        if chosen.total_drop_pct is not None:
            steps.append(Step("Chosen size: voltage drop", "solved network, U0 - Re(V at the load)", chosen.voltage_drop_v,
                              "V", "service.core.network"))
            steps.append(Step("Chosen size: Zs", "Thevenin impedance of the loop, Ze + R1 + R2", chosen.zs_ohm, "ohm",
                              "service.core.network"))
    ways = tuple(WAYS_OUT[name] for name in CHECK_ORDER if name in binding)
    return SizingResult(
        mode=mode, regime=ctx.regime.name, verdict=verdict, design_current_a=ctx.design_current_a, device=ctx.device,
        factors=ctx.factors, factor_product=ctx.factor_product, required_tabulated_a=ctx.required_iz_a / ctx.factor_product,
        drop_limit_pct=ctx.drop_limit_pct,
        drop_limit_source=ctx.regime.drop_limit(ctx.spec.limits, ctx.spec.circuit.length_m).source,
        available_drop_pct=ctx.drop_limit_pct - ctx.spec.limits.upstream_drop_pct,
        disconnection_time_s=ctx.disconnection_time_s,
        disconnection_source=next(s.formula for s in steps if s.name == "Required disconnection time"),
        chosen=chosen, governing_check=governing, rejected=tuple(rejected), binding_checks=binding, ways_out=ways,
        steps=tuple(steps), assumptions=_assumptions(ctx),
        cautions=_cautions(ctx) + tuple(f"Not assessed, so not passed: {n.name}: {n.reason}."
                                        for n in (chosen.not_assessed if chosen is not None else ())),
        table_ids=_table_ids(ctx), solves=solves,
    )


def size_conductor(spec: SizingInput, regime: Regime | None = None) -> SizingResult:
    """The smallest size that passes every check, every smaller size with the check it fails."""
    regime = regime or iec60364()
    ctx, steps = context(spec, regime)
    sizes = _sizes(ctx)
    found = smallest_passing(sizes, lambda batch, with_network: evaluate(ctx, list(batch), with_network))
    table_only, chosen, rejected, solves = found.table_only, found.chosen, list(found.rejected), found.solves
    if chosen is not None:
        ampacity_size = next(ev for ev in table_only if ev.passes)
        if ampacity_size.size_label != chosen.size_label:
            forced = sorted({n for ev in rejected for n in ev.failing if n not in THERMAL_CHECKS},
                            key=CHECK_ORDER.index)
            steps.append(Step(f"Size forced up from {ampacity_size.size_label} by {', '.join(forced)}",
                              f"{ampacity_size.size_label} meets the current-carrying checks but fails "
                              f"{', '.join(forced)}", chosen.area_m2 / MM2, "mm²"))
        governing = _governing(rejected) or "smallest_listed_size"
        return _result(ctx, "size", "compliant", chosen, rejected, governing, (), steps, solves)
    largest = rejected[-1]
    binding = tuple(n for n in CHECK_ORDER if n in largest.failing)
    return _result(ctx, "size", "no_compliant_size", None, rejected, binding[0], binding, steps, solves)


def verify_conductor(spec: SizingInput, area_m2: float, regime: Regime | None = None) -> SizingResult:
    """Every check on the size given: a verdict, never an exception, for a size that does not comply."""
    regime = regime or iec60364()
    ctx, steps = context(spec, regime)
    line = regime.conductor(area_m2, spec.circuit.material)
    capacity = regime.tabulated_capacity(spec.circuit, ctx.loaded, line.area_m2)
    if capacity is None:
        raise _fail("no-data", f"No tabulated capacity for {line.size_label} {spec.circuit.material} by method "
                    f"{spec.circuit.method} with {ctx.loaded} loaded conductors.",
                    "Choose a size the method's table lists.", (("circuit", "size"), "no tabulated capacity"))
    (ev,), solves = evaluate(ctx, [(line, capacity)], with_network=True)
    failing = tuple(n for n in CHECK_ORDER if n in ev.failing)
    verdict = "compliant" if ev.passes else "non_compliant"
    return _result(ctx, "verify", verdict, ev, [], failing[0] if failing else None, failing, steps, solves)
