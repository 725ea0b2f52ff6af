"""Conductor library: materials, standard sizes and their DC resistance.

Metric sizes and resistances come from IEC 60228 (classes 1, 2 and 5); AWG and
kcmil sizes take their area from the ASTM B258 formula and their resistance
from NEC Chapter 9, Table 8.  Every calculator reuses this module.

Resistance at another conductor temperature follows the linear law the
standards use: R(t) = R(t_ref) * (K + t) / (K + t_ref), with K = 234.5 °C for
copper and 228 °C for aluminium.  These are the exact formulae of IEC 60228:2004
Annex B (informative; as adopted identically in GOST 22483-2021, Annex B):
kt = 254.5 / (234.5 + t) = 1 / (1 + 0.00393 (t - 20)) for annealed copper (B.1)
and kt = 248 / (228 + t) = 1 / (1 + 0.00403 (t - 20)) for aluminium (B.2), with
R20 = Rt x kt.  (The rounded correction factors tabulated for measurements,
e.g. 0.833 at 70 °C, follow 250 / (230 + t): not the law used here.)
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import Literal

from service.core.data import DataTable, load_tables
from service.core.errors import Blame, CalcError, DataTableError

MaterialName = Literal["copper", "aluminium"]
SizeSystem = Literal["metric", "awg", "kcmil"]
ConductorClass = Literal[1, 2, 5]

MM2 = 1.0e-6  # m^2 per mm^2
KCMIL_M2 = 1000 * math.pi / 4 * (25.4e-6) ** 2  # 1 kcmil = 1000 circular mils
FEET = 0.3048
# Gauges in the order of NEC Table 8; "1/0".."4/0" are 0, -1, -2, -3 in the B258 formula.
AWG_GAUGES = ("18", "16", "14", "12", "10", "8", "6", "4", "3", "2", "1", "1/0", "2/0", "3/0", "4/0")


def awg_number(gauge: str) -> int:
    """The integer n of ASTM B258's formula: "4/0" -> -3, "1/0" -> 0, "12" -> 12."""
    if gauge.endswith("/0"):
        return 1 - int(gauge[0])
    return int(gauge)


def awg_diameter_m(gauge: str) -> float:
    """ASTM B258: d = 0.005 in x 92 ** ((36 - n) / 39)."""
    return 0.005 * 25.4e-3 * 92 ** ((36 - awg_number(gauge)) / 39)


def awg_area_m2(gauge: str) -> float:
    return math.pi / 4 * awg_diameter_m(gauge) ** 2


@dataclass(frozen=True, slots=True)
class SizeSpec:
    """A requested conductor size, already parsed from the client's text."""

    system: SizeSystem
    area_m2: float | None = None  # metric
    gauge: str | None = None  # AWG
    kcmil_value: float | None = None  # kcmil

    @classmethod
    def metric(cls, area_m2: float) -> SizeSpec:
        return cls("metric", area_m2=area_m2)

    @classmethod
    def awg(cls, gauge: str) -> SizeSpec:
        return cls("awg", gauge=gauge)

    @classmethod
    def kcmil(cls, value: float) -> SizeSpec:
        return cls("kcmil", kcmil_value=value)

    def label(self) -> str:
        if self.system == "metric":
            return f"{(self.area_m2 or 0) / MM2:g} mm²"
        if self.system == "awg":
            return f"{self.gauge} AWG"
        return f"{self.kcmil_value:g} kcmil"


@dataclass(frozen=True, slots=True)
class Material:
    name: MaterialName
    resistivity_20c_ohm_m: float
    temperature_constant_c: float
    table_id: str

    @property
    def alpha_20c_per_k(self) -> float:
        """Temperature coefficient of resistance at 20 °C implied by the linear law."""
        return 1.0 / (self.temperature_constant_c + 20.0)


_ANNEX_B_FORMULA = {"copper": "B.1 (annealed copper)", "aluminium": "B.2 (aluminium)"}


def temperature_law_source(material: Material) -> str:
    """The citation of the temperature law, naming the formula with the material's own constant."""
    k = material.temperature_constant_c
    return (f"IEC 60228:2004, Annex B, formula {_ANNEX_B_FORMULA[material.name]}: kt = {k + 20:g}/({k:g} + t) = "
            f"1/(1 + {material.alpha_20c_per_k:.3g} (t − 20)), R20 = Rt x kt")


@dataclass(frozen=True, slots=True)
class Conductor:
    size_system: SizeSystem
    size_label: str
    area_m2: float
    material: Material
    conductor_class: ConductorClass
    resistance_ohm_per_m: float  # maximum DC resistance at reference_temperature_c
    reference_temperature_c: float
    table_id: str

    def resistance_per_m_at(self, temperature_c: float) -> float:
        k = self.material.temperature_constant_c
        return self.resistance_ohm_per_m * (k + temperature_c) / (k + self.reference_temperature_c)


@dataclass(frozen=True, slots=True)
class RunResistance:
    conductor: Conductor
    length_m: float
    temperature_c: float
    resistance_ohm_per_m: float
    one_way_ohm: float
    loop_ohm: float


# table_id -> (size system family, class for IEC tables, reference temperature, unit length in m)
_IEC_TABLES = {
    "iec60228-table1": (1, 20.0),
    "iec60228-table2": (2, 20.0),
    "iec60228-table3": (5, 20.0),
}
_NEC_TABLE = "nec-ch9-table8"
_NEC_REFERENCE_C = 75.0
_STRANDING_CLASS = {"solid": 1, "stranded": 2}


def _materials(tables: dict[str, DataTable]) -> dict[str, Material]:
    table = tables["conductor-materials"]
    return {
        rec["material"]: Material(
            name=rec["material"],
            resistivity_20c_ohm_m=rec["resistivity_20c_ohm_mm2_per_m"] * MM2,
            temperature_constant_c=float(rec["temperature_constant_degc"]),
            table_id=table.table_id,
        )
        for rec in table.records()
    }


def _iec_conductors(table: DataTable, materials: dict[str, Material]) -> list[Conductor]:
    conductor_class, reference_c = _IEC_TABLES[table.table_id]
    found = []
    for rec in table.records():
        area_mm2 = float(rec["nominal_area_mm2"])
        for material, column in (("copper", "copper_plain"), ("aluminium", "aluminium")):
            ohm_per_km = rec.get(column)
            if ohm_per_km is None:
                continue
            found.append(
                Conductor(
                    size_system="metric",
                    size_label=f"{area_mm2:g} mm²",
                    area_m2=area_mm2 * MM2,
                    material=materials[material],
                    conductor_class=conductor_class,
                    resistance_ohm_per_m=ohm_per_km / 1000.0,
                    reference_temperature_c=reference_c,
                    table_id=table.table_id,
                )
            )
    return found


def _nec_conductors(table: DataTable, materials: dict[str, Material]) -> list[Conductor]:
    found = []
    for rec in table.records():
        size = str(rec["size"])
        if size in AWG_GAUGES:
            system: SizeSystem = "awg"
            label, area = f"{size} AWG", awg_area_m2(size)
        else:
            system, label, area = "kcmil", f"{size} kcmil", float(size) * KCMIL_M2
        for material, column in (("copper", "copper_uncoated"), ("aluminium", "aluminium")):
            ohm_per_kft = rec.get(column)
            if ohm_per_kft is None:
                continue
            found.append(
                Conductor(
                    size_system=system,
                    size_label=label,
                    area_m2=area,
                    material=materials[material],
                    conductor_class=_STRANDING_CLASS[rec["stranding"]],
                    resistance_ohm_per_m=ohm_per_kft / (1000.0 * FEET),
                    reference_temperature_c=_NEC_REFERENCE_C,
                    table_id=table.table_id,
                )
            )
    return found


def _validate(conductors: list[Conductor]) -> None:
    """Within one table, material and class, resistance must fall as area grows."""
    groups: dict[tuple[str, str, int], list[Conductor]] = {}
    for c in conductors:
        groups.setdefault((c.table_id, c.material.name, c.conductor_class), []).append(c)
    for key, group in groups.items():
        ordered = sorted(group, key=lambda c: c.area_m2)
        for smaller, larger in zip(ordered, ordered[1:]):
            if not larger.resistance_ohm_per_m < smaller.resistance_ohm_per_m:
                raise DataTableError(f"{key}: resistance does not fall from {smaller.size_label} to {larger.size_label}")
            if larger.area_m2 == smaller.area_m2:
                raise DataTableError(f"{key}: duplicate size {larger.size_label}")


class ConductorLibrary:
    """Every conductor of every packaged table, searchable by size, material and class."""

    def __init__(self, tables: dict[str, DataTable]) -> None:
        self.materials = _materials(tables)
        conductors: list[Conductor] = []
        for table_id in _IEC_TABLES:
            conductors += _iec_conductors(tables[table_id], self.materials)
        conductors += _nec_conductors(tables[_NEC_TABLE], self.materials)
        _validate(conductors)
        self.conductors = tuple(conductors)
        self.table_ids = tuple(_IEC_TABLES) + (_NEC_TABLE, "conductor-materials")

    def select(
        self,
        material: str | None = None,
        conductor_class: int | None = None,
        size_system: str | None = None,
    ) -> list[Conductor]:
        return [
            c
            for c in self.conductors
            if (material is None or c.material.name == material)
            and (conductor_class is None or c.conductor_class == conductor_class)
            and (size_system is None or c.size_system == size_system)
        ]

    def find(self, size: SizeSpec, material: str, conductor_class: int) -> Conductor:
        for c in self.select(material, conductor_class, size.system):
            if _same_size(c, size):
                return c
        offered = ", ".join(c.size_label for c in self.select(material, conductor_class, size.system)) or "none"
        raise CalcError(
            code="unknown-conductor",
            detail=f"No class {conductor_class} {material} conductor of size {size.label()} is listed.",
            how_to_fix=f"Choose a listed size for this material and class: {offered}.",
            blames=(Blame(("size",), f"{size.label()} is not a listed class {conductor_class} {material} size"),),
        )


def _same_size(conductor: Conductor, size: SizeSpec) -> bool:
    if size.system == "metric":
        return math.isclose(conductor.area_m2, size.area_m2 or 0.0, rel_tol=1e-6)
    if size.system == "awg":
        return conductor.size_label == f"{size.gauge} AWG"
    return math.isclose(float(conductor.size_label.split()[0]), size.kcmil_value or 0.0, rel_tol=1e-9)


def run_resistance(conductor: Conductor, length_m: float, temperature_c: float) -> RunResistance:
    """Resistance of a run of ``length_m``: one conductor, and go-and-return (loop)."""
    per_m = conductor.resistance_per_m_at(temperature_c)
    return RunResistance(
        conductor=conductor,
        length_m=length_m,
        temperature_c=temperature_c,
        resistance_ohm_per_m=per_m,
        one_way_ohm=per_m * length_m,
        loop_ohm=2.0 * per_m * length_m,
    )


@lru_cache(maxsize=1)
def default_library() -> ConductorLibrary:
    return ConductorLibrary(load_tables())
