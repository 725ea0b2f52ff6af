"""Which disconnection rule a chain's supply takes: IEC 60364-4-41 Table 41.1, or the RLV rule of BS 7671 411.8.

A standard supply's U0 is its nominal voltage.  A reduced-low-voltage site
supply (110 V between lines) has U0 = 55 V or 63.5 V to earth, and its circuits
must disconnect within 5 s (service.core.protection.rlv).
"""

from __future__ import annotations

from service.core.protection import DisconnectionTime, EarthFaultCheck, is_rlv, required_disconnection_time
from service.core.protection.rlv import RLV_RCD_SOURCE, rlv_disconnection_rule, rlv_rcd_max_zs, rlv_u0

from .model import Supply


def earth_fault_u0(supply: Supply) -> float:
    """The line-to-earth voltage that drives an earth fault."""
    return rlv_u0(supply.system) if is_rlv(supply.system) else supply.nominal_voltage_v


def disconnection_rule(supply: Supply, rated_current_a: float) -> DisconnectionTime:
    if is_rlv(supply.system):
        return rlv_disconnection_rule(supply.system, supply.earthing, rated_current_a)
    return required_disconnection_time(supply.earthing, supply.nominal_voltage_v, "socket_outlets", rated_current_a)


def rlv_rcd_problem(supply: Supply, zs_ohm: float, check: EarthFaultCheck | None) -> str | None:
    """On an RLV supply cleared only by its RCD, the 50 V / IΔn limit of BS 7671 411.8.3 applies as well."""
    if check is None or check.route != "rcd" or not is_rlv(supply.system) or supply.rcd_sensitivity_a is None:
        return None
    limit = rlv_rcd_max_zs(supply.rcd_sensitivity_a)
    if zs_ohm <= limit:
        return None
    return (f"an earth fault at the far end: Zs = {zs_ohm:.4g} ohm exceeds 50 V / IΔn = {limit:.4g} ohm for the RCD "
            f"on a reduced-low-voltage supply ({RLV_RCD_SOURCE})")


def rlv_rcd_limit(supply: Supply) -> tuple[float, str] | None:
    """The 50 V / IΔn limit on Zs for an RLV supply with an RCD, and its source; None where it does not apply."""
    if not is_rlv(supply.system) or supply.rcd_sensitivity_a is None:
        return None
    return rlv_rcd_max_zs(supply.rcd_sensitivity_a), RLV_RCD_SOURCE
