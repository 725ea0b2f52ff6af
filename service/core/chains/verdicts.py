"""The protection checks of a lead chain, each a ChainCheck with its code, values, limit and source.

* Overload (IEC 60364-4-43:2008, 433.1): a lead is protected by a device upstream of it when In <= Iz and
  I2 <= 1.45 Iz, with I2 the device's conventional operating current (IEC 60898-1 Table 7, IEC 60269-1 Table 2).
* A line-neutral fault at the far end (an RCD does not see it): If = Cmin x U0 / Z(line-neutral) against the
  current that clears the origin's overcurrent device in the required time, with the time it is guaranteed to take.
* The cords' withstand of that fault (IEC 60364-4-43:2008, 434.5.2): k² S² >= I² t for the time taken.
"""

from __future__ import annotations

from dataclasses import dataclass

from service.core.errors import CalcError
from service.core.protection import (
    CMIN_LOW_VOLTAGE,
    CircuitBreaker,
    GGFuse,
    guaranteed_clearing,
    k_factor,
    operating_current,
)
from service.core.protection.adiabatic import MM2

from .codes import ChainCheck
from .model import Lead
from .report import LineNeutralFault

OVERLOAD_SOURCE = "IEC 60364-4-43:2008, 433.1: In <= Iz and I2 <= 1.45 Iz"
OVERLOAD_FACTOR = 1.45
WITHSTAND_SOURCE = "IEC 60364-4-43:2008, 434.5.2: k² S² >= I² t"
# Flexible cords are rubber (60 °C) or PVC insulated; the request does not say which, so the lower k is taken.
CORD_INSULATIONS = ("rubber_60", "pvc_70")


@dataclass(frozen=True, slots=True)
class UpstreamDevice:
    """An overcurrent device between the origin's supply and a lead, with its conventional current I2."""

    label: str
    rated_current_a: float
    conventional_current_a: float | None  # None: not held for this device
    conventional_source: str | None
    input_path: str  # the request field that gives it


def _conventional(kind: str, rated_a: float) -> tuple[float, str]:
    from service.core.sizing.regime import iec60364  # the sizing tables hold I2 (IEC 60898-1, IEC 60269-1)

    c = iec60364().conventional_current(kind, rated_a)
    return c.i2_a, f"I2 = {c.multiple:g} x In ({c.source})"


def upstream_devices(supply_kind: str | None, supply_rating_a: float | None,
                     plug_fuses_a: tuple[float | None, ...]) -> list[tuple[UpstreamDevice, ...]]:
    """For each lead, every overcurrent device upstream of it: the origin device and the plug fuses up to its own."""
    found: list[UpstreamDevice] = []
    if supply_kind is not None and supply_rating_a is not None:
        i2, source = _conventional(supply_kind, supply_rating_a)
        found.append(UpstreamDevice(f"origin device {supply_kind} {supply_rating_a:g} A", supply_rating_a, i2, source,
                                    "supply.device"))
    per_lead = []
    for k, fuse in enumerate(plug_fuses_a):
        if fuse is not None:  # a plug fuse's conventional fusing current is not held: I2 not assessed for it
            found.append(UpstreamDevice(f"plug fuse {fuse:g} A of lead {k}", fuse, None, None, f"leads.{k}.plug_fuse"))
        per_lead.append(tuple(found))
    return per_lead


def overload_checks(iz_a: float | None, devices: tuple[UpstreamDevice, ...]
                    ) -> tuple[UpstreamDevice | None, tuple[ChainCheck, ChainCheck], tuple[str, ...]]:
    """433.1 for one lead: the device that protects it (or the smallest one), both conditions, and the problems."""
    if not devices or iz_a is None:
        missing = ("supply.device",) if not devices else ()
        return None, (ChainCheck("lead_overload", None, None, iz_a, "A", OVERLOAD_SOURCE, missing),
                      ChainCheck("lead_conventional_current", None, None,
                                 None if iz_a is None else OVERLOAD_FACTOR * iz_a, "A", OVERLOAD_SOURCE, missing)), ()
    limit = iz_a * (1 + 1e-9)

    def protects(d: UpstreamDevice) -> bool:
        return d.rated_current_a <= limit and d.conventional_current_a is not None and \
            d.conventional_current_a <= OVERLOAD_FACTOR * limit

    chosen = next((d for d in devices if protects(d)), None) or min(devices, key=lambda d: d.rated_current_a)
    in_ok = chosen.rated_current_a <= limit
    i2 = chosen.conventional_current_a
    i2_ok = None if i2 is None else i2 <= OVERLOAD_FACTOR * limit
    checks = (
        ChainCheck("lead_overload", in_ok, chosen.rated_current_a, iz_a, "A", f"{OVERLOAD_SOURCE}; In of the {chosen.label}"),
        ChainCheck("lead_conventional_current", i2_ok, i2, OVERLOAD_FACTOR * iz_a, "A",
                   f"{OVERLOAD_SOURCE}; {chosen.conventional_source or 'I2 of a plug fuse is not held'}"),
    )
    problems = []
    if not in_ok:
        problems.append(f"not protected against overload: In = {chosen.rated_current_a:g} A of the {chosen.label} is "
                        f"above its Iz = {iz_a:.3g} A (IEC 60364-4-43, 433.1)")
    elif i2_ok is False:
        problems.append(f"not protected against overload: I2 = {i2:.3g} A of the {chosen.label} is above "
                        f"1.45 Iz = {OVERLOAD_FACTOR * iz_a:.3g} A (IEC 60364-4-43, 433.1)")
    return chosen, checks, tuple(problems)


def line_neutral_fault(u0_v: float, z_ln_ohm: float, device: CircuitBreaker | GGFuse,
                       required_time_s: float) -> LineNeutralFault:
    current = CMIN_LOW_VOLTAGE * u0_v / z_ln_ohm
    op = operating_current(device, required_time_s)
    clearing = guaranteed_clearing(device, current)
    return LineNeutralFault(
        device=device.label, cmin=CMIN_LOW_VOLTAGE, fault_current_a=current, required_time_s=required_time_s,
        operating=op, clearing_time_s=None if clearing is None else clearing.time_s,
        clearing_basis=None if clearing is None else clearing.basis, complies=current >= op.current_a)


def line_neutral_check(fault: LineNeutralFault | None, time_source: str | None) -> ChainCheck:
    if fault is None:
        return ChainCheck("line_neutral_disconnection", None, None, None, "A",
                          "IEC 60364-4-41:2005, Table 41.1 (an RCD does not see a line-neutral fault)",
                          ("supply.device",))
    return ChainCheck("line_neutral_disconnection", fault.complies, fault.fault_current_a, fault.operating.current_a,
                      "A", f"If = Cmin x U0 / Z(line-neutral) >= Ia within {fault.required_time_s:g} s "
                           f"({time_source}; {fault.operating.source})")


def _cord_k(lead: Lead) -> tuple[float, str] | None:
    found = []
    for insulation in CORD_INSULATIONS:
        try:
            found.append(k_factor(lead.conductor.material.name, insulation, "live", lead.conductor.area_m2))
        except CalcError:
            continue
    if not found:
        return None
    k = min(found, key=lambda f: f.k)
    return k.k, (f"k = {k.k:g} for {k.insulation} ({k.source}), the lower of rubber and PVC: "
                 "the cord's insulation is not given")


def cord_withstand_check(lead: Lead, fault: LineNeutralFault | None) -> ChainCheck:
    """k² S² against I² t of the far-end line-neutral fault for the time the origin device takes to clear it."""
    if fault is None:
        return ChainCheck("cord_withstand", None, None, None, "A2s", WITHSTAND_SOURCE, ("supply.device",))
    k = _cord_k(lead)
    if k is None:
        return ChainCheck("cord_withstand", None, None, None, "A2s",
                          f"{WITHSTAND_SOURCE}; no k is held for a {lead.conductor.material.name} cord")
    permitted = (k[0] * lead.conductor.area_m2 / MM2) ** 2
    if fault.clearing_time_s is None:  # not cleared within 5 s: beyond the adiabatic formula, not protected
        return ChainCheck("cord_withstand", False, None, permitted, "A2s",
                          f"{WITHSTAND_SOURCE}; the origin device is not guaranteed to clear the far-end fault "
                          f"of {fault.fault_current_a:.3g} A within 5 s; {k[1]}")
    i2t = fault.fault_current_a**2 * fault.clearing_time_s
    return ChainCheck("cord_withstand", i2t <= permitted, i2t, permitted, "A2s",
                      f"{WITHSTAND_SOURCE}; I² t = If² x {fault.clearing_time_s:.3g} s (the guaranteed clearing time, "
                      f"an upper bound of the let-through energy); {k[1]}")
