"""Protective devices and the current Ia that guarantees their operation in a time.

Three kinds, each a frozen record the caller builds:

* CircuitBreaker (IEC 60898-1, types B, C, D).  At the upper limit of its
  instantaneous range (5, 10, 20 x In) the standard's test e requires tripping
  in less than 0.1 s, so Ia = upper multiple x In guarantees disconnection in
  any required time of 0.1 s or more.  That is the value IEC 60364-4-41 practice
  uses; the thermal release would often clear a 5 s fault at a lower current,
  so for long times the figure is conservative.  No time below 0.1 s is
  guaranteed by the breaker standard.
* GGFuse (IEC 60269-1 gG).  The pre-arcing characteristic of every gG
  fuse-link must pass between the gates, so at Imax(5 s) it melts within 5 s
  and at Imax(0.1 s) within 0.1 s.  Pre-arcing time falls as current rises,
  hence for t >= 5 s Ia = Imax(5 s) and for 0.1 s <= t < 5 s Ia = Imax(0.1 s)
  guarantee operation within t.  For a time between the gates (0.4 s, say) the
  true current is lower than Imax(0.1 s): the figure over-demands, which is
  safe but can fail a circuit that a full time-current curve (the
  manufacturer's, or a standardised fuse system's maximum pre-arcing curve)
  would pass.  IEC 60269-1 treats pre-arcing and operating time as the same
  above 0.1 s (arcing time negligible there); below 0.1 s nothing is held.
* ResidualCurrentDevice (IEC 61008-1 / 61009-1, general or S type).  Ia is
  the smallest tabulated multiple of IΔn whose maximum break time is within the
  required time (general type: 5 IΔn within 40 ms).  IEC 61008-1 lets a general
  type device of IΔn <= 30 mA be tested at 0.25 A instead of 5 IΔn, so for those
  the 40 ms row takes the larger of the two (conservative reading).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

from service.core.errors import CalcError

from .checks import fail, require_positive
from .library import GATES_TABLE, RCD_TABLE, TRIP_TABLE, ProtectionLibrary, default_protection

IEC60898_MAX_RATED_CURRENT_A = 125.0  # IEC 60898-1 scope: rated current not exceeding 125 A
BREAKER_INSTANTANEOUS_TIME_S = 0.1  # IEC 60898-1 Table 7 test e: tripping in less than 0.1 s
FUSE_LONG_GATE_S = 5.0
FUSE_SHORT_GATE_S = 0.1
RCD_SMALL_IDN_A = 0.030  # IEC 61008-1 Table 1 note: IΔn <= 0.03 A may be tested at 0.25 A instead of 5 IΔn
RCD_SMALL_IDN_TEST_A = 0.25

Curve = Literal["B", "C", "D"]
RcdType = Literal["general", "S"]


@dataclass(frozen=True, slots=True)
class OperatingCurrent:
    """The current that guarantees operation within ``within_s``, and where it comes from."""

    current_a: float
    within_s: float
    basis: str
    source: str
    table_id: str


@dataclass(frozen=True, slots=True)
class CircuitBreaker:
    curve: Curve
    rated_current_a: float

    def __post_init__(self) -> None:
        require_positive(self.rated_current_a, ("device", "rated_current"), "the breaker's rated current")

    @property
    def label(self) -> str:
        return f"type {self.curve} {self.rated_current_a:g} A circuit-breaker (IEC 60898-1)"


@dataclass(frozen=True, slots=True)
class GGFuse:
    rated_current_a: float

    def __post_init__(self) -> None:
        require_positive(self.rated_current_a, ("device", "rated_current"), "the fuse-link's rated current")

    @property
    def label(self) -> str:
        return f"{self.rated_current_a:g} A gG fuse-link (IEC 60269-1)"


@dataclass(frozen=True, slots=True)
class ResidualCurrentDevice:
    rated_residual_current_a: float
    rcd_type: RcdType = "general"

    def __post_init__(self) -> None:
        require_positive(self.rated_residual_current_a, ("rcd", "rated_residual_current"), "IΔn")

    @property
    def label(self) -> str:
        kind = "type S (time-delayed)" if self.rcd_type == "S" else "general type"
        return f"{kind} RCD, IΔn = {self.rated_residual_current_a * 1000:g} mA (IEC 61008-1 / 61009-1)"


Device = CircuitBreaker | GGFuse | ResidualCurrentDevice


def _too_fast(device: Device, required_time_s: float, fastest_s: float, table: str) -> CalcError:
    return fail("no-guaranteed-operation", ("required_time",),
        f"The {device.label} has no guaranteed operating current for {required_time_s:g} s: "
        f"{table} guarantees nothing faster than {fastest_s:g} s.",
        "Use the manufacturer's time-current data for this device, or protect the circuit with an RCD.",
        f"shorter than {fastest_s:g} s")


def is_preferred_breaker_rating(rated_current_a: float, library: ProtectionLibrary | None = None) -> bool:
    lib = library or default_protection()
    return any(math.isclose(rated_current_a, r) for r in lib.breaker_ratings)


def _breaker_current(device: CircuitBreaker, required_time_s: float, lib: ProtectionLibrary) -> OperatingCurrent:
    band = lib.trip_bands.get(device.curve)
    if band is None:
        raise fail("unknown-curve", ("device", "curve"),
            f"No instantaneous tripping range is listed for type {device.curve!r}.",
            f"Choose one of the types {', '.join(sorted(lib.trip_bands))}.",
            "not a listed IEC 60898-1 type")
    if device.rated_current_a > IEC60898_MAX_RATED_CURRENT_A:
        raise fail("outside-standard", ("device", "rated_current"),
            f"IEC 60898-1 covers circuit-breakers up to {IEC60898_MAX_RATED_CURRENT_A:g} A; got {device.rated_current_a:g} A.",
            "For larger breakers use the manufacturer's instantaneous setting (IEC 60947-2 devices).",
            "above 125 A")
    if required_time_s < BREAKER_INSTANTANEOUS_TIME_S:
        raise _too_fast(device, required_time_s, BREAKER_INSTANTANEOUS_TIME_S, "IEC 60898-1")
    ia = band.upper_multiple * device.rated_current_a
    return OperatingCurrent(
        current_a=ia,
        within_s=BREAKER_INSTANTANEOUS_TIME_S,
        basis=(f"upper limit of the type {device.curve} instantaneous range, {band.upper_multiple:g} x In = {ia:g} A: "
               f"tripping in less than {BREAKER_INSTANTANEOUS_TIME_S:g} s"),
        source=lib.source(TRIP_TABLE),
        table_id=TRIP_TABLE,
    )


def _fuse_current(device: GGFuse, required_time_s: float, lib: ProtectionLibrary) -> OperatingCurrent:
    gates = next((g for r, g in lib.fuse_gates.items() if math.isclose(r, device.rated_current_a)), None)
    if gates is None:
        raise fail("unknown-rating", ("device", "rated_current"),
            f"No gG gates are held for a {device.rated_current_a:g} A fuse-link.",
            "Choose a rating from the gates table: " + ", ".join(f"{r:g}" for r in lib.fuse_gates) + " A.",
            "not a rating in IEC 60269-1's gates table")
    if required_time_s >= FUSE_LONG_GATE_S:
        ia, within, gate = gates.imax_5s_a, FUSE_LONG_GATE_S, "Imax(5 s)"
    elif required_time_s >= FUSE_SHORT_GATE_S:
        ia, within, gate = gates.imax_0_1s_a, FUSE_SHORT_GATE_S, "Imax(0.1 s)"
    else:
        raise _too_fast(device, required_time_s, FUSE_SHORT_GATE_S, "IEC 60269-1's gates")
    return OperatingCurrent(
        current_a=ia,
        within_s=within,
        basis=f"gate {gate} = {ia:g} A: pre-arcing within {within:g} s, hence operation within {required_time_s:g} s",
        source=lib.source(GATES_TABLE),
        table_id=GATES_TABLE,
    )


def _rcd_current(device: ResidualCurrentDevice, required_time_s: float, lib: ProtectionLibrary) -> OperatingCurrent:
    rows = lib.rcd_break_times.get(device.rcd_type)
    if rows is None:
        raise fail("unknown-rcd-type", ("rcd", "type"),
            f"No break times are listed for RCD type {device.rcd_type!r}.",
            f"Choose one of {', '.join(sorted(lib.rcd_break_times))}.",
            "not a listed RCD type")
    row = next((r for r in rows if r.max_break_time_s <= required_time_s), None)
    if row is None:
        raise _too_fast(device, required_time_s, rows[-1].max_break_time_s, "IEC 61008-1")
    idn = device.rated_residual_current_a
    ia = row.multiple_of_idn * idn
    basis = f"{row.multiple_of_idn:g} x IΔn = {ia:g} A: break within {row.max_break_time_s:g} s"
    small = device.rcd_type == "general" and row.multiple_of_idn == rows[-1].multiple_of_idn and idn <= RCD_SMALL_IDN_A
    if small and ia < RCD_SMALL_IDN_TEST_A:
        ia = RCD_SMALL_IDN_TEST_A
        basis += (f"; IΔn <= {RCD_SMALL_IDN_A * 1000:g} mA may be tested at {RCD_SMALL_IDN_TEST_A:g} A instead, "
                  f"so {RCD_SMALL_IDN_TEST_A:g} A is taken")
    return OperatingCurrent(ia, row.max_break_time_s, basis, lib.source(RCD_TABLE), RCD_TABLE)


def operating_current(device: Device, required_time_s: float, library: ProtectionLibrary | None = None) -> OperatingCurrent:
    """The current Ia that guarantees ``device`` operates within ``required_time_s``.

    Raises CalcError when the device's standard guarantees no operation that fast,
    or the device is not one the tables describe.
    """
    require_positive(required_time_s, ("required_time",), "the required disconnection time")
    lib = library or default_protection()
    if isinstance(device, CircuitBreaker):
        return _breaker_current(device, required_time_s, lib)
    if isinstance(device, GGFuse):
        return _fuse_current(device, required_time_s, lib)
    if isinstance(device, ResidualCurrentDevice):
        return _rcd_current(device, required_time_s, lib)
    raise fail("unknown-device", ("device",),
        f"Not a protective device this library knows: {type(device).__name__}.",
        "Pass a CircuitBreaker, GGFuse or ResidualCurrentDevice.",
        "unknown device kind")

