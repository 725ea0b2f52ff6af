"""Result records of a lead-chain analysis (frozen dataclasses, SI floats)."""

from __future__ import annotations

from dataclasses import dataclass

from ..steps import Step  # noqa: F401  (re-exported: results carry their steps)

from service.core.protection import DisconnectionTime, EarthFaultCheck

from .plug_fuses import PlugFuseFaultCredit, PlugFuseOverload
from .ratings import LeadRating


@dataclass(frozen=True, slots=True)
class LeadReport:
    index: int
    name: str
    size_label: str
    length_m: float
    current_a: float
    input_voltage_v: float
    output_voltage_v: float
    drop_v: float
    drop_pct: float  # of the nominal voltage
    loss_w: float
    conductor_temperature_c: float
    rating: LeadRating
    loading_pct: float | None  # current / effective rating; None: not rated at this ambient
    overload_device: str | None  # the smallest overcurrent device upstream, e.g. "plug fuse 13 A"
    overload_device_rating_a: float | None
    overload_protected: bool | None  # In <= Iz (IEC 60364-4-43 433.1); None when no device is known
    problems: tuple[str, ...]
    plug_fuse: PlugFuseOverload | None = None  # the lead's own BS 1362 plug fuse and how it meets the current

    @property
    def passes(self) -> bool:
        return not self.problems


@dataclass(frozen=True, slots=True)
class HeatingReport:
    energy_j: float
    time_at_delivered_power_s: float
    time_at_rated_power_s: float


@dataclass(frozen=True, slots=True)
class ApplianceReport:
    index: int
    name: str
    outlet: int
    voltage_v: float
    current_a: float
    power_w: float
    power_pct_of_rated: float
    drop_from_socket_pct: float
    heating: HeatingReport | None
    energy_kwh_per_year: float | None
    cost_per_year: float | None


@dataclass(frozen=True, slots=True)
class FaultReport:
    line_neutral_loop_ohm: float  # at the far end, conductors at the fault temperature
    prospective_short_circuit_a: float  # U0 / Z(line-neutral) at the far end
    earth_loop_ohm: float | None  # Zs at the far end; None when the socket's line-earth impedance is not known
    disconnection: DisconnectionTime | None
    earth_fault: EarthFaultCheck | None
    conductor_temperature_c: float
    problems: tuple[str, ...]
    plug_fuse_credit: PlugFuseFaultCredit | None = None  # the far-end earth fault as the fastest plug fuse sees it


@dataclass(frozen=True, slots=True)
class LengthLimit:
    """The longest single lead of one type feeding every appliance at its end."""

    lead_indices: tuple[int, ...]  # the chain's leads of this type
    size_label: str
    by_voltage_drop_m: float | None  # None: no limit found within MAX_SEARCH_LENGTH_M
    by_disconnection_m: float | None  # None: not assessed (no device, or Zs unknown)
    greatest_m: float | None
    governed_by: str | None


@dataclass(frozen=True, slots=True)
class ChainTotals:
    socket_voltage_v: float
    lowest_appliance_voltage_v: float
    total_drop_v: float
    total_drop_pct: float
    drop_limit_pct: float
    drop_complies: bool
    loss_w: float
    delivered_w: float
    supply_current_a: float
    loss_kwh_per_year: float | None
    loss_cost_per_year: float | None
    delivered_kwh_per_year: float | None


@dataclass(frozen=True, slots=True)
class ChainReport:
    leads: tuple[LeadReport, ...]
    appliances: tuple[ApplianceReport, ...]
    totals: ChainTotals
    fault: FaultReport
    length_limits: tuple[LengthLimit, ...]
    verdict: str  # "pass" or "fail"
    failed_checks: tuple[str, ...]
    recommendations: tuple[str, ...]
    steps: tuple[Step, ...]
    assumptions: tuple[str, ...]
    table_ids: tuple[str, ...]
    temperature_rounds: int
    temperatures_settled: bool
    solver_iterations: int
    max_kcl_residual_a: float
    power_balance_residual_va: float
