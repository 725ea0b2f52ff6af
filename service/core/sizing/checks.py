"""The check pipeline shared by sizing and verification.

``Context`` holds what one request fixes for every size (Ib, the device, the
correction factors, the drop limit, the disconnection time); ``thermal`` runs
the table checks of one size (no solve), ``electrical`` the checks that need
the run's drop and loop impedance from the network solver, and ``evaluate``
puts them together for a batch of sizes with one solve.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass, replace

from service.core.conductors import Conductor
from service.core.errors import Blame, CalcError
from service.core.protection import (
    CircuitBreaker,
    GGFuse,
    ResidualCurrentDevice,
    adiabatic_check,
    default_protection,
    earth_fault_check,
    energy_class_let_through,
    guaranteed_clearing,
)
from service.core.protection.library import BREAKING_DEFAULTS_TABLE, SEPARATE_PE_MINIMUM_TABLE

from .circuit import Electrical, RunCase, RunSolution, solve_runs
from .model import Check, Device, Factor, NotAssessed, SizeEvaluation, SizingInput
from .regime import Capacity, Regime

MM2 = 1.0e-6
CHECK_ORDER = ("design_current_within_rating", "ampacity", "conventional_current", "neutral_ampacity", "voltage_drop",
               "earth_fault_loop", "protective_conductor_adiabatic", "protective_conductor_minimum",
               "line_conductor_adiabatic", "breaking_capacity")
THERMAL_CHECKS = CHECK_ORDER[:4]  # no network solve (neutral_ampacity: harmonics.py, IEC 60364-5-52 Annex E)
# IEC 60909-0 Table 1: maximum voltage factor for low voltage, 1.05 (+6 % tolerance) or 1.10 (+10 %); the larger
# is taken so that a derived prospective fault current is not understated.
CMAX_LOW_VOLTAGE = 1.10
CMAX_SOURCE = "IEC 60909-0, Table 1: cmax = 1.10 for low voltage (the larger of 1.05 and 1.10)"
ADIABATIC_LIMIT_S = 5.0  # IEC 60364-4-43 434.5.2: the adiabatic formula holds up to 5 s
# IEC 60364-4-43 434.5.2: below 0.1 s (and for current-limiting devices) k²S² is compared with the maker's I²t.
CURRENT_LIMITING_BELOW_S = 0.1
# The protection package blames its own parameter names; these are the request's.
_PROTECTION_BLAMES = {
    "device": ("protection", "device"), "rated_current": ("protection", "device", "rated_current"),
    "required_time": ("protection", "required_disconnection_time"), "u0": ("supply", "u0"),
    "earthing": ("supply", "earthing"), "rcd": ("protection", "rcd"), "ra": ("supply", "electrode_resistance"),
    "circuit_kind": ("protection", "circuit_kind"), "zs": ("supply", "ze"), "i2t": ("supply", "prospective_fault_current"),
    "insulation": ("circuit", "insulation"),
}


@contextmanager
def request_blames() -> Iterator[None]:
    """Re-raise a protection CalcError with its blames moved to the request's field locations."""
    try:
        yield
    except CalcError as exc:
        moved = []
        for b in exc.blames:
            head = _PROTECTION_BLAMES.get(str(b.location[0]) if b.location else "", None)
            where = b.location if head is None else head + tuple(b.location[1:])
            moved.append(Blame(where, b.message))
        raise CalcError(code=exc.code, detail=exc.detail, how_to_fix=exc.how_to_fix, blames=tuple(moved)) from None


@dataclass(frozen=True, slots=True)
class Context:
    spec: SizingInput
    regime: Regime
    loaded: int
    design_current_a: float
    device: Device
    protective_device: CircuitBreaker | GGFuse
    rcd: ResidualCurrentDevice | None
    factors: tuple[Factor, ...]
    factor_product: float
    required_iz_a: float  # max(In, I2 / 1.45)
    drop_limit_pct: float
    disconnection_time_s: float
    electrical: Electrical
    pe_for: Callable[[Conductor], tuple[Conductor, str]]
    live_conductors: int
    drop_ambient_c: float | None = None  # set: the drop's conductor temperature is estimated from the load
    parallel_sets: int = 1  # > 1: each size is that many equal sets, its Conductor the run's (R / sets)


def drop_temperature_c(ctx: Context, iz_a: float) -> float:
    """The conductor temperature of the voltage drop: the maximum, or theta_a + (theta_max - theta_a) (Ib / Iz)^2
    (losses, and so the temperature rise, go with the current squared: common practice).  Not clamped: a size with
    Ib > Iz gets a temperature above the maximum, and a larger drop."""
    t_max = ctx.electrical.temperature_c
    if ctx.drop_ambient_c is None:
        return t_max
    return ctx.drop_ambient_c + (t_max - ctx.drop_ambient_c) * (ctx.design_current_a / iz_a) ** 2


def _check(name: str, passes: bool, value: float, limit: float, unit: str, condition: str, source: str,
           detail: str = "") -> Check:
    return Check(name, passes, value, limit, unit, condition, source, detail)


def thermal(ctx: Context, capacity: Capacity) -> tuple[float, tuple[Check, ...]]:
    """Iz of the run and the three overload checks of IEC 60364-4-43 433.1."""
    iz = capacity.value_a * ctx.factor_product
    ib, i_n, i2 = ctx.design_current_a, ctx.device.rated_current_a, ctx.device.conventional_current_a
    limit = ctx.regime.overload_factor * iz
    return iz, (
        _check("design_current_within_rating", ib <= i_n, ib, i_n, "A", "Ib <= In", "IEC 60364-4-43:2008, 433.1 (a)"),
        _check("ampacity", i_n <= iz * (1 + 1e-12), i_n, iz, "A", "In <= Iz", "IEC 60364-4-43:2008, 433.1 (a)",
               f"Iz = It {capacity.value_a:g} A x factors {ctx.factor_product:.4g}"),
        _check("conventional_current", i2 <= limit * (1 + 1e-12), i2, limit, "A", "I2 <= 1.45 Iz",
               "IEC 60364-4-43:2008, 433.1 (b)",
               f"I2 = {ctx.device.conventional_multiple:g} x In ({ctx.device.conventional_source})"),
    )


def clearing_time_s(ctx: Context, current_a: float, earth_fault: bool = True) -> tuple[float | None, str]:
    """The shortest time within which the circuit's devices are guaranteed to clear ``current_a``.

    An RCD sees only a residual current, so it is credited for earth faults alone; a line-to-neutral or
    line-to-line fault is cleared by the overcurrent device (IEC 60364-4-43 434.5.2)."""
    best: tuple[float | None, str] = (None, "no device guarantees clearing this current within 5 s")
    for device in (ctx.protective_device, ctx.rcd if earth_fault else None):
        if device is None:
            continue
        with request_blames():
            cleared = guaranteed_clearing(device, current_a)
        if cleared is not None and (best[0] is None or cleared.time_s < best[0]):
            best = (cleared.time_s, f"{device.label}: {cleared.basis}")
    return best


@dataclass(frozen=True, slots=True)
class FaultEnergy:
    where: str
    i2t_a2s: float
    basis: str
    uncleared: bool = False
    upper_bound_only: bool = False  # I² x t for a fault cleared within 0.1 s: a pass holds, a failure proves nothing


def fault_energy(ctx: Context, where: str, current_a: float, earth_fault: bool = True) -> FaultEnergy:
    """I² t for a fault current cleared within the devices' guaranteed time (5 s when none guarantees it)."""
    t, basis = clearing_time_s(ctx, current_a, earth_fault)
    duration = ADIABATIC_LIMIT_S if t is None else t
    return FaultEnergy(where, current_a**2 * duration, f"I = {current_a:.4g} A for {duration:.3g} s ({basis})", t is None)


def origin_fault_current(spec: SizingInput) -> tuple[float | None, str]:
    """The prospective fault current at the origin of the circuit: given, or Cmax U0 / Ze for a TN-C-S supply."""
    sup = spec.supply
    if sup.prospective_fault_current_a is not None:
        return sup.prospective_fault_current_a, "prospective fault current given"
    if sup.earthing != "TN-C-S":
        return None, (f"no prospective fault current given, and in a {sup.earthing} system Ze (the earth-fault loop) "
                      "does not bound the line-to-neutral fault current: give supply.prospective_fault_current")
    three = spec.load.phases == "three"
    ipf = CMAX_LOW_VOLTAGE * sup.u0_v / sup.ze_ohm * (2.0 if three else 1.0)
    return ipf, (f"derived: Ipf = {'2 x ' if three else ''}Cmax U0 / Ze = {'2 x ' if three else ''}{CMAX_LOW_VOLTAGE:g} x "
                 f"{sup.u0_v:g} / {sup.ze_ohm:g} = {ipf:.4g} A ({CMAX_SOURCE}; TN-C-S: the earth-fault loop is the "
                 "line-to-PEN loop" + ("; three-phase fault taken as twice the single-phase value, PEN of at least the "
                                       "line conductance, common practice" if three else "") + ")")


def _device_energy(ctx: Context, device: CircuitBreaker | GGFuse | ResidualCurrentDevice, current_a: float) -> FaultEnergy | None:
    """The let-through bound of one device at ``current_a``: None when it guarantees no clearing in 5 s, or when
    only a let-through figure would bound it (a gG fuse-link cleared within 0.1 s)."""
    with request_blames():
        cleared = guaranteed_clearing(device, current_a)
    if cleared is None:
        return None
    bound = current_a**2 * cleared.time_s
    basis = f"I = {current_a:.4g} A for {cleared.time_s:.3g} s ({device.label}: {cleared.basis})"
    if cleared.time_s > CURRENT_LIMITING_BELOW_S:
        return FaultEnergy("", bound, basis)
    energy_class = ctx.spec.protection.energy_class
    if isinstance(device, CircuitBreaker) and energy_class is not None:
        with request_blames():
            limit = energy_class_let_through(device, energy_class, current_a)
        if limit is not None and limit[0] < bound:
            return FaultEnergy("", limit[0], f"{device.label}: {limit[1]}")
    if isinstance(device, GGFuse):
        return None
    return FaultEnergy("", bound, basis + "; I² x t is an upper bound of the let-through energy", upper_bound_only=True)


def origin_energy(ctx: Context, what: str, earth_fault: bool) -> FaultEnergy | NotAssessed:
    """The fault at the origin of the circuit: the device's let-through I²t if given, else the smallest bound the
    circuit's devices give (an RCD only for an earth fault)."""
    spec = ctx.spec
    if spec.protection.let_through_i2t_a2s is not None:
        return FaultEnergy("origin (let-through energy given)", spec.protection.let_through_i2t_a2s,
                           "the device's let-through I²t at the prospective fault current, as given")
    current, basis = origin_fault_current(spec)
    if current is None:
        return NotAssessed(what, basis)
    where = f"origin ({basis})"
    devices = (ctx.protective_device, ctx.rcd if earth_fault else None)
    bounds = [e for e in (_device_energy(ctx, d, current) for d in devices if d is not None) if e is not None]
    if bounds:
        best = min(bounds, key=lambda e: e.i2t_a2s)
        return FaultEnergy(where, best.i2t_a2s, best.basis, upper_bound_only=best.upper_bound_only)
    if clearing_time_s(ctx, current, earth_fault)[0] is None:
        return fault_energy(ctx, where, current, earth_fault)  # not cleared within 5 s: a failure
    return NotAssessed(what, f"{where}: the {ctx.protective_device.label} clears {current:.4g} A within 0.1 s, where "
                       "only its let-through I²t bounds the energy (IEC 60364-4-43 434.5.2): give "
                       "protection.let_through_energy from the maker's data")


def _adiabatic(ctx: Context, name: str, area_m2: float, role: str, insulation: str,
               energies: list[FaultEnergy]) -> list[Check | NotAssessed]:
    """The worst I²t of the faults given, against k² S²; any fault not cleared within 5 s fails it.

    A bound I² x t (a fault cleared within 0.1 s) that exceeds k² S² proves nothing: that fault is reported as
    not assessed, and the check is made on the other faults, if any."""
    c = ctx.spec.circuit
    with request_blames():
        results = [(e, adiabatic_check(area_m2, e.i2t_a2s, c.material, insulation, role)) for e in energies]
    found: list[Check | NotAssessed] = []
    unsettled = [(e, r) for e, r in results if e.upper_bound_only and not r.complies]
    for e, r in unsettled:
        found.append(NotAssessed(name, f"{e.where}: {e.basis}; this upper bound exceeds k² S² = "
                                 f"{r.permitted_i2t_a2s:.4g} A²s, and only the device's let-through I²t can settle it: "
                                 "give protection.let_through_energy or protection.device.energy_class"))
    settled = [(e, r) for e, r in results if (e, r) not in unsettled]
    if not settled:
        return found
    # A fault the devices do not clear within 5 s fails the check whatever its I²t so far: it decides, even when a
    # cleared fault elsewhere (the origin's) has the larger energy.
    uncleared = [er for er in settled if er[0].uncleared]
    worst, result = max(uncleared or settled, key=lambda er: er[0].i2t_a2s)
    detail = (f"{worst.where}: {worst.basis}; k = {result.k.k:g} ({result.k.source}); smallest area "
              f"{result.minimum_area_m2 / MM2:.3g} mm²")
    if worst.uncleared:
        detail += "; the fault is not cleared within 5 s, beyond the adiabatic formula's range"
    source = "IEC 60364-4-43:2008, 434.5.2" if role == "live" else "IEC 60364-5-54:2011, 543.1.2"
    return [_check(name, result.complies and not worst.uncleared, worst.i2t_a2s, result.permitted_i2t_a2s, "A²s",
                   "I²t <= k² S²", source, detail), *found]


def pe_role(ctx: Context) -> tuple[str, str, str]:
    """(k table role, its insulation key, why) for the protective conductor's kind (IEC 60364-5-54 Annex A)."""
    kind = ctx.spec.protective_conductor.kind or "cable_core"
    c = ctx.spec.circuit
    if kind in ("cable_core", "separate_insulated"):
        role = "pe_in_cable" if kind == "cable_core" else "pe_separate"
        return role, c.insulation, f"{kind.replace('_', ' ')}, insulated as the circuit ({c.insulation})"
    role = "pe_bare_on_covering" if kind == "bare_on_cable_covering" else "pe_bare"
    rows = [v for v in default_protection().k_values[role] if v.material == c.material]
    lowest = min(rows, key=lambda v: v.k)
    return role, lowest.insulation, f"{kind.replace('_', ' ')}: the lowest k of the table ({lowest.insulation}), conservative"


def protective_conductor_minimum(ctx: Context, pe: Conductor) -> Check | None:
    """IEC 60364-5-54 543.1.3: a protective conductor not part of a cable nor in its enclosure has a minimum area."""
    pc = ctx.spec.protective_conductor
    if (pc.kind or "cable_core") == "cable_core":
        return None
    protected = bool(pc.mechanically_protected)
    lib = default_protection()
    minimum = lib.separate_pe_minimum_mm2[(ctx.spec.circuit.material, protected)] * MM2
    how = "with" if protected else ("without" if pc.mechanically_protected is not None else "without (not stated, so")
    how += " protection against mechanical damage" + ("" if pc.mechanically_protected is not None else ")")
    return _check("protective_conductor_minimum", pe.area_m2 >= minimum * (1 - 1e-9), pe.area_m2, minimum, "m²",
                  "S >= the minimum of 543.1.3", "IEC 60364-5-54:2011, 543.1.3",
                  f"separate {ctx.spec.circuit.material} protective conductor {how}: at least {minimum / MM2:g} mm² "
                  f"({lib.source(SEPARATE_PE_MINIMUM_TABLE)})")


def breaking_capacity(ctx: Context) -> Check | NotAssessed:
    """IEC 60364-4-43 434.5.1: the device's rated breaking capacity against the prospective fault current."""
    spec = ctx.spec
    current, basis = origin_fault_current(spec)
    if current is None:
        return NotAssessed("breaking_capacity", basis)
    rating, rating_basis = breaking_rating(ctx)
    return _check("breaking_capacity", current <= rating, current, rating, "A",
                  "prospective fault current <= rated breaking capacity", "IEC 60364-4-43:2008, 434.5.1",
                  f"{basis}; {ctx.protective_device.label}: {rating_basis}. A lower rating is allowed only with "
                  "back-up protection by an upstream device (434.5.1), not assessed here")


def breaking_rating(ctx: Context) -> tuple[float, str]:
    given = ctx.spec.protection.breaking_capacity_a
    if given is not None:
        return given, f"rated breaking capacity {given:g} A, as given"
    lib = default_protection()
    key = "gG" if isinstance(ctx.protective_device, GGFuse) else "circuit_breaker"
    value = lib.breaking_defaults_a[key]
    return value, (f"rated breaking capacity not given: {value:g} A taken ({lib.source(BREAKING_DEFAULTS_TABLE)}); "
                   "confirm it on the device")


def origin_energies(ctx: Context) -> tuple[FaultEnergy | NotAssessed, FaultEnergy | NotAssessed]:
    """The faults at the origin, the same for every size: (earth fault for the PE, short circuit for the line)."""
    return (origin_energy(ctx, "protective_conductor_adiabatic", earth_fault=True),
            origin_energy(ctx, "line_conductor_adiabatic", earth_fault=False))


def electrical(ctx: Context, line: Conductor, pe: Conductor, run: RunSolution,
               origin: tuple[FaultEnergy | NotAssessed, FaultEnergy | NotAssessed] | None = None
               ) -> tuple[tuple[Check, ...], dict]:
    spec = ctx.spec
    u0 = spec.supply.u0_v
    drop_pct = 100.0 * run.drop_v / u0
    total = drop_pct + spec.limits.upstream_drop_pct
    checks = [_check("voltage_drop", total <= ctx.drop_limit_pct, total, ctx.drop_limit_pct, "%",
                     "upstream + this circuit <= limit", "IEC 60364-5-52:2009, 525 and Annex G",
                     f"this circuit {drop_pct:.3g} % ({run.drop_v:.3g} V) + upstream {spec.limits.upstream_drop_pct:g} %")]
    ra = None
    if ctx.rcd is not None and spec.supply.electrode_resistance_ohm is not None:
        ra = spec.supply.electrode_resistance_ohm + run.r2_ohm
    with request_blames():
        fault = earth_fault_check(u0, run.zs_ohm, ctx.protective_device, ctx.disconnection_time_s, rcd=ctx.rcd,
                                  ra_ohm=ra, earthing=spec.supply.earthing)
    route = fault.overcurrent if fault.route != "rcd" else fault.rcd
    route = route or fault.overcurrent or fault.rcd
    detail = (f"If = Cmin x U0 / Zs = {fault.fault_current_a:.4g} A (Cmin {fault.cmin:g}); {route.device}: "
              f"Ia = {route.operating.current_a:.4g} A ({route.operating.basis}); Zs = Ze + R1 + R2 = "
              f"{spec.supply.ze_ohm:g} + {run.r1_ohm:.4g} + {run.r2_ohm:.4g} ohm")
    if fault.rcd is not None and fault.rcd.touch_voltage_v is not None:
        detail += f"; touch voltage RA x IΔn = {fault.rcd.touch_voltage_v:.3g} V (limit 50 V)"
    checks.append(_check("earth_fault_loop", fault.complies, run.zs_ohm, route.max_zs_ohm, "ohm",
                         f"Zs <= Zs,max = Cmin x U0 / Ia within {ctx.disconnection_time_s:g} s",
                         "IEC 60364-4-41:2005, 411.4.4 / 411.5", detail))
    not_assessed: list[NotAssessed] = []

    def add(*found: Check | NotAssessed | None) -> None:
        for item in found:
            if isinstance(item, NotAssessed):
                not_assessed.append(item)
            elif item is not None:
                checks.append(item)

    role, insulation, _ = pe_role(ctx)
    far = fault_energy(ctx, "far end (earth fault)", fault.fault_current_a)
    near_earth, near_line = origin or origin_energies(ctx)
    energies = [far] if isinstance(near_earth, NotAssessed) else [far, near_earth]
    add(*_adiabatic(ctx, "protective_conductor_adiabatic", pe.area_m2, role, insulation, energies))
    if isinstance(near_earth, NotAssessed):  # the far-end fault was checked; the one at the origin was not
        add(NotAssessed(near_earth.name, f"the earth fault at the origin: {near_earth.reason}"))
    add(protective_conductor_minimum(ctx, pe))
    add(*([near_line] if isinstance(near_line, NotAssessed) else
          _adiabatic(ctx, "line_conductor_adiabatic", line.area_m2, "live", spec.circuit.insulation, [near_line])))
    add(breaking_capacity(ctx))
    return tuple(checks), {"drop_pct": drop_pct, "total": total, "fault_current": fault.fault_current_a,
                           "not_assessed": tuple(not_assessed)}


def run_impedance(ctx: Context, line: Conductor, temperature_c: float):
    """The line impedance of the run: one conductor's (AC resistance, arrangement reactance) over the sets.

    A parallel run's Conductor already carries R / sets; the skin and proximity effects and the reactance are
    those of one real conductor, so it is taken back to one conductor, and R and X then divided by the sets."""
    sets, c = ctx.parallel_sets, ctx.spec.circuit
    if sets == 1:
        return ctx.regime.line_impedance(c, line, ctx.loaded, temperature_c, ctx.electrical.frequency_hz)
    one = replace(line, resistance_ohm_per_m=line.resistance_ohm_per_m * sets)
    z = ctx.regime.line_impedance(c, one, ctx.loaded, temperature_c, ctx.electrical.frequency_hz)
    return replace(z, r_dc_ohm_per_m=z.r_dc_ohm_per_m / sets, r_ohm_per_m=z.r_ohm_per_m / sets,
                   x_ohm_per_m=z.x_ohm_per_m / sets, x_geometric_ohm_per_m=z.x_geometric_ohm_per_m / sets)


def evaluate(ctx: Context, sizes: list[tuple[Conductor, Capacity]], with_network: bool) -> tuple[list[SizeEvaluation], int]:
    """Every check on each size; network checks only where ``with_network`` (one solve for all of them)."""
    e = ctx.electrical
    pes = [ctx.pe_for(line) for line, _ in sizes]
    runs: list[RunSolution | None] = [None] * len(sizes)
    impedances: list = [None] * len(sizes)
    solves = 0
    if with_network and sizes:
        c = ctx.spec.circuit
        impedances = [run_impedance(ctx, line, drop_temperature_c(ctx, cap.value_a * ctx.factor_product))
                      for line, cap in sizes]
        # The drop with the arrangement's AC impedance; the loop with the DC resistance at the maximum temperature.
        runs = list(solve_runs([RunCase(line, pe, z.r_ohm_per_m, z.x_ohm_per_m,
                                        line.resistance_per_m_at(e.temperature_c))
                                for (line, _), (pe, _), z in zip(sizes, pes, impedances)], e))
        solves = 1
    density, _ = ctx.regime.metal_density(ctx.spec.circuit.material)
    found = []
    origin = origin_energies(ctx) if with_network and sizes else None
    for (line, capacity), (pe, _), run, z in zip(sizes, pes, runs, impedances):
        iz, checks = thermal(ctx, capacity)
        extra = {"drop_pct": None, "total": None, "fault_current": None, "not_assessed": ()}
        if run is not None:
            more, extra = electrical(ctx, line, pe, run, origin)
            checks = checks + more
        mass = density * e.length_m * (ctx.live_conductors * line.area_m2 + pe.area_m2)
        found.append(SizeEvaluation(
            size_label=line.size_label, area_m2=line.area_m2, pe_size_label=pe.size_label, pe_area_m2=pe.area_m2,
            tabulated_capacity_a=capacity.value_a, capacity_basis=capacity.basis, capacity_table_id=capacity.table_id,
            iz_a=iz, checks=checks, voltage_drop_v=None if run is None else run.drop_v,
            voltage_drop_pct=extra["drop_pct"], total_drop_pct=extra["total"],
            zs_ohm=None if run is None else run.zs_ohm, earth_fault_current_a=extra["fault_current"],
            metal_mass_kg=mass, r1_ohm=None if run is None else run.r1_ohm,
            r2_ohm=None if run is None else run.r2_ohm, line_impedance=z, drop_phases=ctx.spec.load.phases,
            not_assessed=extra["not_assessed"],
        ))
    return found, solves
