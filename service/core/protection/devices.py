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
  and at Imax(0.1 s) within 0.1 s.  Between the gates the maximum operating
  characteristic is taken as a straight line in log-log through the gates and
  any published points of the fuse system (BS 88-2 systems E and G: the 0.4 s
  currents of BS 7671 Table 41.2).  Published gG characteristics are convex in
  log-log (the pre-arcing I²t tends to a constant at high currents, the curve
  rises steeply towards the conventional fusing current), so a chord between
  two points of the maximum characteristic lies on its slow side: the
  interpolated Ia and clearing times are conservative (common practice).
  IEC 60269-1 treats pre-arcing and operating time as the same above 0.1 s
  (arcing time negligible there); below 0.1 s nothing is held.
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
from .library import (
    ENERGY_CLASS_TABLE,
    GATES_TABLE,
    RCD_TABLE,
    TRIP_TABLE,
    FuseBand,
    ProtectionLibrary,
    default_protection,
)

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
    system: str = "iec60269_1"  # "bs88_2": BS 88-2 systems E and G, whose published 0.4 s points refine the band

    def __post_init__(self) -> None:
        require_positive(self.rated_current_a, ("device", "rated_current"), "the fuse-link's rated current")

    @property
    def label(self) -> str:
        std = "BS 88-2" if self.system == "bs88_2" else "IEC 60269-1"
        return f"{self.rated_current_a:g} A gG fuse-link ({std})"


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


def _fuse_band(device: GGFuse, lib: ProtectionLibrary) -> FuseBand:
    bands = lib.fuse_bands.get(device.system)
    if bands is None:
        raise fail("unknown-fuse-system", ("device", "fuse_system"),
            f"No time-current band is held for gG fuse system {device.system!r}.",
            f"Choose one of {', '.join(sorted(lib.fuse_bands))}.", "not a known fuse system")
    band = next((b for r, b in bands.items() if math.isclose(r, device.rated_current_a)), None)
    if band is None:
        raise fail("unknown-rating", ("device", "rated_current"),
            f"No gG gates are held for a {device.rated_current_a:g} A fuse-link.",
            "Choose a rating from the gates table: " + ", ".join(f"{r:g}" for r in bands) + " A.",
            "not a rating in IEC 60269-1's gates table")
    return band


def _log_log(x: float, x1: float, y1: float, x2: float, y2: float) -> float:
    """y at x on the straight line through (x1, y1) and (x2, y2) in log-log (the points themselves exactly)."""
    if x in (x1, x2):
        return y1 if x == x1 else y2
    share = (math.log(x) - math.log(x1)) / (math.log(x2) - math.log(x1))
    return math.exp(math.log(y1) + share * (math.log(y2) - math.log(y1)))


def _fuse_basis(band: FuseBand) -> str:
    points = ", ".join(f"{i:.4g} A at {t:g} s" for t, i in band.points)
    return f"maximum operating characteristic through {points}, straight in log-log between points"


def _fuse_current(device: GGFuse, required_time_s: float, lib: ProtectionLibrary) -> OperatingCurrent:
    band = _fuse_band(device, lib)
    (t_long, i_long), (t_short, i_short) = band.points[0], band.points[-1]
    if required_time_s < t_short:
        raise _too_fast(device, required_time_s, FUSE_SHORT_GATE_S, "IEC 60269-1's gates")
    if required_time_s >= t_long:
        ia, within = i_long, t_long
    else:
        upper, lower = next((a, b) for a, b in zip(band.points, band.points[1:]) if a[0] >= required_time_s >= b[0])
        ia, within = _log_log(required_time_s, upper[0], upper[1], lower[0], lower[1]), required_time_s
    return OperatingCurrent(
        current_a=ia,
        within_s=within,
        basis=f"Ia = {ia:.4g} A for operation within {within:g} s ({_fuse_basis(band)})",
        source="; ".join(band.sources),
        table_id=GATES_TABLE,
    )


@dataclass(frozen=True, slots=True)
class ClearingTime:
    """The longest time a device may take to clear a given current, and why."""

    time_s: float
    basis: str


def _fuse_clearing(device: GGFuse, current_a: float, lib: ProtectionLibrary) -> ClearingTime | None:
    band = _fuse_band(device, lib)
    (t_long, i_long), (t_short, i_short) = band.points[0], band.points[-1]
    if current_a < i_long * (1 - 1e-12):  # the tolerance absorbs the rounding of an Ia read off the same band
        return None
    if current_a >= i_short:
        t = t_short
    else:
        at = max(current_a, i_long)
        upper, lower = next((a, b) for a, b in zip(band.points, band.points[1:]) if a[1] <= at <= b[1])
        t = min(_log_log(at, upper[1], upper[0], lower[1], lower[0]), upper[0])
    return ClearingTime(t, f"{current_a:.4g} A operates the fuse-link within {t:.3g} s ({_fuse_basis(band)})")


def guaranteed_clearing(device: Device, current_a: float, library: ProtectionLibrary | None = None) -> ClearingTime | None:
    """The time within which ``device`` is guaranteed to clear ``current_a``; None if it is not guaranteed in 5 s.

    Breaker: within 0.1 s at or above the upper limit of its instantaneous range, otherwise nothing guaranteed
    (the thermal release is not tabulated).  gG fuse: the time on its maximum operating characteristic
    (log-log between points), 0.1 s at or above Imax(0.1 s).  RCD: the shortest break time whose test current
    the fault current reaches (an RCD sees only a residual current: earth faults).
    """
    current = require_positive(current_a, ("current",), "the fault current")
    if _is_plug_fuse(device):
        return _plug_fuse_clearing(device, current)
    lib = library or default_protection()
    if isinstance(device, GGFuse):
        return _fuse_clearing(device, current, lib)
    times = (BREAKER_INSTANTANEOUS_TIME_S,) if isinstance(device, CircuitBreaker) else tuple(
        sorted(r.max_break_time_s for r in lib.rcd_break_times.get(device.rcd_type, ())))
    for t in times:
        op = operating_current(device, t, lib)
        if current >= op.current_a:
            return ClearingTime(op.within_s, op.basis)
    return None


def energy_class_let_through(device: CircuitBreaker, energy_class: int, prospective_current_a: float,
                             library: ProtectionLibrary | None = None) -> tuple[float, str] | None:
    """EN 60898-1 Annex ZA: the largest let-through I²t of the class at the next tabulated prospective current
    at or above ``prospective_current_a`` (let-through energy rises with the prospective current, common
    practice).  None where the annex sets no limit (class 1, type D, above 32 A, above 10 kA)."""
    lib = library or default_protection()
    rows = [r for r in lib.energy_limits if r.curve == device.curve and r.energy_class == energy_class
            and r.rated_above_a < device.rated_current_a <= r.rated_up_to_a
            and r.prospective_current_a >= prospective_current_a]
    if not rows:
        return None
    row = min(rows, key=lambda r: r.prospective_current_a)
    return row.max_i2t_a2s, (f"energy-limiting class {energy_class}: at most {row.max_i2t_a2s:g} A²s at "
                             f"{row.prospective_current_a:g} A prospective ({lib.source(ENERGY_CLASS_TABLE)})")


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
    if _is_plug_fuse(device):
        return _plug_fuse_current(device, required_time_s)
    lib = library or default_protection()
    if isinstance(device, CircuitBreaker):
        return _breaker_current(device, required_time_s, lib)
    if isinstance(device, GGFuse):
        return _fuse_current(device, required_time_s, lib)
    if isinstance(device, ResidualCurrentDevice):
        return _rcd_current(device, required_time_s, lib)
    raise fail("unknown-device", ("device",),
        f"Not a protective device this library knows: {type(device).__name__}.",
        "Pass a CircuitBreaker, GGFuse, ResidualCurrentDevice or PlugFuse.",
        "unknown device kind")



def _is_plug_fuse(device: object) -> bool:
    from .plug_fuse import PlugFuse  # plug_fuse.py builds on this module: imported when first needed

    return isinstance(device, PlugFuse)


def _plug_fuse_current(device, required_time_s: float) -> OperatingCurrent:
    from .plug_fuse import CONVENTIONAL_TABLE, ZONES_TABLE, band_basis, band_sources, plug_fuse_operating

    ia, within, band = plug_fuse_operating(device, required_time_s)
    return OperatingCurrent(ia, within, f"Ia = {ia:.4g} A for operation within {within:g} s ({band_basis(band)})",
                            band_sources(band), CONVENTIONAL_TABLE if len(band.points) == 1 else ZONES_TABLE)


def _plug_fuse_clearing(device, current_a: float) -> ClearingTime | None:
    from .plug_fuse import band_basis, plug_fuse_clearing

    found = plug_fuse_clearing(device, current_a)
    if found is None:
        return None
    t, band = found
    return ClearingTime(t, f"{current_a:.4g} A operates the {device.label} within {t:.3g} s ({band_basis(band)})")
