"""The NFPA 70 (NEC) tables as validated lookups, one data file per published table.

Turning rows into lookups checks their physical sense — ampacities positive,
rising with size and with the insulation's temperature rating; correction
factors 1 at 30 °C and falling as it warms; adjustment falling as conductors
are added; raceway and conductor areas rising with trade size and conductor
size; grounding conductors growing with the device rating — and raises
DataTableError on the first defect, so a mistyped file stops start-up.

Everything is SI inside: areas m², resistances ohm/m.  Sizes are keyed by the
conductor library's labels ("12 AWG", "250 kcmil").
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from service.core.data import DataTable, load_tables
from service.core.errors import DataTableError

from ..tables import _positive, _rising  # the IEC tables' own validity tests, shared

AMPACITY_TABLE = "nec-table310-16"
FREE_AIR_TABLE = "nec-table310-17"
AMBIENT_TABLE = "nec-table310-15-b1-1"
ADJUSTMENT_TABLE = "nec-table310-15-c1"
RATINGS_TABLE = "nec-table240-6a"
SMALL_CONDUCTOR_TABLE = "nec-240-4d"
IMPEDANCE_TABLE = "nec-ch9-table9"
EGC_TABLE = "nec-table250-122"
FILL_TABLE = "nec-ch9-table1"
RACEWAY_TABLE = "nec-ch9-table4"
AREA_TABLE = "nec-ch9-table5"
TYPE_TABLE = "nec-table310-4a"
CONDUCTOR_TABLE = "nec-ch9-table8"  # circular mils, for 250.122(B)'s proportion (the Code's own rounded values)
NEC_TABLES = (AMPACITY_TABLE, FREE_AIR_TABLE, AMBIENT_TABLE, ADJUSTMENT_TABLE, RATINGS_TABLE, SMALL_CONDUCTOR_TABLE, IMPEDANCE_TABLE,
              EGC_TABLE, FILL_TABLE, RACEWAY_TABLE, AREA_TABLE, TYPE_TABLE)
RATINGS_C = (60, 75, 90)
MATERIALS = ("copper", "aluminium")
SQ_IN_M2 = 0.0254**2
PER_KFT_TO_PER_M = 1.0 / 304.8  # ohm per 1000 ft -> ohm per m
# Table 9 column groups: the raceway material its values are for.
IMPEDANCE_RACEWAYS = ("pvc", "aluminium", "steel")
_R_COLUMNS = {("copper", "pvc"): "r_copper_pvc", ("copper", "aluminium"): "r_copper_aluminium_conduit",
              ("copper", "steel"): "r_copper_steel", ("aluminium", "pvc"): "r_aluminium_pvc",
              ("aluminium", "aluminium"): "r_aluminium_aluminium_conduit", ("aluminium", "steel"): "r_aluminium_steel"}
_X_COLUMNS = {"pvc": "xl_pvc_aluminium_conduit", "aluminium": "xl_pvc_aluminium_conduit", "steel": "xl_steel_conduit"}
# The table's own "Effective Z at 0.85 PF" columns, by the same (material, raceway) as the R columns.
_Z_COLUMNS = {key: column.replace("r_", "z085_", 1) for key, column in _R_COLUMNS.items()}
TABLE9_POWER_FACTOR = 0.85  # the power factor of the effective-Z columns
Z_NOTE2_TOLERANCE = 0.10  # a tabulated Z further than this from R cos θ + X sin θ at 0.85 is a mistyped cell


def _fail(table_id: str, message: str) -> None:
    raise DataTableError(f"{table_id}: {message}")


def size_label(size: str) -> str:
    """A table's size cell ("12", "1/0", "250") as the conductor library labels it."""
    return f"{size} AWG" if "/" in size or int(size) < 250 else f"{size} kcmil"


@dataclass(frozen=True, slots=True)
class Band:
    """A value that applies up to and including ``upto`` (None: open-ended)."""

    upto: float | None
    value: float


@dataclass(frozen=True, slots=True)
class Impedance:
    r_ohm_per_m: float
    x_ohm_per_m: float
    z085_ohm_per_m: float  # the table's effective Z at 0.85 PF (rounded by the table itself, not from R and X)


@dataclass(frozen=True, slots=True)
class TradeSize:
    raceway: str
    trade_size: str
    metric_designator: str
    area_m2: float


@dataclass(frozen=True, slots=True)
class ConductorType:
    name: str
    dry_rating_c: int
    wet_rating_c: int | None
    area_column: str


def _ampacities(table: DataTable) -> dict[tuple[str, int], dict[str, float]]:
    found: dict[tuple[str, int], dict[str, float]] = {}
    for material in MATERIALS:
        for rating in RATINGS_C:
            column = f"{material}_{rating}"
            pairs = [(size_label(r["size"]), float(r[column])) for r in table.records() if r[column] is not None]
            values = [v for _, v in pairs]
            if not pairs or not all(_positive(v) for v in values) or not _rising(values):
                _fail(table.table_id, f"{column}: ampacities must be positive and rise with the size")
            found[(material, rating)] = dict(pairs)
        for low, high in zip(RATINGS_C, RATINGS_C[1:]):
            for size, value in found[(material, low)].items():
                if not found[(material, high)][size] > value:
                    _fail(table.table_id, f"{material} {size}: the {high} °C column must exceed the {low} °C column")
    for size, al in found[("aluminium", 75)].items():
        if not al < found[("copper", 75)][size]:
            _fail(table.table_id, f"{size}: aluminium must carry less than copper")
    return found


def _ambient(table: DataTable) -> dict[int, tuple[Band, ...]]:
    found = {}
    for rating in RATINGS_C:
        rows = [(float(r["ambient_degc"]), r[f"rating_{rating}"]) for r in table.records() if r[f"rating_{rating}"] is not None]
        values = [float(v) for _, v in rows]
        if not rows or not all(_positive(v) for v in values) or not _rising([x for x, _ in rows]):
            _fail(table.table_id, f"rating_{rating}: need positive factors against rising ambients")
        if any(b > a for a, b in zip(values, values[1:])) or dict(rows).get(30.0) != 1.0:
            _fail(table.table_id, f"rating_{rating}: factors must fall as the ambient rises and be 1 at 30 °C")
        found[rating] = tuple(Band(x, float(v)) for x, v in rows)
    return found


def _bands(table: DataTable, x: str, y: str, *, falling: bool) -> tuple[Band, ...]:
    rows = [Band(None if r[x] is None else float(r[x]), float(r[y])) for r in table.records()]
    if rows[-1].upto is not None or any(b.upto is None for b in rows[:-1]):
        _fail(table.table_id, "only the last band may be open-ended, and it must be")
    bounded = [b.upto for b in rows[:-1]]
    values = [b.value for b in rows]
    if not _rising(bounded) or not all(_positive(v) for v in values):
        _fail(table.table_id, f"{x} must rise and {y} be positive")
    if falling and any(b > a for a, b in zip(values, values[1:])):
        _fail(table.table_id, f"{y} must not rise with {x}")
    return tuple(rows)


def _impedances(table: DataTable) -> dict[tuple[str, str, str], Impedance]:
    found = {}
    sin_085 = math.sqrt(1.0 - TABLE9_POWER_FACTOR**2)
    for (material, raceway), r_column in _R_COLUMNS.items():
        x_column, z_column = _X_COLUMNS[raceway], _Z_COLUMNS[(material, raceway)]
        rows = [(size_label(r["size"]), r[r_column], r[x_column], r[z_column]) for r in table.records()
                if r[r_column] is not None]
        rs, zs = [r for _, r, _, _ in rows], [z for *_, z in rows]
        if not rows or not all(_positive(r) and _positive(x) and _positive(z) for _, r, x, z in rows) \
                or any(b > a for a, b in zip(rs, rs[1:])) or any(b > a for a, b in zip(zs, zs[1:])):
            _fail(table.table_id, f"{r_column}, {z_column}: resistances and impedances must be positive and not rise "
                  "with the size")
        for size, r, x, z in rows:
            if abs(z / (r * TABLE9_POWER_FACTOR + x * sin_085) - 1.0) > Z_NOTE2_TOLERANCE:
                _fail(table.table_id, f"{z_column} {size}: more than 10 % from R cos θ + X sin θ at 0.85 (Note 2)")
            found[(material, raceway, size)] = Impedance(r * PER_KFT_TO_PER_M, x * PER_KFT_TO_PER_M, z * PER_KFT_TO_PER_M)
    for (material, raceway, size), z in found.items():
        if raceway == "steel" and not z.x_ohm_per_m > found[(material, "pvc", size)].x_ohm_per_m:
            _fail(table.table_id, f"{size}: reactance in steel conduit must exceed that in PVC")
    return found


def _egc(table: DataTable) -> dict[str, tuple[tuple[float, str], ...]]:
    records = table.records()
    limits = [float(r["device_up_to_a"]) for r in records]
    if not _rising(limits):
        _fail(table.table_id, "device ratings must rise")
    return {m: tuple((float(r["device_up_to_a"]), size_label(r[m])) for r in records) for m in MATERIALS}


def _raceways(table: DataTable) -> dict[str, tuple[TradeSize, ...]]:
    found: dict[str, list[TradeSize]] = {}
    for r in table.records():
        found.setdefault(r["raceway"], []).append(
            TradeSize(r["raceway"], r["trade_size"], r["metric_designator"], float(r["total_area_in2"]) * SQ_IN_M2))
    for raceway, sizes in found.items():
        if not _rising([s.area_m2 for s in sizes]):
            _fail(table.table_id, f"{raceway}: internal area must rise with the trade size")
    return {k: tuple(v) for k, v in found.items()}


def _areas(table: DataTable) -> dict[tuple[str, str], float]:
    found = {}
    for column in table.columns[1:]:
        values = [r[column] for r in table.records()]
        if not all(_positive(v) for v in values) or not _rising(values):
            _fail(table.table_id, f"{column}: areas must be positive and rise with the size")
        for r in table.records():
            found[(column, size_label(r["size"]))] = float(r[column]) * SQ_IN_M2
    return found


def _types(table: DataTable, area_columns: set[str]) -> dict[str, ConductorType]:
    found = {}
    for r in table.records():
        if r["dry_degc"] not in RATINGS_C or r["wet_degc"] not in (*RATINGS_C, None) or r["area_column"] not in area_columns:
            _fail(table.table_id, f"{r['type']}: ratings must be 60, 75 or 90 °C and the area column one of Table 5's")
        found[r["type"]] = ConductorType(r["type"], r["dry_degc"], r["wet_degc"], r["area_column"])
    return found


class NecTables:
    """Every NEC table the NEC regime and raceway fill use, validated once."""

    def __init__(self, tables: dict[str, DataTable]) -> None:
        self.tables = {t: tables[t] for t in (*NEC_TABLES, CONDUCTOR_TABLE)}
        self.ampacity = _ampacities(tables[AMPACITY_TABLE])
        self.free_air = _ampacities(tables[FREE_AIR_TABLE])
        for key, column in self.free_air.items():
            for size, value in column.items():
                if not value > self.ampacity[key].get(size, 0.0):
                    _fail(FREE_AIR_TABLE, f"{key[0]} {key[1]} °C {size}: free air must carry more than Table 310.16")
        self.ambient = _ambient(tables[AMBIENT_TABLE])
        self.adjustment = _bands(tables[ADJUSTMENT_TABLE], "conductors_up_to", "factor", falling=True)
        if self.adjustment[0].value != 1.0:
            _fail(ADJUSTMENT_TABLE, "up to three conductors the factor must be 1")
        rows = tables[RATINGS_TABLE].records()
        # Every standard rating of 240.6(A), and those common to fuses and inverse-time breakers (the service
        # chooses a device, and takes 240.4(B)'s next size up, among these: 1, 3, 6, 10 and 601 A are fuses only).
        self.fuse_ratings = tuple(float(r["rating_a"]) for r in rows)
        self.ratings = tuple(float(r["rating_a"]) for r in rows if not r["fuse_only"])
        if not _rising(list(self.fuse_ratings)) or not all(isinstance(r["fuse_only"], bool) for r in rows):
            _fail(RATINGS_TABLE, "ratings must rise, each marked fuse_only true or false")
        self.small_conductor = {(r["material"], size_label(r["size"])): float(r["max_overcurrent_a"])
                                for r in tables[SMALL_CONDUCTOR_TABLE].records()}
        self.impedance = _impedances(tables[IMPEDANCE_TABLE])
        self.egc = _egc(tables[EGC_TABLE])
        self.fill = _bands(tables[FILL_TABLE], "conductors_up_to", "fill_pct", falling=False)
        if self.fill[0].upto != 1 or not all(0 < b.value < 100 for b in self.fill):
            _fail(FILL_TABLE, "fill percentages must lie between 0 and 100, the first row for one conductor")
        self.raceways = _raceways(tables[RACEWAY_TABLE])
        self.areas = _areas(tables[AREA_TABLE])
        self.types = _types(tables[TYPE_TABLE], set(tables[AREA_TABLE].columns[1:]))
        self.cmil = {size_label(r["size"]): float(r["area_cmil"]) for r in tables[CONDUCTOR_TABLE].records()}
        if not _rising(sorted(self.cmil.values())) or len(set(self.cmil.values())) != len(self.cmil):
            _fail(CONDUCTOR_TABLE, "one circular-mil area per size")
        for (material, rating), column in self.ampacity.items():
            for size in column:
                if material == "copper" and (material, "steel", size) not in self.impedance and size.endswith("AWG"):
                    _fail(IMPEDANCE_TABLE, f"no impedance for copper {size}")

    def source(self, table_id: str) -> str:
        t = self.tables[table_id]
        return f"{t.standard} {t.edition}, {t.table} [{t.provenance}]"

    def fill_limit_pct(self, conductors: int) -> float:
        return next(b.value for b in self.fill if b.upto is None or conductors <= b.upto)


@lru_cache(maxsize=1)
def default_nec_tables() -> NecTables:
    return NecTables(load_tables())
