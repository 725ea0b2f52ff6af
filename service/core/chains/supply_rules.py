"""Which disconnection rule a chain's supply takes: IEC 60364-4-41 Table 41.1, or the RLV rule of BS 7671 411.8.

A standard supply's U0 is its nominal voltage.  A reduced-low-voltage site
supply (110 V between lines) has U0 = 55 V or 63.5 V to earth, and its circuits
must disconnect within 5 s (service.core.protection.rlv).
"""

from __future__ import annotations

from service.core.protection import DisconnectionTime, is_rlv, required_disconnection_time, rlv_disconnection_rule, rlv_u0

from .model import Supply


def earth_fault_u0(supply: Supply) -> float:
    """The line-to-earth voltage that drives an earth fault."""
    return rlv_u0(supply.system) if is_rlv(supply.system) else supply.nominal_voltage_v


def disconnection_rule(supply: Supply, rated_current_a: float) -> DisconnectionTime:
    if is_rlv(supply.system):
        return rlv_disconnection_rule(supply.system, supply.earthing, rated_current_a)
    return required_disconnection_time(supply.earthing, supply.nominal_voltage_v, "socket_outlets", rated_current_a)
