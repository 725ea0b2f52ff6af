"""Schemas of POST /v1/conductors/size and POST /v1/conductors/verify (IEC 60364 or NEC conductor sizing).

One request shape for both regimes: fields that belong to one regime only are
optional (``None`` when left out, so the edge can tell a field given from a
default) and the edge refuses, with a 422 naming it, a field given for the
other regime.  Defaults of a regime's own fields are applied at the edge and
stated in each field's description.
"""

from __future__ import annotations

from typing import Annotated, Literal

from msgspec import Meta

from service.api.schemas.v1.common import CalculationNotes, ConductorSizeField, MaterialField, Out, Strict, quantity
from service.units import (
    CURRENT,
    DISCONNECTION_TIME,
    LET_THROUGH_ENERGY,
    FREQUENCY,
    IMPEDANCE,
    LENGTH,
    LENGTH_OR_ZERO,
    POWER,
    RESIDUAL_CURRENT,
    SOIL_THERMAL_RESISTIVITY,
    TEMPERATURE,
    VOLTAGE,
)

Method = Annotated[Literal["A1", "A2", "B1", "B2", "C", "D1", "D2", "E", "F"], Meta(description=(
    "Reference installation method of IEC 60364-5-52 Table B.52.1: A1/A2 in conduit in a thermally insulated wall "
    "(single-core / multicore), B1/B2 in conduit on a wall (single-core / multicore), C clipped direct, D1 in ducts in "
    "the ground, D2 direct in the ground, E multicore in free air, F single-core in free air (copper only)."))]
Fraction = Annotated[float, Meta(gt=0.0, le=1.0)]
IEC = "IEC 60364 only"
NEC = "NEC only"
RACEWAY_PATTERN = "^(emt|rmc|pvc_40|pvc_80)$"
CONDUCTOR_TYPE_PATTERN = "^(TW|THW|THW-2|THHN|THWN|THWN-2|XHHW|XHHW-2)$"
RacewayField = Annotated[str, Meta(pattern=RACEWAY_PATTERN, description=(
    "Raceway type (NEC Chapter 9 Table 4): emt (Article 358), rmc (Article 344), pvc_40 or pvc_80 (Article 352, "
    "Schedule 40 or 80)."))]
ConductorTypeField = Annotated[str, Meta(pattern=CONDUCTOR_TYPE_PATTERN, description=(
    "Insulated conductor type (NEC Table 310.4(A)); areas from Chapter 9 Table 5."))]


class LoadIn(Strict):
    """The design current Ib, or the power it comes from."""

    phases: Annotated[Literal["single", "three"] | None, Meta(description=(
        "Single-phase, or balanced three-phase. IEC 60364: default single. NEC: implied by supply.system (a "
        "contradiction is refused)."))] = None
    design_current: quantity(CURRENT, "26 A", 26) | None = None  # type: ignore[valid-type]
    power: quantity(POWER, "6 kW", 6000) | None = None  # type: ignore[valid-type]
    voltage: quantity(VOLTAGE, "230 V", "400 V") | None = None  # type: ignore[valid-type]
    power_factor: Annotated[Fraction, Meta(description="cos φ of the load, lagging.")] = 1.0
    efficiency: Annotated[Fraction, Meta(description="When the power given is the output (a motor's shaft power).")] = 1.0
    third_harmonic_content: Annotated[Annotated[float, Meta(ge=0.0, le=100.0)] | None, Meta(description=(
        f"{IEC}: third-harmonic content of the line current, in %. Three-phase circuits with a neutral: the neutral "
        "carries 3 x content x Ib, and IEC 60364-5-52 Annex E Table E.52.1 derates the cable (15 to 33 %: factor "
        "0.86 on the line current) or sizes it on the neutral current (above 33 %: check neutral_ampacity). "
        "Default: not given, taken below 15 % (no reduction), said in the assumptions."))] = None
    continuous_share: Annotated[Annotated[float, Meta(ge=0.0, le=1.0)] | None, Meta(description=(
        f"{NEC}: the share of the load that is continuous (maximum current for 3 h or more); conductor and device "
        "are sized for 125 % of it plus 100 % of the rest (210.19(A), 215.2). Default 1 (all continuous)."))] = None


class GroupingIn(Strict):
    circuits: Annotated[int, Meta(ge=1, le=1000, description="Loaded circuits in the group, this one included.")] = 1
    arrangement: Annotated[Literal["bunched", "single_layer_wall", "single_layer_ceiling", "perforated_tray",
                                   "ladder_or_cleats", "buried"], Meta(description=(
        "How the group is laid: IEC 60364-5-52 Table B.52.17 items (bunched, single layer on a wall or ceiling, on a "
        "perforated tray, on a ladder or cleats) or buried (Tables B.52.18 and B.52.19)."))] = "bunched"
    spacing: Annotated[Literal["touching", "one_cable_diameter", "0.125_m", "0.25_m", "0.5_m", "1.0_m"], Meta(
        description="Buried groups: the clearance between circuits.")] = "touching"


class CircuitIn(Strict):
    length: quantity(LENGTH, "25 m", "120 ft")  # type: ignore[valid-type]
    method: Annotated[Method | None, Meta(description=f"{IEC}, and required there: the reference method.")] = None
    material: MaterialField = "copper"
    insulation: Annotated[Literal["pvc_70", "xlpe_epr_90"] | None, Meta(
        description=f"{IEC}: PVC (conductor 70 °C) or XLPE/EPR (conductor 90 °C). Default pvc_70.")] = None
    cable: Annotated[Literal["multicore", "single_core"] | None, Meta(
        description=f"{IEC}: multicore cable or single-core cables. Default multicore.")] = None
    formation: Annotated[Literal["trefoil", "flat_touching"] | None, Meta(
        description=f"{IEC}: method F with three loaded conductors, trefoil or flat touching. Default trefoil.")] = None
    ambient_temperature: quantity(TEMPERATURE, "35 degC", 30) | None = None  # type: ignore[valid-type]
    ambient_medium: Annotated[Literal["air", "ground"] | None, Meta(description=(
        "Optional: what the ambient temperature is of. Methods D1 and D2 are in ground, all others in air; a "
        "contradiction is refused. Default ambient: 30 °C air, 20 °C ground."))] = None
    grouping: Annotated[GroupingIn | None, Meta(description=f"{IEC}: circuits grouped with this one.")] = None
    thermal_insulation_length: quantity(LENGTH_OR_ZERO, "0.2 m", 0) | None = None  # type: ignore[valid-type]
    soil_thermal_resistivity: quantity(SOIL_THERMAL_RESISTIVITY, "2.5 K*m/W", 2.5) | None = None  # type: ignore[valid-type]
    neutral: Annotated[bool, Meta(description=(
        "Three-phase: a neutral runs with the lines (for the metal mass, and the NEC raceway fill)."))] = True
    conductor_type: Annotated[ConductorTypeField | None, Meta(description=(
        f"{NEC}: insulated conductor type (Table 310.4(A)); its rating sets the ampacity column and its area "
        "(Chapter 9 Table 5) the raceway fill. Default THHN."))] = None
    insulation_rating: Annotated[Literal[60, 75, 90] | None, Meta(description=(
        f"{NEC}: insulation temperature rating in °C, at most the type's; the 90 °C column serves only as the base "
        "for correction and adjustment (110.14(C)). Default: the type's dry-location rating."))] = None
    termination_rating: Annotated[Literal[60, 75] | None, Meta(description=(
        f"{NEC}: temperature rating in °C of the equipment terminations. Default by 110.14(C)(1): 60 °C for "
        "circuits of 100 A or less, 75 °C above."))] = None
    raceway: Annotated[RacewayField | None, Meta(description=(
        f"{NEC}: the raceway, for Table 9 R and X (steel for emt and rmc, PVC for pvc_40 and pvc_80) and the fill "
        "of the chosen size. Default: none given (steel-conduit values, no fill)."))] = None
    current_carrying_conductors: Annotated[Annotated[int, Meta(ge=1, le=1000)] | None, Meta(description=(
        f"{NEC}: current-carrying conductors in the raceway or cable, this circuit's included (310.15(C)(1)). "
        "Default: this circuit's own (2 single-phase, 3 three-phase)."))] = None
    role: Annotated[Literal["branch", "feeder"] | None, Meta(description=(
        f"{NEC}: a branch circuit (210.19, 210.20) or a feeder (215.2, 215.3). Default branch."))] = None
    installation: Annotated[Literal["raceway_or_cable", "free_air"] | None, Meta(description=(
        f"{NEC}: not more than three current-carrying conductors in raceway, cable or earth (Table 310.16), or "
        "single conductors in free air (Table 310.17). Default raceway_or_cable."))] = None


class VerifyCircuitIn(CircuitIn, kw_only=True):
    size: ConductorSizeField
    parallel_sets: Annotated[int, Meta(ge=1, le=20, description=(
        f"{IEC}: the size runs in this many equal parallel sets (same size, material, length and route; IEC 60364-5-52 "
        "523.7), each counted as a circuit of the group. Default 1."))] = 1


class DeviceIn(Strict):
    type: Annotated[Literal["B", "C", "D", "gG"] | None, Meta(description=(
        f"{IEC}: circuit-breaker type per IEC 60898-1 (B, C, D) or a gG fuse-link per IEC 60269-1. Default B. "
        "NEC: a fuse or inverse-time breaker of a Table 240.6(A) rating, no type."))] = None
    rated_current: quantity(CURRENT, "32 A", 32) | None = None  # type: ignore[valid-type]
    """Leave out to let the service pick the smallest standard rating at least Ib."""


class RcdIn(Strict):
    rated_residual_current: quantity(RESIDUAL_CURRENT, "30 mA", 0.03)  # type: ignore[valid-type]


class ProtectionIn(Strict):
    device: DeviceIn = DeviceIn()
    rcd: RcdIn | None = None
    required_disconnection_time: quantity(DISCONNECTION_TIME, "0.4 s", 0.4) | None = None  # type: ignore[valid-type]
    circuit_kind: Annotated[Literal["socket_outlets", "fixed_equipment", "distribution"] | None, Meta(description=(
        f"{IEC}: sets the required disconnection time with the earthing system (IEC 60364-4-41 411.3.2) when none "
        "is given. Default fixed_equipment."))] = None
    let_through_energy: quantity(LET_THROUGH_ENERGY, "25000 A^2*s", 25000) | None = None  # type: ignore[valid-type]
    """The device's let-through I²t at the prospective fault current (maker's data), for the short-circuit check."""


class SupplyIn(Strict, kw_only=True):
    """IEC 60364: u0, earthing, ze (required), fault current, frequency, electrode. NEC: system."""

    u0: quantity(VOLTAGE, "230 V", 230) | None = None  # type: ignore[valid-type]
    earthing: Annotated[Literal["TN-S", "TN-C-S", "TT"] | None, Meta(
        description=f"{IEC}: earthing system. Default TN-C-S.")] = None
    ze: quantity(IMPEDANCE, "0.35 ohm", 0.35) | None = None  # type: ignore[valid-type]
    prospective_fault_current: quantity(CURRENT, "6 kA", 6000) | None = None  # type: ignore[valid-type]
    frequency: quantity(FREQUENCY, "50 Hz", 50) | None = None  # type: ignore[valid-type]
    electrode_resistance: quantity(IMPEDANCE, "60 ohm", 60) | None = None  # type: ignore[valid-type]
    system: Annotated[Literal["120V", "240V", "277V", "208Y/120V", "480Y/277V"] | None, Meta(description=(
        f"{NEC}, and required there: the nominal system and circuit. 120V (line and neutral), 240V (two lines of "
        "120/240 V), 277V (line and neutral of 480Y/277 V), single-phase; 208Y/120V, 480Y/277V three-phase, 60 Hz."))] = None


class LimitsIn(Strict):
    voltage_drop: Annotated[Annotated[float, Meta(gt=0.0, le=100.0)] | None, Meta(description=(
        "Voltage-drop limit in %. IEC 60364: of U0 from the origin of the installation; default from IEC 60364-5-52 "
        "Table G.52.1 by use and supply. NEC: of this circuit; default the 3 % of the informational notes "
        "(guidance), with 5 % for feeder plus branch."))] = None
    use: Annotated[Literal["lighting", "other"] | None, Meta(
        description=f"{IEC}: lighting or other uses (Table G.52.1). Default other.")] = None
    supply_kind: Annotated[Literal["public_lv", "private_lv"] | None, Meta(description=(
        f"{IEC}: type A (supplied from a public LV network) or type B (from a private LV supply), Table G.52.1. "
        "Default public_lv."))] = None
    upstream_drop: Annotated[float, Meta(ge=0.0, lt=100.0, description=(
        "Drop already used upstream (sub-main), in %: the circuit's drop is added to it."))] = 0.0


class ProtectiveConductorIn(Strict):
    mode: Annotated[Literal["same_as_line", "given", "minimum"] | None, Meta(description=(
        "Same size as the line conductors, a given size, or the minimum: IEC 60364-5-54 Table 54.2 (then checked "
        "adiabatically; default same_as_line), or the NEC's Table 250.122 increased per 250.122(B) (default "
        "minimum)."))] = None
    size: ConductorSizeField | None = None


class SizingRequest(Strict, kw_only=True):
    regime: Annotated[Literal["iec60364", "nec"], Meta(description=(
        "The wiring standard: iec60364 (IEC 60364, the default) or nec (NFPA 70-2023). Same response shape; fields "
        "marked for the other regime are refused with a 422."))] = "iec60364"
    load: LoadIn
    circuit: CircuitIn
    protection: ProtectionIn = ProtectionIn()
    supply: SupplyIn
    limits: LimitsIn = LimitsIn()
    protective_conductor: ProtectiveConductorIn = ProtectiveConductorIn()


class VerifyRequest(SizingRequest, kw_only=True):
    circuit: VerifyCircuitIn


class CheckOut(Out):
    name: str
    passes: bool
    value: float
    limit: float
    unit: str
    condition: str
    source: str
    detail: str
    obligation: Annotated[str, Meta(description=(
        "requirement (a rule of the standard) or guidance (an informational note, such as the NEC's voltage-drop "
        "percentages)."))]


class SizeOut(Out):
    size_label: str
    area_m2: float
    protective_conductor_size_label: str
    protective_conductor_area_m2: float
    tabulated_capacity_a: float
    capacity_basis: str
    iz_a: float
    voltage_drop_v: float | None
    voltage_drop_pct: float | None
    total_voltage_drop_pct: float | None
    zs_ohm: float | None
    earth_fault_current_a: float | None
    r1_ohm: float | None
    r2_ohm: float | None
    metal_mass_kg: float
    passes: bool
    failing_checks: list[str]
    checks: list[CheckOut]
    parallel_sets: Annotated[int, Meta(description=(
        "Equal conductor sets in parallel (IEC 60364-5-52 523.7); size, area and tabulated capacity are per set, Iz, "
        "R1, R2, Zs, the drop and the mass are of the whole run."))] = 1


class TradeSizeOut(Out):
    trade_size: str
    metric_designator: str
    internal_area_m2: float
    allowed_area_m2: float
    fill_pct: float
    fits: bool


class RacewayFillOut(Out):
    raceway: str
    raceway_name: str
    conductor_count: int
    conductor_area_m2: float
    fill_limit_pct: float
    trade_size: str | None
    chosen: TradeSizeOut | None
    considered: list[TradeSizeOut]


class DeviceOut(Out):
    type: str
    rated_current_a: float
    chosen_by_service: bool
    label: str
    conventional_current_a: float | None
    conventional_multiple: float | None
    conventional_source: str | None


class FactorOut(Out):
    name: str
    value: float
    basis: str
    source: str


class SizingResult(Out):
    verdict: Annotated[str, Meta(description=(
        "compliant, non_compliant (verify) or no_compliant_size (size); NEC verify also "
        "meets_requirements_not_guidance (only checks marked guidance fail, such as the voltage-drop notes)."))]
    regime: str
    design_current_a: float
    device: DeviceOut
    factors: list[FactorOut]
    factor_product: float
    required_tabulated_capacity_a: float
    voltage_drop_limit_pct: float
    voltage_drop_limit_source: str
    available_voltage_drop_pct: float
    disconnection_time_s: float | None
    disconnection_time_source: str | None
    chosen: SizeOut | None
    governing_check: str | None
    rejected: list[SizeOut]
    binding_checks: list[str]
    ways_out: list[str]
    raceway: Annotated[RacewayFillOut | None, Meta(description=(
        "NEC with a raceway given: the smallest trade size for the chosen size's conductors and EGC."))]
    notes: CalculationNotes
