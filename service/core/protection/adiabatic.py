"""Adiabatic withstand of a conductor: S >= sqrt(I^2 t) / k.

IEC 60364-4-43 434.5.2 limits the duration of a short-circuit in a live
conductor to t = (k S / I)^2, valid up to 5 s; IEC 60364-5-54 543.1.2 sizes a
protective conductor by S = sqrt(I^2 t) / k.  Both assume no heat leaves the
conductor during the fault.  For very short times (< 0.1 s) and for
current-limiting devices, I^2 t should be the device's let-through energy from
the manufacturer rather than I^2 x t.

k (A s^0.5 / mm^2) depends on the conductor material, its insulation (which
sets the initial and final temperatures) and what the conductor is:

* ``live``: IEC 60364-4-43 Table 43A;
* ``pe_separate``: a protective conductor not incorporated in a cable and not
  bunched, IEC 60364-5-54 Table A.54.2 (initial 30 °C);
* ``pe_in_cable``: a protective conductor that is a core of a cable or is
  bunched with other conductors, IEC 60364-5-54 Table A.54.4.

Thermoplastic (PVC) rows have a lower k above 300 mm^2.  Areas are in m^2 and
energies in A^2 s at this interface; the tables' mm^2 is converted inside.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

from .checks import fail, require_choice, require_positive
from .library import K_TABLES, KValue, ProtectionLibrary, default_protection

MM2 = 1.0e-6
BAND_LIMIT_MM2 = 300.0
ADIABATIC_LIMIT_S = 5.0  # IEC 60364-4-43 434.5.2: the formula holds for durations up to 5 s

ConductorRole = Literal["live", "pe_separate", "pe_in_cable"]
ROLES = tuple(K_TABLES)


@dataclass(frozen=True, slots=True)
class KFactor:
    k: float  # A s^0.5 / mm^2
    material: str
    insulation: str
    role: str
    csa_band: str
    initial_temp_c: float
    final_temp_c: float
    table_id: str
    source: str


@dataclass(frozen=True, slots=True)
class AdiabaticMinimum:
    i2t_a2s: float
    k: KFactor
    minimum_area_m2: float
    formula: str


@dataclass(frozen=True, slots=True)
class AdiabaticCheck:
    area_m2: float
    i2t_a2s: float
    k: KFactor
    permitted_i2t_a2s: float  # (k S)^2
    minimum_area_m2: float
    complies: bool
    formula: str


def minimum_csa_m2(i2t_a2s: float, k: float) -> float:
    """S = sqrt(I^2 t) / k, in m^2 (k in A s^0.5 / mm^2)."""
    i2t = require_positive(i2t_a2s, ("i2t",), "I²t")
    return math.sqrt(i2t) / require_positive(k, ("k",), "k") * MM2


def max_let_through_i2t(area_m2: float, k: float) -> float:
    """(k S)^2 in A^2 s: the largest I^2 t the conductor withstands adiabatically."""
    area_mm2 = require_positive(area_m2, ("area",), "the conductor area") / MM2
    return (require_positive(k, ("k",), "k") * area_mm2) ** 2


def max_fault_duration_s(area_m2: float, k: float, current_a: float) -> float:
    """t = (k S / I)^2 (434.5.2).  The formula is stated for t up to 5 s; longer results are outside it."""
    current = require_positive(current_a, ("current",), "the fault current")
    return max_let_through_i2t(area_m2, k) / current**2


def _band_for(area_m2: float | None) -> str:
    return "up_to_300" if area_m2 is None or area_m2 / MM2 <= BAND_LIMIT_MM2 else "over_300"


def k_factor(
    material: str,
    insulation: str,
    role: ConductorRole = "live",
    area_m2: float | None = None,
    library: ProtectionLibrary | None = None,
) -> KFactor:
    """k for the conductor; ``area_m2`` picks the PVC size band (None: up to 300 mm^2)."""
    lib = library or default_protection()
    require_choice(role, ROLES, ("role",), "conductor role")
    if area_m2 is not None:
        require_positive(area_m2, ("area",), "the conductor area")
    # A sizing asks for the same few k values for every candidate size: each library keeps those it has found.
    key = (material, insulation, role, _band_for(area_m2))
    memo = lib.__dict__.setdefault("_k_memo", {})
    if key not in memo:
        memo[key] = _find_k(lib, material, insulation, role, area_m2)
    return memo[key]


def _find_k(lib: ProtectionLibrary, material: str, insulation: str, role: ConductorRole, area_m2: float | None) -> KFactor:
    rows: tuple[KValue, ...] = lib.k_values[role]
    candidates = [v for v in rows if v.material == material and v.insulation == insulation]
    if not candidates:
        offered = sorted({f"{v.material}/{v.insulation}" for v in rows})
        raise fail("unknown-k", ("insulation",),
            f"No k value is held for a {material} conductor with {insulation} insulation ({role}).",
            "Use one of: " + ", ".join(offered) + ".",
            "no k for this material and insulation")
    band = _band_for(area_m2)
    chosen = next((v for v in candidates if v.csa_band in ("all", band)))
    return KFactor(
        k=chosen.k, material=material, insulation=insulation, role=role, csa_band=chosen.csa_band,
        initial_temp_c=chosen.initial_temp_c, final_temp_c=chosen.final_temp_c, table_id=chosen.table_id,
        source=lib.source(chosen.table_id),
    )


def adiabatic_minimum_csa(
    i2t_a2s: float,
    material: str,
    insulation: str,
    role: ConductorRole = "live",
    library: ProtectionLibrary | None = None,
) -> AdiabaticMinimum:
    """Smallest area with S >= sqrt(I^2 t) / k, taking the k of the size band the answer falls in."""
    k = k_factor(material, insulation, role, None, library)
    area = minimum_csa_m2(i2t_a2s, k.k)
    if k.csa_band == "up_to_300" and area / MM2 > BAND_LIMIT_MM2:
        k = k_factor(material, insulation, role, area, library)  # lower k above 300 mm^2: a larger area again
        area = minimum_csa_m2(i2t_a2s, k.k)
    return AdiabaticMinimum(i2t_a2s=float(i2t_a2s), k=k, minimum_area_m2=area, formula="S = sqrt(I²t) / k")


def adiabatic_check(
    area_m2: float,
    i2t_a2s: float,
    material: str,
    insulation: str,
    role: ConductorRole = "live",
    library: ProtectionLibrary | None = None,
) -> AdiabaticCheck:
    """Verdict: does a conductor of ``area_m2`` withstand ``i2t_a2s`` adiabatically?"""
    k = k_factor(material, insulation, role, area_m2, library)
    permitted = max_let_through_i2t(area_m2, k.k)
    i2t = require_positive(i2t_a2s, ("i2t",), "I²t")
    return AdiabaticCheck(
        area_m2=float(area_m2), i2t_a2s=i2t, k=k, permitted_i2t_a2s=permitted,
        minimum_area_m2=minimum_csa_m2(i2t, k.k), complies=i2t <= permitted, formula="k² S² >= I²t",
    )
