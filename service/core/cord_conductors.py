"""Conductors of flexible cords that the IEC 60228 and NEC libraries do not list as class 5.

Two kinds of cord are refused by the conductor library alone:

* 1.25 mm² cords (BS 6500): IEC 60228 has no 1.25 mm² size, but BS 7671 Table
  4F3A rates them and Table 4F3B gives their voltage drop, 37 mV/A/m at 60 °C
  for two conductors.  Their resistance is taken from that drop: r = 37 / 2
  mohm/m per conductor at 60 °C (the table's drop includes the cord's small
  reactance, so this is on the high side: conservative).
* AWG cords (NEC Article 400): NEC Chapter 9 Table 8 holds stranded (class B)
  conductors, no flexible-cord stranding.  The coated-copper column is used,
  the higher of the two stranded copper columns (about 4 % above uncoated):
  finer flexible strands, often tinned, have a little more resistance than
  class B (from memory), so the higher column is the conservative choice.
"""

from __future__ import annotations

import math
from functools import lru_cache

from service.core.conductors import (
    FEET,
    MM2,
    Conductor,
    ConductorLibrary,
    SizeSpec,
    awg_area_m2,
    default_library,
)
from service.core.data import load_tables
from service.core.errors import CalcError, DataTableError

CORD_DROP_TABLE = "bs7671-table4f3b"
NEC_RESISTANCE_TABLE = "nec-ch9-table8"
NEC_CORD_TABLE = "nec-table400-5a1"
CORD_DROP_TEMPERATURE_C = 60.0  # BS 7671 Table 4F3B heading: conductor operating temperature 60 °C
NEC_REFERENCE_C = 75.0  # NEC Chapter 9 Table 8: resistance at 75 °C

ASSUMPTION_1_25 = ("1.25 mm² cord: resistance from BS 7671 Table 4F3B, 37 mV/A/m / 2 per conductor at 60 °C "
                   "(IEC 60228 lists no 1.25 mm² size; the drop includes reactance, so this is on the high side)")
ASSUMPTION_AWG = ("AWG cord: resistance from NEC Chapter 9 Table 8, stranded coated copper (no flexible-cord "
                  "stranding is tabulated; the coated column is the higher, conservative one)")


def _extra_conductors(library: ConductorLibrary) -> tuple[Conductor, ...]:
    tables = load_tables()
    copper = library.materials["copper"]
    found = []
    listed = {round(c.area_m2 / MM2, 6) for c in library.select("copper", 5, "metric")}
    for r in tables[CORD_DROP_TABLE].records():
        area_mm2 = float(r["nominal_area_mm2"])
        if round(area_mm2, 6) in listed:
            continue
        found.append(Conductor("metric", f"{area_mm2:g} mm²", area_mm2 * MM2, copper, 5,
                               float(r["single_phase_mv_per_a_m"]) / 2.0 / 1000.0, CORD_DROP_TEMPERATURE_C,
                               CORD_DROP_TABLE))
    cord_gauges = {str(r["size"]) for r in tables[NEC_CORD_TABLE].records()}
    for r in tables[NEC_RESISTANCE_TABLE].records():
        if r["stranding"] == "stranded" and str(r["size"]) in cord_gauges:
            found.append(Conductor("awg", f"{r['size']} AWG", awg_area_m2(str(r["size"])), copper, 5,
                                   float(r["copper_coated"]) / (1000.0 * FEET), NEC_REFERENCE_C, NEC_RESISTANCE_TABLE))
    _validate(found, library)
    return tuple(found)


def _validate(found: list[Conductor], library: ConductorLibrary) -> None:
    """Each added cord conductor's resistance at 20 °C must lie between its listed neighbours' (by area)."""
    for c in found:
        same = sorted((x for x in library.select("copper", None, c.size_system) if x.conductor_class in (2, 5)),
                      key=lambda x: x.area_m2)
        r20 = c.resistance_per_m_at(20.0)
        smaller = [x for x in same if x.area_m2 < c.area_m2 * (1 - 1e-9)]
        larger = [x for x in same if x.area_m2 > c.area_m2 * (1 + 1e-9)]
        if not r20 > 0 or (smaller and not r20 < smaller[-1].resistance_per_m_at(20.0) * 1.1) or (
                larger and not r20 > larger[0].resistance_per_m_at(20.0)):
            raise DataTableError(f"{c.table_id}: {c.size_label} cord resistance {r20 * 1000:.4g} ohm/km at 20 °C "
                                 "does not lie between its neighbours'")


@lru_cache(maxsize=1)
def default_cord_conductors() -> tuple[Conductor, ...]:
    return _extra_conductors(default_library())


def cord_conductor(size: SizeSpec, material: str, conductor_class: int) -> Conductor:
    """The conductor of a cord of this size: the library's, or a cord size it lacks (1.25 mm², AWG class 5)."""
    try:
        return default_library().find(size, material, conductor_class)
    except CalcError:
        if material == "copper" and conductor_class == 5:
            for c in default_cord_conductors():
                if c.size_system == size.system and (
                        c.size_label == size.label() if size.system == "awg"
                        else math.isclose(c.area_m2, size.area_m2 or 0.0, rel_tol=1e-6)):
                    return c
        raise


def cord_assumption(conductor: Conductor) -> str | None:
    """The stated assumption behind a cord conductor this module supplied, else None."""
    if conductor.table_id == CORD_DROP_TABLE:
        return ASSUMPTION_1_25
    if conductor.table_id == NEC_RESISTANCE_TABLE and conductor.conductor_class == 5:
        return ASSUMPTION_AWG
    return None


def cord_tables(conductor: Conductor) -> set[str]:
    """The tables behind a cord's resistance and rating, beyond the IEC 60228 and BS 7671 Table 4F3A ones."""
    if conductor.table_id == CORD_DROP_TABLE:
        return {CORD_DROP_TABLE}
    if conductor.size_system == "awg":
        return {NEC_RESISTANCE_TABLE, NEC_CORD_TABLE, "nec-table310-15-b1-1"}
    return set()
