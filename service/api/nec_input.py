"""The edge of NEC sizing and of raceway fill: request -> core NEC inputs, every bad field named at once."""

from __future__ import annotations

from service.api.inputs import FieldReader
from service.api.schemas.v1 import raceways as r
from service.api.schemas.v1 import sizing as s
from service.api.sizing_input import check_protective_mode, load_power, regime_fields
from service.core.sizing.nec import SYSTEMS, FillConductor, NecCircuit, NecLoad, NecSizingInput
from service.units import CURRENT, DEVICE_RATING, FREQUENCY, LENGTH, LOAD_VOLTAGE, TEMPERATURE

NEC_FREQUENCY_HZ = 60.0  # Chapter 9 Table 9 holds 60 Hz values only


def _size_label(reader: FieldReader, value: float | str, *path: str | int) -> str:
    """An AWG/kcmil size as the library labels it ("12 AWG", "250 kcmil"); metric sizes are refused."""
    size = reader.size(value, *path)
    if size.system == "metric":
        reader.add("the NEC regime takes AWG or kcmil sizes (\"12 AWG\", \"250 kcmil\")", *path)
    return size.label()


# A load's voltage within 10 % of the system's circuit voltage is that circuit's (nameplates such as 115, 200, 230
# and 460 V sit a few percent below the nominal 120, 208, 240 and 480 V: common practice); the current is then
# computed at the nominal system voltage, 220.5(A).
VOLTAGE_TOLERANCE = 0.10


def _load_voltage(reader: FieldReader, value: float | str | None, system: str | None) -> float | None:
    """The load's voltage, checked against supply.system: line-to-line for three-phase, the circuit's otherwise."""
    if value is None:
        return None
    v = reader.quantity(value, LOAD_VOLTAGE, "load", "voltage")
    if system not in SYSTEMS or v != v:
        return v
    sys = SYSTEMS[system]
    near = lambda nominal: abs(v / nominal - 1.0) <= VOLTAGE_TOLERANCE + 1e-12  # noqa: E731
    if near(sys.nominal_v):
        return v
    if sys.phases == "three" and near(sys.source_v):
        reader.add(f"a three-phase load's voltage is line-to-line: {v:g} V is the line-to-neutral voltage of "
                   f"{system}, whose line-to-line voltage is {sys.nominal_v:g} V; give {sys.nominal_v:g} V or leave "
                   f"load.voltage out (a load between line and neutral is a single-phase circuit: supply.system "
                   f"{sys.source_v:g}V)", "load", "voltage")
    elif system == "240V" and near(120.0):
        reader.add(f"{v:g} V is line-to-neutral of the 120/240 V system, but supply.system 240V is the circuit "
                   "between its two lines: give 240 V, or supply.system 120V", "load", "voltage")
    else:
        reader.add(f"{v:g} V does not fit supply.system {system} (a {sys.nominal_v:g} V "
                   f"{'line-to-line ' if sys.phases == 'three' else ''}circuit, within 10 %): choose the system the "
                   "load is connected to, or leave load.voltage out", "load", "voltage")
    return v


def _load(reader: FieldReader, load: s.SizingLoadIn, system: str | None) -> NecLoad:
    if (load.design_current is None) == (load.power is None):
        reader.add("give either design_current or power (with power_factor), not both and not neither", "load")
    if load.phases is not None and system in SYSTEMS and load.phases != SYSTEMS[system].phases:
        reader.add(f"supply.system {system} is {SYSTEMS[system].phases}-phase", "load", "phases")
    power_w, apparent_va = load_power(reader, load)
    return NecLoad(
        design_current_a=None if load.design_current is None else reader.quantity(load.design_current, CURRENT, "load",
                                                                                   "design_current"),
        power_w=power_w, apparent_power_va=apparent_va, voltage_v=_load_voltage(reader, load.voltage, system),
        power_factor=load.power_factor, efficiency=load.efficiency, continuous_share=load.continuous_share,
    )


def _circuit(reader: FieldReader, c: s.CircuitIn) -> NecCircuit:
    return NecCircuit(
        length_m=reader.quantity(c.length, LENGTH, "circuit", "length"),
        material=c.material,
        conductor_type=c.conductor_type or "THHN",
        insulation_rating_c=c.insulation_rating,
        termination_rating_c=c.termination_rating,
        ambient_c=None if c.ambient_temperature is None else reader.quantity(c.ambient_temperature, TEMPERATURE,
                                                                             "circuit", "ambient_temperature"),
        raceway=c.raceway,
        current_carrying_conductors=c.current_carrying_conductors,
        neutral=c.neutral,
        role=c.role or "branch",
        installation=c.installation or "raceway_or_cable",
        parallel_raceways=c.parallel_raceways or "separate",
    )


def to_nec_input(req: s.SizingRequest | s.VerifyRequest) -> tuple[NecSizingInput, str | None]:
    """The request as the NEC regime's input (and the size to verify, by its label); RequestInvalid (422) names every bad field."""
    reader = FieldReader()
    regime_fields(reader, req)
    system = req.supply.system
    if system is None:
        reader.add("required for regime nec: the nominal system (120V, 240V, 277V, 208Y/120V, 480Y/277V)",
                   "supply", "system")
    if req.supply.frequency is not None and reader.quantity(req.supply.frequency, FREQUENCY, "supply",
                                                            "frequency") != NEC_FREQUENCY_HZ:
        reader.add("the NEC regime uses Chapter 9 Table 9, which is for 60 Hz", "supply", "frequency")
    pc = req.protective_conductor
    mode = pc.mode or "minimum"
    check_protective_mode(reader, mode, pc)
    egc_size = None if pc.size is None else _size_label(reader, pc.size, "protective_conductor", "size")
    rated = req.protection.device.rated_current
    interrupting, fault = req.protection.interrupting_rating, req.supply.available_fault_current
    spec = NecSizingInput(
        load=_load(reader, req.load, system),
        circuit=_circuit(reader, req.circuit),
        system=system or "120V",
        rated_current_a=None if rated is None else reader.quantity(rated, DEVICE_RATING, "protection", "device", "rated_current"),
        drop_limit_pct=req.limits.voltage_drop,
        upstream_drop_pct=req.limits.upstream_drop,
        egc_mode=mode,
        egc_size_label=egc_size,
        interrupting_rating_a=None if interrupting is None else reader.quantity(interrupting, CURRENT, "protection",
                                                                                 "interrupting_rating"),
        available_fault_current_a=None if fault is None else reader.quantity(fault, CURRENT, "supply",
                                                                             "available_fault_current"),
        parallel_sets=getattr(req.circuit, "parallel_sets", None) or 1,
    )
    size = None
    if isinstance(req.circuit, s.VerifyCircuitIn):
        size = _size_label(reader, req.circuit.size, "circuit", "size")
    reader.done()
    return spec, size


def to_fill_conductors(req: r.RacewayFillRequest) -> tuple[FillConductor, ...]:
    reader = FieldReader()
    found = tuple(FillConductor(c.type, _size_label(reader, c.size, "conductors", k, "size"), c.count)
                  for k, c in enumerate(req.conductors))
    reader.done()
    return found
