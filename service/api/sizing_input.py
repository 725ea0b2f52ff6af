"""The edge of POST /v1/conductors/size and /verify (IEC 60364): request -> core SizingInput, every bad field named.

Fields of the request that only the NEC regime uses are refused here (see
``regime_fields``); the IEC defaults of optional fields are applied here.
"""

from __future__ import annotations

import math

from service.api.inputs import FieldReader, check_tt_loop
from service.api.schemas.v1 import sizing as s
from service.core.sizing import (
    CircuitSpec,
    LimitsSpec,
    LoadSpec,
    ProtectionSpec,
    ProtectiveConductorSpec,
    SizingInput,
    SupplySpec,
)
from service.units import (
    AC_POWER,
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
    RESIDUAL_CURRENT,
    SOIL_THERMAL_RESISTIVITY,
    TEMPERATURE,
    VOLTAGE,
)


def _optional(reader: FieldReader, value, kind, *path):
    return None if value is None else reader.quantity(value, kind, *path)


def load_power(reader: FieldReader, load: s.SizingLoadIn) -> tuple[float | None, float | None]:
    """load.power as (active P in W, apparent S in VA), one of them None; reactive power alone is refused."""
    if load.power is None:
        return None, None
    power = reader.power(load.power, AC_POWER, "load", "power")
    if power.kind == "reactive":
        reader.add("reactive power (var) alone does not give the load current: give the active power (W) with "
                   "power_factor, or the apparent power (VA)", "load", "power")
        return math.nan, None
    if power.kind == "apparent":
        if load.efficiency != 1.0:
            reader.add("an apparent power (VA) is what the load draws, so no efficiency applies: leave efficiency "
                       "out, or give the output power in W", "load", "efficiency")
        return None, power.value
    return power.value, None


def _load(reader: FieldReader, load: s.SizingLoadIn) -> LoadSpec:
    if (load.design_current is None) == (load.power is None):
        reader.add("give either design_current or power (with power_factor), not both and not neither", "load")
    power_w, apparent_va = load_power(reader, load)
    return LoadSpec(
        phases=load.phases or "single",
        design_current_a=_optional(reader, load.design_current, CURRENT, "load", "design_current"),
        power_w=power_w,
        apparent_power_va=apparent_va,
        voltage_v=_optional(reader, load.voltage, LOAD_VOLTAGE, "load", "voltage"),
        power_factor=load.power_factor,
        efficiency=load.efficiency,
        third_harmonic_pct=load.third_harmonic_content,
    )


def _circuit(reader: FieldReader, c: s.CircuitIn) -> CircuitSpec:
    if c.method is None:
        reader.add("required for regime iec60364: the reference installation method", "circuit", "method")
    grouping = c.grouping or s.GroupingIn()
    return CircuitSpec(
        length_m=reader.quantity(c.length, LENGTH, "circuit", "length"),
        method=c.method or "C",
        material=c.material,
        insulation=c.insulation or "pvc_70",
        cable=c.cable or "multicore",
        formation=c.formation or "trefoil",
        ambient_c=_optional(reader, c.ambient_temperature, TEMPERATURE, "circuit", "ambient_temperature"),
        ambient_medium=c.ambient_medium,
        grouped_circuits=grouping.circuits,
        arrangement=grouping.arrangement,
        spacing=grouping.spacing,
        thermal_insulation_length_m=_optional(reader, c.thermal_insulation_length, LENGTH_OR_ZERO, "circuit",
                                              "thermal_insulation_length") or 0.0,
        soil_resistivity_k_m_per_w=_optional(reader, c.soil_thermal_resistivity, SOIL_THERMAL_RESISTIVITY, "circuit",
                                             "soil_thermal_resistivity"),
        neutral=c.neutral,
        drop_temperature_basis=c.drop_temperature_basis or "maximum_operating",
        parallel_sets=getattr(c, "parallel_sets", None) or 1,
    )


def _protection(reader: FieldReader, p: s.ProtectionIn) -> ProtectionSpec:
    return ProtectionSpec(
        device_type=p.device.type or "B",
        rated_current_a=_optional(reader, p.device.rated_current, DEVICE_RATING, "protection", "device", "rated_current"),
        rcd_residual_current_a=None if p.rcd is None else reader.quantity(
            p.rcd.rated_residual_current, RESIDUAL_CURRENT, "protection", "rcd", "rated_residual_current"),
        required_time_s=_optional(reader, p.required_disconnection_time, DISCONNECTION_TIME, "protection",
                                  "required_disconnection_time"),
        circuit_kind=p.circuit_kind or "fixed_equipment",
        let_through_i2t_a2s=_optional(reader, p.let_through_energy, LET_THROUGH_ENERGY, "protection",
                                      "let_through_energy"),
        breaking_capacity_a=_optional(reader, p.device.breaking_capacity, CURRENT, "protection", "device",
                                      "breaking_capacity"),
        energy_class=_energy_class(reader, p.device),
        fuse_system=_fuse_system(reader, p.device),
    )


def _energy_class(reader: FieldReader, device: s.SizingDeviceIn):
    if device.energy_class is not None and (device.type or "B") not in ("B", "C"):
        reader.add("energy-limiting classes (EN 60898-1 Annex ZA) are given for type B and C circuit-breakers only",
                   "protection", "device", "energy_class")
    return device.energy_class


def _fuse_system(reader: FieldReader, device: s.SizingDeviceIn) -> str:
    if device.fuse_system is not None and device.type != "gG":
        reader.add("fuse_system applies to gG fuse-links only (device.type gG)", "protection", "device", "fuse_system")
    return device.fuse_system or "iec60269_1"


def _supply(reader: FieldReader, sup: s.SizingSupplyIn) -> SupplySpec:
    if sup.ze is None:
        reader.add("required for regime iec60364: the external earth-fault loop impedance", "supply", "ze")
    earthing = sup.earthing or "TN-C-S"
    ze = 0.35 if sup.ze is None else reader.quantity(sup.ze, IMPEDANCE, "supply", "ze")
    ra = _optional(reader, sup.electrode_resistance, ELECTRODE_RESISTANCE, "supply", "electrode_resistance")
    check_tt_loop(reader, earthing, ze, ra, ("supply", "ze"), ("supply", "electrode_resistance"))
    return SupplySpec(
        u0_v=230.0 if sup.u0 is None else reader.quantity(sup.u0, VOLTAGE, "supply", "u0"),
        earthing=earthing,
        ze_ohm=ze,
        prospective_fault_current_a=_optional(reader, sup.prospective_fault_current, CURRENT, "supply",
                                              "prospective_fault_current"),
        frequency_hz=50.0 if sup.frequency is None else reader.quantity(sup.frequency, FREQUENCY, "supply", "frequency"),
        electrode_resistance_ohm=ra,
    )


def _protective_conductor(reader: FieldReader, pc: s.ProtectiveConductorIn) -> ProtectiveConductorSpec:
    area = None
    if pc.size is not None:
        size = reader.size(pc.size, "protective_conductor", "size")
        if size.system != "metric":
            reader.add("IEC 60364 sizing takes metric sizes (mm²)", "protective_conductor", "size")
        area = size.area_m2
    mode = pc.mode or "same_as_line"
    check_protective_mode(reader, mode, pc)
    if pc.mechanically_protected is not None and (pc.kind or "cable_core") == "cable_core":
        reader.add("mechanical protection applies to a separate protective conductor (543.1.3), not a core of the cable",
                   "protective_conductor", "mechanically_protected")
    return ProtectiveConductorSpec(mode=mode, area_m2=area, kind=pc.kind, mechanically_protected=pc.mechanically_protected)


def check_protective_mode(reader: FieldReader, mode: str, pc: s.ProtectiveConductorIn) -> None:
    if mode == "given" and pc.size is None:
        reader.add("mode 'given' needs the protective conductor's size", "protective_conductor", "size")
    if mode != "given" and pc.size is not None:
        reader.add(f"a size is given but the mode is '{mode}': use mode 'given'", "protective_conductor", "mode")


# Fields only one regime uses: (path, the regime they belong to).  A field given for the other regime is a 422.
IEC_ONLY = (("circuit", "method"), ("circuit", "insulation"), ("circuit", "cable"), ("circuit", "formation"),
            ("circuit", "drop_temperature_basis"),
            ("circuit", "ambient_medium"), ("circuit", "grouping"), ("circuit", "thermal_insulation_length"),
            ("circuit", "soil_thermal_resistivity"), ("protection", "device", "type"), ("protection", "rcd"),
            ("protection", "required_disconnection_time"), ("protection", "circuit_kind"),
            ("protection", "let_through_energy"), ("load", "third_harmonic_content"), ("protection", "device", "breaking_capacity"),
            ("protection", "device", "energy_class"), ("protection", "device", "fuse_system"),
            ("protective_conductor", "kind"), ("protective_conductor", "mechanically_protected"), ("supply", "u0"),
            ("supply", "earthing"), ("supply", "ze"),
            ("supply", "prospective_fault_current"), ("supply", "electrode_resistance"), ("limits", "use"),
            ("limits", "supply_kind"))
NEC_ONLY = (("load", "continuous_share"), ("circuit", "conductor_type"), ("circuit", "insulation_rating"),
            ("circuit", "termination_rating"), ("circuit", "raceway"), ("circuit", "current_carrying_conductors"),
            ("circuit", "role"), ("circuit", "installation"), ("supply", "system"),
            ("circuit", "parallel_raceways"), ("protection", "interrupting_rating"),
            ("supply", "available_fault_current"))
REGIME_NAMES = {"iec60364": "IEC 60364", "nec": "the NEC"}


def regime_fields(reader: FieldReader, req: s.SizingRequest) -> None:
    """Name every field given that the chosen regime does not use."""
    foreign, owner = (NEC_ONLY, "nec") if req.regime == "iec60364" else (IEC_ONLY, "iec60364")
    for path in foreign:
        value = req
        for name in path:
            value = getattr(value, name, None)  # None too where the request has no such field (verify-only ones)
        if value is not None:
            reader.add(f"applies to regime {owner} ({REGIME_NAMES[owner]}) only, not {req.regime}", *path)


def to_sizing_input(req: s.SizingRequest | s.VerifyRequest) -> tuple[SizingInput, float | None]:
    """The request as a core SizingInput (and the size to verify, in m²); RequestInvalid (422) names every bad field."""
    reader = FieldReader()
    regime_fields(reader, req)
    spec = SizingInput(
        load=_load(reader, req.load),
        circuit=_circuit(reader, req.circuit),
        protection=_protection(reader, req.protection),
        supply=_supply(reader, req.supply),
        limits=LimitsSpec(voltage_drop_pct=req.limits.voltage_drop, use=req.limits.use or "other",
                          supply_kind=req.limits.supply_kind or "public_lv", upstream_drop_pct=req.limits.upstream_drop),
        protective_conductor=_protective_conductor(reader, req.protective_conductor),
    )
    area = None
    if isinstance(req.circuit, s.VerifyCircuitIn):
        size = reader.size(req.circuit.size, "circuit", "size")
        if size.system != "metric":
            reader.add("IEC 60364 sizing takes metric sizes (mm²)", "circuit", "size")
        area = size.area_m2
    reader.done()
    return spec, area
