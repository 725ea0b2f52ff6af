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
from dataclasses import dataclass

from service.core.conductors import Conductor
from service.core.errors import Blame, CalcError
from service.core.protection import (
    CircuitBreaker,
    GGFuse,
    ResidualCurrentDevice,
    adiabatic_check,
    earth_fault_check,
    operating_current,
)

from .circuit import Electrical, RunCase, RunSolution, solve_runs
from .model import Check, Device, Factor, SizeEvaluation, SizingInput
from .regime import Capacity, Regime

MM2 = 1.0e-6
CHECK_ORDER = ("design_current_within_rating", "ampacity", "conventional_current", "neutral_ampacity", "voltage_drop",
               "earth_fault_loop", "protective_conductor_adiabatic", "line_conductor_adiabatic")
THERMAL_CHECKS = CHECK_ORDER[:4]  # no network solve (neutral_ampacity: harmonics.py, IEC 60364-5-52 Annex E)
# Times tried for the guaranteed clearing of a fault current, shortest first (the RCD, breaker and fuse rows).
CLEARING_TIMES_S = (0.04, 0.1, 0.15, 0.3, 5.0)
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


def clearing_time_s(ctx: Context, current_a: float) -> tuple[float | None, str]:
    """The shortest time within which the circuit's devices are guaranteed to clear ``current_a``."""
    best: tuple[float | None, str] = (None, "no device guarantees clearing this current within 5 s")
    for device in (ctx.protective_device, ctx.rcd):
        if device is None:
            continue
        for t in CLEARING_TIMES_S:
            try:
                op = operating_current(device, t)
            except CalcError:
                continue
            if current_a >= op.current_a and (best[0] is None or op.within_s < best[0]):
                best = (op.within_s, f"{device.label}: {op.basis}")
                break
    return best


@dataclass(frozen=True, slots=True)
class FaultEnergy:
    where: str
    i2t_a2s: float
    basis: str
    uncleared: bool = False


def fault_energy(ctx: Context, where: str, current_a: float) -> FaultEnergy:
    """I² t for a fault current cleared within the devices' guaranteed time (5 s when none guarantees it)."""
    t, basis = clearing_time_s(ctx, current_a)
    duration = ADIABATIC_LIMIT_S if t is None else t
    return FaultEnergy(where, current_a**2 * duration, f"I = {current_a:.4g} A for {duration:g} s ({basis})", t is None)


def near_end_energy(ctx: Context) -> FaultEnergy | None:
    """The fault at the origin of the circuit: the device's let-through I²t if given, else I² t when that is
    cleared no faster than 0.1 s; below 0.1 s only the maker's let-through figure is meaningful (434.5.2 note)."""
    spec = ctx.spec
    if spec.protection.let_through_i2t_a2s is not None:
        return FaultEnergy("origin (let-through energy given)", spec.protection.let_through_i2t_a2s,
                           "the device's let-through I²t at the prospective fault current, as given")
    if spec.supply.prospective_fault_current_a is None:
        return None
    energy = fault_energy(ctx, "origin (prospective fault current)", spec.supply.prospective_fault_current_a)
    t, _ = clearing_time_s(ctx, spec.supply.prospective_fault_current_a)
    return energy if t is None or t > CURRENT_LIMITING_BELOW_S else None


def _adiabatic(ctx: Context, name: str, area_m2: float, role: str, energies: list[FaultEnergy]) -> Check:
    """The worst I²t of the faults given, against k² S²."""
    c = ctx.spec.circuit
    worst = max(energies, key=lambda e: e.i2t_a2s)
    with request_blames():
        result = adiabatic_check(area_m2, worst.i2t_a2s, c.material, c.insulation, role)
    detail = (f"{worst.where}: {worst.basis}; k = {result.k.k:g} ({result.k.source}); smallest area "
              f"{result.minimum_area_m2 / MM2:.3g} mm²")
    if worst.uncleared:
        detail += "; the fault is not cleared within 5 s, beyond the adiabatic formula's range"
    return _check(name, result.complies and not worst.uncleared, worst.i2t_a2s, result.permitted_i2t_a2s, "A²s",
                  "I²t <= k² S²", "IEC 60364-5-54:2011, 543.1.2" if role != "live" else "IEC 60364-4-43:2008, 434.5.2",
                  detail)


def electrical(ctx: Context, line: Conductor, pe: Conductor, run: RunSolution) -> tuple[tuple[Check, ...], dict]:
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
    far = fault_energy(ctx, "far end (earth fault)", fault.fault_current_a)
    near = near_end_energy(ctx)
    checks.append(_adiabatic(ctx, "protective_conductor_adiabatic", pe.area_m2, "pe_in_cable",
                             [far] if near is None else [far, near]))
    if near is not None:
        checks.append(_adiabatic(ctx, "line_conductor_adiabatic", line.area_m2, "live", [near]))
    return tuple(checks), {"drop_pct": drop_pct, "total": total, "fault_current": fault.fault_current_a}


def evaluate(ctx: Context, sizes: list[tuple[Conductor, Capacity]], with_network: bool) -> tuple[list[SizeEvaluation], int]:
    """Every check on each size; network checks only where ``with_network`` (one solve for all of them)."""
    e = ctx.electrical
    pes = [ctx.pe_for(line) for line, _ in sizes]
    runs: list[RunSolution | None] = [None] * len(sizes)
    solves = 0
    if with_network and sizes:
        runs = list(solve_runs([RunCase(line, pe) for (line, _), (pe, _) in zip(sizes, pes)], e))
        solves = 1
    density, _ = ctx.regime.metal_density(ctx.spec.circuit.material)
    found = []
    for (line, capacity), (pe, _), run in zip(sizes, pes, runs):
        iz, checks = thermal(ctx, capacity)
        extra = {"drop_pct": None, "total": None, "fault_current": None}
        if run is not None:
            more, extra = electrical(ctx, line, pe, run)
            checks = checks + more
        mass = density * e.length_m * (ctx.live_conductors * line.area_m2 + pe.area_m2)
        found.append(SizeEvaluation(
            size_label=line.size_label, area_m2=line.area_m2, pe_size_label=pe.size_label, pe_area_m2=pe.area_m2,
            tabulated_capacity_a=capacity.value_a, capacity_basis=capacity.basis, capacity_table_id=capacity.table_id,
            iz_a=iz, checks=checks, voltage_drop_v=None if run is None else run.drop_v,
            voltage_drop_pct=extra["drop_pct"], total_drop_pct=extra["total"],
            zs_ohm=None if run is None else run.zs_ohm, earth_fault_current_a=extra["fault_current"],
            metal_mass_kg=mass, r1_ohm=None if run is None else run.r1_ohm,
            r2_ohm=None if run is None else run.r2_ohm,
        ))
    return found, solves
