"""Protective devices, disconnection times, the earth-fault loop and adiabatic checks.

Shared by the lead-chain analysis and cable sizing.  Pure: SI floats (A, V,
ohm, s, m^2), frozen results carrying every number used and its source; a
non-compliant design is a verdict, a CalcError means no answer exists.
"""

from .adiabatic import (
    AdiabaticCheck,
    AdiabaticMinimum,
    KFactor,
    adiabatic_check,
    adiabatic_minimum_csa,
    k_factor,
    max_fault_duration_s,
    max_let_through_i2t,
    minimum_csa_m2,
)
from .devices import (
    CircuitBreaker,
    ClearingTime,
    Device,
    GGFuse,
    OperatingCurrent,
    ResidualCurrentDevice,
    energy_class_let_through,
    guaranteed_clearing,
    is_preferred_breaker_rating,
    operating_current,
)
from .disconnection import DisconnectionTime, normalise_earthing, required_disconnection_time
from .fault_loop import CMIN_LOW_VOLTAGE, EarthFaultCheck, OvercurrentRoute, RcdRoute, earth_fault_check
from .library import ProtectionLibrary, default_protection
from .rlv import (
    RLV_DISCONNECTION_S,
    RLV_MAX_LINE_VOLTAGE_V,
    SUPPLY_SYSTEMS,
    SupplySystem,
    is_rlv,
    rlv_disconnection_rule,
    rlv_max_zs,
    rlv_u0,
)
from .plug_fuse import PlugFuse, PlugFuseLibrary, default_plug_fuses, plug_fuse_band, plug_fuse_rating_problem

__all__ = [
    "CMIN_LOW_VOLTAGE",
    "AdiabaticCheck",
    "AdiabaticMinimum",
    "CircuitBreaker",
    "ClearingTime",
    "Device",
    "DisconnectionTime",
    "EarthFaultCheck",
    "GGFuse",
    "KFactor",
    "OperatingCurrent",
    "OvercurrentRoute",
    "PlugFuse",
    "PlugFuseLibrary",
    "ProtectionLibrary",
    "RLV_DISCONNECTION_S",
    "RLV_MAX_LINE_VOLTAGE_V",
    "RcdRoute",
    "ResidualCurrentDevice",
    "SUPPLY_SYSTEMS",
    "SupplySystem",
    "adiabatic_check",
    "adiabatic_minimum_csa",
    "default_plug_fuses",
    "default_protection",
    "earth_fault_check",
    "energy_class_let_through",
    "guaranteed_clearing",
    "is_preferred_breaker_rating",
    "is_rlv",
    "k_factor",
    "max_fault_duration_s",
    "max_let_through_i2t",
    "minimum_csa_m2",
    "normalise_earthing",
    "operating_current",
    "plug_fuse_band",
    "plug_fuse_rating_problem",
    "required_disconnection_time",
    "rlv_disconnection_rule",
    "rlv_max_zs",
    "rlv_u0",
]
