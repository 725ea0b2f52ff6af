"""Series impedance of one line conductor of a cable run: AC resistance and reactance by arrangement.

Resistance: the conductor's DC resistance at the temperature asked (IEC 60228
maximum, linear temperature law, see conductors.py), raised by skin and
proximity effect per IEC 60287-1-1:2006, 2.1.2 to 2.1.4:

    R = R' (1 + ys + yp),   ys = xs^4 / (192 + 0.8 xs^4),   xs^2 = 8 pi f / R' x 1e-7 ks
    two conductors:    yp = F (dc/s)^2 x 2.9
    three conductors:  yp = F (dc/s)^2 [0.312 (dc/s)^2 + 1.18 / (F + 0.27)],   F = xp^4 / (192 + 0.8 xp^4)

with ks = kp = 1 (round stranded copper or aluminium, extruded insulation: the
upper values of IEC 60287-1-1 Table 2, from memory) and s the axial spacing
(for a flat formation the geometric mean sqrt(s1 s2) of the neighbours').

Reactance: the inductance of one conductor of a go-and-return or three-phase
line, L = (mu0 / 2 pi) (1/4 + ln(2 s_g / d)) per metre, i.e. the cable
handbooks' L = K + 0.2 ln(2 s_g / d) mH/km with K = 0.05 mH/km (the internal
inductance of a solid round conductor), s_g the geometric mean of the axial
spacings (trefoil s, flat 2^(1/3) s) and d the conductor diameter; X = 2 pi f L
(so 60 Hz gives 1.2 times the 50 Hz value).  Textbook formula (the physics of
two parallel round conductors), cited as common practice.

Geometry, a stated assumption (see ``assumptions``): the conductor diameter is
that of a solid round conductor of the nominal area (stranded conductors are
larger, which lowers 2 s/d: the reactance errs high), the cable a 0.6/1 kV
sheathed single-core cable with the PVC/A insulation thickness of IEC 60502-1
Table 5 (data file, from memory) and a sheath of 0.035 D + 1.0 mm, at least
1.4 mm (IEC 60502-1, 13.3.3, from memory).  The reactance is never taken below
IEC 60364-5-52 Annex G's 0.08 mOhm/m (scaled with frequency from 50 Hz), the
standard's own value in the absence of other details.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import Literal

from service.core.conductors import Conductor
from service.core.data import DataTable, load_tables
from service.core.errors import DataTableError

Arrangement = Literal["multicore", "trefoil", "flat_touching", "flat_spaced", "enclosed"]
ARRANGEMENTS = ("multicore", "trefoil", "flat_touching", "flat_spaced", "enclosed")
GEOMETRY_TABLE = "iec60502-1-pvc-insulation-thickness"
MM = 1.0e-3
MU0_OVER_2PI_H_PER_M = 2.0e-7
INTERNAL_INDUCTANCE_H_PER_M = 0.05e-6  # mu0 / 8 pi: a solid round conductor, 0.05 mH/km
ANNEX_G_REACTANCE_OHM_PER_M = 0.08e-3  # IEC 60364-5-52:2009 Annex G, "in the absence of other details"
ANNEX_G_FREQUENCY_HZ = 50.0
SKIN_KS = 1.0  # IEC 60287-1-1:2006 Table 2, round stranded conductors (from memory; the upper value)
PROXIMITY_KP = 1.0
SHEATH_MINIMUM_MM = 1.4  # IEC 60502-1:2004, 13.3.3, non-armoured cables (from memory)
CUBE_ROOT_2 = 2.0 ** (1.0 / 3.0)
REACTANCE_SOURCE = ("L = (μ0/2π)(1/4 + ln(2 s_g/d)) per conductor, the handbooks' 0.05 + 0.2 ln(2 s_g/d) mH/km "
                    "(textbook formula, common practice), X = 2π f L; not below IEC 60364-5-52:2009 Annex G's "
                    "0.08 mΩ/m at 50 Hz")
RESISTANCE_SOURCE = "IEC 60287-1-1:2006, 2.1.2 to 2.1.4 (skin and proximity effect, ks = kp = 1)"


@dataclass(frozen=True, slots=True)
class CableGeometry:
    """Insulation thickness by nominal area (IEC 60502-1 Table 5, PVC/A, 0.6/1 kV)."""

    rows: tuple[tuple[float, float], ...]  # (nominal area mm², insulation mm), rising
    table_id: str

    def insulation_m(self, area_m2: float) -> float:
        """The thickness of the listed size at or above the area (the first row for smaller sizes)."""
        area_mm2 = area_m2 / 1e-6
        for listed, thickness in self.rows:
            if area_mm2 <= listed + 1e-9:
                return thickness * MM
        return self.rows[-1][1] * MM  # above the last row: its thickness (a larger size is never thinner)


def cable_geometry(table: DataTable) -> CableGeometry:
    rows = tuple((float(r["nominal_area_mm2"]), float(r["insulation_mm"])) for r in table.records())
    areas = [a for a, _ in rows]
    thicknesses = [t for _, t in rows]
    if any(b <= a for a, b in zip(areas, areas[1:])):
        raise DataTableError(f"{table.table_id}: areas must rise")
    if any(b < a for a, b in zip(thicknesses, thicknesses[1:])) or not all(0.3 <= t <= 5.0 for t in thicknesses):
        raise DataTableError(f"{table.table_id}: thickness must not fall with the area and lie in 0.3 to 5 mm")
    return CableGeometry(rows, table.table_id)


@lru_cache(maxsize=1)
def default_geometry() -> CableGeometry:
    return cable_geometry(load_tables()[GEOMETRY_TABLE])


@dataclass(frozen=True, slots=True)
class Spacing:
    conductor_diameter_m: float
    cable_diameter_m: float  # overall, single-core; for a multicore cable the core diameter
    reactance_spacing_m: float  # geometric mean axial spacing s_g
    proximity_spacing_m: float  # s of IEC 60287-1-1 2.1.4


@dataclass(frozen=True, slots=True)
class LineImpedance:
    """Per conductor, per metre, at ``temperature_c`` and ``frequency_hz``."""

    r_dc_ohm_per_m: float
    r_ohm_per_m: float  # AC
    x_ohm_per_m: float
    skin_ys: float
    proximity_yp: float
    temperature_c: float
    frequency_hz: float
    arrangement: str
    spacing: Spacing
    loaded: int
    x_geometric_ohm_per_m: float  # from the spacing; x is the larger of it and Annex G's value

    @property
    def z_ohm_per_m(self) -> float:
        return math.hypot(self.r_ohm_per_m, self.x_ohm_per_m)

    @property
    def floor_applied(self) -> bool:
        """The Annex G value was higher than the geometry's and was taken."""
        return self.x_ohm_per_m > self.x_geometric_ohm_per_m

    @property
    def basis(self) -> str:
        sp = self.spacing
        return (f"{_DESCRIBED[self.arrangement]}, {self.loaded} loaded; d {sp.conductor_diameter_m / MM:.3g} mm, "
                f"{'core' if self.arrangement == 'multicore' else 'cable'} {sp.cable_diameter_m / MM:.3g} mm, s_g "
                f"{sp.reactance_spacing_m / MM:.3g} mm; X {self.x_geometric_ohm_per_m * 1e3:.4g} mΩ/m at "
                f"{self.frequency_hz:g} Hz"
                + (f", below Annex G: {self.x_ohm_per_m * 1e3:.4g} mΩ/m taken" if self.floor_applied else "")
                + f"; R = R_dc (1 + ys {self.skin_ys:.3g} + yp {self.proximity_yp:.3g}) at {self.temperature_c:.4g} °C")


def spacing(conductor: Conductor, arrangement: str, loaded: int, geometry: CableGeometry) -> Spacing:
    d = math.sqrt(4.0 * conductor.area_m2 / math.pi)
    core = d + 2.0 * geometry.insulation_m(conductor.area_m2)
    if arrangement == "multicore":
        return Spacing(d, core, core, core)
    sheath = max(SHEATH_MINIMUM_MM * MM, round((0.035 * core / MM + 1.0), 1) * MM)
    de = core + 2.0 * sheath
    three = loaded >= 3
    if arrangement == "trefoil":  # two conductors: touching side by side
        return Spacing(d, de, de, de)
    if arrangement == "flat_touching":
        return Spacing(d, de, CUBE_ROOT_2 * de if three else de, math.sqrt(2.0) * de if three else de)
    if arrangement == "flat_spaced":  # a clearance of one cable diameter: axes 2 De apart
        return Spacing(d, de, CUBE_ROOT_2 * 2 * de if three else 2 * de, math.sqrt(8.0) * de if three else 2 * de)
    if arrangement == "enclosed":
        # In conduit or trunking the cables lie at random: the reactance is taken at the geometric mean spacing of
        # three cables flat and spaced one diameter (2^(1/3) x 2 De) for two or three cables, the proximity effect at
        # touching; both err high (checked against BS 7671 Table 4E1B's enclosed columns in the reference tests).
        return Spacing(d, de, CUBE_ROOT_2 * 2 * de, de)
    raise ValueError(f"unknown arrangement {arrangement!r}")


def _f(x2: float) -> float:
    x4 = x2 * x2
    return x4 / (192.0 + 0.8 * x4)


def ac_factors(r_dc_ohm_per_m: float, frequency_hz: float, dc_over_s: float, loaded: int) -> tuple[float, float]:
    """ys and yp of IEC 60287-1-1:2006 2.1.2 and 2.1.4 (R' in ohm/m)."""
    if frequency_hz <= 0:
        return 0.0, 0.0
    base = 8.0 * math.pi * frequency_hz / r_dc_ohm_per_m * 1e-7
    ys = _f(base * SKIN_KS)
    fp = _f(base * PROXIMITY_KP)
    ratio2 = dc_over_s * dc_over_s
    yp = fp * ratio2 * 2.9 if loaded < 3 else fp * ratio2 * (0.312 * ratio2 + 1.18 / (fp + 0.27))
    return ys, yp


def reactance_ohm_per_m(frequency_hz: float, geometric_spacing_m: float, conductor_diameter_m: float) -> float:
    inductance = INTERNAL_INDUCTANCE_H_PER_M + MU0_OVER_2PI_H_PER_M * math.log(2.0 * geometric_spacing_m /
                                                                               conductor_diameter_m)
    return 2.0 * math.pi * frequency_hz * inductance


def annex_g_reactance(frequency_hz: float) -> float:
    return ANNEX_G_REACTANCE_OHM_PER_M * frequency_hz / ANNEX_G_FREQUENCY_HZ


_DESCRIBED = {
    "multicore": "multicore cable, cores touching",
    "trefoil": "single-core cables touching, in trefoil",
    "flat_touching": "single-core cables touching, flat",
    "flat_spaced": "single-core cables flat, spaced one cable diameter",
    "enclosed": "single-core cables in conduit or trunking (reactance at 2^(1/3) x 2 De, proximity as touching: "
                "conservative)",
}


def line_impedance(conductor: Conductor, temperature_c: float, frequency_hz: float, arrangement: str, loaded: int,
                   geometry: CableGeometry | None = None) -> LineImpedance:
    """R (AC), X and Z of one line conductor in the arrangement, at the temperature and frequency."""
    geometry = geometry or default_geometry()
    sp = spacing(conductor, arrangement, loaded, geometry)
    r_dc = conductor.resistance_per_m_at(temperature_c)
    ys, yp = ac_factors(r_dc, frequency_hz, sp.conductor_diameter_m / sp.proximity_spacing_m, loaded)
    x_geometric = reactance_ohm_per_m(frequency_hz, sp.reactance_spacing_m, sp.conductor_diameter_m)
    floor = annex_g_reactance(frequency_hz)
    return LineImpedance(r_dc, r_dc * (1.0 + ys + yp), max(x_geometric, floor), ys, yp, temperature_c, frequency_hz,
                         arrangement, sp, loaded, x_geometric)


def arrangement_for(cable: str, method: str, formation: str) -> str:
    """Multicore; single-core in conduit or trunking (methods A1, B1); else the formation given."""
    if cable == "multicore":
        return "multicore"
    if method in ("A1", "B1"):
        return "enclosed"
    return formation


def mv_per_a_m(ohm_per_m: float, phases: str) -> float:
    """The per-conductor value as the tables' mV/A/m: 2x for a single-phase loop, √3x line to line three-phase."""
    return ohm_per_m * 1000.0 * (2.0 if phases == "single" else math.sqrt(3.0))
