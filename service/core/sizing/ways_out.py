"""Ways out of a failing check, each worked out for the case at hand.

Every suggestion comes from a check that fails and from the request: a
concrete size, length or device, computed under the request's own
conditions, and only where it changes something (no circuit-breaker when one
is chosen, no method C when the method is C).  The numbers come from the same
pipeline (a size search, or a verification of the changed request), except the
two lengths, which scale exactly: the load is a current source, so the drop is
proportional to the length, and Zs = Ze + (R1 + R2) with R1 + R2 proportional
to it.
"""

from __future__ import annotations

import math
from dataclasses import replace
from typing import Protocol

from service.core.errors import CalcError

from .checks import Context
from .model import BURIED_METHODS, Check, ProtectiveConductorSpec, SizeEvaluation, SizingInput
from .parallel import label

PE_TRIES = 6  # listed sizes tried for a protective conductor that passes its adiabatic check
THERMAL = ("ampacity", "conventional_current", "neutral_ampacity")
METHOD_NAMES = {"C": "method C (clipped direct)", "E": "method E (multicore in free air)",
                "F": "method F (single-core in free air)"}


class Tools(Protocol):
    spec: SizingInput  # the request as given (a parallel context's spec counts the sets as circuits already)

    def smallest(self, spec: SizingInput) -> SizeEvaluation | None: ...
    def verify(self, spec: SizingInput, area_m2: float, sets: int) -> SizeEvaluation: ...


def _floor(x: float) -> float:
    return math.floor(x * 10.0) / 10.0


def _check(ev: SizeEvaluation, name: str) -> Check | None:
    return next((c for c in ev.checks if c.name == name), None)


def _try(tools: Tools, spec: SizingInput, ev: SizeEvaluation) -> SizeEvaluation | None:
    try:
        return tools.verify(spec, ev.area_m2, ev.parallel_sets)
    except CalcError:
        return None  # the change is not a valid request (a method the cable cannot take, a rating not held...)


def _passes(ev: SizeEvaluation | None, name: str) -> bool:
    c = None if ev is None else _check(ev, name)
    return c is not None and c.passes


def _next_rating(ctx: Context) -> list[str]:
    ib = ctx.design_current_a
    rating = next((r for r in ctx.regime.device_ratings(ctx.device.device_type) if r >= ib - 1e-9), None)
    if rating is None:
        return []
    return [f"A {ctx.device.device_type} {rating:g} A device, the smallest standard rating of at least "
            f"Ib = {ib:.4g} A, passes Ib <= In (IEC 60364-4-43 433.1 a)."]


def _cooler(ctx: Context, ev: SizeEvaluation, tools: Tools, binding: tuple[str, ...]) -> list[str]:
    """Another method or insulation under which the same size passes the current-carrying checks (same medium, a
    method the cable takes)."""
    c, spec = tools.spec.circuit, tools.spec
    changes = []
    for method in ("C", "E" if c.cable == "multicore" else "F"):
        if method != c.method and (c.method in BURIED_METHODS) == (method in BURIED_METHODS):
            changes.append((METHOD_NAMES[method], replace(c, method=method, ambient_medium=None)))
    if c.insulation == "pvc_70":
        changes.append(("XLPE/EPR insulation (90 °C)", replace(c, insulation="xlpe_epr_90")))
    found = []
    for what, circuit in changes:
        other = _try(tools, replace(spec, circuit=circuit), ev)
        if other is None or other.iz_a <= ev.iz_a * (1 + 1e-9):
            continue
        if not all(_passes(other, n) for n in binding if n in THERMAL):
            continue  # rates it higher, but not enough: no way out
        found.append(f"{what[0].upper() + what[1:]} would rate {label(ev)} at Iz = {other.iz_a:.4g} A (now "
                     f"{ev.iz_a:.4g} A), enough for the current-carrying checks.")
    return found


def _breaker(ctx: Context, ev: SizeEvaluation) -> list[str]:
    d = ctx.device
    if d.device_type != "gG" or d.rated_current_a not in ctx.regime.device_ratings("B"):
        return []
    if d.rated_current_a > ev.iz_a * (1 + 1e-12):
        return []
    return [f"A {d.rated_current_a:g} A circuit-breaker (IEC 60898-1, I2 = 1.45 In) instead of the gG fuse passes "
            f"I2 <= 1.45 Iz on {label(ev)}, since In {d.rated_current_a:g} A <= Iz {ev.iz_a:.4g} A "
            "(IEC 60364-4-43 433.1 b)."]


def _drop_length(ctx: Context, ev: SizeEvaluation) -> list[str]:
    room = ctx.drop_limit_pct - ctx.spec.limits.upstream_drop_pct
    if room <= 0:
        return [f"The drop used upstream ({ctx.spec.limits.upstream_drop_pct:g} %) leaves nothing of the "
                f"{ctx.drop_limit_pct:g} % limit for this circuit: reduce the upstream drop."]
    if not ev.voltage_drop_pct:
        return []
    # The drop is d x L; the limit may grow with the length (Table G.52.1's long-run supplement): iterate
    # L = (limit(L) - upstream) / d down from the run's length to the longest length that passes.
    per_m, length, limits = ev.voltage_drop_pct / ctx.spec.circuit.length_m, ctx.spec.circuit.length_m, ctx.spec.limits
    for _ in range(60):
        length = (ctx.regime.drop_limit(limits, length).limit_pct - limits.upstream_drop_pct) / per_m
    return [f"Shorten the run to {_floor(length):g} m: the drop is proportional to the length, and {label(ev)} "
            f"drops {ev.voltage_drop_pct:.3g} % over {ctx.spec.circuit.length_m:g} m against {room:.3g} % available."]


def _loop_length(ctx: Context, ev: SizeEvaluation, check: Check) -> list[str]:
    ze, zs_max, length = ctx.spec.supply.ze_ohm, check.limit, ctx.spec.circuit.length_m
    if check.value <= zs_max:
        return []  # Zs is within Zs,max: the loop fails on another condition (the touch voltage), not on length
    if zs_max <= ze:
        return [f"Ze {ze:g} ohm alone exceeds Zs,max {zs_max:.4g} ohm: no length of cable passes with this device."]
    if ev.r1_ohm is None or ev.r2_ohm is None:
        return []
    per_m = (ev.r1_ohm + ev.r2_ohm) / length
    return [f"Shorten the run to {_floor((zs_max - ze) / per_m):g} m for the loop check: (Zs,max - Ze) / ((R1 + R2) / L)"
            f" = ({zs_max:.4g} - {ze:g}) / {per_m * 1000:.4g} mohm/m."]


def _loop_changes(ctx: Context, ev: SizeEvaluation, tools: Tools) -> list[str]:
    spec, found = tools.spec, []
    if ctx.device.device_type != "B":
        other = _try(tools, replace(spec, protection=replace(spec.protection, device_type="B",
                                                             rated_current_a=ctx.device.rated_current_a)), ev)
        if _passes(other, "earth_fault_loop"):
            found.append(f"A type B {ctx.device.rated_current_a:g} A circuit-breaker passes the loop check on "
                         f"{label(ev)} (Zs,max {_check(other, 'earth_fault_loop').limit:.4g} ohm).")
    if ev.pe_area_m2 < ev.area_m2 * (1 - 1e-9):
        other = _try(tools, replace(spec, protective_conductor=ProtectiveConductorSpec("same_as_line")), ev)
        if _passes(other, "earth_fault_loop"):
            found.append(f"A protective conductor the size of the line conductors ({ev.size_label} instead of "
                         f"{ev.pe_size_label}) passes the loop check (Zs {other.zs_ohm:.4g} ohm).")
    if ctx.rcd is None:
        other = _try(tools, replace(spec, protection=replace(spec.protection, rcd_residual_current_a=0.03)), ev)
        if _passes(other, "earth_fault_loop"):
            found.append(f"A 30 mA RCD added to the {ctx.device.label} passes the loop check on {label(ev)} "
                         f"(IEC 60364-4-41 411.4.4 / 411.5).")
    return found


def _next_listed(ctx: Context, area_m2: float) -> float | None:
    return next((s.area_m2 for s in ctx.regime.sizes(ctx.spec.circuit, ctx.loaded) if s.area_m2 >= area_m2 * (1 - 1e-9)),
                None)


def _pe(ctx: Context, ev: SizeEvaluation, check: Check, tools: Tools) -> list[str]:
    if check.value <= check.limit:
        fault = ev.earth_fault_current_a
        return [f"The earth-fault current ({fault:.4g} A) is not cleared within 5 s by {ctx.device.label}: a larger "
                "protective conductor does not help; lower Zs (see the loop check) or choose a faster device."]
    need = ev.pe_area_m2 * math.sqrt(check.value / check.limit)
    # A larger protective conductor lowers Zs and raises the fault current, and with it I²t where the clearing time
    # does not fall: try the listed sizes from the area the energy asks for, each in a verification.
    tried = [a for a in (s.area_m2 for s in ctx.regime.sizes(ctx.spec.circuit, ctx.loaded)) if a >= need * (1 - 1e-9)]
    for area in tried[:PE_TRIES]:
        other = _try(tools, replace(tools.spec, protective_conductor=ProtectiveConductorSpec("given", area)), ev)
        if _passes(other, "protective_conductor_adiabatic"):
            return [f"A protective conductor of {other.pe_size_label} (protective_conductor mode 'given') passes the "
                    f"adiabatic check (at least sqrt(I²t) / k = {need * 1e6:.3g} mm² at today's fault current; the "
                    "larger conductor raises the fault current, so the size is verified)."]
    which = (f"No protective conductor up to {tried[:PE_TRIES][-1] * 1e6:g} mm² passes" if tried
             else f"No listed size reaches the {need * 1e6:.3g} mm² the fault energy asks for")
    return [f"{which} (I²t {check.value:.4g} A²s against k² S² {check.limit:.4g} A²s now): a device guaranteed to "
            "clear the fault faster, or the maker's let-through energy, lowers I²t."]


def _line(ctx: Context, ev: SizeEvaluation, check: Check) -> list[str]:
    if check.value <= check.limit:
        return [f"The fault at the origin is not cleared within 5 s by {ctx.device.label}: larger line conductors do "
                "not help; choose a device that clears it faster."]
    found = []
    need = ev.area_m2 * math.sqrt(check.value / check.limit)
    wanted = _next_listed(ctx, need)
    if wanted is not None:
        found.append(f"Line conductors of {wanted * 1e6:g} mm² withstand the fault energy at the origin: "
                     f"S >= sqrt(I²t) / k = {need * 1e6:.3g} mm² (IEC 60364-4-43 434.5.2).")
    if ctx.spec.protection.let_through_i2t_a2s is None:
        found.append("Give the device's let-through energy (protection.let_through_energy, from the maker's data): "
                     "a current-limiting device lets through far less than I² t.")
    return found


def suggest(ctx: Context, mode: str, ev: SizeEvaluation, binding: tuple[str, ...], tools: Tools) -> tuple[str, ...]:
    """Ways out of the failing checks ``binding`` of ``ev`` (verify: the size given; size: the largest tried)."""
    found: list[str] = []
    if mode == "verify":
        try:
            best = tools.smallest(tools.spec)
        except CalcError:
            best = ev  # no search under these conditions: nothing to offer from it
        if best is None:
            found.append("No size, single or in parallel sets, passes every check with this device under these "
                         "conditions.")
        elif (best.area_m2, best.parallel_sets) != (ev.area_m2, ev.parallel_sets):
            found.append(f"{label(best)} passes every check under the same conditions, with the same device.")
    if "design_current_within_rating" in binding:
        found += _next_rating(ctx)
    if any(n in binding for n in THERMAL):
        found += _cooler(ctx, ev, tools, binding)
    if "conventional_current" in binding:
        found += _breaker(ctx, ev)
    if "voltage_drop" in binding:
        found += _drop_length(ctx, ev)
    loop = _check(ev, "earth_fault_loop")
    if "earth_fault_loop" in binding and loop is not None:
        found += _loop_length(ctx, ev, loop) + _loop_changes(ctx, ev, tools)
    pe = _check(ev, "protective_conductor_adiabatic")
    if "protective_conductor_adiabatic" in binding and pe is not None:
        found += _pe(ctx, ev, pe, tools)
    line = _check(ev, "line_conductor_adiabatic")
    if "line_conductor_adiabatic" in binding and line is not None:
        found += _line(ctx, ev, line)
    minimum = _check(ev, "protective_conductor_minimum")
    if "protective_conductor_minimum" in binding and minimum is not None:
        found += _separate_pe(ctx, minimum)
    breaking = _check(ev, "breaking_capacity")
    if "breaking_capacity" in binding and breaking is not None:
        found.append(f"A device with a rated breaking capacity of at least {breaking.value / 1000:.3g} kA (the "
                     f"prospective fault current; {ctx.device.label} is taken at {breaking.limit / 1000:.3g} kA), or "
                     "back-up protection by an upstream device coordinated with it (IEC 60364-4-43 434.5.1).")
    return tuple(found)


def _separate_pe(ctx: Context, check: Check) -> list[str]:
    """The separate protective conductor's 543.1.3 minimum, and the cheaper route where mechanical protection helps."""
    pc = ctx.spec.protective_conductor
    found = [f"A separate protective conductor of at least {check.limit * 1e6:g} mm² (IEC 60364-5-54 543.1.3)."]
    if ctx.spec.circuit.material == "copper" and not pc.mechanically_protected:
        found.append("Protect the separate protective conductor against mechanical damage (in conduit or trunking): "
                     "2.5 mm² copper then suffices (543.1.3).")
    return found
