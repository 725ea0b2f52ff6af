"""Plug fuses (BS 1362) in a lead chain: what they do to an overload, and their credit for clearing a fault.

A plug fuse on lead k sits in the plug at that lead's socket end, so it is in the
fault path of lead k and of every lead after it; the origin device is in every
path.  A fault is cleared within the shortest time any device in its path
guarantees for its current (the devices are in series: the first to open clears
it).
"""

from __future__ import annotations

from collections.abc import Callable

from dataclasses import dataclass

from service.core.errors import Blame, CalcError
from service.core.protection import PlugFuse, guaranteed_clearing, operating_current, plug_fuse_band
from service.core.protection.plug_fuse import CONVENTIONAL_TABLE, RATINGS_TABLE, ZONES_TABLE, band_sources

from .model import Chain, Lead


@dataclass(frozen=True, slots=True)
class PlugFuseOverload:
    """How a lead's plug fuse responds to the current it carries (BS 1362 conventional currents and zones)."""

    rated_current_a: float
    current_a: float
    non_fusing_a: float  # carried for the conventional time without opening
    fusing_a: float  # opens within the conventional time
    conventional_time_s: float
    opens_within_s: float | None  # guaranteed opening time at this current; None: not guaranteed
    response: str  # "carries" (within rating), "holds" (<= non-fusing), "may_open", "opens"
    source: str


def plug_fuse_of(lead: Lead, index: int) -> PlugFuse | None:
    if lead.plug_fuse_a is None:
        return None
    fuse = PlugFuse(lead.plug_fuse_a)
    try:
        plug_fuse_band(fuse)
    except CalcError as exc:
        raise CalcError(code=exc.code, detail=exc.detail, how_to_fix=exc.how_to_fix,
                        blames=tuple(Blame(("leads", index, "plug_fuse"), b.message) for b in exc.blames)) from None
    return fuse


def plug_fuse_overload(lead: Lead, index: int, current_a: float) -> PlugFuseOverload | None:
    fuse = plug_fuse_of(lead, index)
    if fuse is None:
        return None
    band = plug_fuse_band(fuse)
    clearing = guaranteed_clearing(fuse, current_a) if current_a > 0 else None
    if current_a <= fuse.rated_current_a * (1 + 1e-9):
        response = "carries"
    elif current_a <= band.non_fusing_a:
        response = "holds"
    elif clearing is None:
        response = "may_open"
    else:
        response = "opens"
    return PlugFuseOverload(fuse.rated_current_a, current_a, band.non_fusing_a, band.fusing_a,
                            band.conventional_time_s, None if clearing is None else clearing.time_s, response,
                            band_sources(band))


def plug_fuse_problem(found: PlugFuseOverload | None) -> str | None:
    """The plain-language problem, when the current exceeds the fuse's rating (Ib <= In, IEC 60364-4-43 433.1)."""
    if found is None or found.response == "carries":
        return None
    head = f"{found.current_a:.3g} A flows through its {found.rated_current_a:g} A plug fuse, above its rating"
    minutes = found.conventional_time_s / 60.0
    if found.response == "holds":
        return (f"{head}; BS 1362 lets the fuse carry up to {found.non_fusing_a:.3g} A for {minutes:g} min without "
                "opening, so it will not protect the lead from this overload")
    if found.response == "may_open":
        return (f"{head}; between its non-fusing {found.non_fusing_a:.3g} A and fusing {found.fusing_a:.3g} A it "
                f"may or may not open within {minutes:g} min")
    return f"{head}; it opens within {found.opens_within_s:.3g} s at most (BS 1362 time-current band)"


@dataclass(frozen=True, slots=True)
class FaultClearing:
    """The device in a fault path that guarantees the shortest clearing time for the fault current."""

    device: str
    time_s: float
    basis: str


def fault_path_devices(chain: Chain, origin, last_lead: int | None = None) -> list:
    """The devices in series between the supply and a fault on lead ``last_lead`` (default: the last lead)."""
    end = len(chain.leads) - 1 if last_lead is None else last_lead
    devices = [] if origin is None else [origin]
    devices += [f for k, lead in enumerate(chain.leads[: end + 1]) if (f := plug_fuse_of(lead, k)) is not None]
    return devices


def fastest_clearing(devices, current_a: float) -> FaultClearing | None:
    """The shortest guaranteed clearing time of ``current_a`` among series devices; None if none is guaranteed."""
    found = []
    for device in devices:
        clearing = guaranteed_clearing(device, current_a) if current_a > 0 else None
        if clearing is not None:
            found.append(FaultClearing(device.label, clearing.time_s, clearing.basis))
    return min(found, key=lambda c: c.time_s, default=None)


@dataclass(frozen=True, slots=True)
class PlugFuseFaultCredit:
    """Earth-fault disconnection at the far end by the fastest plug fuse in the path."""

    device: str
    fault_current_a: float
    required_time_s: float
    operating_current_a: float | None  # Ia for the required time; None: the fuse guarantees nothing that fast
    max_zs_ohm: float | None
    clearing_time_s: float | None
    complies: bool
    basis: str
    source: str


def plug_fuse_earth_fault(chain: Chain, cmin_u0_v: float, zs_ohm: float, required_time_s: float,
                          covered: Callable[[int], bool] = lambda k: k == 0) -> PlugFuseFaultCredit | None:
    """The best plug fuse's verdict on the far-end earth fault, or None when no plug fuse can be credited.

    A plug fuse in lead k's plug guards lead k and what follows it, not the leads before it: it is credited only
    where ``covered(k)`` says an earth fault at its own plug (the outlet of lead k - 1) is cleared in time by the
    devices upstream (always for lead 0, whose plug is in the origin socket)."""
    fuses = [f for k, lead in enumerate(chain.leads) if (f := plug_fuse_of(lead, k)) is not None and covered(k)]
    if not fuses:
        return None
    fault_current = cmin_u0_v / zs_ohm
    best = None
    for fuse in fuses:
        try:
            op = operating_current(fuse, required_time_s)
        except CalcError:
            op = None
        clearing = guaranteed_clearing(fuse, fault_current)
        complies = op is not None and fault_current >= op.current_a * (1 - 1e-12)
        credit = PlugFuseFaultCredit(
            device=fuse.label, fault_current_a=fault_current, required_time_s=required_time_s,
            operating_current_a=None if op is None else op.current_a,
            max_zs_ohm=None if op is None else cmin_u0_v / op.current_a,
            clearing_time_s=None if clearing is None else clearing.time_s, complies=complies,
            basis=op.basis if op is not None else (f"the BS 1362 data held guarantee no operation of the "
                                                   f"{fuse.label} within {required_time_s:g} s"),
            source=band_sources(plug_fuse_band(fuse)))
        rank = (credit.complies, -(credit.clearing_time_s or float("inf")))
        if best is None or rank > best[0]:
            best = (rank, credit)
    return best[1]


def plug_fuse_tables(chain: Chain, fault) -> set[str]:
    """The BS 1362 tables a chain's answer used."""
    if not any(lead.plug_fuse_a is not None for lead in chain.leads):
        return set()
    return {CONVENTIONAL_TABLE, RATINGS_TABLE} | ({ZONES_TABLE} if fault.plug_fuse_credit is not None else set())
