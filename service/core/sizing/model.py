"""Inputs and results of conductor sizing and verification: frozen records in SI units.

Lengths m, areas m², currents A, voltages V, impedances ohm, times s,
temperatures °C, thermal resistivity K·m/W, percentages as percent.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from ..cable_impedance import LineImpedance
from ..steps import Step  # noqa: F401  (re-exported: results carry their steps)

Phases = Literal["single", "three"]
DeviceType = Literal["B", "C", "D", "gG"]
Use = Literal["lighting", "other"]
SupplyKind = Literal["public_lv", "private_lv"]
PeMode = Literal["same_as_line", "given", "minimum"]
# What the protective conductor is (IEC 60364-5-54 Tables A.54.2 to A.54.5): a core of the cable (or bunched with
# it), a separate insulated conductor, a bare conductor touching a cable covering, a bare conductor elsewhere.
PeKind = Literal["cable_core", "separate_insulated", "bare_on_cable_covering", "bare"]
FuseSystem = Literal["iec60269_1", "bs88_2"]
CircuitKind = Literal["socket_outlets", "fixed_equipment", "distribution"]
DropTemperatureBasis = Literal["maximum_operating", "estimated_from_load"]
METHODS = ("A1", "A2", "B1", "B2", "C", "D1", "D2", "E", "F")
BURIED_METHODS = ("D1", "D2")
ARRANGEMENTS = ("bunched", "single_layer_wall", "single_layer_ceiling", "perforated_tray", "ladder_or_cleats", "buried")
SPACINGS = ("touching", "one_cable_diameter", "0.125_m", "0.25_m", "0.5_m", "1.0_m")


@dataclass(frozen=True, slots=True)
class LoadSpec:
    """The design current directly, or a power (active P or apparent S) with its voltage, power factor and phases."""

    phases: Phases = "single"
    design_current_a: float | None = None
    power_w: float | None = None  # active power P (the output power when an efficiency is given)
    apparent_power_va: float | None = None  # apparent power S drawn: Ib = S / U, or S / (√3 U); efficiency not used
    voltage_v: float | None = None  # line-to-neutral (single-phase) or line-to-line (three-phase); default from U0
    power_factor: float = 1.0
    efficiency: float = 1.0
    third_harmonic_pct: float | None = None  # third-harmonic content of the line current (IEC 60364-5-52 Annex E)


@dataclass(frozen=True, slots=True)
class CircuitSpec:
    length_m: float
    method: str
    material: str = "copper"
    insulation: str = "pvc_70"
    cable: Literal["multicore", "single_core"] = "multicore"
    # Single-core cables: the capacity column of method F (flat_spaced takes flat_touching's, lower: conservative)
    # and, outside conduit (methods C, D1, D2, F), the arrangement of the reactance.
    formation: Literal["trefoil", "flat_touching", "flat_spaced"] = "trefoil"
    ambient_c: float | None = None  # None: the reference (30 °C air, 20 °C ground)
    ambient_medium: Literal["air", "ground"] | None = None  # None: as the method implies
    grouped_circuits: int = 1
    arrangement: str = "bunched"
    spacing: str = "touching"  # buried groups
    thermal_insulation_length_m: float = 0.0
    soil_resistivity_k_m_per_w: float | None = None  # None: the reference 2.5 K·m/W
    neutral: bool = True  # three-phase: a neutral conductor runs with the lines (counts in the mass)
    # The conductor temperature of the voltage drop: the insulation's maximum (conservative), or estimated from the
    # load, theta = theta_a + (theta_max - theta_a) (Ib / Iz)^2.  The earth-fault loop stays at the maximum.
    drop_temperature_basis: DropTemperatureBasis = "maximum_operating"
    parallel_sets: int = 1  # verify: the size given runs in this many equal parallel sets (523.7)


@dataclass(frozen=True, slots=True)
class ProtectionSpec:
    device_type: DeviceType = "B"
    rated_current_a: float | None = None  # None: the smallest standard rating >= Ib
    rcd_residual_current_a: float | None = None
    required_time_s: float | None = None  # None: from circuit kind and earthing (IEC 60364-4-41)
    circuit_kind: CircuitKind = "fixed_equipment"
    let_through_i2t_a2s: float | None = None  # the maker's let-through energy at the prospective fault current
    breaking_capacity_a: float | None = None  # Icn (breaker) or rated breaking capacity (fuse); None: a stated default
    energy_class: Literal[1, 2, 3] | None = None  # EN 60898-1 Annex ZA energy-limiting class; None: not assumed
    fuse_system: FuseSystem = "iec60269_1"  # gG: the gates alone, or BS 88-2 with its published 0.4 s points


@dataclass(frozen=True, slots=True)
class SupplySpec:
    u0_v: float = 230.0
    earthing: str = "TN-C-S"
    ze_ohm: float = 0.35
    prospective_fault_current_a: float | None = None
    frequency_hz: float = 50.0
    electrode_resistance_ohm: float | None = None  # TT: the installation's earth electrode


@dataclass(frozen=True, slots=True)
class LimitsSpec:
    voltage_drop_pct: float | None = None  # None: Table G.52.1 by use and supply kind
    use: Use = "other"
    supply_kind: SupplyKind = "public_lv"
    upstream_drop_pct: float = 0.0


@dataclass(frozen=True, slots=True)
class ProtectiveConductorSpec:
    mode: PeMode = "same_as_line"
    area_m2: float | None = None  # mode "given"
    kind: PeKind | None = None  # None: a core of the cable
    mechanically_protected: bool | None = None  # a separate PE (543.1.3); None: taken as not protected


@dataclass(frozen=True, slots=True)
class SizingInput:
    load: LoadSpec
    circuit: CircuitSpec
    protection: ProtectionSpec = ProtectionSpec()
    supply: SupplySpec = SupplySpec()
    limits: LimitsSpec = LimitsSpec()
    protective_conductor: ProtectiveConductorSpec = ProtectiveConductorSpec()


@dataclass(frozen=True, slots=True)
class Factor:
    name: str  # "ambient", "grouping", "thermal_insulation", "soil", "harmonics" (IEC 60364-5-52 Table E.52.1)
    value: float
    basis: str
    source: str
    table_id: str | None


@dataclass(frozen=True, slots=True)
class Check:
    """One check on one size: its name, the two sides of its inequality, and the verdict."""

    name: str
    passes: bool
    value: float
    limit: float
    unit: str
    condition: str
    source: str
    detail: str = ""
    obligation: Literal["requirement", "guidance"] = "requirement"  # guidance: an informational note, not a rule


@dataclass(frozen=True, slots=True)
class NotAssessed:
    """A check that could not be made, and why: never read as a pass."""

    name: str
    reason: str


@dataclass(frozen=True, slots=True)
class Device:
    device_type: str
    rated_current_a: float
    chosen_by_service: bool
    label: str
    conventional_current_a: float | None  # I2 (IEC 60364); None where the regime has no such rule (NEC)
    conventional_multiple: float | None
    conventional_source: str | None


@dataclass(frozen=True, slots=True)
class SizeEvaluation:
    size_label: str
    area_m2: float
    pe_size_label: str
    pe_area_m2: float
    tabulated_capacity_a: float  # It of the run (the method column, or method C x Ci if lower)
    capacity_basis: str
    capacity_table_id: str
    iz_a: float
    checks: tuple[Check, ...]
    voltage_drop_v: float | None
    voltage_drop_pct: float | None
    total_drop_pct: float | None
    zs_ohm: float | None
    earth_fault_current_a: float | None
    metal_mass_kg: float
    r1_ohm: float | None
    r2_ohm: float | None
    # The line conductor's series impedance used for the drop (cable_impedance.LineImpedance); None where the
    # regime gives none or no drop was solved.
    line_impedance: LineImpedance | None = None
    drop_phases: str | None = None  # "single" or "three": how the impedance reads as the tables' mV/A/m
    parallel_sets: int = 1  # conductors in parallel per line (NEC 310.10(G)); size_label is one conductor's
    not_assessed: tuple[NotAssessed, ...] = ()

    @property
    def passes(self) -> bool:
        return all(c.passes for c in self.checks)

    @property
    def failing(self) -> tuple[str, ...]:
        return tuple(c.name for c in self.checks if not c.passes)


@dataclass(frozen=True, slots=True)
class SizingResult:
    mode: Literal["size", "verify"]
    regime: str
    # not_fully_assessed: every check made passes, but some could not be made (chosen.not_assessed says which and
    # what would settle them): never read as compliant.  NEC verify adds meets_requirements_not_guidance.
    verdict: Literal["compliant", "not_fully_assessed", "non_compliant", "no_compliant_size",
                     "meets_requirements_not_guidance"]
    design_current_a: float
    device: Device
    factors: tuple[Factor, ...]
    factor_product: float
    required_tabulated_a: float
    drop_limit_pct: float
    drop_limit_source: str
    available_drop_pct: float
    disconnection_time_s: float | None  # None where the regime sets no disconnection time (NEC)
    disconnection_source: str | None
    chosen: SizeEvaluation | None  # size: the smallest compliant size; verify: the size given
    governing_check: str | None
    rejected: tuple[SizeEvaluation, ...]  # every smaller size, with its failing checks
    binding_checks: tuple[str, ...]
    ways_out: tuple[str, ...]
    steps: tuple[Step, ...]
    assumptions: tuple[str, ...]
    cautions: tuple[str, ...]
    table_ids: tuple[str, ...]
    solves: int
    raceway: object | None = None  # NEC: the raceway fill of the chosen size (nec.fill.FillResult), when a raceway is given
    drop_temperature_basis: str | None = None  # IEC: maximum_operating or estimated_from_load


def assessed_verdict(passing: SizeEvaluation) -> str:
    """The verdict of a size whose checks all pass: compliant only when no check was left unmade."""
    return "not_fully_assessed" if passing.not_assessed else "compliant"
