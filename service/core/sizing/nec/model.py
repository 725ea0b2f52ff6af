"""Inputs of NEC conductor sizing: frozen records in SI units (m, A, W, V, °C, m²).

The results are the shared sizing records (sizing.model.SizingResult), so both
regimes answer in one shape; only the inputs differ.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

SystemName = Literal["120V", "240V", "277V", "208Y/120V", "480Y/277V"]
RACEWAYS = ("emt", "rmc", "pvc_40", "pvc_80")
# Which Table 9 column group a raceway's AC resistance and reactance come from.
RACEWAY_IMPEDANCE = {"emt": "steel", "rmc": "steel", "pvc_40": "pvc", "pvc_80": "pvc"}


@dataclass(frozen=True, slots=True)
class System:
    """A nominal North American system and the circuit it feeds."""

    name: str
    phases: Literal["single", "three"]
    source_v: float  # the EMF of the network model: the circuit voltage (single-phase), line-to-neutral (three-phase)
    nominal_v: float  # the voltage the drop percentage is of: circuit voltage, or line-to-line
    wires: str


SYSTEMS = {
    "120V": System("120V", "single", 120.0, 120.0, "line and neutral (2-wire)"),
    "240V": System("240V", "single", 240.0, 240.0, "two lines of a 120/240 V system (2-wire)"),
    "277V": System("277V", "single", 277.0, 277.0, "line and neutral of a 480Y/277 V system (2-wire)"),
    "208Y/120V": System("208Y/120V", "three", 120.0, 208.0, "three lines (and a neutral if run)"),
    "480Y/277V": System("480Y/277V", "three", 277.0, 480.0, "three lines (and a neutral if run)"),
}


@dataclass(frozen=True, slots=True)
class NecLoad:
    design_current_a: float | None = None
    power_w: float | None = None  # active power P (the output power when an efficiency is given)
    apparent_power_va: float | None = None  # apparent power S drawn: I = S / V, or S / (√3 V)
    voltage_v: float | None = None  # the load's voltage as given (checked against the system at the edge), for the steps
    power_factor: float = 1.0
    efficiency: float = 1.0
    continuous_share: float | None = None  # share of the load that is continuous (3 h or more); None: all of it


@dataclass(frozen=True, slots=True)
class NecCircuit:
    length_m: float
    material: str = "copper"
    conductor_type: str = "THHN"
    insulation_rating_c: int | None = None  # None: the type's dry-location rating (Table 310.4(A))
    termination_rating_c: int | None = None  # None: 110.14(C)(1) by the circuit rating
    ambient_c: float | None = None  # None: 30 °C, the table's basis
    raceway: str | None = None  # None: raceway or cable not given (Table 9 steel-conduit values, no fill)
    current_carrying_conductors: int | None = None  # None: the circuit's own (2 single-phase, 3 three-phase)
    neutral: bool = True  # three-phase: a neutral runs with the lines (fill and metal mass, not current-carrying)
    role: Literal["branch", "feeder"] = "branch"
    installation: Literal["raceway_or_cable", "free_air"] = "raceway_or_cable"  # Table 310.16 or Table 310.17
    # Parallel sets (310.10(G)): each set in its own raceway or cable (250.122(F)(1)(b)), or all in one raceway,
    # where every conductor counts for the adjustment of 310.15(C)(1).
    parallel_raceways: Literal["separate", "shared"] = "separate"


@dataclass(frozen=True, slots=True)
class NecSizingInput:
    load: NecLoad
    circuit: NecCircuit
    system: str = "120V"
    rated_current_a: float | None = None  # the overcurrent device; None: the smallest 240.6(A) rating that will do
    drop_limit_pct: float | None = None  # None: the 3 % informational-note guidance for this circuit
    upstream_drop_pct: float = 0.0
    egc_mode: Literal["minimum", "given", "same_as_line"] = "minimum"
    egc_size_label: str | None = None  # mode 'given': "10 AWG", "250 kcmil"
    interrupting_rating_a: float | None = None  # the device's interrupting rating (110.9); None: a typical default
    available_fault_current_a: float | None = None  # at the device's line terminals; None: 110.9 not assessed
    parallel_sets: int = 1  # verify: conductors in parallel per line of the size verified (size ignores it)
