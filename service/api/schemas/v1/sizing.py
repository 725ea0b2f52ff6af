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
from service.core.sizing.codes import CHECK_CODES, GOVERNING_CODES
from service.units import (
    CURRENT,
    DEVICE_RATING,
    ELECTRODE_RESISTANCE,
    DISCONNECTION_TIME,
    LET_THROUGH_ENERGY,
    LOAD_VOLTAGE,
    FREQUENCY,
    IMPEDANCE,
    LENGTH,
    LENGTH_OR_ZERO,
    AC_POWER,
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


class SizingLoadIn(Strict):
    """The design current Ib, or the power it comes from."""

    phases: Annotated[Literal["single", "three"] | None, Meta(description=(
        "Single-phase, or balanced three-phase. IEC 60364: default single. NEC: implied by supply.system (a "
        "contradiction is refused)."))] = None
    design_current: quantity(CURRENT, "26 A", 26) | None = None  # type: ignore[valid-type]
    power: quantity(AC_POWER, "6 kW", "10 kVA", 6000) | None = None  # type: ignore[valid-type]
    voltage: quantity(LOAD_VOLTAGE, "230 V", "400 V") | None = None  # type: ignore[valid-type]
    power_factor: Annotated[Fraction, Meta(description=(
        "cos φ of the load, lagging. With an active power P (W): Ib = P / (U cos φ), or P / (√3 U cos φ); an apparent "
        "power S (VA) gives Ib = S / U, or S / (√3 U), whatever cos φ is."))] = 1.0
    efficiency: Annotated[Fraction, Meta(description=(
        "When the power given is the output (a motor's shaft power, in W); not with an apparent power."))] = 1.0
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
    formation: Annotated[Literal["trefoil", "flat_touching", "flat_spaced"] | None, Meta(description=(
        f"{IEC}: how single-core cables are laid: trefoil (two cables: touching), flat touching, or flat spaced one "
        "cable diameter apart. It sets the method F capacity column (flat_spaced takes the flat touching capacities, "
        "which are lower: conservative) and the reactance of the voltage drop for methods C, D1, D2 and F; methods "
        "A1 and B1 are in conduit or trunking (flat_spaced refused). Not used for multicore cables. Default "
        "trefoil."))] = None
    ambient_temperature: quantity(TEMPERATURE, "35 degC", 30) | None = None  # type: ignore[valid-type]
    ambient_medium: Annotated[Literal["air", "ground"] | None, Meta(description=(
        "Optional: what the ambient temperature is of. Methods D1 and D2 are in ground, all others in air; a "
        "contradiction is refused. Default ambient: 30 °C air, 20 °C ground."))] = None
    grouping: Annotated[GroupingIn | None, Meta(description=f"{IEC}: circuits grouped with this one.")] = None
    thermal_insulation_length: quantity(LENGTH_OR_ZERO, "0.2 m", 0) | None = None  # type: ignore[valid-type]
    soil_thermal_resistivity: quantity(SOIL_THERMAL_RESISTIVITY, "2.5 K*m/W", 2.5) | None = None  # type: ignore[valid-type]
    neutral: Annotated[bool, Meta(description=(
        "Three-phase: a neutral runs with the lines (for the metal mass, and the NEC raceway fill)."))] = True
    drop_temperature_basis: Annotated[Literal["maximum_operating", "estimated_from_load"] | None, Meta(description=(
        f"{IEC}: the conductor temperature of the voltage drop: maximum_operating (the insulation's maximum, "
        "conservative) or estimated_from_load (θ = θa + (θmax − θa)(Ib/Iz)² for each size). The earth-fault loop "
        "is always at the maximum. Default maximum_operating."))] = None
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
    parallel_raceways: Annotated[Literal["separate", "shared"] | None, Meta(description=(
        f"{NEC}: where conductors in parallel (310.10(G)) run, when one conductor per line is not enough: each set "
        "in its own raceway or cable with its own full-size EGC (250.122(F)(1)(b)), or all sets in one raceway, where "
        "every current-carrying conductor counts for the adjustment of 310.15(C)(1) (current_carrying_conductors "
        "then counts one set) and one EGC runs with them. Default separate."))] = None


class VerifyCircuitIn(CircuitIn, kw_only=True):
    size: ConductorSizeField
    parallel_sets: Annotated[Annotated[int, Meta(ge=1, le=20)] | None, Meta(description=(
        "Conductors in parallel per line, each of the size given. IEC 60364: equal sets of the same size, material, "
        "length and route (IEC 60364-5-52 523.7), each counted as a circuit of the group. NEC: 310.10(G), 1/0 AWG and "
        "larger when more than one. Default 1."))] = None


class SizingDeviceIn(Strict):
    type: Annotated[Literal["B", "C", "D", "gG"] | None, Meta(description=(
        f"{IEC}: circuit-breaker type per IEC 60898-1 (B, C, D) or a gG fuse-link per IEC 60269-1. Default B. "
        "NEC: a fuse or inverse-time breaker of a Table 240.6(A) rating, no type."))] = None
    rated_current: quantity(DEVICE_RATING, "32 A", 32) | None = None  # type: ignore[valid-type]
    """Leave out to let the service pick the smallest standard rating at least Ib."""
    breaking_capacity: quantity(CURRENT, "6 kA", 6000) | None = None  # type: ignore[valid-type]
    """IEC 60364 only: the rated breaking capacity (Icn of an IEC 60898-1 circuit-breaker, the rated breaking
    capacity of a gG fuse-link), checked against the prospective fault current (434.5.1). Default: 6 kA for a
    circuit-breaker, 50 kA for a gG fuse-link (common practice, stated in the answer)."""
    energy_class: Annotated[Literal[1, 2, 3] | None, Meta(description=(
        f"{IEC}: energy-limiting class of a type B or C circuit-breaker up to 32 A (EN 60898-1 Annex ZA), for the "
        "let-through energy of faults at the origin. Default: none assumed (the short-circuit withstand is then "
        "checked only where the bound I² x 0.1 s suffices, else reported as not assessed)."))] = None
    fuse_system: Annotated[Literal["iec60269_1", "bs88_2"] | None, Meta(description=(
        f"{IEC}, gG fuse-links: iec60269_1 (any gG fuse-link: the band between the IEC 60269-1 gates) or bs88_2 "
        "(BS 88-2 fuse systems E and G: the published 0.4 s operating currents refine the band). Default "
        "iec60269_1."))] = None


class SizingRcdIn(Strict):
    rated_residual_current: quantity(RESIDUAL_CURRENT, "30 mA", 0.03)  # type: ignore[valid-type]


class ProtectionIn(Strict):
    device: SizingDeviceIn = SizingDeviceIn()
    rcd: SizingRcdIn | None = None
    required_disconnection_time: quantity(DISCONNECTION_TIME, "0.4 s", 0.4) | None = None  # type: ignore[valid-type]
    circuit_kind: Annotated[Literal["socket_outlets", "fixed_equipment", "distribution"] | None, Meta(description=(
        f"{IEC}: sets the required disconnection time with the earthing system (IEC 60364-4-41 411.3.2) when none "
        "is given. Default fixed_equipment."))] = None
    let_through_energy: quantity(LET_THROUGH_ENERGY, "25000 A^2*s", 25000) | None = None  # type: ignore[valid-type]
    """The device's let-through I²t at the prospective fault current (maker's data), for the short-circuit check."""
    interrupting_rating: quantity(CURRENT, "22 kA", 22000) | None = None  # type: ignore[valid-type]
    """NEC only: the device's interrupting rating at the system voltage (110.9), checked against
    supply.available_fault_current. Default 10 kA, a rating common for molded-case breakers (common practice)."""


class SizingSupplyIn(Strict, kw_only=True):
    """IEC 60364: u0, earthing, ze (required), fault current, frequency, electrode. NEC: system."""

    u0: quantity(VOLTAGE, "230 V", 230) | None = None  # type: ignore[valid-type]
    earthing: Annotated[Literal["TN-S", "TN-C-S", "TT"] | None, Meta(
        description=f"{IEC}: earthing system. Default TN-C-S.")] = None
    ze: quantity(IMPEDANCE, "0.35 ohm", 0.35) | None = None  # type: ignore[valid-type]
    prospective_fault_current: quantity(CURRENT, "6 kA", 6000) | None = None  # type: ignore[valid-type]
    frequency: quantity(FREQUENCY, "50 Hz", 50) | None = None  # type: ignore[valid-type]
    electrode_resistance: quantity(ELECTRODE_RESISTANCE, "60 ohm", 60) | None = None  # type: ignore[valid-type]
    available_fault_current: quantity(CURRENT, "14 kA", 14000) | None = None  # type: ignore[valid-type]
    """NEC only: the fault current available at the device's line terminals, for 110.9. Left out, the interrupting
    rating is not assessed (the answer says so in its cautions)."""
    system: Annotated[Literal["120V", "240V", "277V", "208Y/120V", "480Y/277V"] | None, Meta(description=(
        f"{NEC}, and required there: the nominal system and circuit. 120V (line and neutral), 240V (two lines of "
        "120/240 V), 277V (line and neutral of 480Y/277 V), single-phase; 208Y/120V, 480Y/277V three-phase, 60 Hz."))] = None


class SizingLimitsIn(Strict):
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
    kind: Annotated[Literal["cable_core", "separate_insulated", "bare_on_cable_covering", "bare"] | None, Meta(
        description=(
            f"{IEC}: what the protective conductor is, which sets its k (IEC 60364-5-54 Tables A.54.4, A.54.2, "
            "A.54.3, A.54.5) and, for a separate conductor, the minimum of 543.1.3. Default cable_core in every "
            "mode (a reduced core of the same cable, as in flat twin-and-earth cable, with mode given): its k is the "
            "lowest of the four tables, so the default never overstates the withstand; a separate conductor must "
            "be described as one to be checked against 543.1.3."))] = None
    mechanically_protected: Annotated[bool | None, Meta(description=(
        f"{IEC}, a separate protective conductor: protected against mechanical damage (543.1.3: copper 2.5 mm², "
        "else 4 mm²; aluminium 16 mm²). Default: not protected."))] = None


class SizingRequest(Strict, kw_only=True):
    regime: Annotated[Literal["iec60364", "nec"], Meta(description=(
        "The wiring standard: iec60364 (IEC 60364, the default) or nec (NFPA 70-2023). Same response shape; fields "
        "marked for the other regime are refused with a 422."))] = "iec60364"
    load: SizingLoadIn
    circuit: CircuitIn
    protection: ProtectionIn = ProtectionIn()
    supply: SizingSupplyIn
    limits: SizingLimitsIn = SizingLimitsIn()
    protective_conductor: ProtectiveConductorIn = ProtectiveConductorIn()


class VerifyRequest(SizingRequest, kw_only=True):
    circuit: VerifyCircuitIn


CheckCode = Annotated[Literal[CHECK_CODES], Meta(title="CheckCode", description=(  # type: ignore[valid-type]
    "Stable machine-readable code of a check, the same in every regime where the check exists (e.g. voltage_drop, "
    "earth_fault_loop, breaking_capacity); an app maps a failure by it, never by parsing a sentence."))]
GoverningCode = Annotated[Literal[GOVERNING_CODES], Meta(title="GoverningCheckCode", description=(  # type: ignore[valid-type]
    "The check that decided the size: the check code the next smaller size fails, or smallest_listed_size when even "
    "the smallest tabulated size passes."))]


class CheckOut(Out):
    name: CheckCode
    code: CheckCode
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


class NotAssessedOut(Out):
    name: Annotated[str, Meta(description="The check that could not be made (never read as a pass).")]
    reason: str


class SizeOut(Out):
    size_label: Annotated[str, Meta(description="One conductor's size (of each set, when parallel_sets > 1).")]
    parallel_sets: Annotated[int, Meta(description=(
        "Conductor sets in parallel per line (IEC 60364-5-52 523.7; NEC 310.10(G)); 1 for a single conductor. Size, "
        "area and tabulated capacity are per set; Iz, R1, R2, Zs, the drop and the mass are of the whole run."))]
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
    failing_checks: list[CheckCode]
    checks: list[CheckOut]
    r_ohm_per_m: Annotated[float | None, Meta(description=(
        "Line conductor's AC resistance per metre used for the voltage drop, at drop_conductor_temperature_degc "
        "(IEC 60364: skin and proximity effect per IEC 60287-1-1). None where no drop was solved or the regime "
        "gives none."))] = None
    x_ohm_per_m: Annotated[float | None, Meta(description=(
        "Line conductor's reactance per metre at the supply frequency, from the arrangement "
        "(line_impedance_basis)."))] = None
    z_ohm_per_m: Annotated[float | None, Meta(description="√(r² + x²) per conductor per metre.")] = None
    r_mv_per_a_m: Annotated[float | None, Meta(description=(
        "r as the tables' mV/A/m: x 2 single-phase (line and neutral), x √3 three-phase (line to line)."))] = None
    x_mv_per_a_m: Annotated[float | None, Meta(description="x as mV/A/m (as r_mv_per_a_m).")] = None
    z_mv_per_a_m: Annotated[float | None, Meta(description="z as mV/A/m (as r_mv_per_a_m).")] = None
    drop_conductor_temperature_degc: Annotated[float | None, Meta(description=(
        "Conductor temperature of the voltage drop (see drop_temperature_basis)."))] = None
    line_impedance_basis: Annotated[str | None, Meta(description=(
        "Arrangement, diameters and spacing the reactance comes from, and the AC resistance factors."))] = None
    not_assessed: Annotated[list[NotAssessedOut], Meta(description=(
        "Checks that could not be made for lack of data (such as the let-through energy of a device), with what "
        "would settle them; a design is compliant only on the checks listed in checks."))] = []


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
    verdict: Annotated[Literal["compliant", "not_fully_assessed", "non_compliant", "no_compliant_size",
                               "meets_requirements_not_guidance"], Meta(title="SizingVerdict", description=(
        "compliant: every check was made and passed. not_fully_assessed: every check made passed, but some could not "
        "be made for lack of data (chosen.not_assessed lists them with what would settle them): not a pass. "
        "non_compliant (verify) or no_compliant_size (size): a check fails. NEC verify also "
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
    governing_check: GoverningCode | None
    rejected: list[SizeOut]
    binding_checks: list[CheckCode]
    ways_out: list[str]
    raceway: Annotated[RacewayFillOut | None, Meta(description=(
        "NEC with a raceway given: the smallest trade size for the chosen size's conductors and EGC."))]
    notes: CalculationNotes
    drop_temperature_basis: Annotated[str | None, Meta(description=(
        "IEC 60364: the conductor temperature basis of the voltage drop, maximum_operating or estimated_from_load "
        "(circuit.drop_temperature_basis). None for the NEC (Chapter 9 Table 9 at 75 °C)."))] = None
