"""A sizing regime: the tables and rules of one wiring standard behind one interface.

The check pipeline (engine.py, checks.py) asks a Regime for everything that
differs between standards — tabulated capacities, correction factors, device
ratings, the conventional-current rule, voltage-drop limits, the minimum
protective conductor — and ``Iec60364Regime`` fills it in with IEC 60364's
tables.  This protocol is the IEC pipeline's own: the pluggable unit across
standards is ``regimes.SizingRegime``, which the NEC (``nec/``) implements with
its own rules on the shared search, network solve and result records.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import Protocol

from service.core.cable_impedance import ANNEX_G_REACTANCE_OHM_PER_M, LineImpedance, arrangement_for, line_impedance
from service.core.conductors import Conductor, ConductorLibrary, default_library
from service.core.errors import calc_error
from service.core.protection import ProtectionLibrary, default_protection
from service.core.protection.ratings import standard_ratings

from .model import BURIED_METHODS, CircuitSpec, Factor, LimitsSpec, Step
from .tables import (
    DROP_TABLE,
    GROUPING_AIR_TABLE,
    GROUPING_DIRECT_TABLE,
    GROUPING_DUCT_TABLE,
    GROUPING_DUCT_SINGLE_CORE_TABLE,
    INSULATION_TABLE,
    INSULATION_TABLE_UP_TO_MM2,
    MM2,
    PE_TABLE,
    SOIL_REFERENCE_K_M_PER_W,
    SOIL_TABLE,
    AMBIENT_TABLES,
    BREAKER_CONVENTIONAL_TABLE,
    FUSE_CONVENTIONAL_TABLE,
    CapacityKey,
    SizingTables,
    StepFactor,
    default_sizing_tables,
)

CONDUCTOR_CLASS = 2  # stranded (IEC 60228 Table 2): the class of installation cables
# IEC 60364-5-52:2009 Annex G: lambda = 0.08 mOhm/m when nothing else is known (the fallback of Electrical; the
# drop itself takes each size's impedance by arrangement, service.core.cable_impedance, which never goes below it).
ANNEX_G_SOURCE = "IEC 60364-5-52:2009, Annex G: reactance per unit length 0.08 mΩ/m in the absence of other details"
OPERATING_TEMPERATURE_C = {"pvc_70": 70.0, "xlpe_epr_90": 90.0}  # IEC 60364-5-52 Table 52.1 (from memory)
# IEC 60364-4-43:2008, 433.1: I2 <= 1.45 Iz.
OVERLOAD_FACTOR = 1.45
SINGLE_CORE_ONLY = ("A1", "B1", "F")
MULTICORE_ONLY = ("A2", "B2", "E")
# Which items of Table B.52.17 belong to which methods (its own "to be used with" column).
AIR_ARRANGEMENT_METHODS = {
    "bunched": ("A1", "A2", "B1", "B2", "C", "E", "F"),
    "single_layer_wall": ("C",),
    "single_layer_ceiling": ("C",),
    "perforated_tray": ("E", "F"),
    "ladder_or_cleats": ("E", "F"),
}
BURIED_SPACINGS = {"D2": ("touching", "one_cable_diameter", "0.125_m", "0.25_m", "0.5_m"),
                   "D1": ("touching", "0.25_m", "0.5_m", "1.0_m")}


_blame = calc_error


@dataclass(frozen=True, slots=True)
class Capacity:
    """The tabulated capacity It of a run, and where it comes from."""

    value_a: float
    basis: str
    table_id: str
    thermal_insulation: Factor | None  # set when method C x Ci governs or was compared


@dataclass(frozen=True, slots=True)
class Conventional:
    i2_a: float
    multiple: float
    source: str
    table_id: str


@dataclass(frozen=True, slots=True)
class DropLimit:
    limit_pct: float
    source: str
    table_id: str | None
    steps: tuple[Step, ...]


class Regime(Protocol):
    """What the check pipeline needs from a wiring standard."""

    name: str
    reactance_ohm_per_m: float
    reactance_source: str
    overload_factor: float  # I2 <= overload_factor x Iz

    def validate(self, circuit: CircuitSpec) -> None: ...
    def ambient_medium(self, method: str) -> str: ...
    def reference_ambient_c(self, method: str) -> float: ...
    def operating_temperature_c(self, insulation: str) -> float: ...
    def sizes(self, circuit: CircuitSpec, loaded: int) -> tuple[Conductor, ...]: ...
    def conductor(self, area_m2: float, material: str) -> Conductor: ...
    def line_impedance(self, circuit: CircuitSpec, line: Conductor, loaded: int, temperature_c: float,
                       frequency_hz: float) -> LineImpedance: ...
    def tabulated_capacity(self, circuit: CircuitSpec, loaded: int, area_m2: float) -> Capacity | None: ...
    def correction_factors(self, circuit: CircuitSpec) -> tuple[Factor, ...]: ...
    def device_ratings(self, device_type: str) -> tuple[float, ...]: ...
    def standard_ratings(self, device_type: str) -> tuple[tuple[float, ...], str]: ...
    def conventional_current(self, device_type: str, rated_current_a: float) -> Conventional: ...
    def drop_limit(self, limits: LimitsSpec, length_m: float) -> DropLimit: ...
    def protective_conductor_minimum(self, line: Conductor) -> tuple[Conductor, str]: ...
    def metal_density(self, material: str) -> tuple[float, str]: ...
    def table_ids(self) -> tuple[str, ...]: ...


def _step_value(steps: tuple[StepFactor, ...], x: float) -> StepFactor | None:
    """The factor of the first tabulated condition at or above ``x`` (the next worse row: conservative)."""
    return next((s for s in steps if x <= s.upto + 1e-9), None)


class Iec60364Regime:
    """IEC 60364-5-52 (Annex B capacities and factors, Annex G drop), -4-43 (overload), -5-54 (PE)."""

    name = "IEC 60364"
    reactance_ohm_per_m = ANNEX_G_REACTANCE_OHM_PER_M
    reactance_source = ANNEX_G_SOURCE
    overload_factor = OVERLOAD_FACTOR

    def __init__(self, tables: SizingTables, library: ConductorLibrary, protection: ProtectionLibrary) -> None:
        self.t = tables
        self.library = library
        self.protection = protection
        self._conductors = {
            (round(c.area_m2 / MM2, 6), c.material.name): c for c in library.select(conductor_class=CONDUCTOR_CLASS,
                                                                                    size_system="metric")
        }

    # -- inputs that contradict each other -------------------------------------------------------
    def ambient_medium(self, method: str) -> str:
        return "ground" if method in BURIED_METHODS else "air"

    def reference_ambient_c(self, method: str) -> float:
        """The ambient of the capacity tables: 30 °C in air, 20 °C in the ground (Tables B.52.14, B.52.15)."""
        return AMBIENT_TABLES[self.ambient_medium(method)][1]

    def validate(self, c: CircuitSpec) -> None:
        method = c.method
        implied = self.ambient_medium(method)
        if c.ambient_medium is not None and c.ambient_medium != implied:
            raise _blame("contradictory-input",
                f"Method {method} is {'buried' if implied == 'ground' else 'in air'}, so its ambient is the {implied} "
                f"temperature; the ambient medium given is {c.ambient_medium}.",
                f"Give ambient_medium '{implied}' (or leave it out), or choose a method installed in {c.ambient_medium}.",
                (("circuit", "ambient_medium"), f"method {method} implies {implied}"),
                (("circuit", "method"), f"implies the {implied} temperature"))
        if method in SINGLE_CORE_ONLY and c.cable != "single_core" or method in MULTICORE_ONLY and c.cable != "multicore":
            wanted = "single_core" if method in SINGLE_CORE_ONLY else "multicore"
            raise _blame("contradictory-input",
                f"Reference method {method} is defined for {wanted.replace('_', '-')} cables, not {c.cable.replace('_', '-')}.",
                f"Use cable '{wanted}', or the method for {c.cable.replace('_', '-')} cables "
                f"({'A2, B2 or E' if c.cable == 'multicore' else 'A1, B1 or F'}; C, D1 and D2 take either).",
                (("circuit", "cable"), f"method {method} takes {wanted} cables"))
        if c.material == "aluminium" and method in ("E", "F"):
            raise _blame("no-data", "No free-air (E, F) capacities are held for aluminium conductors.",
                         "Use copper, or another reference method.",
                         (("circuit", "material"), "no aluminium data for methods E and F"))
        buried = method in BURIED_METHODS
        if c.soil_resistivity_k_m_per_w is not None and not buried:
            raise _blame("contradictory-input", "Soil thermal resistivity applies only to buried runs (methods D1, D2).",
                         "Leave soil_thermal_resistivity out, or choose method D1 or D2.",
                         (("circuit", "soil_thermal_resistivity"), f"method {method} is not buried"))
        if c.thermal_insulation_length_m > 0 and buried:
            raise _blame("contradictory-input", "A buried run cannot also run through building thermal insulation here.",
                         "Give thermal_insulation_length 0 for methods D1 and D2.",
                         (("circuit", "thermal_insulation_length"), "not for buried methods"))
        if c.cable == "single_core" and c.formation == "flat_spaced" and method in ("A1", "B1"):
            raise _blame("contradictory-input",
                         f"Method {method} runs the cables in conduit or trunking, where they cannot be spaced.",
                         "Leave formation out (or trefoil) for methods A1 and B1, or choose a method in air (C, F).",
                         (("circuit", "formation"), f"method {method} is in conduit or trunking"))
        if c.grouped_circuits > 1:
            self._check_arrangement(c)

    def _check_arrangement(self, c: CircuitSpec) -> None:
        method, arrangement = c.method, c.arrangement
        if method in BURIED_METHODS:
            if arrangement != "buried":
                raise _blame("contradictory-input", f"Method {method} is buried: its group takes the 'buried' arrangement.",
                             "Give arrangement 'buried' with a spacing.",
                             (("circuit", "grouping", "arrangement"), f"method {method} is buried"))
            if c.spacing not in BURIED_SPACINGS[method]:
                raise _blame("invalid-input", f"Method {method} groups are tabulated for spacings "
                             f"{', '.join(BURIED_SPACINGS[method])}; got {c.spacing}.",
                             f"Use one of {', '.join(BURIED_SPACINGS[method])}.",
                             (("circuit", "grouping", "spacing"), f"not a tabulated spacing for {method}"))
            return
        allowed = AIR_ARRANGEMENT_METHODS.get(arrangement, ())
        if method not in allowed:
            raise _blame("contradictory-input",
                         f"The grouping arrangement {arrangement} does not apply to method {method}.",
                         "Choose an arrangement that goes with the method: bunched (A to F), single_layer_wall or "
                         "single_layer_ceiling (C), perforated_tray or ladder_or_cleats (E, F).",
                         (("circuit", "grouping", "arrangement"), f"not for method {method}"))

    # -- conductors and capacities ---------------------------------------------------------------
    def operating_temperature_c(self, insulation: str) -> float:
        return OPERATING_TEMPERATURE_C[insulation]

    def _key(self, c: CircuitSpec, loaded: int, method: str | None = None) -> CapacityKey:
        m = method or c.method
        formation = None
        if m == "F":
            # Spaced cables carry more than touching ones; method G is not held, so flat_spaced takes the flat
            # touching column (conservative, named in the assumptions).
            formation = "touching" if loaded == 2 else "flat_touching" if c.formation == "flat_spaced" else c.formation
        return CapacityKey(c.insulation, loaded, c.material, m, formation)

    def conductor(self, area_m2: float, material: str) -> Conductor:
        found = self._conductors.get((round(area_m2 / MM2, 6), material))
        if found is None:
            raise _blame("unknown-conductor", f"No class 2 {material} conductor of {area_m2 / MM2:g} mm² is listed.",
                         "Choose a listed IEC 60228 size.", (("circuit", "size"), "not a listed size"))
        return found

    def line_impedance(self, c: CircuitSpec, line: Conductor, loaded: int, temperature_c: float,
                       frequency_hz: float) -> LineImpedance:
        return line_impedance(line, temperature_c, frequency_hz, arrangement_for(c.cable, c.method, c.formation),
                              loaded, self.t.cable_geometry)

    def sizes(self, c: CircuitSpec, loaded: int) -> tuple[Conductor, ...]:
        column = self.t.capacities.get(self._key(c, loaded))
        if column is None:
            return ()
        return tuple(self._conductors[(round(a / MM2, 6), c.material)] for a in column.areas_m2
                     if (round(a / MM2, 6), c.material) in self._conductors)

    def _insulation_factor(self, length_m: float, area_m2: float) -> Factor:
        table = INSULATION_TABLE
        if area_m2 / MM2 > INSULATION_TABLE_UP_TO_MM2:
            last = self.t.insulation[-1]
            return Factor("thermal_insulation", last.value,
                          f"conductor above {INSULATION_TABLE_UP_TO_MM2:g} mm²: no table value, the 0.5 m factor "
                          f"{last.value:g} is taken for any length (conservative)", self.t.source(table), table)
        step = _step_value(self.t.insulation, length_m * 1000.0) or self.t.insulation[-1]
        return Factor("thermal_insulation", step.value,
                      f"{length_m * 1000:g} mm in thermal insulation: the {step.upto:g} mm row (next longer tabulated "
                      f"length, or 500 mm and more)", self.t.source(table), table)

    def tabulated_capacity(self, c: CircuitSpec, loaded: int, area_m2: float) -> Capacity | None:
        column = self.t.capacities.get(self._key(c, loaded))
        value = None if column is None else column.at(area_m2)
        if value is None:
            return None
        basis = f"method {c.method}, {loaded} loaded conductors ({self.t.tables[column.table_id].table}, column {column.column})"
        if c.thermal_insulation_length_m <= 0:
            return Capacity(value, basis, column.table_id, None)
        ci = self._insulation_factor(c.thermal_insulation_length_m, area_m2)
        c_column = self.t.capacities[self._key(c, loaded, "C")]
        c_value = c_column.at(area_m2)
        surrounded = c_value * ci.value
        if surrounded < value:
            return Capacity(surrounded, f"in thermal insulation: method C {c_value:g} A x Ci {ci.value:g} "
                            f"(below the method {c.method} value {value:g} A)", c_column.table_id, ci)
        return Capacity(value, basis + f"; method C x Ci = {surrounded:g} A is not lower", column.table_id, ci)

    # -- correction factors ----------------------------------------------------------------------
    def correction_factors(self, c: CircuitSpec) -> tuple[Factor, ...]:
        medium = self.ambient_medium(c.method)
        table_id, reference = AMBIENT_TABLES[medium]
        ambient = reference if c.ambient_c is None else c.ambient_c
        steps = self.t.ambient[(medium, c.insulation)]
        step = steps[0] if ambient <= steps[0].upto else _step_value(steps, ambient)
        if step is None:
            raise _blame("outside-table", f"Table {self.t.tables[table_id].table} gives no factor for {c.insulation} "
                         f"at an ambient of {ambient:g} °C: the conductor's limit is too close.",
                         f"Keep the ambient at or below {steps[-1].upto:g} °C, or use XLPE/EPR insulation.",
                         (("circuit", "ambient_temperature"), f"above {steps[-1].upto:g} °C for {c.insulation}"))
        factors = [Factor("ambient", step.value,
                          f"{medium} at {ambient:g} °C (reference {reference:g} °C): the {step.upto:g} °C row"
                          + (" (next warmer tabulated)" if not math.isclose(step.upto, ambient) and ambient > steps[0].upto else ""),
                          self.t.source(table_id), table_id)]
        factors.append(self._grouping(c))
        if c.method in BURIED_METHODS:
            rho = SOIL_REFERENCE_K_M_PER_W if c.soil_resistivity_k_m_per_w is None else c.soil_resistivity_k_m_per_w
            soil = self.t.soil[c.method]
            s = soil[0] if rho <= soil[0].upto else _step_value(soil, rho)
            if s is None:
                raise _blame("outside-table", f"Table B.52.16 stops at {soil[-1].upto:g} K·m/W; got {rho:g} K·m/W.",
                             "Measure the soil, or improve the backfill to at most 3 K·m/W.",
                             (("circuit", "soil_thermal_resistivity"), f"above {soil[-1].upto:g} K·m/W"))
            factors.append(Factor("soil", s.value, f"{rho:g} K·m/W (reference 2.5): the {s.upto:g} K·m/W row, "
                                  f"{'in ducts' if c.method == 'D1' else 'direct in the ground'}",
                                  self.t.source(SOIL_TABLE), SOIL_TABLE))
        return tuple(factors)

    def _grouping(self, c: CircuitSpec) -> Factor:
        n = c.grouped_circuits
        if c.method in BURIED_METHODS:
            if n == 1:
                return Factor("grouping", 1.0, "one circuit", "no reduction for a single circuit", None)
            if c.method == "D2":
                table_id, steps, cables = GROUPING_DIRECT_TABLE, self.t.grouping_direct[c.spacing], ""
            elif c.cable == "single_core":  # Table B.52.19, single-core cables in single-way ducts
                table_id, steps = GROUPING_DUCT_SINGLE_CORE_TABLE, self.t.grouping_ducts_single_core[c.spacing]
                cables = ", single-core cables in single-way ducts"
            else:  # Table B.52.19, multicore cables in single-way ducts
                table_id, steps, cables = GROUPING_DUCT_TABLE, self.t.grouping_ducts[c.spacing], ", multicore cables in ducts"
            where = f"{n} circuits buried{cables}, spacing {c.spacing.replace('_', ' ')}"
        else:
            table_id = GROUPING_AIR_TABLE
            arrangement = c.arrangement if n > 1 else ("single_layer_ceiling" if c.arrangement == "single_layer_ceiling" else "bunched")
            steps = self.t.grouping_air[arrangement]
            where = f"{n} circuit{'s' if n > 1 else ''}, {arrangement.replace('_', ' ')}"
            if arrangement != "bunched" and n > steps[-1].upto:
                last = steps[-1]
                return Factor("grouping", last.value, where + f": no further reduction beyond {last.upto:g} circuits",
                              self.t.source(table_id), table_id)
        step = _step_value(steps, n)
        if step is None:
            raise _blame("outside-table", f"The grouping table stops at {steps[-1].upto:g} circuits; got {n}.",
                         "Split the group, or obtain the factor by calculation (IEC 60287).",
                         (("circuit", "grouping", "circuits"), f"more than {steps[-1].upto:g} circuits"))
        note = "" if step.upto == n else f" (the {step.upto:g}-circuit row, next larger tabulated)"
        return Factor("grouping", step.value, where + note, self.t.source(table_id), table_id)

    # -- devices ---------------------------------------------------------------------------------
    def device_ratings(self, device_type: str) -> tuple[float, ...]:
        if device_type == "gG":
            return tuple(r for r in self.protection.fuse_ratings if r in self.protection.fuse_gates)
        return self.protection.breaker_ratings

    def standard_ratings(self, device_type: str) -> tuple[tuple[float, ...], str]:
        """Every standard rating of the device type (a given rating must be one), and the table's source."""
        return standard_ratings(device_type, self.protection)

    def conventional_current(self, device_type: str, rated_current_a: float) -> Conventional:
        if device_type != "gG":
            multiple = self.t.breaker_conventional[1]
            return Conventional(multiple * rated_current_a, multiple, self.t.source(BREAKER_CONVENTIONAL_TABLE),
                                BREAKER_CONVENTIONAL_TABLE)
        for band in self.t.fuse_conventional:
            limit = band.in_up_to_a
            if limit is None or rated_current_a < limit or (band.upper_inclusive and rated_current_a <= limit):
                return Conventional(band.fusing_multiple * rated_current_a, band.fusing_multiple,
                                    self.t.source(FUSE_CONVENTIONAL_TABLE), FUSE_CONVENTIONAL_TABLE)
        raise AssertionError("the last band is open-ended (validated at load)")

    # -- limits ----------------------------------------------------------------------------------
    def drop_limit(self, limits: LimitsSpec, length_m: float) -> DropLimit:
        if limits.voltage_drop_pct is not None:
            return DropLimit(limits.voltage_drop_pct, "given in the request", None, ())
        kind = "A_public_lv" if limits.supply_kind == "public_lv" else "B_private_lv"
        lighting, other = self.t.drop_limits[kind]
        base = lighting if limits.use == "lighting" else other
        source = self.t.source(DROP_TABLE)
        steps = [Step("Voltage-drop limit (Table G.52.1)", f"type {kind[0]}, {limits.use}", base, "%", source)]
        # Table G.52.1 note: main wiring longer than 100 m may add 0.005 %/m beyond 100 m, at most 0.5 %.
        extra = min(0.005 * max(length_m - 100.0, 0.0), 0.5)
        if extra > 0:
            steps.append(Step("Long-run supplement", "0.005 % per m beyond 100 m, at most 0.5 %", extra, "%", source))
        return DropLimit(base + extra, source, DROP_TABLE, tuple(steps))

    def protective_conductor_minimum(self, line: Conductor) -> tuple[Conductor, str]:
        s = line.area_m2 / MM2
        band = next(b for b in self.t.pe_bands if s > b.above_mm2 and (b.up_to_mm2 is None or s <= b.up_to_mm2))
        wanted = s if band.rule == "equal" else s / 2 if band.rule == "half" else float(band.rule.split()[0])
        chosen = min((c for (a, m), c in self._conductors.items() if m == line.material.name and a >= wanted - 1e-9),
                     key=lambda c: c.area_m2)
        return chosen, f"{self.t.source(PE_TABLE)}: line {s:g} mm² -> {band.rule} -> {wanted:g} mm², next listed size"

    def metal_density(self, material: str) -> tuple[float, str]:
        table_id = "iec60028-density" if material == "copper" else "iec60889-density"
        return self.t.densities[material], self.t.source(table_id)

    def table_ids(self) -> tuple[str, ...]:
        return tuple(self.t.tables)


@lru_cache(maxsize=1)
def iec60364() -> Iec60364Regime:
    return Iec60364Regime(default_sizing_tables(), default_library(), default_protection())
