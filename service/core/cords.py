"""Flexible cords and cable reels: free-air rating, ambient factor, reeling-drum derating.

Ratings come from BS 7671 Appendix 4 Table 4F3A (flexible cords, 30 °C ambient,
60 °C conductor), the ambient rating factors printed with it, and the
reeling-drum factors of Table 4F1A note 2.  IEC 60364-5-52 has no table for
cords, so the IET's published table is the nearest open reference.

Ambient factors are taken at the next tabulated temperature at or above the
actual one, never interpolated: the table gives steps, and rounding the
temperature up is the conservative reading (common practice).  A cord has no
rating above the hottest tabulated ambient (55 °C for 60 °C insulation).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import Literal

from service.core.data import DataTable, load_tables
from service.core.errors import DataTableError

MM2 = 1.0e-6
CORD_MAX_CONDUCTOR_C = 60.0  # BS 7671 Table 4F3A heading: conductor operating temperature 60 °C
CORD_REFERENCE_AMBIENT_C = 30.0  # BS 7671 Table 4F3A heading: ambient 30 °C

WoundState = Literal["none", "partly", "fully"]

CORDS_TABLE = "bs7671-table4f3a"
AMBIENT_TABLE = "bs7671-table4f3a-ambient"
DRUM_TABLE = "bs7671-table4f1a-drums"
NEC_CORDS_TABLE = "nec-table400-5a1"
NEC_AMBIENT_TABLE = "nec-table310-15-b1-1"
NEC_CORD_RATING_C = 60  # flexible cords are rated 60 °C unless marked otherwise (UL listing, as a trade guide says)


@dataclass(frozen=True, slots=True)
class Factor:
    value: float
    reason: str
    table_id: str | None


@dataclass(frozen=True, slots=True)
class CordRating:
    area_m2: float
    single_phase_a: float
    three_phase_a: float | None


class CordLibrary:
    def __init__(self, tables: dict[str, DataTable]) -> None:
        self.ratings = tuple(
            CordRating(float(r["nominal_area_mm2"]) * MM2, float(r["single_phase_a"]),
                       None if r["three_phase_a"] is None else float(r["three_phase_a"]))
            for r in tables[CORDS_TABLE].records()
        )
        self.ambient_steps = tuple((float(r["ambient_degc"]), float(r["factor"])) for r in tables[AMBIENT_TABLE].records())
        drums = tables[DRUM_TABLE].records()
        self.layer_factors = tuple(
            (int(r["layers"]), float(r["factor"])) for r in drums if r["drum"] == "cylindrical, ventilated")
        # NEC Table 400.5(A)(1): a single-phase lead has two current-carrying conductors (column B)
        self.nec_two_conductor_a = {f"{r['size']} AWG": float(r["two_conductors_a"])
                                    for r in tables[NEC_CORDS_TABLE].records()}
        self.nec_three_conductor_a = {f"{r['size']} AWG": float(r["three_conductors_a"])
                                      for r in tables[NEC_CORDS_TABLE].records()}
        self.nec_ambient_steps = tuple((float(r["ambient_degc"]), float(r[f"rating_{NEC_CORD_RATING_C}"]))
                                       for r in tables[NEC_AMBIENT_TABLE].records()
                                       if r[f"rating_{NEC_CORD_RATING_C}"] is not None)
        self._validate()

    def _validate(self) -> None:
        areas = [r.area_m2 for r in self.ratings]
        amps = [r.single_phase_a for r in self.ratings]
        if areas != sorted(areas) or amps != sorted(amps) or len(set(areas)) != len(areas):
            raise DataTableError(f"{CORDS_TABLE}: ratings must rise with area")
        temps = [t for t, _ in self.ambient_steps]
        factors = [f for _, f in self.ambient_steps]
        if temps != sorted(temps) or factors != sorted(factors, reverse=True) or factors[0] != 1.0:
            raise DataTableError(f"{AMBIENT_TABLE}: factors must fall from 1.0 as the ambient rises")
        two, three = list(self.nec_two_conductor_a.values()), list(self.nec_three_conductor_a.values())
        if two != sorted(two) or three != sorted(three) or any(not 0 < a < b for a, b in zip(three, two)):
            raise DataTableError(f"{NEC_CORDS_TABLE}: ampacities must rise with size, column A below column B")
        layers = [n for n, _ in self.layer_factors]
        drum = [f for _, f in self.layer_factors]
        if layers != list(range(1, len(layers) + 1)) or drum != sorted(drum, reverse=True) or not all(0 < f <= 1 for f in drum):
            raise DataTableError(f"{DRUM_TABLE}: layer factors must fall from one layer upwards")

    def rating_for(self, area_m2: float) -> CordRating | None:
        """The tabulated cord rating of this nominal area, or None when the table does not list it."""
        for r in self.ratings:
            if math.isclose(r.area_m2, area_m2, rel_tol=1e-6):
                return r
        return None

    def ambient_factor(self, ambient_c: float) -> Factor | None:
        """Rating factor at ``ambient_c``; None when the cord has no rating that hot."""
        if ambient_c <= CORD_REFERENCE_AMBIENT_C:
            return Factor(1.0, f"ambient {ambient_c:g} °C is at or below the table's 30 °C: factor 1", AMBIENT_TABLE)
        for temperature, factor in self.ambient_steps:
            if ambient_c <= temperature:
                return Factor(factor, f"ambient {ambient_c:g} °C taken at the next tabulated {temperature:g} °C", AMBIENT_TABLE)
        return None

    def nec_ambient_factor(self, ambient_c: float) -> Factor | None:
        """NEC 400.5(A): Table 310.15(B)(1) factors of a 60 °C cord, taken at the next tabulated ambient at or
        above; 1 at or below 30 °C (the factors above 1 for cooler air are not taken: conservative)."""
        if ambient_c <= CORD_REFERENCE_AMBIENT_C:
            return Factor(1.0, f"ambient {ambient_c:g} °C is at or below 30 °C: factor 1 (NEC factors above 1 for "
                               "cooler air not taken)", NEC_AMBIENT_TABLE)
        for temperature, factor in self.nec_ambient_steps:
            if ambient_c <= temperature:
                return Factor(factor, f"ambient {ambient_c:g} °C taken at the next tabulated {temperature:g} °C, "
                                      f"{NEC_CORD_RATING_C} °C cord", NEC_AMBIENT_TABLE)
        return None

    def drum_factor(self, wound: WoundState, layers: int | None) -> Factor:
        """Derating of a reel for the cable left on its drum.

        ``layers`` is the number of layers still on the drum when known; a fully
        wound reel with unknown layers takes the table's deepest factor (four
        layers or more), and a partly wound one with unknown layers too, since
        a drum half full still has several layers (conservative, common practice).
        """
        if wound == "none":
            return Factor(1.0, "fully unwound: the cord is in free air along its length", None)
        deepest_layers, deepest = self.layer_factors[-1]
        if layers is None:
            return Factor(deepest, f"{wound} wound, layers unknown: the factor for {deepest_layers} or more layers", DRUM_TABLE)
        if layers == 0:
            return Factor(1.0, "no layers left on the drum", None)
        for count, factor in self.layer_factors:
            if layers <= count:
                return Factor(factor, f"{layers} layer(s) on a ventilated cylindrical drum", DRUM_TABLE)
        return Factor(deepest, f"{layers} layers: the factor for {deepest_layers} or more layers", DRUM_TABLE)


@lru_cache(maxsize=1)
def default_cords() -> CordLibrary:
    return CordLibrary(load_tables())
