"""The edge of POST /v1/conductors/size and /verify: request -> core SizingInput, every bad field named at once."""

from __future__ import annotations

from service.api.inputs import FieldReader
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


def _optional(reader: FieldReader, value, kind, *path):
    return None if value is None else reader.quantity(value, kind, *path)


def _load(reader: FieldReader, load: s.LoadIn) -> LoadSpec:
    if (load.design_current is None) == (load.power is None):
        reader.add("give either design_current or power (with power_factor), not both and not neither", "load")
    return LoadSpec(
        phases=load.phases,
        design_current_a=_optional(reader, load.design_current, CURRENT, "load", "design_current"),
        power_w=_optional(reader, load.power, POWER, "load", "power"),
        voltage_v=_optional(reader, load.voltage, VOLTAGE, "load", "voltage"),
        power_factor=load.power_factor,
        efficiency=load.efficiency,
    )


def _circuit(reader: FieldReader, c: s.CircuitIn) -> CircuitSpec:
    return CircuitSpec(
        length_m=reader.quantity(c.length, LENGTH, "circuit", "length"),
        method=c.method,
        material=c.material,
        insulation=c.insulation,
        cable=c.cable,
        formation=c.formation,
        ambient_c=_optional(reader, c.ambient_temperature, TEMPERATURE, "circuit", "ambient_temperature"),
        ambient_medium=c.ambient_medium,
        grouped_circuits=c.grouping.circuits,
        arrangement=c.grouping.arrangement,
        spacing=c.grouping.spacing,
        thermal_insulation_length_m=reader.quantity(c.thermal_insulation_length, LENGTH_OR_ZERO, "circuit",
                                                    "thermal_insulation_length"),
        soil_resistivity_k_m_per_w=_optional(reader, c.soil_thermal_resistivity, SOIL_THERMAL_RESISTIVITY, "circuit",
                                             "soil_thermal_resistivity"),
        neutral=c.neutral,
    )


def _protection(reader: FieldReader, p: s.ProtectionIn) -> ProtectionSpec:
    return ProtectionSpec(
        device_type=p.device.type,
        rated_current_a=_optional(reader, p.device.rated_current, CURRENT, "protection", "device", "rated_current"),
        rcd_residual_current_a=None if p.rcd is None else reader.quantity(
            p.rcd.rated_residual_current, RESIDUAL_CURRENT, "protection", "rcd", "rated_residual_current"),
        required_time_s=_optional(reader, p.required_disconnection_time, DISCONNECTION_TIME, "protection",
                                  "required_disconnection_time"),
        circuit_kind=p.circuit_kind,
        let_through_i2t_a2s=_optional(reader, p.let_through_energy, LET_THROUGH_ENERGY, "protection",
                                      "let_through_energy"),
    )


def _supply(reader: FieldReader, sup: s.SupplyIn) -> SupplySpec:
    return SupplySpec(
        u0_v=reader.quantity(sup.u0, VOLTAGE, "supply", "u0"),
        earthing=sup.earthing,
        ze_ohm=reader.quantity(sup.ze, IMPEDANCE, "supply", "ze"),
        prospective_fault_current_a=_optional(reader, sup.prospective_fault_current, CURRENT, "supply",
                                              "prospective_fault_current"),
        frequency_hz=reader.quantity(sup.frequency, FREQUENCY, "supply", "frequency"),
        electrode_resistance_ohm=_optional(reader, sup.electrode_resistance, IMPEDANCE, "supply", "electrode_resistance"),
    )


def _protective_conductor(reader: FieldReader, pc: s.ProtectiveConductorIn) -> ProtectiveConductorSpec:
    area = None
    if pc.size is not None:
        size = reader.size(pc.size, "protective_conductor", "size")
        if size.system != "metric":
            reader.add("IEC 60364 sizing takes metric sizes (mm²)", "protective_conductor", "size")
        area = size.area_m2
    if pc.mode == "given" and pc.size is None:
        reader.add("mode 'given' needs the protective conductor's size", "protective_conductor", "size")
    if pc.mode != "given" and pc.size is not None:
        reader.add(f"a size is given but the mode is '{pc.mode}': use mode 'given'", "protective_conductor", "mode")
    return ProtectiveConductorSpec(mode=pc.mode, area_m2=area)


def to_sizing_input(req: s.SizingRequest | s.VerifyRequest) -> tuple[SizingInput, float | None]:
    """The request as a core SizingInput (and the size to verify, in m²); RequestInvalid (422) names every bad field."""
    reader = FieldReader()
    spec = SizingInput(
        load=_load(reader, req.load),
        circuit=_circuit(reader, req.circuit),
        protection=_protection(reader, req.protection),
        supply=_supply(reader, req.supply),
        limits=LimitsSpec(voltage_drop_pct=req.limits.voltage_drop, use=req.limits.use,
                          supply_kind=req.limits.supply_kind, upstream_drop_pct=req.limits.upstream_drop),
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
