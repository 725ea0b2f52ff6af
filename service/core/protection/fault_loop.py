"""Earth-fault loop check: does the protective device disconnect in the required time?

The prospective earth-fault current is taken at its minimum,

    If = Cmin x U0 / Zs,

with Cmin the minimum voltage factor of IEC 60909-0 Table 1 (0.95 for
low-voltage systems), so that a supply running below nominal still trips the
device.  The split by supply tolerance (0.95 for +6 %, 0.90 for +10 %) is as
an installation tester manufacturer's manual reproduces EN 60909-0 Table 1; the
edition (2016) is from memory.  Pass ``cmin=0.90`` for a +10 % system.  The
device complies when If >= Ia, the current that guarantees its operation in the
required time (see devices.py); equivalently Zs <= Zs,max = Cmin x U0 / Ia.
IEC 60364-4-41 411.4.4 writes the condition Zs x Ia <= U0; the Cmin factor is
the practice of using the minimum fault current (common practice).

The RCD route (TT systems, or wherever an RCD protects the circuit) checks the
same inequality with Ia taken from the RCD's break times (IEC 61008-1 Table 1,
e.g. 5 IΔn within 40 ms), and, for TT systems, the touch-voltage condition of
IEC 60364-4-41 411.5.3: RA x IΔn <= 50 V, with RA the sum of the earth
electrode and protective conductor resistances of the exposed-conductive-parts.

A failing check is a verdict (complies False), never an exception.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from .checks import fail, require_positive
from .devices import CircuitBreaker, GGFuse, OperatingCurrent, ResidualCurrentDevice, operating_current
from .disconnection import normalise_earthing
from .library import ProtectionLibrary, default_protection

CMIN_LOW_VOLTAGE = 0.95
CMIN_SOURCE = ("IEC 60909-0, Table 1: minimum voltage factor cmin = 0.95 for low voltage (100 V to 1000 V), "
               "systems with a +6 % tolerance; 0.90 where the tolerance is +10 %")
TOUCH_VOLTAGE_LIMIT_V = 50.0
TOUCH_VOLTAGE_SOURCE = "IEC 60364-4-41:2005, 411.5.3: RA x IΔn <= 50 V (TT system protected by an RCD)"
FAULT_CURRENT_FORMULA = "If = Cmin x U0 / Zs"
MAX_ZS_FORMULA = "Zs,max = Cmin x U0 / Ia"


@dataclass(frozen=True, slots=True)
class OvercurrentRoute:
    device: str
    operating: OperatingCurrent  # Ia, the time it guarantees, basis and source
    max_zs_ohm: float
    complies: bool


@dataclass(frozen=True, slots=True)
class RcdRoute:
    device: str
    rated_residual_current_a: float
    operating: OperatingCurrent
    max_zs_ohm: float
    disconnection_complies: bool
    ra_ohm: float | None
    touch_voltage_v: float | None  # RA x IΔn
    touch_voltage_limit_v: float
    touch_voltage_source: str
    touch_voltage_complies: bool | None  # None: RA not given, 411.5.3 not assessed
    complies: bool


@dataclass(frozen=True, slots=True)
class EarthFaultCheck:
    u0_v: float
    zs_ohm: float
    cmin: float
    cmin_source: str
    required_time_s: float
    fault_current_a: float  # If
    fault_current_formula: str
    max_zs_formula: str
    overcurrent: OvercurrentRoute | None
    rcd: RcdRoute | None
    complies: bool
    route: Literal["overcurrent", "rcd"] | None  # the route that shows compliance, overcurrent first
    notes: tuple[str, ...]


def _cmin(cmin: float) -> float:
    value = require_positive(cmin, ("cmin",), "Cmin")
    if value > 1.0:
        raise fail("invalid-input", ("cmin",),
            f"Cmin is a minimum voltage factor and cannot exceed 1; got {value:g}.",
            "Use 0.95 (IEC 60909-0 low voltage, +6 % tolerance) or 0.90 (+10 %).",
            "above 1")
    return value


def _rcd_route(rcd: ResidualCurrentDevice, fault_current_a: float, cmin_u0: float, required_time_s: float,
               ra_ohm: float | None, lib: ProtectionLibrary) -> RcdRoute:
    op = operating_current(rcd, required_time_s, lib)
    disconnects = fault_current_a >= op.current_a
    touch = None if ra_ohm is None else ra_ohm * rcd.rated_residual_current_a
    touch_ok = None if touch is None else touch <= TOUCH_VOLTAGE_LIMIT_V
    return RcdRoute(
        device=rcd.label,
        rated_residual_current_a=rcd.rated_residual_current_a,
        operating=op,
        max_zs_ohm=cmin_u0 / op.current_a,
        disconnection_complies=disconnects,
        ra_ohm=ra_ohm,
        touch_voltage_v=touch,
        touch_voltage_limit_v=TOUCH_VOLTAGE_LIMIT_V,
        touch_voltage_source=TOUCH_VOLTAGE_SOURCE,
        touch_voltage_complies=touch_ok,
        complies=disconnects and touch_ok is not False,
    )


def earth_fault_check(
    u0_v: float,
    zs_ohm: float,
    device: CircuitBreaker | GGFuse | ResidualCurrentDevice | None,
    required_time_s: float,
    cmin: float = CMIN_LOW_VOLTAGE,
    *,
    rcd: ResidualCurrentDevice | None = None,
    ra_ohm: float | None = None,
    earthing: str | None = None,
    library: ProtectionLibrary | None = None,
) -> EarthFaultCheck:
    """Verdict on automatic disconnection for an earth fault of loop impedance ``zs_ohm``.

    ``device`` is the overcurrent device (or an RCD alone); ``rcd`` an RCD in
    the same circuit.  For a TT system (``earthing="TT"``) with an RCD, ``ra_ohm``
    is required for the 411.5.3 touch-voltage condition.
    """
    lib = library or default_protection()
    u0 = require_positive(u0_v, ("u0",), "U0")
    zs = require_positive(zs_ohm, ("zs",), "Zs")
    t = require_positive(required_time_s, ("required_time",), "the required disconnection time")
    c = _cmin(cmin)
    ra = None if ra_ohm is None else require_positive(ra_ohm, ("ra",), "RA")
    if isinstance(device, ResidualCurrentDevice):
        if rcd is not None:
            raise fail("invalid-input", ("rcd",),
                "Two RCDs given: as the device and as the rcd.",
                "Pass the RCD once.",
                "second RCD")
        device, rcd = None, device
    if device is None and rcd is None:
        raise fail("invalid-input", ("device",),
            "No protective device given.",
            "Give the overcurrent device, an RCD, or both.",
            "missing")
    system = None if earthing is None else normalise_earthing(earthing)
    if system == "TT" and rcd is not None and ra is None:
        raise fail("missing-input", ("ra",),
            "A TT system protected by an RCD needs RA for the touch-voltage condition RA x IΔn <= 50 V (411.5.3).",
            "Give RA, the earth electrode plus protective conductor resistance, in ohms.",
            "required for a TT system with an RCD")

    cmin_u0 = c * u0
    fault_current = cmin_u0 / zs
    overcurrent = None
    if device is not None:
        op = operating_current(device, t, lib)
        overcurrent = OvercurrentRoute(device.label, op, cmin_u0 / op.current_a, fault_current >= op.current_a)
    rcd_route = None if rcd is None else _rcd_route(rcd, fault_current, cmin_u0, t, ra, lib)

    route: Literal["overcurrent", "rcd"] | None = None
    if overcurrent is not None and overcurrent.complies:
        route = "overcurrent"
    elif rcd_route is not None and rcd_route.complies:
        route = "rcd"
    notes = []
    if rcd_route is not None and rcd_route.touch_voltage_complies is None:
        notes.append("RA not given: the TT touch-voltage condition RA x IΔn <= 50 V (411.5.3) was not assessed")
    return EarthFaultCheck(
        u0_v=u0, zs_ohm=zs, cmin=c, cmin_source=CMIN_SOURCE, required_time_s=t, fault_current_a=fault_current,
        fault_current_formula=FAULT_CURRENT_FORMULA, max_zs_formula=MAX_ZS_FORMULA, overcurrent=overcurrent,
        rcd=rcd_route, complies=route is not None, route=route, notes=tuple(notes),
    )
