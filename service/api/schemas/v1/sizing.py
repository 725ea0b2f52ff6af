"""Schemas of POST /v1/conductors/size and POST /v1/conductors/verify (IEC 60364 conductor sizing)."""

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


class LoadIn(Strict):
    """The design current Ib, or the power it comes from."""

    phases: Annotated[Literal["single", "three"], Meta(description="Single-phase, or balanced three-phase.")] = "single"
    design_current: quantity(CURRENT, "26 A", 26) | None = None  # type: ignore[valid-type]
    power: quantity(POWER, "6 kW", 6000) | None = None  # type: ignore[valid-type]
    voltage: quantity(VOLTAGE, "230 V", "400 V") | None = None  # type: ignore[valid-type]
    power_factor: Annotated[Fraction, Meta(description="cos φ of the load, lagging.")] = 1.0
    efficiency: Annotated[Fraction, Meta(description="When the power given is the output (a motor's shaft power).")] = 1.0


class GroupingIn(Strict):
    circuits: Annotated[int, Meta(ge=1, le=1000, description="Loaded circuits in the group, this one included.")] = 1
    arrangement: Annotated[Literal["bunched", "single_layer_wall", "single_layer_ceiling", "perforated_tray",
                                   "ladder_or_cleats", "buried"], Meta(description=(
        "How the group is laid: IEC 60364-5-52 Table B.52.17 items (bunched, single layer on a wall or ceiling, on a "
        "perforated tray, on a ladder or cleats) or buried (Tables B.52.18 and B.52.19)."))] = "bunched"
    spacing: Annotated[Literal["touching", "one_cable_diameter", "0.125_m", "0.25_m", "0.5_m", "1.0_m"], Meta(
        description="Buried groups: the clearance between circuits.")] = "touching"


class CircuitIn(Strict):
    length: quantity(LENGTH, "25 m", 25)  # type: ignore[valid-type]
    method: Method
    material: MaterialField = "copper"
    insulation: Annotated[Literal["pvc_70", "xlpe_epr_90"], Meta(
        description="PVC (conductor 70 °C) or XLPE/EPR (conductor 90 °C).")] = "pvc_70"
    cable: Annotated[Literal["multicore", "single_core"], Meta(description="Multicore cable or single-core cables.")] = "multicore"
    formation: Annotated[Literal["trefoil", "flat_touching"], Meta(
        description="Method F with three loaded conductors: trefoil or flat touching.")] = "trefoil"
    ambient_temperature: quantity(TEMPERATURE, "35 degC", 30) | None = None  # type: ignore[valid-type]
    ambient_medium: Annotated[Literal["air", "ground"] | None, Meta(description=(
        "Optional: what the ambient temperature is of. Methods D1 and D2 are in ground, all others in air; a "
        "contradiction is refused. Default ambient: 30 °C air, 20 °C ground."))] = None
    grouping: GroupingIn = GroupingIn()
    thermal_insulation_length: quantity(LENGTH_OR_ZERO, "0.2 m", 0) = 0.0  # type: ignore[valid-type]
    soil_thermal_resistivity: quantity(SOIL_THERMAL_RESISTIVITY, "2.5 K*m/W", 2.5) | None = None  # type: ignore[valid-type]
    neutral: Annotated[bool, Meta(description="Three-phase: a neutral runs with the lines (for the metal mass).")] = True


class VerifyCircuitIn(CircuitIn, kw_only=True):
    size: ConductorSizeField


class DeviceIn(Strict):
    type: Annotated[Literal["B", "C", "D", "gG"], Meta(
        description="Circuit-breaker type per IEC 60898-1 (B, C, D) or a gG fuse-link per IEC 60269-1.")] = "B"
    rated_current: quantity(CURRENT, "32 A", 32) | None = None  # type: ignore[valid-type]
    """Leave out to let the service pick the smallest standard rating at least Ib."""


class RcdIn(Strict):
    rated_residual_current: quantity(RESIDUAL_CURRENT, "30 mA", 0.03)  # type: ignore[valid-type]


class ProtectionIn(Strict):
    device: DeviceIn = DeviceIn()
    rcd: RcdIn | None = None
    required_disconnection_time: quantity(DISCONNECTION_TIME, "0.4 s", 0.4) | None = None  # type: ignore[valid-type]
    circuit_kind: Annotated[Literal["socket_outlets", "fixed_equipment", "distribution"], Meta(description=(
        "Sets the required disconnection time with the earthing system (IEC 60364-4-41 411.3.2) when none is given."))] = "fixed_equipment"
    let_through_energy: quantity(LET_THROUGH_ENERGY, "25000 A^2*s", 25000) | None = None  # type: ignore[valid-type]
    """The device's let-through I²t at the prospective fault current (maker's data), for the short-circuit check."""


class SupplyIn(Strict, kw_only=True):
    u0: quantity(VOLTAGE, "230 V", 230) = 230.0  # type: ignore[valid-type]
    earthing: Annotated[Literal["TN-S", "TN-C-S", "TT"], Meta(description="Earthing system.")] = "TN-C-S"
    ze: quantity(IMPEDANCE, "0.35 ohm", 0.35)  # type: ignore[valid-type]
    prospective_fault_current: quantity(CURRENT, "6 kA", 6000) | None = None  # type: ignore[valid-type]
    frequency: quantity(FREQUENCY, "50 Hz", 50) = 50.0  # type: ignore[valid-type]
    electrode_resistance: quantity(IMPEDANCE, "60 ohm", 60) | None = None  # type: ignore[valid-type]


class LimitsIn(Strict):
    voltage_drop: Annotated[Annotated[float, Meta(gt=0.0, le=100.0)] | None, Meta(description=(
        "Voltage-drop limit in % of U0 from the origin of the installation; default from IEC 60364-5-52 Table G.52.1 "
        "by use and supply."))] = None
    use: Annotated[Literal["lighting", "other"], Meta(description="Lighting or other uses (Table G.52.1).")] = "other"
    supply_kind: Annotated[Literal["public_lv", "private_lv"], Meta(description=(
        "Type A (supplied from a public LV network) or type B (from a private LV supply), Table G.52.1."))] = "public_lv"
    upstream_drop: Annotated[float, Meta(ge=0.0, lt=100.0, description=(
        "Drop already used upstream (sub-main), in %: the circuit's drop is added to it."))] = 0.0


class ProtectiveConductorIn(Strict):
    mode: Annotated[Literal["same_as_line", "given", "minimum"], Meta(description=(
        "Same size as the line conductors, a given size, or the minimum of IEC 60364-5-54 Table 54.2 (then checked "
        "adiabatically)."))] = "same_as_line"
    size: ConductorSizeField | None = None


class SizingRequest(Strict, kw_only=True):
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


class DeviceOut(Out):
    type: str
    rated_current_a: float
    chosen_by_service: bool
    label: str
    conventional_current_a: float
    conventional_multiple: float
    conventional_source: str


class FactorOut(Out):
    name: str
    value: float
    basis: str
    source: str


class SizingResult(Out):
    verdict: Annotated[str, Meta(description="compliant, non_compliant (verify) or no_compliant_size (size).")]
    regime: str
    design_current_a: float
    device: DeviceOut
    factors: list[FactorOut]
    factor_product: float
    required_tabulated_capacity_a: float
    voltage_drop_limit_pct: float
    voltage_drop_limit_source: str
    available_voltage_drop_pct: float
    disconnection_time_s: float
    disconnection_time_source: str
    chosen: SizeOut | None
    governing_check: str | None
    rejected: list[SizeOut]
    binding_checks: list[str]
    ways_out: list[str]
    notes: CalculationNotes
