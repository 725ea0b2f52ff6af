"""The edge of POST /v1/lead-chains/analyse: request -> core Chain, every bad field named at once."""

from __future__ import annotations

from service.api.inputs import FieldReader, check_tt_loop
from service.api.schemas.v1 import chains as s
from service.core.chains import Appliance, Chain, HeatingTask, Lead, Limits, Reel, SourceImpedance, Supply
from service.core.cord_conductors import cord_conductor
from service.core.errors import CalcError
from service.core.protection import RLV_MAX_LINE_VOLTAGE_V, default_protection, is_rlv, plug_fuse_rating_problem
from service.core.protection.ratings import nonstandard_rating, standard_ratings
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


def _optional(reader: FieldReader, value, kind, *path):
    return None if value is None else reader.quantity(value, kind, *path)


def _loop(reader: FieldReader, loop: s.LoopImpedanceIn | None, current, u0: float, *path: str) -> SourceImpedance | None:
    """A loop impedance given directly, or derived from a prospective current as U0 / I (resistive)."""
    name, current_name = path
    if loop is not None and current is not None:
        reader.add(f"give either {name} or {current_name}, not both", "supply", current_name)
        return None
    if loop is not None:
        resistance = reader.quantity(loop.resistance, RESISTANCE, "supply", name, "resistance")
        reactance = reader.quantity(loop.reactance, INDUCTIVE_REACTANCE, "supply", name, "reactance")
        if resistance == 0 and reactance == 0:
            reader.add("a loop impedance of zero is not physical", "supply", name)
        return SourceImpedance(resistance, reactance)
    if current is not None:
        amps = reader.quantity(current, CURRENT, "supply", current_name)
        return SourceImpedance(u0 / amps, 0.0)
    return None


def _supply(reader: FieldReader, supply: s.ChainSupplyIn) -> Supply:
    u0 = reader.quantity(supply.nominal_voltage, VOLTAGE, "supply", "nominal_voltage")
    line_neutral = _loop(reader, supply.loop_impedance, supply.prospective_fault_current, u0,
                         "loop_impedance", "prospective_fault_current")
    if line_neutral is None and supply.loop_impedance is None and supply.prospective_fault_current is None:
        reader.add("give the socket's line-neutral loop impedance (or its prospective fault current)",
                   "supply", "loop_impedance")
    line_earth = _loop(reader, supply.earth_loop_impedance, supply.prospective_earth_fault_current, u0,
                       "earth_loop_impedance", "prospective_earth_fault_current")
    ra = _optional(reader, supply.electrode_resistance, ELECTRODE_RESISTANCE, "supply", "electrode_resistance")
    if line_earth is not None:
        given = "earth_loop_impedance" if supply.earth_loop_impedance is not None else "prospective_earth_fault_current"
        check_tt_loop(reader, supply.earthing, line_earth.magnitude_ohm, ra,
                      ("supply", given), ("supply", "electrode_resistance"))
    device = supply.device
    rating = None if device is None else reader.quantity(device.rated_current, DEVICE_RATING, "supply", "device",
                                                         "rated_current")
    if rating is not None and rating == rating:
        problem = nonstandard_rating(device.type, rating, *standard_ratings(device.type, default_protection()))
        if problem is not None:
            reader.add(problem, "supply", "device", "rated_current")
    return Supply(
        nominal_voltage_v=u0,
        frequency_hz=reader.quantity(supply.frequency, FREQUENCY, "supply", "frequency"),
        line_neutral=line_neutral or SourceImpedance(1.0),
        line_earth=line_earth,
        earthing=supply.earthing,
        device_kind=None if device is None else device.type,
        device_rating_a=rating,
        rcd_sensitivity_a=None if supply.rcd is None else reader.quantity(
            supply.rcd.rated_residual_current, RESIDUAL_CURRENT, "supply", "rcd", "rated_residual_current"),
        ambient_c=reader.quantity(supply.ambient_temperature, TEMPERATURE, "supply", "ambient_temperature"),
        electrode_resistance_ohm=ra,
        system=_system(reader, supply, u0),
    )


def _system(reader: FieldReader, supply: s.ChainSupplyIn, u0: float) -> str:
    """The supply kind; an RLV supply is at most 110 V between lines (BS 7671:2018 411.8.1.2, from memory)."""
    if is_rlv(supply.system) and u0 == u0 and u0 > RLV_MAX_LINE_VOLTAGE_V * (1 + 1e-9):
        reader.add(f"a reduced-low-voltage supply ({supply.system}) is at most {RLV_MAX_LINE_VOLTAGE_V:g} V between "
                   f"lines: give nominal_voltage as 110 V, not {u0:g} V", "supply", "nominal_voltage")
    return supply.system


def _lead(reader: FieldReader, lead: s.LeadIn, k: int):
    before = len(reader.problems)
    size = reader.size(lead.size, "leads", k, "size")
    conductor = None
    if len(reader.problems) == before:  # the size parsed: look it up
        try:
            conductor = cord_conductor(size, lead.material, lead.conductor_class)
        except CalcError as exc:
            reader.add(exc.blames[0].message if exc.blames else exc.detail, "leads", k, "size")
    reel = None
    if lead.reel is not None:
        reel = Reel(lead.reel.wound, lead.reel.layers_on_drum,
                    _optional(reader, lead.reel.marked_wound_rating, CURRENT, "leads", k, "reel", "marked_wound_rating"))
    return dict(
        name=lead.name or f"lead {k}",
        length_m=reader.quantity(lead.length, LENGTH, "leads", k, "length"),
        conductor=conductor,
        marked_rating_a=_optional(reader, lead.marked_rating, CURRENT, "leads", k, "marked_rating"),
        reel=reel,
        plug_fuse_a=_plug_fuse(reader, lead.plug_fuse, k),
    )


def _plug_fuse(reader: FieldReader, value, k: int) -> float | None:
    """A plug fuse's rating, refused unless BS 1362 has it (13 A at most)."""
    rating = _optional(reader, value, CURRENT, "leads", k, "plug_fuse")
    if rating is not None and rating == rating and (problem := plug_fuse_rating_problem(rating)) is not None:
        reader.add(problem, "leads", k, "plug_fuse")
    return rating


def _heating(reader: FieldReader, task: s.HeatingTaskIn | None, j: int) -> HeatingTask | None:
    if task is None:
        return None
    where = ("appliances", j, "heating")
    water = task.water_mass is not None or task.temperature_rise is not None
    if (task.energy is None) == (not water):
        reader.add("give either energy, or water_mass with temperature_rise", *where)
        return None
    if task.energy is not None:
        return HeatingTask(energy_j=reader.quantity(task.energy, ENERGY, *where, "energy"))
    if task.water_mass is None or task.temperature_rise is None:
        reader.add("water_mass and temperature_rise go together", *where)
        return None
    return HeatingTask(water_kg=reader.quantity(task.water_mass, MASS, *where, "water_mass"),
                       temperature_rise_k=reader.quantity(task.temperature_rise, TEMPERATURE_RISE, *where,
                                                          "temperature_rise"))


def _rated_power_w(reader: FieldReader, a: s.ApplianceIn, j: int) -> float:
    """The active power: as given in W, or P = S cos φ from an apparent power in VA (common practice)."""
    power = reader.power(a.rated_power, AC_POWER, "appliances", j, "rated_power")
    if power.kind == "reactive":
        reader.add("reactive power (var) alone does not rate an appliance: give its active power (W) with "
                   "power_factor, or its apparent power (VA)", "appliances", j, "rated_power")
    return power.value * a.power_factor if power.kind == "apparent" else power.value


def _appliance(reader: FieldReader, a: s.ApplianceIn, j: int, last_outlet: int) -> Appliance:
    return Appliance(
        name=a.name or f"appliance {j}",
        outlet=last_outlet if a.outlet is None else a.outlet,
        rated_power_w=_rated_power_w(reader, a, j),
        rated_voltage_v=reader.quantity(a.rated_voltage, VOLTAGE, "appliances", j, "rated_voltage"),
        power_factor=a.power_factor,
        leading=a.leading,
        model=a.model,
        heating=_heating(reader, a.heating, j),
        hours_per_year=a.hours_per_year,
    )


def to_chain(req: s.LeadChainRequest) -> Chain:
    """The request as a core Chain; raises RequestInvalid (422) naming every unusable field."""
    reader = FieldReader()
    supply = _supply(reader, req.supply)
    leads = [_lead(reader, lead, k) for k, lead in enumerate(req.leads)]
    appliances = [_appliance(reader, a, j, len(req.leads) - 1) for j, a in enumerate(req.appliances)]
    reader.done()
    return Chain(
        supply=supply,
        leads=tuple(Lead(**lead) for lead in leads),
        appliances=tuple(appliances),
        limits=Limits(voltage_drop_pct=req.limits.voltage_drop, tariff_per_kwh=req.limits.tariff_per_kwh,
                      hours_per_year=req.limits.hours_per_year,
                      upstream_voltage_drop_pct=req.limits.upstream_voltage_drop),
    )
