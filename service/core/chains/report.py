"""Result records of a lead-chain analysis (frozen dataclasses, SI floats)."""

from __future__ import annotations

from dataclasses import dataclass

from ..steps import Step  # noqa: F401  (re-exported: results carry their steps)

from service.core.protection import DisconnectionTime, EarthFaultCheck, OperatingCurrent

from .codes import ChainCheck, Verdict, verdict_of
from .plug_fuses import PlugFuseFaultCredit, PlugFuseOverload
from .ratings import LeadRating


class _Judged:
    """A result with checks: its verdict follows from them (codes.verdict_of)."""

    __slots__ = ()
    checks: tuple[ChainCheck, ...]

    @property
    def verdict(self) -> Verdict:
        return verdict_of(self.checks)


@dataclass(frozen=True, slots=True)
class LeadReport(_Judged):
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
    overload_protected: bool | None  # In <= Iz and I2 <= 1.45 Iz (IEC 60364-4-43 433.1); None: not assessed
    problems: tuple[str, ...]
    checks: tuple[ChainCheck, ...] = ()
    plug_fuse: PlugFuseOverload | None = None  # the lead's own BS 1362 plug fuse and how it meets the current

    @property
    def passes(self) -> bool:
        return self.verdict == "pass"


@dataclass(frozen=True, slots=True)
class HeatingReport:
    energy_j: float
    time_at_delivered_power_s: float
    time_at_rated_power_s: float


@dataclass(frozen=True, slots=True)
class ApplianceReport(_Judged):
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
    checks: tuple[ChainCheck, ...] = ()


@dataclass(frozen=True, slots=True)
class LineNeutralFault:
    """A line-neutral fault at the far end against the origin's overcurrent device (an RCD does not see it)."""

    device: str
    cmin: float
    fault_current_a: float  # Cmin x U0 / Z(line-neutral), conductors at the fault temperature
    required_time_s: float
    operating: OperatingCurrent  # the current that clears it within required_time_s
    clearing_time_s: float | None  # the time the device is guaranteed to take at fault_current_a; None: not within 5 s
    clearing_basis: str | None
    complies: bool


@dataclass(frozen=True, slots=True)
class FaultReport(_Judged):
    line_neutral_loop_ohm: float  # at the far end, conductors at the fault temperature
    prospective_short_circuit_a: float  # U0 / Z(line-neutral) at the far end
    earth_loop_ohm: float | None  # Zs at the far end; None when the socket's line-earth impedance is not known
    disconnection: DisconnectionTime | None
    earth_fault: EarthFaultCheck | None
    conductor_temperature_c: float
    problems: tuple[str, ...]
    line_neutral: LineNeutralFault | None = None  # None: no overcurrent device given
    checks: tuple[ChainCheck, ...] = ()
    plug_fuse_credit: PlugFuseFaultCredit | None = None  # the far-end earth fault as the fastest plug fuse sees it


@dataclass(frozen=True, slots=True)
class LengthLimit:
    """The longest single lead of one type feeding every appliance at its end."""

    lead_indices: tuple[int, ...]  # the chain's leads of this type
    size_label: str
    by_voltage_drop_m: float | None  # None: no limit found within MAX_SEARCH_LENGTH_M
    by_overcurrent_earth_fault_m: float | None  # None: not assessed (no overcurrent device, or Zs unknown)
    by_rcd_earth_fault_m: float | None  # None: no RCD, or Zs unknown; the RCD sees earth faults only
    by_overcurrent_line_neutral_m: float | None  # None: no overcurrent device
    greatest_m: float | None  # the least of the limits that apply; None when none is known
    governed_by: str | None  # one of codes.LENGTH_ROUTES
    missing_inputs: tuple[str, ...] = ()  # routes not assessed for lack of these inputs: greatest_m may be too long


@dataclass(frozen=True, slots=True)
class ChainTotals:
    socket_voltage_v: float
    lowest_appliance_voltage_v: float
    total_drop_v: float
    total_drop_pct: float  # the chain's share: socket to the lowest appliance
    upstream_drop_pct: float  # the fixed wiring's, from the origin of the installation to the socket (given)
    drop_from_origin_pct: float  # upstream + the chain's share, what Table G.52.1 limits
    drop_limit_pct: float
    drop_complies: bool  # upstream drop + the chain's share within the limit
    loss_w: float
    delivered_w: float
    supply_current_a: float
    loss_kwh_per_year: float | None
    loss_cost_per_year: float | None
    delivered_kwh_per_year: float | None


@dataclass(frozen=True, slots=True)
class UnsuppliedAppliance:
    index: int
    name: str
    rated_power_w: float
    max_power_w: float | None  # the most the chain can deliver to it (None: not known)


@dataclass(frozen=True, slots=True)
class ChainReport:
    leads: tuple[LeadReport, ...]  # empty when the chain collapses (no operating point exists)
    appliances: tuple[ApplianceReport, ...]  # likewise
    totals: ChainTotals | None  # None when the chain collapses
    fault: FaultReport
    length_limits: tuple[LengthLimit, ...]
    verdict: Verdict
    failed_checks: tuple[str, ...]
    checks: tuple[ChainCheck, ...]  # the chain's own: voltage_drop_budget, supply_collapse
    missing_inputs: tuple[str, ...]  # what would let the checks not assessed be made
    unsupplied: tuple[UnsuppliedAppliance, ...]  # the appliances the chain cannot supply (collapse)
    recommendations: tuple[str, ...]
    steps: tuple[Step, ...]
    assumptions: tuple[str, ...]
    table_ids: tuple[str, ...]
    temperature_rounds: int
    temperatures_settled: bool
    solver_iterations: int
    max_kcl_residual_a: float
    power_balance_residual_va: float
