"""Plain-language recommendations from a chain's results: what to change, in the order to try it."""

from __future__ import annotations

from service.core.cords import CordLibrary

from .model import Chain
from .report import ApplianceReport, ChainTotals, FaultReport, LeadReport, LengthLimit


def _larger_cord(cords: CordLibrary, current_a: float, factor: float) -> str | None:
    """The smallest tabulated cord whose derated rating carries ``current_a``."""
    for r in cords.ratings:
        if r.single_phase_a * factor >= current_a:
            return f"{r.area_m2 * 1e6:g} mm²"
    return None


def _too_hot(lead: LeadReport) -> bool:
    return any(c.code == "lead_temperature" and c.passes is False for c in lead.checks)


def recommendations(chain: Chain, leads: tuple[LeadReport, ...], appliances: tuple[ApplianceReport, ...],
                    totals: ChainTotals, fault: FaultReport, limits: tuple[LengthLimit, ...],
                    cords: CordLibrary) -> tuple[str, ...]:
    found: list[str] = []
    for r, lead in zip(leads, chain.leads):
        wound = lead.reel is not None and lead.reel.wound != "none"
        unwound = r.rating.base_a * (r.rating.ambient.value if r.rating.ambient else 0)
        if wound and (_too_hot(r) or (r.loading_pct or 0) > 50):
            found.append(f"Unwind the reel '{r.name}' fully before use: wound it may carry {r.rating.effective_a or 0:.3g} A, "
                         f"unwound {unwound:.3g} A, and it now carries {r.current_a:.3g} A.")
        overloaded = r.rating.effective_a is not None and r.current_a > r.rating.effective_a
        if overloaded and not (wound and r.current_a <= unwound):  # unwinding alone would not do
            factor = (r.rating.effective_a / r.rating.base_a) if r.rating.base_a else 1.0
            size = _larger_cord(cords, r.current_a, factor)
            where = f" of at least {size}" if size else ""
            found.append(f"Replace '{r.name}' with a lead of a larger conductor{where}: it carries {r.current_a:.3g} A "
                         f"against {r.rating.effective_a:.3g} A.")
        if r.overload_protected is False:
            found.append(f"'{r.name}' is not protected against overload by the {r.overload_device} "
                         f"(IEC 60364-4-43, 433.1: In <= Iz and I2 <= 1.45 Iz, Iz = {r.rating.effective_a or 0:.3g} A). "
                         "Use a lead rated for the origin device, or a plug fuse no larger than the lead's rating.")
    if not totals.drop_complies and leads:
        worst = max(leads, key=lambda r: r.drop_v)
        found.append(f"Use a larger conductor for '{worst.name}', which alone drops {worst.drop_v:.3g} V.")
        far = [a for a in appliances if a.outlet > 0]
        if far:
            biggest = max(far, key=lambda a: a.power_w)
            found.append(f"Move '{biggest.name}' to a nearer outlet: it draws {biggest.power_w:.4g} W at outlet {biggest.outlet}.")
    if len(chain.appliances) > 1 and (not totals.drop_complies or any(_too_hot(r) for r in leads)):
        found.append("Split the load: feed some appliances from a second socket on another circuit.")
    check = fault.earth_fault
    plug_fuse_clears = fault.plug_fuse_credit is not None and fault.plug_fuse_credit.complies
    if check is not None and not check.complies and not plug_fuse_clears:
        usable = [f"{lim.size_label}: {lim.by_overcurrent_earth_fault_m:.4g} m" for lim in limits
                  if lim.by_overcurrent_earth_fault_m is not None]
        found.append("Shorten the chain so the origin device still clears an earth fault at the far end"
                     + (f" (longest single lead that still disconnects: {'; '.join(usable)})" if usable else "")
                     + ", or protect it with a 30 mA RCD.")
    ln = fault.line_neutral
    if ln is not None and not ln.complies:
        usable = [f"{lim.size_label}: {lim.by_overcurrent_line_neutral_m:.4g} m" for lim in limits
                  if lim.by_overcurrent_line_neutral_m is not None]
        found.append("Shorten the chain or use leads with a larger conductor so the origin device clears a "
                     "line-neutral fault at the far end" + (f" (longest single lead: {'; '.join(usable)})" if usable else "")
                     + ", or feed it from a socket on a lower-rated device: an RCD does not see this fault.")
    if chain.supply.system != "standard":
        pass  # reduced low voltage (BS 7671 411.8): no 30 mA RCD for additional protection is required
    elif chain.supply.rcd_sensitivity_a is None:
        found.append("Plug the chain into a socket protected by a 30 mA RCD, or use a portable RCD at the socket: "
                     "IEC 60364-4-41 (411.3.3) requires additional protection for socket-outlets up to 32 A.")
    elif chain.supply.rcd_sensitivity_a > 0.030:
        found.append(f"The RCD's {chain.supply.rcd_sensitivity_a * 1000:g} mA sensitivity does not give additional "
                     "protection: use a 30 mA RCD for portable equipment (IEC 60364-4-41, 415.1.1).")
    return tuple(found)
