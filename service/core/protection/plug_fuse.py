"""BS 1362 cartridge fuse-links (the fuse in a BS 1363 plug) as protective devices.

The same interface as the other devices (see devices.py): the current that
guarantees operation within a time, and the time within which a current is
guaranteed to be cleared.  The data are three tables: the rated currents held
(13 A at most), the conventional currents (non-fusing 1.6 In and fusing 1.9 In
for 30 min), and the time/current zones of the 3 A and 13 A links.

The maximum operating characteristic of a rating is the chain of points
(30 min, 1.9 In) and, where a zone is held, each zone's (maximum pre-arcing
time, current), straight in log-log between points.  As for gG fuse-links
(devices.py), a published maximum characteristic is convex in log-log, so the
chord lies on its slow side and the interpolated times are conservative (common
practice).  Pre-arcing time is taken for operating time: the arcing time of a
plug fuse at these currents is a few milliseconds (common practice); no time
shorter than the fastest zone limit is guaranteed.  Ratings without a held zone
are guaranteed nothing faster than 30 min, so they get no fault-disconnection
credit (conservative).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

from service.core.data import DataTable, load_tables
from service.core.errors import DataTableError

from .checks import fail, require_positive
from .devices import _log_log

ZONES_TABLE = "bs1362-time-current-zones"
RATINGS_TABLE = "bs1362-rated-currents"
CONVENTIONAL_TABLE = "bs1362-conventional-currents"
PLUG_FUSE_TABLES = (ZONES_TABLE, RATINGS_TABLE, CONVENTIONAL_TABLE)
BS1362_MAX_RATED_A = 13.0  # BS 1362 scope: current ratings not exceeding 13 A


@dataclass(frozen=True, slots=True)
class PlugFuseBand:
    """One rating's maximum operating characteristic: (time s, current A), longest time first."""

    rated_current_a: float
    points: tuple[tuple[float, float], ...]
    non_fusing_a: float
    fusing_a: float
    conventional_time_s: float


def _source(table: DataTable) -> str:
    return f"{table.standard} {table.edition}, {table.table} [{table.provenance}]"


def _fail(table_id: str, message: str) -> None:
    raise DataTableError(f"{table_id}: {message}")


class PlugFuseLibrary:
    """The BS 1362 tables, validated once: a defective file stops start-up."""

    def __init__(self, tables: dict[str, DataTable]) -> None:
        self.tables = {t: tables[t] for t in PLUG_FUSE_TABLES}
        ratings = [float(r["rated_current_a"]) for r in tables[RATINGS_TABLE].records()]
        if not ratings or any(not 0 <= a < b for a, b in zip([0.0, *ratings], ratings)) or ratings[-1] > BS1362_MAX_RATED_A:
            _fail(RATINGS_TABLE, f"ratings must be positive, rising and at most {BS1362_MAX_RATED_A:g} A")
        self.ratings = tuple(ratings)
        conventional = {r["current"]: r for r in tables[CONVENTIONAL_TABLE].records()}
        if set(conventional) != {"non_fusing", "fusing"}:
            _fail(CONVENTIONAL_TABLE, "give exactly the non-fusing and the fusing current")
        non_fusing, fusing = (float(conventional[k]["multiple_of_rated"]) for k in ("non_fusing", "fusing"))
        t_conv = float(conventional["fusing"]["conventional_time_s"])
        if not 1.0 < non_fusing < fusing or t_conv <= 0:
            _fail(CONVENTIONAL_TABLE, "need 1 < non-fusing multiple < fusing multiple and a positive time")
        zones: dict[float, list[tuple[float, float]]] = {}
        for r in tables[ZONES_TABLE].records():
            rating, current, t_min, t_max = (float(r["rated_current_a"]), float(r["current_a"]),
                                             r["min_pre_arcing_s"], float(r["max_pre_arcing_s"]))
            if not any(math.isclose(rating, x) for x in ratings):
                _fail(ZONES_TABLE, f"{rating:g} A is not a held rating")
            if t_min is not None and not 0 < float(t_min) < t_max:
                _fail(ZONES_TABLE, f"{rating:g} A at {current:g} A: the minimum time must be below the maximum")
            if not current > fusing * rating or t_max >= t_conv:
                _fail(ZONES_TABLE, f"{rating:g} A at {current:g} A: a zone lies above the fusing current, "
                                   "faster than the conventional time")
            zones.setdefault(rating, []).append((t_max, current))
        self.bands: dict[float, PlugFuseBand] = {}
        for rating in ratings:
            pts = [(t_conv, fusing * rating), *sorted(zones.get(rating, []), reverse=True)]
            if any(not (t2 < t1 and i2 > i1) for (t1, i1), (t2, i2) in zip(pts, pts[1:])):
                _fail(ZONES_TABLE, f"{rating:g} A: times must fall as the current rises")
            self.bands[rating] = PlugFuseBand(rating, tuple(pts), non_fusing * rating, fusing * rating, t_conv)
        self.sources = {t: _source(tables[t]) for t in PLUG_FUSE_TABLES}

    def band(self, rated_current_a: float) -> PlugFuseBand | None:
        return next((b for r, b in self.bands.items() if math.isclose(r, rated_current_a, rel_tol=1e-9)), None)


@lru_cache(maxsize=1)
def default_plug_fuses() -> PlugFuseLibrary:
    return PlugFuseLibrary(load_tables())


def plug_fuse_rating_problem(rated_current_a: float, library: PlugFuseLibrary | None = None) -> str | None:
    """None for a held BS 1362 rating; otherwise what is wrong, naming the list (for a 422 at the edge)."""
    lib = library or default_plug_fuses()
    if lib.band(rated_current_a) is not None:
        return None
    listed = ", ".join(f"{r:g}" for r in lib.ratings)
    if rated_current_a > BS1362_MAX_RATED_A:
        return (f"{rated_current_a:g} A is above the {BS1362_MAX_RATED_A:g} A maximum of a BS 1362 plug fuse "
                f"(ratings held: {listed} A)")
    return f"{rated_current_a:g} A is not a BS 1362 plug-fuse rating held here: {listed} A"


@dataclass(frozen=True, slots=True)
class PlugFuse:
    rated_current_a: float

    def __post_init__(self) -> None:
        require_positive(self.rated_current_a, ("plug_fuse",), "the plug fuse's rated current")

    @property
    def label(self) -> str:
        return f"{self.rated_current_a:g} A plug fuse (BS 1362)"


def plug_fuse_band(device: PlugFuse, library: PlugFuseLibrary | None = None) -> PlugFuseBand:
    lib = library or default_plug_fuses()
    band = lib.band(device.rated_current_a)
    if band is None:
        raise fail("unknown-rating", ("plug_fuse",), f"No BS 1362 data are held for a {device.rated_current_a:g} A "
                   "plug fuse.", "Give a held rating: " + ", ".join(f"{r:g}" for r in lib.ratings) + " A.",
                   plug_fuse_rating_problem(device.rated_current_a, lib) or "not a held rating")
    return band


def band_basis(band: PlugFuseBand) -> str:
    points = ", ".join(f"{i:.4g} A within {t:g} s" for t, i in band.points)
    return f"BS 1362 maximum operating characteristic through {points}, straight in log-log between points"


def band_sources(band: PlugFuseBand, library: PlugFuseLibrary | None = None) -> str:
    lib = library or default_plug_fuses()
    used = (CONVENTIONAL_TABLE, ZONES_TABLE) if len(band.points) > 1 else (CONVENTIONAL_TABLE,)
    return "; ".join(lib.sources[t] for t in used)


def plug_fuse_operating(device: PlugFuse, required_time_s: float, library: PlugFuseLibrary | None = None):
    """(Ia, the time it guarantees, basis, source) for operation within ``required_time_s``; CalcError if none."""
    band = plug_fuse_band(device, library)
    fastest = band.points[-1][0]
    if required_time_s < fastest * (1 - 1e-12):
        raise fail("no-guaranteed-operation", ("required_time",),
                   f"The {device.label} has no guaranteed operating current for {required_time_s:g} s: the BS 1362 "
                   f"data held guarantee nothing faster than {fastest:g} s for this rating.",
                   "Rely on the origin device or an RCD for this disconnection.", f"shorter than {fastest:g} s")
    if required_time_s >= band.points[0][0]:
        return band.points[0][1], band.points[0][0], band
    upper, lower = next((a, b) for a, b in zip(band.points, band.points[1:]) if a[0] >= required_time_s >= b[0])
    return _log_log(required_time_s, upper[0], upper[1], lower[0], lower[1]), required_time_s, band


def plug_fuse_clearing(device: PlugFuse, current_a: float, library: PlugFuseLibrary | None = None):
    """(the longest time the fuse may take to clear ``current_a``, band), or None below the fusing current."""
    band = plug_fuse_band(device, library)
    (t_long, i_long), (t_short, i_short) = band.points[0], band.points[-1]
    if current_a < i_long * (1 - 1e-12):
        return None
    if current_a >= i_short:
        return t_short, band
    at = max(current_a, i_long)
    upper, lower = next((a, b) for a, b in zip(band.points, band.points[1:]) if a[1] <= at <= b[1])
    return min(_log_log(at, upper[1], upper[0], lower[1], lower[0]), upper[0]), band
