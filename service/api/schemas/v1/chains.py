"""Schemas of POST /v1/lead-chains/analyse: a socket, leads plugged end to end, appliances on their outlets."""

from __future__ import annotations

from typing import Annotated, Literal

from msgspec import Meta

from service.api.schemas.v1.common import (
    CalculationNotes,
    ConductorClassField,
    ConductorSizeField,
    MaterialField,
    Out,
    Strict,
    quantity,
)
from service.core.chains.codes import CHAIN_CHECK_CODES, LENGTH_ROUTES
from service.units import (
    AC_POWER,
    CURRENT,
    DEVICE_RATING,
    ELECTRODE_RESISTANCE,
    ENERGY,
    FREQUENCY,
    INDUCTIVE_REACTANCE,
    LENGTH,
    MASS,
    RESIDUAL_CURRENT,
    RESISTANCE,
    TEMPERATURE,
    TEMPERATURE_RISE,
    VOLTAGE,
)

Name = Annotated[str, Meta(min_length=1, max_length=80, description="A label of your own, echoed in the answer.")]


class LoopImpedanceIn(Strict):
    resistance: quantity(RESISTANCE, "0.45 ohm")  # type: ignore[valid-type]
    reactance: quantity(INDUCTIVE_REACTANCE, "0.05 ohm") = 0.0  # type: ignore[valid-type]


class ChainDeviceIn(Strict):
    type: Annotated[Literal["B", "C", "D", "gG"], Meta(
        description="Circuit-breaker curve per IEC 60898-1 (B, C, D) or a gG fuse-link per IEC 60269-1.")]
    rated_current: quantity(DEVICE_RATING, "16 A", 16)  # type: ignore[valid-type]


class ChainRcdIn(Strict):
    rated_residual_current: quantity(RESIDUAL_CURRENT, "30 mA", 0.03)  # type: ignore[valid-type]


class ChainSupplyIn(Strict):
    """The origin socket the first lead plugs into.

    Give the socket's line-neutral loop impedance, or its prospective fault current (then taken as resistive);
    and its earth-fault loop impedance (Ze at the socket), or the prospective earth-fault current, so the
    disconnection at the far end can be checked.
    """

    nominal_voltage: quantity(VOLTAGE, "230 V", 230) = 230.0  # type: ignore[valid-type]
    frequency: quantity(FREQUENCY, "50 Hz", 60) = 50.0  # type: ignore[valid-type]
    loop_impedance: LoopImpedanceIn | None = None
    prospective_fault_current: quantity(CURRENT, "1.2 kA") | None = None  # type: ignore[valid-type]
    earth_loop_impedance: LoopImpedanceIn | None = None
    prospective_earth_fault_current: quantity(CURRENT, "800 A") | None = None  # type: ignore[valid-type]
    earthing: Literal["TN-S", "TN-C-S", "TT"] = "TN-C-S"
    device: ChainDeviceIn | None = None
    rcd: ChainRcdIn | None = None
    electrode_resistance: quantity(ELECTRODE_RESISTANCE, "60 ohm") | None = None  # type: ignore[valid-type]
    ambient_temperature: quantity(TEMPERATURE, "25 degC", 30) = 30.0  # type: ignore[valid-type]
    system: Annotated[Literal["standard", "rlv_single_phase_cte", "rlv_three_phase_star"], Meta(description=(
        "The kind of supply. standard: U0 is nominal_voltage and IEC 60364-4-41 Table 41.1 sets the "
        "disconnection time. rlv_single_phase_cte / rlv_three_phase_star: a reduced-low-voltage site supply "
        "(110 V between lines, nominal_voltage at most 110 V) from a transformer with an earthed centre tap "
        "(U0 = 55 V) or star point (U0 = 63.5 V); disconnection within 5 s and no 30 mA RCD required, by the "
        "national rule BS 7671:2018 411.8."))] = "standard"


class ReelIn(Strict):
    wound: Annotated[Literal["none", "partly", "fully"], Meta(
        description="How much cable is still on the drum: none (fully unwound), partly or fully.")]
    layers_on_drum: Annotated[int, Meta(ge=0, le=50, description="Layers of cable still on the drum, if known.")] | None = None
    marked_wound_rating: quantity(CURRENT, "5 A") | None = None  # type: ignore[valid-type]


class LeadIn(Strict, kw_only=True):
    name: Name | None = None
    length: quantity(LENGTH, "25 m", "50 ft")  # type: ignore[valid-type]
    size: ConductorSizeField
    material: MaterialField = "copper"
    conductor_class: ConductorClassField = 5
    marked_rating: quantity(CURRENT, "13 A") | None = None  # type: ignore[valid-type]
    reel: ReelIn | None = None
    plug_fuse: Annotated[quantity(CURRENT, "13 A") | None, Meta(description=(  # type: ignore[valid-type]
        "Rating of the BS 1362 cartridge fuse in this lead's plug: 1, 2, 3, 5, 7, 10 or 13 A (13 A is the "
        "standard's maximum); other values are refused."))] = None


class HeatingTaskIn(Strict):
    """The energy a heating task needs: directly, or to warm a mass of water by a temperature rise."""

    energy: quantity(ENERGY, "1.2 kWh") | None = None  # type: ignore[valid-type]
    water_mass: quantity(MASS, "20 kg") | None = None  # type: ignore[valid-type]
    temperature_rise: quantity(TEMPERATURE_RISE, "80 K", "80 degC") | None = None  # type: ignore[valid-type]


class ApplianceIn(Strict, kw_only=True):
    name: Name | None = None
    outlet: Annotated[int, Meta(ge=0, description=(
        "The lead whose outlet it is plugged into, counting from 0 for the lead in the socket. "
        "Leave out for the last lead's outlet."))] | None = None
    rated_power: quantity(AC_POWER, "2.8 kW", "1.2 kVA", 1500)  # type: ignore[valid-type]
    rated_voltage: quantity(VOLTAGE, "230 V") = 230.0  # type: ignore[valid-type]
    power_factor: Annotated[float, Meta(gt=0, le=1, description=(
        "cos φ at rated voltage; with an apparent rated_power (VA) the active power is P = S cos φ."))] = 1.0
    leading: bool = False
    model: Annotated[Literal["constant_impedance", "constant_current", "constant_power"], Meta(description=(
        "How the appliance follows its voltage: constant_impedance for heaters, urns and filament lamps; "
        "constant_power for regulated electronics (chargers, LED drivers); constant_current in between."))] = \
        "constant_impedance"
    heating: HeatingTaskIn | None = None
    hours_per_year: Annotated[float, Meta(ge=0, le=8784, description="Hours of use a year, for energy and cost.")] | None = None


class ChainLimitsIn(Strict):
    voltage_drop: Annotated[float, Meta(gt=0, le=50, description=(
        "Largest drop from the socket to any appliance, in % of the nominal voltage. Default 5 %: IEC 60364-5-52 "
        "Annex G, Table G.52.1, uses other than lighting."))] = 5.0
    tariff_per_kwh: Annotated[float, Meta(ge=0, le=1000, description="Energy price per kWh, in your currency.")] | None = None
    hours_per_year: Annotated[float, Meta(ge=0, le=8784, description=(
        "Hours a year the whole chain runs as given (for the leads' losses, and for appliances without their own)."))] | None = None
    upstream_voltage_drop: Annotated[float, Meta(ge=0, le=50, description=(
        "Drop already used in the fixed wiring, from the origin of the installation to the socket, in % of the "
        "nominal voltage. The limit counts from the origin (IEC 60364-5-52 Table G.52.1). Left out: taken as 0 %, "
        "and the answer's assumptions say so."))] | None = None


class LeadChainRequest(Strict, kw_only=True):
    supply: ChainSupplyIn
    leads: Annotated[list[LeadIn], Meta(description=(
        "From the socket outwards; at most AMPLINE_MAX_CHAIN_LEADS (default 50), more gets 422."))]
    appliances: Annotated[list[ApplianceIn], Meta(description=(
        "At most AMPLINE_MAX_CHAIN_APPLIANCES (default 100), more gets 422."))] = []
    limits: ChainLimitsIn = ChainLimitsIn()


# -- response ---------------------------------------------------------------

ChainCheckCode = Annotated[Literal[CHAIN_CHECK_CODES], Meta(title="ChainCheckCode", description=(  # type: ignore[valid-type]
    "Stable machine-readable code of a lead-chain check: act on it, never on the text in problems."))]
Verdict = Annotated[Literal["pass", "fail", "not_assessed"], Meta(description=(
    "pass only when every check was made and passed; not_assessed when none failed but some could not be made "
    "(missing_inputs names what would let them be made); fail when any failed."))]
LengthRoute = Annotated[Literal[LENGTH_ROUTES], Meta(title="LengthLimitRoute", description=(  # type: ignore[valid-type]
    "What sets the greatest usable length: voltage drop, or a protection route."))]


class ChainCheckOut(Out):
    code: ChainCheckCode
    passes: Annotated[bool | None, Meta(description="null: not assessed (see missing_inputs)")]
    value: float | None
    limit: float | None
    unit: str
    source: str
    missing_inputs: list[str]

class LeadRatingOut(Out):
    base_a: float
    base_source: str
    ambient_factor: float | None
    ambient_note: str
    drum_factor: float | None
    drum_note: str | None
    marked_wound_rating_used: bool
    effective_a: float | None


class PlugFuseOut(Out):
    """How the lead's BS 1362 plug fuse meets the current it carries."""

    rated_current_a: float
    non_fusing_current_a: float
    fusing_current_a: float
    conventional_time_s: float
    response: Annotated[Literal["carries", "holds", "may_open", "opens"], Meta(description=(
        "carries: within its rating; holds: above its rating but not above the non-fusing current, so it does "
        "not open within the conventional time; may_open: between the non-fusing and fusing currents; opens: "
        "at or above the fusing current, within opens_within_s at most."))]
    opens_within_s: float | None
    source: str


class LeadOut(Out):
    index: int
    name: str
    size_label: str
    length_m: float
    current_a: float
    input_voltage_v: float
    output_voltage_v: float
    drop_v: float
    drop_pct: float
    loss_w: float
    conductor_temperature_degc: float
    rating: LeadRatingOut
    loading_pct: float | None
    overload_device: str | None
    overload_protected: bool | None
    verdict: Verdict
    checks: list[ChainCheckOut]
    problems: list[str]
    plug_fuse: PlugFuseOut | None = None


class HeatingOut(Out):
    energy_j: float
    time_at_delivered_power_s: float
    time_at_rated_power_s: float
    extra_time_s: float


class ApplianceOut(Out):
    index: int
    name: str
    outlet: int
    voltage_v: float
    current_a: float
    power_w: float
    power_pct_of_rated: float
    drop_from_socket_pct: float
    heating: HeatingOut | None
    energy_kwh_per_year: float | None
    cost_per_year: float | None
    verdict: Verdict
    checks: list[ChainCheckOut]


class LineNeutralFaultOut(Out):
    device: str
    voltage_factor_cmin: float
    fault_current_a: float
    required_disconnection_time_s: float
    disconnecting_current_a: float
    disconnecting_basis: str
    clearing_time_s: Annotated[float | None, Meta(description=(
        "The time the device is guaranteed to take at this current; null: not guaranteed to disconnect within 5 s."))]
    disconnects: bool


class EarthFaultOut(Out):
    required_disconnection_time_s: float | None
    disconnection_source: str | None
    voltage_factor_cmin: float | None
    voltage_factor_source: str | None
    earth_fault_current_a: float | None
    disconnecting_current_a: float | None
    disconnecting_device: str | None
    max_earth_loop_ohm: float | None
    disconnects: bool | None
    route: str | None


class PlugFuseEarthFaultOut(Out):
    """The far-end earth fault as the fastest plug fuse in its path clears it (assessed when the origin device
    alone does not show disconnection in time)."""

    device: str
    earth_fault_current_a: float
    required_disconnection_time_s: float
    disconnecting_current_a: float | None
    max_earth_loop_ohm: float | None
    clearing_time_s: float | None
    disconnects: bool
    basis: str
    source: str


class FaultOut(Out):
    line_neutral_loop_ohm: float
    prospective_short_circuit_a: float
    earth_loop_ohm: float | None
    conductor_temperature_degc: float
    earth_fault: EarthFaultOut
    line_neutral: LineNeutralFaultOut | None
    verdict: Verdict
    checks: list[ChainCheckOut]
    problems: list[str]
    earth_fault_voltage_v: float | None = None
    plug_fuse_earth_fault: PlugFuseEarthFaultOut | None = None


class LengthLimitOut(Out):
    size_label: str
    lead_indices: list[int]
    by_voltage_drop_m: float | None
    by_overcurrent_earth_fault_m: float | None
    by_rcd_earth_fault_m: Annotated[float | None, Meta(description=(
        "The RCD route sees earth faults only: it never sets the limit for a line-neutral fault."))]
    by_overcurrent_line_neutral_m: float | None
    greatest_m: float | None
    governed_by: LengthRoute | None
    missing_inputs: Annotated[list[str], Meta(description=(
        "Routes not assessed for lack of these inputs: greatest_m may then be longer than is safe."))]


class ChainTotalsOut(Out):
    socket_voltage_v: float
    lowest_appliance_voltage_v: float
    total_drop_v: float
    total_drop_pct: Annotated[float, Meta(description="The chain's share: socket to the lowest appliance.")]
    upstream_drop_pct: float
    drop_from_origin_pct: Annotated[float, Meta(description="upstream + the chain's share, against drop_limit_pct.")]
    drop_limit_pct: float
    drop_complies: bool
    loss_w: float
    delivered_w: float
    supply_current_a: float
    loss_kwh_per_year: float | None
    loss_cost_per_year: float | None
    delivered_kwh_per_year: float | None


class SolverOut(Out):
    temperature_rounds: int
    temperatures_settled: bool
    newton_solves: int
    max_kcl_residual_a: float
    power_balance_residual_va: float


class UnsuppliedApplianceOut(Out):
    index: int
    name: str
    rated_power_w: float
    max_power_w: Annotated[float | None, Meta(description="The most the chain can deliver to it; null: not known.")]


class LeadChainResult(Out):
    verdict: Verdict
    missing_inputs: list[str]
    failed_checks: list[str]
    checks: Annotated[list[ChainCheckOut], Meta(description=(
        "The chain's own checks: voltage_drop_budget, or supply_collapse when it cannot supply its appliances."))]
    unsupplied_appliances: list[UnsuppliedApplianceOut]
    leads: Annotated[list[LeadOut], Meta(description="Empty when the chain collapses (no operating point).")]
    appliances: list[ApplianceOut]
    totals: ChainTotalsOut | None
    fault: FaultOut
    length_limits: list[LengthLimitOut]
    recommendations: list[str]
    solver: SolverOut | None
    notes: CalculationNotes
