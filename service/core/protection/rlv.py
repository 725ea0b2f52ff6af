"""Reduced-low-voltage (RLV) site supplies: a national rule, BS 7671 411.8, not part of IEC 60364-4-41.

A 110 V site transformer with an earthed centre tap (single-phase) or an earthed
star point (three-phase) puts 55 V or 63.5 V between a line and earth.  BS 7671
treats such a system as a protective measure of its own (411.8):

* U0 is 55 V (single-phase, centre-tapped) or 63.5 V (three-phase, star), with
  at most 110 V between lines (411.8.1.2);
* automatic disconnection by an overcurrent device within 5 s, checked as
  Zs <= Cmin x U0 / Ia(5 s) (411.8.3; BS 7671:2018 tabulates the results as
  Table 41.6, which is not held here: the limit is computed from the device's
  own 5 s operating current with Cmin = 0.95, as that edition's tables are,
  from memory); an RCD may be used instead, Zs x IΔn <= 50 V;
* the 30 mA RCD for additional protection of 411.3.3 belongs to automatic
  disconnection at standard voltages and is not required on an RLV system
  (from memory).

The clause numbers are those of BS 7671:2018 as recalled (from memory); the
voltages and the 5 s limit are facts of the trade for 110 V site supplies.
"""

from __future__ import annotations

from typing import Literal

from .checks import fail, require_positive
from .devices import Device, OperatingCurrent, operating_current
from .disconnection import DisconnectionTime, normalise_earthing
from .fault_loop import CMIN_LOW_VOLTAGE

SupplySystem = Literal["standard", "rlv_single_phase_cte", "rlv_three_phase_star"]
SUPPLY_SYSTEMS = ("standard", "rlv_single_phase_cte", "rlv_three_phase_star")
RLV_U0_V = {"rlv_single_phase_cte": 55.0, "rlv_three_phase_star": 63.5}
RLV_MAX_LINE_VOLTAGE_V = 110.0
RLV_DISCONNECTION_S = 5.0
RLV_SOURCE = ("BS 7671:2018, 411.8.3 (national rule for reduced low voltage systems, not in IEC 60364-4-41; "
              "clause numbers from memory): disconnection within 5 s, Zs <= Cmin x U0 / Ia")
RLV_NO_RCD_NOTE = ("reduced low voltage (BS 7671 411.8): the 30 mA RCD for additional protection (411.3.3) is not "
                   "required (from memory)")


def is_rlv(system: str) -> bool:
    return system in RLV_U0_V


def rlv_u0(system: str) -> float:
    """Line-to-earth voltage of an RLV system: 55 V centre-tapped single-phase, 63.5 V three-phase star."""
    if system not in RLV_U0_V:
        raise fail("invalid-input", ("system",), f"{system!r} is not a reduced-low-voltage system.",
                   "Use rlv_single_phase_cte or rlv_three_phase_star.", "not an RLV system")
    return RLV_U0_V[system]


def rlv_disconnection_rule(system: str, earthing: str, rated_current_a: float) -> DisconnectionTime:
    """The 5 s limit of BS 7671 411.8.3 for an RLV circuit, in the same record as Table 41.1's times."""
    u0 = rlv_u0(system)
    rating = require_positive(rated_current_a, ("rated_current",), "the rated current")
    kind = "single-phase, centre tap earthed" if system == "rlv_single_phase_cte" else "three-phase, star point earthed"
    return DisconnectionTime(
        time_s=RLV_DISCONNECTION_S, earthing=normalise_earthing(earthing), u0_v=u0, ac=True,
        circuit_kind="socket_outlets", rated_current_a=rating, edition="BS 7671:2018", source=RLV_SOURCE,
        table_id=None, note=f"reduced low voltage, 110 V between lines, {kind}: U0 = {u0:g} V; {RLV_NO_RCD_NOTE}",
    )


RLV_RCD_LIMIT_V = 50.0
RLV_RCD_SOURCE = "BS 7671:2018, 411.8.3 (from memory): an RCD protecting an RLV circuit needs Zs x IΔn <= 50 V"


def rlv_rcd_max_zs(rated_residual_current_a: float) -> float:
    """Largest Zs for an RCD on an RLV circuit, 50 V / IΔn (stricter than Cmin x U0 / IΔn at U0 = 55 V)."""
    return RLV_RCD_LIMIT_V / require_positive(rated_residual_current_a, ("rcd",), "IΔn")


def rlv_max_zs(device: Device, system: str, cmin: float = CMIN_LOW_VOLTAGE) -> tuple[float, OperatingCurrent]:
    """Maximum earth-fault loop impedance of an RLV circuit: Zs,max = Cmin x U0 / Ia(5 s) (BS 7671 411.8.3)."""
    op = operating_current(device, RLV_DISCONNECTION_S)
    return cmin * rlv_u0(system) / op.current_a, op
