"""Size a conductor (the smallest that passes every check) or verify a chosen one.

Both run the same pipeline (checks.py).  Sizing checks the table conditions
on every size first (no solve), then solves the network only for sizes that
pass them: the smallest such size alone, and if it fails a network check, all
the remaining ones together, so a sizing needs one or two solves.
"""

from __future__ import annotations

import dataclasses
import math

from service.core.cable_impedance import REACTANCE_SOURCE, RESISTANCE_SOURCE, arrangement_for
from service.core.conductors import Conductor
from service.core.errors import CalcError, calc_error
from service.core.protection import (
    CircuitBreaker,
    GGFuse,
    ResidualCurrentDevice,
    default_protection,
    required_disconnection_time,
)
from service.core.protection.ratings import nonstandard_rating

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
from .model import Device, SizeEvaluation, SizingInput, SizingResult, Step, assessed_verdict
from .regime import Capacity, Regime, iec60364
from . import harmonics, parallel, ways_out
from .search import Search, governing_check, smallest_passing

MM2 = 1.0e-6


_fail = calc_error


# IEC 60038:2009, Table 1: the supply voltage stays within ±10 % of nominal at the supply terminals (from memory).
# A load voltage within this band of U0, or of √3 U0, is read as that voltage; the bands never overlap (√3 > 1.1²).
VOLTAGE_TOLERANCE = 0.10
VOLTAGE_TOLERANCE_SOURCE = "IEC 60038:2009, Table 1 (±10 % at the supply terminals, from memory)"


def _near(v: float, nominal: float) -> bool:
    return abs(v / nominal - 1.0) <= VOLTAGE_TOLERANCE + 1e-12


def load_voltage(spec: SizingInput) -> tuple[float, str]:
    """The voltage Ib is computed at: the load's, reconciled with the supply, or refused (422 at /load/voltage).

    Single-phase circuits run line to neutral at U0; a three-phase load's voltage is line-to-line, √3 U0.
    """
    load, u0 = spec.load, spec.supply.u0_v
    three = load.phases != "single"
    line = math.sqrt(3) * u0
    expected, name = (line, f"line-to-line √3 U0 = {line:.4g} V") if three else (u0, f"line-to-neutral U0 = {u0:g} V")
    if load.voltage_v is None:
        return expected, f"U = {name} (load voltage not given)"
    v = load.voltage_v
    if _near(v, expected):
        return v, f"U = {v:g} V, the load's voltage (given), within 10 % of the supply's {name}"
    blame = ("load", "voltage")
    if three and _near(v, u0):
        raise _fail("contradictory-input",
                    f"A three-phase load's voltage is its line-to-line voltage, but {v:g} V is this supply's "
                    f"line-to-neutral voltage U0 = {u0:g} V; between its lines the supply has √3 x U0 = {line:.4g} V.",
                    f"Give the line-to-line voltage ({line:.4g} V) or leave load.voltage out. A single-phase load "
                    f"between line and neutral is sized with load.phases single.",
                    (blame, f"{v:g} V is line-to-neutral (U0); a three-phase load takes line-to-line ({line:.4g} V)"))
    if not three and _near(v, line):
        raise _fail("contradictory-input",
                    f"{v:g} V is this supply's line-to-line voltage (√3 x U0 = {line:.4g} V), but a single-phase "
                    f"circuit is sized here between line and neutral, at U0 = {u0:g} V.",
                    "Give a load connected line to neutral (its voltage near U0), or a balanced three-phase load "
                    "(load.phases three).",
                    (blame, f"{v:g} V is line-to-line; a single-phase circuit here is line-to-neutral ({u0:g} V)"))
    raise _fail("contradictory-input",
                f"The load's {v:g} V fits neither the supply's line-to-neutral voltage U0 = {u0:g} V nor its "
                f"line-to-line voltage √3 x U0 = {line:.4g} V (within 10 %, {VOLTAGE_TOLERANCE_SOURCE}).",
                "Check supply.u0 and load.voltage: they must describe the same system.",
                (blame, f"fits neither U0 = {u0:g} V nor √3 U0 = {line:.4g} V"))


def design_current(spec: SizingInput) -> tuple[float, Step]:
    load = spec.load
    if sum(x is not None for x in (load.design_current_a, load.power_w, load.apparent_power_va)) != 1:
        raise _fail("invalid-input", "Give either the design current or the power of the load.",
                    "Give load.design_current, or load.power (with power_factor and, if not U0, voltage).",
                    (("load",), "design current or power, exactly one"))
    if load.design_current_a is not None:
        return load.design_current_a, Step("Design current Ib", "given", load.design_current_a, "A")
    u, u_basis = load_voltage(spec)
    three = load.phases != "single"
    root, k = ("√3 ", math.sqrt(3)) if three else ("", 1.0)
    if load.apparent_power_va is not None:  # S is what the load draws: Ib follows from it whatever cos φ is
        s = load.apparent_power_va
        ib = s / (k * u)
        over = f"(√3 U) = {s:g} / (√3 x {u:.4g})" if three else f"U = {s:g} / {u:.4g}"
        formula = (f"Ib = S / {over}; apparent power S given "
                   f"(P = S cos φ = {s * load.power_factor:g} W); {u_basis}")
        return ib, Step("Design current Ib", formula, ib, "A",
                        "common practice: S = √3 U I three-phase, S = U I single-phase")
    ib = load.power_w / (load.efficiency * k * u * load.power_factor)
    formula = (f"Ib = P / (η {root}U cos φ) = {load.power_w:g} / ({load.efficiency:g} x {'√3 x ' if three else ''}"
               f"{u:.4g} x {load.power_factor:g}); active power P given; {u_basis}")
    return ib, Step("Design current Ib", formula, ib, "A", "P is the output power when an efficiency is given")


def _device(spec: SizingInput, regime: Regime, ib: float) -> tuple[Device, CircuitBreaker | GGFuse]:
    p = spec.protection
    rating = p.rated_current_a
    chosen = rating is None
    if not chosen:  # a rating the device's standard does not list is a typing error, not a design
        problem = nonstandard_rating(p.device_type, rating, *regime.standard_ratings(p.device_type))
        if problem is not None:
            raise _fail("non-standard-rating", problem + ".", "Give one of the standard ratings, or leave "
                        "rated_current out to let the service choose the smallest one at least Ib.",
                        (("protection", "device", "rated_current"), problem))
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
    drop_ambient = None
    if c.drop_temperature_basis == "estimated_from_load":
        drop_ambient = c.ambient_c if c.ambient_c is not None else regime.reference_ambient_c(c.method)
    ctx = Context(spec, regime, loaded, ib, device, protective, rcd, factors, product, required_iz,
                  drop.limit_pct, t, electrical, _pe_rule(spec, regime), live, drop_ambient)
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
        *_drop_assumptions(ctx),
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
        "Short circuits further along the run (smaller currents, longer clearing): the line conductors' protection "
        "is taken as assured by the same device's overload protection where it meets 433.1 and its breaking capacity "
        "holds (IEC 60364-4-43:2008, 435.1); the far-end earth fault is checked for the protective conductor.",
        "Correction factors between tabulated rows take the next worse row (conservative).",
        "A service-chosen gG rating is the smallest standard rating with IEC 60269-1 gates held (16 A and up).",
        harmonics.assumption(ctx.spec, harmonics.rule(ctx.spec, ctx.regime.t, ctx.design_current_a)),
    )


def _drop_assumptions(ctx: Context) -> tuple[str, ...]:
    """What the voltage drop's impedance rests on: temperature basis, resistance, reactance and geometry."""
    e, c = ctx.electrical, ctx.spec.circuit
    if ctx.drop_ambient_c is None:
        temperature = (f"Voltage drop (basis maximum_operating): conductors at the insulation's maximum operating "
                       f"temperature {e.temperature_c:g} °C (conservative).")
    else:
        temperature = (f"Voltage drop (basis estimated_from_load): conductor temperature estimated per size as "
                       f"θ = θa + (θmax − θa)(Ib/Iz)² with θa {ctx.drop_ambient_c:g} °C, θmax {e.temperature_c:g} °C "
                       "(the temperature rise taken proportional to the losses, I²: common practice); a size with Ib "
                       "above its Iz gets a temperature above θmax.")
    arrangement = arrangement_for(c.cable, c.method, c.formation)
    notes = [
        temperature,
        f"Earth-fault loop: IEC 60228 class 2 maximum DC resistance at {e.temperature_c:g} °C, whatever the drop "
        "basis (conservative).",
        f"Drop impedance per line conductor: AC resistance by {RESISTANCE_SOURCE}; reactance by {REACTANCE_SOURCE}, "
        f"at {e.frequency_hz:g} Hz, for the arrangement '{arrangement}' (from the cable, method and formation; per "
        "size in line_impedance_basis).",
        "Conductor and cable diameters for the spacing (an assumption, not data of the cable used): a solid round "
        "conductor of the nominal area, and a 0.6/1 kV sheathed single-core cable with the PVC/A insulation of "
        "IEC 60502-1 Table 5 (from memory) and a sheath of 0.035 D + 1.0 mm, at least 1.4 mm (IEC 60502-1 13.3.3, "
        "from memory); both put the spacing, and the reactance, on the high side.",
    ]
    if arrangement == "enclosed":
        notes.append("Single-core cables in conduit or trunking (method A1/B1) lie at random: the reactance is taken "
                     "at the geometric mean spacing of cables flat and spaced one diameter (2^(1/3) x 2 De), at or "
                     "above the enclosed columns of BS 7671 Table 4E1B.")
    if c.cable == "single_core" and c.formation == "flat_spaced" and c.method == "F":
        notes.append("Flat spaced single-core cables in air: the capacity is the flat touching one of method F "
                     "(spaced cables carry more; method G is not held): conservative.")
    if c.cable == "single_core" and c.method == "D1":
        notes.append("Method D1 with single-core cables: the cables of the circuit share one duct, in the formation "
                     "given; cables in separate ducts are further apart and have a higher reactance (not modelled).")
    return tuple(notes)


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
            z = chosen.line_impedance
            if z is not None:
                steps.append(Step("Chosen size: line conductor impedance", f"r {z.r_ohm_per_m * 1e3:.4g}, x "
                                  f"{z.x_ohm_per_m * 1e3:.4g} mΩ/m per conductor; {z.basis}", z.z_ohm_per_m, "ohm/m",
                                  f"{RESISTANCE_SOURCE}; {REACTANCE_SOURCE}"))
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
        steps=tuple(steps), assumptions=_assumptions(ctx) + parallel.assumptions(chosen),
        cautions=cautions + tuple(f"Not assessed, so not passed: {n.name}: {n.reason}."
                                  for n in (chosen.not_assessed if chosen is not None else ())),
        table_ids=_table_ids(ctx), solves=solves,
        drop_temperature_basis=ctx.spec.circuit.drop_temperature_basis,
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
                              pe_for=parallel.pe_rule(ctx.pe_for, sets, spec.protective_conductor.mode),
                              parallel_sets=sets)
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
        return _result(ctx, "size", assessed_verdict(chosen), chosen, rejected, governing, (), steps, f.solves)
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
    verdict = assessed_verdict(ev) if ev.passes else "non_compliant"
    ways = ways_out.suggest(ctx, "verify", ev, failing, _Tools(regime, spec)) if failing else ()
    return _result(ctx, "verify", verdict, ev, [], failing[0] if failing else None, failing, steps, solves, ways)
