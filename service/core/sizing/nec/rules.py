"""NEC rules that need no network: loads, device, ampacity, overcurrent protection, EGC.

Each function applies one section of NFPA 70 and returns numbers with their
basis, so the regime can show them as steps.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from service.core.conductors import Conductor
from service.core.errors import calc_error

from .tables import CONDUCTOR_TABLE, EGC_TABLE, NecTables

EDITION = "NFPA 70-2023"
CONTINUOUS_MULTIPLIER = 1.25  # 210.19(A)(1)(a), 210.20(A), 215.2(A)(1)(a), 215.3
TERMINATION_SPLIT_A = 100.0  # 110.14(C)(1)(a) / (b)
NEXT_SIZE_UP_LIMIT_A = 800.0  # 240.4(B)


blame = calc_error


@dataclass(frozen=True, slots=True)
class LoadSplit:
    design_current_a: float
    continuous_a: float
    non_continuous_a: float

    @property
    def required_a(self) -> float:
        """125 % of the continuous load plus 100 % of the rest."""
        return CONTINUOUS_MULTIPLIER * self.continuous_a + self.non_continuous_a


def split_load(ib: float, continuous_share: float) -> LoadSplit:
    return LoadSplit(ib, ib * continuous_share, ib * (1.0 - continuous_share))


def standard_rating(t: NecTables, at_least_a: float) -> float:
    found = next((r for r in t.ratings if r >= at_least_a - 1e-9), None)
    if found is None:
        raise blame("no-standard-rating", f"No standard rating of Table 240.6(A) reaches {at_least_a:.4g} A "
                    f"(largest {t.ratings[-1]:g} A).", "Split the load over parallel feeders, or give the device rating.",
                    (("load",), f"needs a device of at least {at_least_a:.4g} A"))
    return found


def next_rating_above(t: NecTables, ampacity_a: float) -> float | None:
    return next((r for r in t.ratings if r >= ampacity_a - 1e-9), None)


def termination_rating(given_c: int | None, rated_current_a: float, insulation_c: int) -> tuple[int, str]:
    """The ampacity column 110.14(C)(1) allows at the terminations (never above the insulation's own)."""
    if given_c is not None:
        column, why = given_c, f"terminations listed for {given_c} °C (given)"
    elif rated_current_a <= TERMINATION_SPLIT_A:
        column, why = 60, f"circuit rated {rated_current_a:g} A <= 100 A: 60 °C, 110.14(C)(1)(a)"
    else:
        column, why = 75, f"circuit rated {rated_current_a:g} A > 100 A: 75 °C, 110.14(C)(1)(b)"
    if column > insulation_c:
        column, why = insulation_c, why + f"; limited to the insulation's {insulation_c} °C"
    return column, why


@dataclass(frozen=True, slots=True)
class Derating:
    ambient: float
    ambient_basis: str
    adjustment: float
    adjustment_basis: str


def derating(t: NecTables, insulation_c: int, ambient_c: float, conductors: int) -> Derating:
    bands = t.ambient[insulation_c]
    band = bands[0] if ambient_c <= bands[0].upto else next((b for b in bands if ambient_c <= b.upto + 1e-9), None)
    if band is None:
        raise blame("outside-table", f"Table 310.15(B)(1)(1) gives no correction for {insulation_c} °C insulation at "
                    f"{ambient_c:g} °C.", f"Keep the ambient at or below {bands[-1].upto:g} °C, or use insulation rated higher.",
                    (("circuit", "ambient_temperature"), f"above {bands[-1].upto:g} °C for {insulation_c} °C insulation"))
    lower = next((b.upto for b in reversed(bands) if b.upto < band.upto), None)
    span = f"{'up to' if lower is None else f'{lower + 1:g} to'} {band.upto:g} °C row"
    adj = next(b for b in t.adjustment if b.upto is None or conductors <= b.upto)
    adj_basis = (f"{conductors} current-carrying conductors: no adjustment up to three" if conductors <= 3 else
                 f"{conductors} current-carrying conductors in the raceway or cable: {adj.value * 100:g} %")
    return Derating(band.value, f"ambient {ambient_c:g} °C, {insulation_c} °C insulation: the {span}", adj.value, adj_basis)


def egc_minimum(t: NecTables, rated_current_a: float, material: str) -> tuple[str, str]:
    """The Table 250.122 size label for the device rating, and its row."""
    row = next(((upto, size) for upto, size in t.egc[material] if rated_current_a <= upto + 1e-9), None)
    if row is None:
        raise blame("outside-table", f"Table 250.122 stops at {t.egc[material][-1][0]:g} A.", "Give the EGC size.",
                    (("protection", "device", "rated_current"), "beyond Table 250.122"))
    return row[1], f"device {rated_current_a:g} A: the 'not exceeding {row[0]:g} A' row"


def sets_label(size_label: str, sets: int) -> str:
    """A size as a designer says it: "4/0 AWG", or "2 x 250 kcmil" for conductors in parallel."""
    return size_label if sets == 1 else f"{sets} x {size_label}"


def egc_required(t: NecTables, sizes: dict[str, Conductor], rated_current_a: float, material: str, line: Conductor,
                 ampacity_minimum: tuple[Conductor, int] | None, sets: int = 1) -> tuple[Conductor, str]:
    """The smallest EGC for ``line`` (``sets`` in parallel): Table 250.122 on the device rating, increased in
    proportion to the line's circular mils (Chapter 9 Table 8, all sets of one line together) when the line is larger
    than the smallest size (and number of sets) with enough ampacity (250.122(B)), never larger than the line
    (250.122(A)). In parallel, each raceway's EGC is this full size (250.122(F)(1))."""
    label, row = egc_minimum(t, rated_current_a, material)
    basis = f"{t.source(EGC_TABLE)}: {row} -> {label}"
    if sets > 1:
        basis += f" (full size in each parallel raceway or cable, {EDITION}, 250.122(F)(1))"
    wanted = t.cmil[label]
    have = sets * t.cmil[line.size_label]
    if ampacity_minimum is not None and have > ampacity_minimum[1] * t.cmil[ampacity_minimum[0].size_label]:
        base, base_sets = ampacity_minimum
        base_cmil = base_sets * t.cmil[base.size_label]
        ratio = have / base_cmil
        wanted = t.cmil[label] * ratio
        basis += (f"; line upsized from {sets_label(base.size_label, base_sets)} to {sets_label(line.size_label, sets)}: "
                  f"{have:,.0f} / {base_cmil:,.0f} cmil = {ratio:.4g}, x {t.cmil[label]:,.0f} cmil = "
                  f"{wanted:,.0f} cmil ({EDITION}, 250.122(B); cmil from {t.source(CONDUCTOR_TABLE)})")
    held = [c for c in sizes.values() if c.size_label in t.cmil]
    chosen = min((c for c in held if t.cmil[c.size_label] >= wanted), key=lambda c: t.cmil[c.size_label], default=None)
    if chosen is None or t.cmil[chosen.size_label] > t.cmil[line.size_label]:
        chosen = line
        basis += f"; not larger than the circuit conductors, {EDITION}, 250.122(A)"
    return chosen, basis


CMIL_M2 = math.pi / 4 * (25.4e-6) ** 2  # one circular mil in m²

