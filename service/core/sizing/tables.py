"""The IEC 60364 sizing tables as validated lookups.

Every table comes from a data file in service.core.data (one per published
table).  Turning the rows into lookups checks that they make physical sense —
capacities positive and rising with area, a cell for every listed method,
XLPE above PVC and two loaded conductors above three, correction factors
positive, equal to 1 at the reference condition and falling as conditions
worsen — and raises DataTableError on the first defect, so a mistyped file
stops the service at start-up instead of sizing a cable wrongly.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

from service.core.cable_impedance import GEOMETRY_TABLE, cable_geometry
from service.core.data import DataTable, load_tables
from service.core.errors import DataTableError

MM2 = 1.0e-6

# table_id -> (insulation, loaded conductors) for the methods A1..D2 tables
ENCLOSED_TABLES = {
    "iec60364-5-52-tableB52-2": ("pvc_70", 2),
    "iec60364-5-52-tableB52-3": ("xlpe_epr_90", 2),
    "iec60364-5-52-tableB52-4": ("pvc_70", 3),
    "iec60364-5-52-tableB52-5": ("xlpe_epr_90", 3),
}
ENCLOSED_METHODS = ("A1", "A2", "B1", "B2", "C", "D1", "D2")
# table_id -> insulation for the free-air (E, F) tables; column -> (method, loaded, formation)
FREE_AIR_TABLES = {"iec60364-5-52-tableB52-10": "pvc_70", "iec60364-5-52-tableB52-12": "xlpe_epr_90"}
FREE_AIR_COLUMNS = {
    "E_2": ("E", 2, None),
    "E_3": ("E", 3, None),
    "F_2_touching": ("F", 2, "touching"),
    "F_3_trefoil": ("F", 3, "trefoil"),
    "F_3_flat_touching": ("F", 3, "flat_touching"),
}
AMBIENT_TABLES = {"air": ("iec60364-5-52-tableB52-14", 30.0), "ground": ("iec60364-5-52-tableB52-15", 20.0)}
SOIL_TABLE = "iec60364-5-52-tableB52-16"
SOIL_REFERENCE_K_M_PER_W = 2.5  # Table B.52.16 title: resistivities other than 2.5 K·m/W
GROUPING_AIR_TABLE = "iec60364-5-52-tableB52-17"
GROUPING_DIRECT_TABLE = "iec60364-5-52-tableB52-18"
GROUPING_DUCT_TABLE = "iec60364-5-52-tableB52-19"
# The single-core part of Table B.52.19 (each single-core cable in its own duct), one file of its own.
GROUPING_DUCT_SINGLE_CORE_TABLE = "iec60364-5-52-tableB52-19-single-core"
INSULATION_TABLE = "bs7671-table52-2"
HARMONIC_TABLE = "iec60364-5-52-tableE52-1"
INSULATION_TABLE_UP_TO_MM2 = 10.0  # BS 7671 Table 52.2 heading: conductors up to 10 mm²
DROP_TABLE = "iec60364-5-52-tableG52-1"
PE_TABLE = "iec60364-5-54-table54-2"
BREAKER_CONVENTIONAL_TABLE = "iec60898-1-conventional-currents"
FUSE_CONVENTIONAL_TABLE = "iec60269-1-conventional-currents"
DENSITY_TABLES = ("iec60028-density", "iec60889-density")
INSULATIONS = ("pvc_70", "xlpe_epr_90")
MATERIALS = ("copper", "aluminium")
RATIO_TOLERANCE = 1e-9


def _fail(table_id: str, message: str) -> None:
    raise DataTableError(f"{table_id}: {message}")


def _positive(value: Any) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value) and value > 0


def _rising(values: list[float]) -> bool:
    return all(a < b for a, b in zip(values, values[1:]))


def _non_increasing(values: list[float]) -> bool:
    return all(b <= a for a, b in zip(values, values[1:]))


@dataclass(frozen=True, slots=True)
class CapacityKey:
    insulation: str
    loaded: int
    material: str
    method: str
    formation: str | None = None  # F only: touching (2 loaded), trefoil or flat_touching (3 loaded)


@dataclass(frozen=True, slots=True)
class CapacityColumn:
    key: CapacityKey
    areas_m2: tuple[float, ...]
    capacities_a: tuple[float, ...]
    table_id: str
    column: str

    def at(self, area_m2: float) -> float | None:
        for area, value in zip(self.areas_m2, self.capacities_a):
            if math.isclose(area, area_m2, rel_tol=1e-6):
                return value
        return None


@dataclass(frozen=True, slots=True)
class StepFactor:
    """A factor tabulated against a condition; ``value`` applies up to and including ``upto``."""

    upto: float
    value: float


def _column(table_id: str, column: str, key: CapacityKey, pairs: list[tuple[float, float]]) -> CapacityColumn:
    pairs.sort()
    areas = [a for a, _ in pairs]
    values = [v for _, v in pairs]
    if not all(_positive(v) for v in values):
        _fail(table_id, f"{key.material} {column}: capacities must be positive numbers")
    if not (_rising(areas) and _rising(values)):
        _fail(table_id, f"{key.material} {column}: capacity must rise strictly with the conductor area")
    return CapacityColumn(key, tuple(a * MM2 for a in areas), tuple(float(v) for v in values), table_id, column)


def _enclosed(table: DataTable) -> list[CapacityColumn]:
    insulation, loaded = ENCLOSED_TABLES[table.table_id]
    found = []
    records = table.records()
    for material in MATERIALS:
        rows = [r for r in records if r["material"] == material]
        if not rows:
            _fail(table.table_id, f"no {material} rows")
        for method in ENCLOSED_METHODS:
            pairs = [(float(r["nominal_area_mm2"]), r[method]) for r in rows if r[method] is not None]
            if not pairs:
                continue  # a column the file does not hold for this material (said in verified_against)
            if len(pairs) != len(rows):
                _fail(table.table_id, f"{material} {method}: a column held for some sizes must be complete")
            found.append(_column(table.table_id, method, CapacityKey(insulation, loaded, material, method), pairs))
        if not any(c.key.material == material for c in found):
            _fail(table.table_id, f"{material}: no method column")
    return found


def _free_air(table: DataTable) -> list[CapacityColumn]:
    insulation = FREE_AIR_TABLES[table.table_id]
    found = []
    for column, (method, loaded, formation) in FREE_AIR_COLUMNS.items():
        if column not in table.columns:
            _fail(table.table_id, f"missing column {column}")
        for material in MATERIALS:
            pairs = [(float(r["nominal_area_mm2"]), r[column]) for r in table.records()
                     if r["material"] == material and r[column] is not None]
            if pairs:
                key = CapacityKey(insulation, loaded, material, method, formation)
                found.append(_column(table.table_id, column, key, pairs))
    return found


def _cross_checks(columns: dict[CapacityKey, CapacityColumn]) -> None:
    """Physical sense across tables: XLPE carries more than PVC, two loaded conductors more than three."""
    for key, col in columns.items():
        pairs = []
        if key.insulation == "pvc_70":
            pairs.append(("XLPE", CapacityKey("xlpe_epr_90", key.loaded, key.material, key.method, key.formation)))
        if key.loaded == 3 and key.method != "F":
            pairs.append(("two loaded conductors", CapacityKey(key.insulation, 2, key.material, key.method)))
        for what, other_key in pairs:
            other = columns.get(other_key)
            if other is None:
                continue
            for area, value in zip(col.areas_m2, col.capacities_a):
                better = other.at(area)
                if better is not None and not better > value:
                    _fail(col.table_id, f"{key.material} {key.method} {area / MM2:g} mm²: {what} must carry more "
                                        f"({better:g} A in {other.table_id}) than {value:g} A")


def _steps(table: DataTable, x_column: str, y_column: str, reference_x: float | None, falling: bool) -> tuple[StepFactor, ...]:
    rows = [(float(r[x_column]), r[y_column]) for r in table.records() if r[y_column] is not None]
    xs = [x for x, _ in rows]
    ys = [y for _, y in rows]
    if not rows or not all(_positive(y) for y in ys) or not _rising(xs):
        _fail(table.table_id, f"{y_column}: need positive factors against a strictly rising {x_column}")
    if falling and not _non_increasing([float(y) for y in ys]):
        _fail(table.table_id, f"{y_column}: factors must not rise as {x_column} rises")
    if reference_x is not None:
        at_ref = [y for x, y in rows if x == reference_x]
        if at_ref != [1.0] and at_ref != [1]:
            _fail(table.table_id, f"{y_column}: the factor at the reference {reference_x:g} must be 1")
    return tuple(StepFactor(x, float(y)) for x, y in rows)


def _grouping_air(table: DataTable) -> dict[str, tuple[StepFactor, ...]]:
    found = {}
    for column in table.columns[1:]:
        steps = _steps(table, "circuits", column, None, falling=True)
        if steps[0].upto != 1 or steps[0].value > 1.0:
            _fail(table.table_id, f"{column}: must start at one circuit with a factor of at most 1")
        found[column] = steps
    if found["bunched"][0].value != 1.0:
        _fail(table.table_id, "bunched: one circuit must have a factor of 1")
    return found


def _grouping_buried(table: DataTable) -> dict[str, tuple[StepFactor, ...]]:
    found = {column: _steps(table, "circuits", column, None, falling=True) for column in table.columns[1:]}
    for column, steps in found.items():
        if steps[0].upto != 2 or not all(s.value < 1.0 for s in steps):
            _fail(table.table_id, f"{column}: must start at two circuits with factors below 1")
    spacings = list(found)
    for steps_near, steps_far in zip([found[s] for s in spacings], [found[s] for s in spacings[1:]]):
        if any(far.value < near.value for near, far in zip(steps_near, steps_far)):
            _fail(table.table_id, "factors must not fall as the spacing between circuits grows")
    return found


def _single_core_not_better(single: dict[str, tuple[StepFactor, ...]], multi: dict[str, tuple[StepFactor, ...]]) -> None:
    """Table B.52.19: single-core circuits in ducts never group better than multicore cables at the same spacing."""
    if set(single) != set(multi):
        _fail(GROUPING_DUCT_SINGLE_CORE_TABLE, f"spacings must be those of {GROUPING_DUCT_TABLE}")
    for spacing, steps in single.items():
        by_n = {s.upto: s.value for s in multi[spacing]}
        for s in steps:
            if s.upto not in by_n or s.value > by_n[s.upto]:
                _fail(GROUPING_DUCT_SINGLE_CORE_TABLE, f"{spacing}, {s.upto:g} circuits: must be a row of "
                                                       f"{GROUPING_DUCT_TABLE} and not above its factor")


def _drop_limits(table: DataTable) -> dict[str, tuple[float, float]]:
    limits = {}
    for r in table.records():
        lighting, other = r["lighting_pct"], r["other_uses_pct"]
        if not (_positive(lighting) and _positive(other) and lighting <= other):
            _fail(table.table_id, f"{r['installation_type']}: need positive limits, lighting no more than other uses")
        limits[r["installation_type"]] = (float(lighting), float(other))
    if set(limits) != {"A_public_lv", "B_private_lv"}:
        _fail(table.table_id, "rows must be installation types A_public_lv and B_private_lv")
    if not all(a <= b for a, b in zip(limits["A_public_lv"], limits["B_private_lv"])):
        _fail(table.table_id, "a private supply (type B) must allow at least the public supply's (type A) drop")
    return limits


@dataclass(frozen=True, slots=True)
class HarmonicBand:
    """Table E.52.1: third-harmonic content in (above_pct, up_to_pct] sizes on ``size_on`` with ``factor``."""

    above_pct: float
    up_to_pct: float | None
    size_on: str  # "line": the line current; "neutral": the neutral current 3 x content x line current
    factor: float


def _harmonic_bands(table: DataTable) -> tuple[HarmonicBand, ...]:
    bands = tuple(HarmonicBand(float(r["content_above_pct"]), None if r["content_up_to_pct"] is None
                               else float(r["content_up_to_pct"]), str(r["size_on"]), r["factor"])
                  for r in table.records())
    if bands[0].above_pct != 0 or bands[-1].up_to_pct is not None or bands[0].factor != 1.0:
        _fail(table.table_id, "bands must start at 0 % with a factor of 1 and end open")
    for below, above in zip(bands, bands[1:]):
        if below.up_to_pct != above.above_pct:
            _fail(table.table_id, "bands must be contiguous")
    for b in bands:
        if b.size_on not in ("line", "neutral") or not (_positive(b.factor) and b.factor <= 1.0):
            _fail(table.table_id, "each band sizes on the line or the neutral current with a factor in (0, 1]")
    if [b.size_on for b in bands] != sorted((b.size_on for b in bands), key=("line", "neutral").index):
        _fail(table.table_id, "bands on the line current must come before bands on the neutral current")
    return bands


@dataclass(frozen=True, slots=True)
class PeBand:
    above_mm2: float
    up_to_mm2: float | None
    rule: str  # "equal", "half" or a fixed area such as "16 mm²"


def _pe_bands(table: DataTable) -> tuple[PeBand, ...]:
    bands = tuple(PeBand(float(r["line_above_mm2"]), None if r["line_up_to_mm2"] is None else float(r["line_up_to_mm2"]),
                         str(r["rule"])) for r in table.records())
    if bands[0].above_mm2 != 0 or bands[-1].up_to_mm2 is not None:
        _fail(table.table_id, "bands must start at 0 and end open")
    for below, above in zip(bands, bands[1:]):
        if below.up_to_mm2 != above.above_mm2:
            _fail(table.table_id, "bands must be contiguous")
    for b in bands:
        if b.rule not in ("equal", "half") and not (b.rule.endswith(" mm²") and _positive(float(b.rule.split()[0]))):
            _fail(table.table_id, f"unknown rule {b.rule!r}")
    return bands


@dataclass(frozen=True, slots=True)
class FuseConventionalBand:
    in_up_to_a: float | None
    upper_inclusive: bool
    non_fusing_multiple: float
    fusing_multiple: float


def _fuse_conventional(table: DataTable) -> tuple[FuseConventionalBand, ...]:
    bands = tuple(FuseConventionalBand(None if r["in_up_to_a"] is None else float(r["in_up_to_a"]), bool(r["upper_inclusive"]),
                                       float(r["conventional_non_fusing_multiple"]), float(r["conventional_fusing_multiple"]))
                  for r in table.records())
    if bands[-1].in_up_to_a is not None:
        _fail(table.table_id, "the last band must be open-ended")
    for b in bands:
        if not 1.0 < b.non_fusing_multiple < b.fusing_multiple:
            _fail(table.table_id, "need 1 < non-fusing multiple < fusing multiple")
    if not _non_increasing([b.fusing_multiple for b in bands]):
        _fail(table.table_id, "the fusing multiple must not rise with the rated current")
    return bands


def _breaker_conventional(table: DataTable) -> tuple[float, float]:
    values = {r["quantity"]: r["multiple_of_in"] for r in table.records()}
    nt, t = values.get("conventional_non_tripping"), values.get("conventional_tripping")
    if not (_positive(nt) and _positive(t) and 1.0 < nt < t):
        _fail(table.table_id, "need 1 < conventional non-tripping < conventional tripping multiple")
    return float(nt), float(t)


def _densities(tables: dict[str, DataTable]) -> dict[str, float]:
    found = {}
    for table_id in DENSITY_TABLES:
        for r in tables[table_id].records():
            if not _positive(r["density_kg_per_m3"]) or not 1000 < r["density_kg_per_m3"] < 25000:
                _fail(table_id, "density must be a metal's (1000 to 25000 kg/m³)")
            found[r["material"]] = float(r["density_kg_per_m3"])
    if set(found) != set(MATERIALS):
        _fail(DENSITY_TABLES[0], "need one density for each of copper and aluminium")
    return found


class SizingTables:
    """Every IEC 60364 sizing table, validated once."""

    def __init__(self, tables: dict[str, DataTable]) -> None:
        wanted = (*ENCLOSED_TABLES, *FREE_AIR_TABLES, *(t for t, _ in AMBIENT_TABLES.values()), SOIL_TABLE,
                  GROUPING_AIR_TABLE, GROUPING_DIRECT_TABLE, GROUPING_DUCT_TABLE, GROUPING_DUCT_SINGLE_CORE_TABLE, INSULATION_TABLE, HARMONIC_TABLE, DROP_TABLE, PE_TABLE,
                  BREAKER_CONVENTIONAL_TABLE, FUSE_CONVENTIONAL_TABLE, *DENSITY_TABLES, GEOMETRY_TABLE)
        self.tables = {t: tables[t] for t in wanted}
        columns: list[CapacityColumn] = []
        for table_id in ENCLOSED_TABLES:
            columns += _enclosed(tables[table_id])
        for table_id in FREE_AIR_TABLES:
            columns += _free_air(tables[table_id])
        self.capacities = {c.key: c for c in columns}
        if len(self.capacities) != len(columns):
            _fail("current-carrying capacity tables", "two tables hold the same capacity column")
        _cross_checks(self.capacities)
        self.ambient = {
            (medium, insulation): _steps(tables[table_id], "ambient_degc", insulation, reference, falling=True)
            for medium, (table_id, reference) in AMBIENT_TABLES.items() for insulation in INSULATIONS
        }
        self.ambient_reference_c = {medium: reference for medium, (_, reference) in AMBIENT_TABLES.items()}
        self.soil = {method: _steps(tables[SOIL_TABLE], "soil_resistivity_k_m_per_w", method, SOIL_REFERENCE_K_M_PER_W,
                                    falling=True) for method in ("D1", "D2")}
        self.grouping_air = _grouping_air(tables[GROUPING_AIR_TABLE])
        self.grouping_direct = _grouping_buried(tables[GROUPING_DIRECT_TABLE])
        self.grouping_ducts = _grouping_buried(tables[GROUPING_DUCT_TABLE])
        self.grouping_ducts_single_core = _grouping_buried(tables[GROUPING_DUCT_SINGLE_CORE_TABLE])
        _single_core_not_better(self.grouping_ducts_single_core, self.grouping_ducts)
        self.insulation = _steps(tables[INSULATION_TABLE], "length_in_insulation_mm", "factor", None, falling=True)
        if not all(s.value < 1.0 for s in self.insulation):
            _fail(INSULATION_TABLE, "every thermal insulation factor must be below 1")
        self.harmonic_bands = _harmonic_bands(tables[HARMONIC_TABLE])
        self.drop_limits = _drop_limits(tables[DROP_TABLE])
        self.pe_bands = _pe_bands(tables[PE_TABLE])
        self.breaker_conventional = _breaker_conventional(tables[BREAKER_CONVENTIONAL_TABLE])
        self.fuse_conventional = _fuse_conventional(tables[FUSE_CONVENTIONAL_TABLE])
        self.densities = _densities(tables)
        self.cable_geometry = cable_geometry(tables[GEOMETRY_TABLE])  # for the reactance by arrangement

    def source(self, table_id: str) -> str:
        t = self.tables[table_id]
        return f"{t.standard} {t.edition}, {t.table} [{t.provenance}]"


@lru_cache(maxsize=1)
def default_sizing_tables() -> SizingTables:
    return SizingTables(load_tables())
