"""Protective-device and disconnection tables as validated domain objects.

Every table comes from a data file in service.core.data (one per published
table); this module turns their rows into frozen records and checks that they
make physical sense, raising DataTableError on the first defect so a mistyped
file stops the service at start-up (as the conductor library does).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

from service.core.data import DataTable, load_tables
from service.core.errors import DataTableError

TRIP_TABLE = "iec60898-1-instantaneous-trip"
BREAKER_RATINGS_TABLE = "iec60898-1-rated-currents"
GATES_TABLE = "iec60269-1-gg-gates"
FUSE_RATINGS_TABLE = "iec60269-1-gg-rated-currents"
DISCONNECTION_TABLE = "iec60364-4-41-table41-1"
RCD_TABLE = "iec61008-1-break-times"
K_LIVE_TABLE = "iec60364-4-43-table43a"
K_PE_SEPARATE_TABLE = "iec60364-5-54-tableA54-2"
K_PE_IN_CABLE_TABLE = "iec60364-5-54-tableA54-4"
K_PE_BARE_ON_COVERING_TABLE = "iec60364-5-54-tableA54-3"
K_PE_BARE_TABLE = "iec60364-5-54-tableA54-5"
BS88_POINTS_TABLE = "bs7671-table41-2-bs88-2-0-4s"
ENERGY_CLASS_TABLE = "en60898-1-annex-za-energy-classes"
SEPARATE_PE_MINIMUM_TABLE = "iec60364-5-54-543-1-3"
BREAKING_DEFAULTS_TABLE = "breaking-capacity-defaults"

# Conductor role -> the table holding its k values.
K_TABLES = {"live": K_LIVE_TABLE, "pe_separate": K_PE_SEPARATE_TABLE, "pe_in_cable": K_PE_IN_CABLE_TABLE,
            "pe_bare_on_covering": K_PE_BARE_ON_COVERING_TABLE, "pe_bare": K_PE_BARE_TABLE}
# gG fuse systems whose band between the IEC 60269-1 gates is refined by published points.
FUSE_SYSTEMS = ("iec60269_1", "bs88_2")
CSA_BANDS = ("all", "up_to_300", "over_300")


@dataclass(frozen=True, slots=True)
class TripBand:
    """IEC 60898-1 instantaneous range: above lower x In, up to and including upper x In."""

    curve: str
    lower_multiple: float
    upper_multiple: float


@dataclass(frozen=True, slots=True)
class FuseGates:
    """IEC 60269-1 gates of one gG rating (prospective currents, A)."""

    rated_current_a: float
    imin_10s_a: float
    imax_5s_a: float
    imin_0_1s_a: float
    imax_0_1s_a: float


@dataclass(frozen=True, slots=True)
class FuseBand:
    """Points (time s, current A) of a gG fuse-link's maximum operating characteristic, longest time first.

    Always the IEC 60269-1 gates Imax(5 s) and Imax(0.1 s); for a fuse system with published points, those
    in between.  Between points the characteristic is taken as a straight line in log-log.
    """

    rated_current_a: float
    points: tuple[tuple[float, float], ...]
    sources: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class EnergyLimit:
    """EN 60898-1 Annex ZA: the largest let-through I²t of a class at a prospective current."""

    curve: str
    rated_above_a: float
    rated_up_to_a: float
    energy_class: int
    prospective_current_a: float
    max_i2t_a2s: float


@dataclass(frozen=True, slots=True)
class DisconnectionBand:
    """One cell pair of IEC 60364-4-41 Table 41.1 (None: Note 1, no time for shock protection)."""

    earthing: str
    u0_above_v: float
    u0_up_to_v: float | None
    ac_s: float | None
    dc_s: float | None


@dataclass(frozen=True, slots=True)
class RcdBreakTime:
    rcd_type: str
    multiple_of_idn: float
    max_break_time_s: float
    min_non_actuating_time_s: float | None


@dataclass(frozen=True, slots=True)
class KValue:
    table_id: str
    material: str
    insulation: str
    csa_band: str
    initial_temp_c: float
    final_temp_c: float
    k: float


def _fail(table_id: str, message: str) -> None:
    raise DataTableError(f"{table_id}: {message}")


def _strictly_rising(values: list[float]) -> bool:
    return all(a < b for a, b in zip(values, values[1:]))


def _positive(value: object) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool) and value > 0


def _trip_bands(table: DataTable) -> dict[str, TripBand]:
    bands = [TripBand(r["curve"], float(r["lower_multiple"]), float(r["upper_multiple"])) for r in table.records()]
    if len({b.curve for b in bands}) != len(bands) or not {"B", "C", "D"} <= {b.curve for b in bands}:
        _fail(table.table_id, "curves must be unique and include B, C and D")
    for b in bands:
        if not 1.0 < b.lower_multiple < b.upper_multiple:
            _fail(table.table_id, f"curve {b.curve}: need 1 < lower multiple < upper multiple")
    lowers = [b.lower_multiple for b in bands]
    uppers = [b.upper_multiple for b in bands]
    if not (_strictly_rising(lowers) and _strictly_rising(uppers)):
        _fail(table.table_id, "multiples must rise from one curve to the next")
    return {b.curve: b for b in bands}


def _ratings(table: DataTable) -> tuple[float, ...]:
    values = [r["rated_current_a"] for r in table.records()]
    if not all(_positive(v) for v in values) or not _strictly_rising([float(v) for v in values]):
        _fail(table.table_id, "rated currents must be positive and strictly rising")
    return tuple(float(v) for v in values)


def _gates(table: DataTable) -> dict[float, FuseGates]:
    gates = [
        FuseGates(float(r["rated_current_a"]), float(r["imin_10s_a"]), float(r["imax_5s_a"]),
                  float(r["imin_0_1s_a"]), float(r["imax_0_1s_a"]))
        for r in table.records()
    ]
    for g in gates:
        if not (g.rated_current_a < g.imin_10s_a < g.imax_5s_a < g.imax_0_1s_a and g.imin_10s_a < g.imin_0_1s_a < g.imax_0_1s_a):
            _fail(table.table_id, f"{g.rated_current_a:g} A: gates out of order (In < Imin10s < Imax5s < Imax0.1s, Imin0.1s < Imax0.1s)")
    for column in ("rated_current_a", "imin_10s_a", "imax_5s_a", "imin_0_1s_a", "imax_0_1s_a"):
        if not _strictly_rising([getattr(g, column) for g in gates]):
            _fail(table.table_id, f"{column} must rise with the rated current")
    return {g.rated_current_a: g for g in gates}


def _chord_current(upper: tuple[float, float], lower: tuple[float, float], time_s: float) -> float:
    """Current of the log-log straight line through two (time, current) points, at ``time_s``."""
    (t1, i1), (t2, i2) = upper, lower
    share = (math.log(time_s) - math.log(t1)) / (math.log(t2) - math.log(t1))
    return math.exp(math.log(i1) + share * (math.log(i2) - math.log(i1)))


def _fuse_bands(gates: dict[float, FuseGates], points: DataTable, gates_source: str,
                points_source: str) -> dict[str, dict[float, FuseBand]]:
    """The gates alone for any gG fuse-link; the gates with the published 0.4 s points for BS 88-2.

    A published point must lie between the gates and not right of their log-log chord: published maximum
    characteristics are convex in log-log (common practice), so a point right of the chord is a typing error.
    """
    generic = {r: FuseBand(r, ((5.0, g.imax_5s_a), (0.1, g.imax_0_1s_a)), (gates_source,)) for r, g in gates.items()}
    refined = dict(generic)
    for rec in points.records():
        rating, t = float(rec["rated_current_a"]), float(rec["time_s"])
        current = float(rec["u0_v"]) / float(rec["max_zs_ohm"])
        g = gates.get(rating)
        if g is None or not 0.1 < t < 5.0:
            _fail(points.table_id, f"{rating:g} A: a point needs gates held and a time between 0.1 s and 5 s")
        chord = _chord_current((5.0, g.imax_5s_a), (0.1, g.imax_0_1s_a), t)
        if not g.imax_5s_a < current <= chord * (1 + 1e-9):
            _fail(points.table_id, f"{rating:g} A: {current:.4g} A at {t:g} s lies outside the gates' band")
        pts = sorted({*refined[rating].points, (t, current)}, reverse=True)
        refined[rating] = FuseBand(rating, tuple(pts), (gates_source, points_source))
    return {"iec60269_1": generic, "bs88_2": refined}


def _energy_limits(table: DataTable) -> tuple[EnergyLimit, ...]:
    limits = tuple(EnergyLimit(r["curve"], float(r["rated_above_a"]), float(r["rated_up_to_a"]), int(r["energy_class"]),
                               float(r["prospective_current_a"]), float(r["max_i2t_a2s"])) for r in table.records())
    groups: dict[tuple, list[EnergyLimit]] = {}
    for lim in limits:
        groups.setdefault((lim.curve, lim.rated_above_a, lim.rated_up_to_a, lim.energy_class), []).append(lim)
    for key, rows in groups.items():
        if not (_strictly_rising([r.prospective_current_a for r in rows]) and _strictly_rising([r.max_i2t_a2s for r in rows])):
            _fail(table.table_id, f"{key}: prospective currents and I²t must rise together")
    for (curve, above, up_to, cls), rows in groups.items():
        better = groups.get((curve, above, up_to, cls + 1))
        if better and any(b.max_i2t_a2s >= r.max_i2t_a2s for r, b in zip(rows, better)):
            _fail(table.table_id, f"type {curve}: class {cls + 1} must let through less than class {cls}")
    return limits


def _disconnection_bands(table: DataTable) -> dict[str, tuple[DisconnectionBand, ...]]:
    by_earthing: dict[str, list[DisconnectionBand]] = {}
    for r in table.records():
        band = DisconnectionBand(r["earthing"], float(r["u0_above_v"]),
                                 None if r["u0_up_to_v"] is None else float(r["u0_up_to_v"]),
                                 None if r["ac_s"] is None else float(r["ac_s"]),
                                 None if r["dc_s"] is None else float(r["dc_s"]))
        by_earthing.setdefault(band.earthing, []).append(band)
    if set(by_earthing) != {"TN", "TT"}:
        _fail(table.table_id, "rows must cover exactly the TN and TT systems")
    for earthing, bands in by_earthing.items():
        for below, above in zip(bands, bands[1:]):
            if below.u0_up_to_v is None or below.u0_up_to_v != above.u0_above_v:
                _fail(table.table_id, f"{earthing}: U0 bands must be contiguous and rising")
        if bands[-1].u0_up_to_v is not None:
            _fail(table.table_id, f"{earthing}: the last U0 band must be open-ended")
        for kind in ("ac_s", "dc_s"):
            times = [getattr(b, kind) for b in bands if getattr(b, kind) is not None]
            if any(b > a for a, b in zip(times, times[1:])):
                _fail(table.table_id, f"{earthing}: {kind} times must not rise with U0")
    for tn, tt in zip(by_earthing["TN"], by_earthing["TT"]):
        if tn.u0_above_v != tt.u0_above_v or (tn.ac_s is not None and tt.ac_s is not None and tt.ac_s > tn.ac_s):
            _fail(table.table_id, "TT bands must match the TN bands and be no slower")
    return {k: tuple(v) for k, v in by_earthing.items()}


def _rcd_break_times(table: DataTable) -> dict[str, tuple[RcdBreakTime, ...]]:
    by_type: dict[str, list[RcdBreakTime]] = {}
    for r in table.records():
        row = RcdBreakTime(r["rcd_type"], float(r["multiple_of_idn"]), float(r["max_break_time_s"]),
                           None if r["min_non_actuating_time_s"] is None else float(r["min_non_actuating_time_s"]))
        by_type.setdefault(row.rcd_type, []).append(row)
    if "general" not in by_type:
        _fail(table.table_id, "the general type must be listed")
    for rcd_type, rows in by_type.items():
        multiples = [r.multiple_of_idn for r in rows]
        times = [r.max_break_time_s for r in rows]
        if multiples[0] != 1.0 or not _strictly_rising(multiples) or not _strictly_rising(times[::-1]):
            _fail(table.table_id, f"{rcd_type}: multiples must rise from 1 x IΔn and break times fall")
        for r in rows:
            if r.min_non_actuating_time_s is not None and not r.min_non_actuating_time_s < r.max_break_time_s:
                _fail(table.table_id, f"{rcd_type}: non-actuating time must be shorter than the break time")
    return {k: tuple(v) for k, v in by_type.items()}


def _k_values(table: DataTable) -> tuple[KValue, ...]:
    values = tuple(
        KValue(table.table_id, r["material"], r["insulation"], r["csa_band"], float(r["initial_temp_c"]),
               float(r["final_temp_c"]), float(r["k"]))
        for r in table.records()
    )
    keys = [(v.material, v.insulation, v.csa_band) for v in values]
    if len(set(keys)) != len(keys):
        _fail(table.table_id, "duplicate material/insulation/size-band row")
    for v in values:
        if v.csa_band not in CSA_BANDS or not (v.k > 0 and v.final_temp_c > v.initial_temp_c):
            _fail(table.table_id, f"{v.material} {v.insulation}: bad size band, k or temperatures")
        bands = {b for (m, i, b) in keys if (m, i) == (v.material, v.insulation)}
        if bands not in ({"all"}, {"up_to_300", "over_300"}):
            _fail(table.table_id, f"{v.material} {v.insulation}: give one 'all' row or both size bands")
    by_key = {(v.material, v.insulation, v.csa_band): v.k for v in values}
    for (material, insulation, band), k in by_key.items():
        if band == "over_300" and not k < by_key[(material, insulation, "up_to_300")]:
            _fail(table.table_id, f"{material} {insulation}: k over 300 mm² must be below k up to 300 mm²")
    return values


class ProtectionLibrary:
    """Every protection table, validated once."""

    def __init__(self, tables: dict[str, DataTable]) -> None:
        self.tables = {t: tables[t] for t in (TRIP_TABLE, BREAKER_RATINGS_TABLE, GATES_TABLE, FUSE_RATINGS_TABLE,
                                             DISCONNECTION_TABLE, RCD_TABLE, *K_TABLES.values(), BS88_POINTS_TABLE,
                                             ENERGY_CLASS_TABLE, SEPARATE_PE_MINIMUM_TABLE, BREAKING_DEFAULTS_TABLE)}
        self.trip_bands = _trip_bands(tables[TRIP_TABLE])
        self.breaker_ratings = _ratings(tables[BREAKER_RATINGS_TABLE])
        self.fuse_gates = _gates(tables[GATES_TABLE])
        self.fuse_ratings = _ratings(tables[FUSE_RATINGS_TABLE])
        if not set(self.fuse_gates) <= set(self.fuse_ratings):
            _fail(GATES_TABLE, "every gated rating must be a standard fuse-link rating")
        self.disconnection = _disconnection_bands(tables[DISCONNECTION_TABLE])
        self.rcd_break_times = _rcd_break_times(tables[RCD_TABLE])
        self.k_values = {role: _k_values(tables[table_id]) for role, table_id in K_TABLES.items()}
        self.fuse_bands = _fuse_bands(self.fuse_gates, tables[BS88_POINTS_TABLE], self.source(GATES_TABLE),
                                      self.source(BS88_POINTS_TABLE))
        self.energy_limits = _energy_limits(tables[ENERGY_CLASS_TABLE])
        self.separate_pe_minimum_mm2 = {(r["material"], bool(r["mechanically_protected"])): float(r["minimum_mm2"])
                                        for r in tables[SEPARATE_PE_MINIMUM_TABLE].records()}
        self.breaking_defaults_a = {r["device"]: float(r["breaking_capacity_a"])
                                    for r in tables[BREAKING_DEFAULTS_TABLE].records()}
        if not all(_positive(v) for v in (*self.separate_pe_minimum_mm2.values(), *self.breaking_defaults_a.values())):
            _fail(SEPARATE_PE_MINIMUM_TABLE, "minimum areas and default breaking capacities must be positive")

    def source(self, table_id: str) -> str:
        """'IEC 60364-4-41 5.0 (2005) ..., Table 41.1 ... [provenance]' for a result's source field."""
        t = self.tables[table_id]
        return f"{t.standard} {t.edition}, {t.table} [{t.provenance}]"


@lru_cache(maxsize=1)
def default_protection() -> ProtectionLibrary:
    return ProtectionLibrary(load_tables())
