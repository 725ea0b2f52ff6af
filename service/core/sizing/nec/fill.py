"""Raceway fill (NEC Chapter 9): the smallest trade size whose fill stays within Table 1.

The conductors' areas (Chapter 9 Table 5, by insulation type and size) are
added up and compared with the fill permitted by Table 1 for that number of
conductors (53 % for one, 31 % for two, 40 % for more) of each trade size's
internal area (Table 4), smallest first.  Pure: SI areas in, a result with
every trade size tried and the steps out.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from service.core.errors import Blame, CalcError
from service.core.steps import Step

from .tables import AREA_TABLE, FILL_TABLE, RACEWAY_TABLE, TYPE_TABLE, NecTables, SQ_IN_M2

RACEWAY_NAMES = {"emt": "EMT (Article 358)", "rmc": "RMC (Article 344)", "pvc_40": "PVC Schedule 40 (Article 352)",
                 "pvc_80": "PVC Schedule 80 (Article 352)"}


@dataclass(frozen=True, slots=True)
class FillConductor:
    conductor_type: str  # e.g. THHN, XHHW-2
    size_label: str  # "12 AWG", "250 kcmil"
    count: int


@dataclass(frozen=True, slots=True)
class TradeSizeFill:
    trade_size: str
    metric_designator: str
    internal_area_m2: float
    allowed_area_m2: float
    fill_pct: float
    fits: bool


@dataclass(frozen=True, slots=True)
class FillResult:
    raceway: str
    raceway_name: str
    conductor_count: int
    conductor_area_m2: float
    fill_limit_pct: float
    chosen: TradeSizeFill | None  # None: not even the largest trade size is enough
    considered: tuple[TradeSizeFill, ...]
    steps: tuple[Step, ...]
    table_ids: tuple[str, ...] = (FILL_TABLE, RACEWAY_TABLE, AREA_TABLE, TYPE_TABLE)
    note7: bool = False  # every conductor of one type and size: Chapter 9 Note 7 applies


def conductor_area_m2(tables: NecTables, conductor_type: str, size_label: str, where: tuple[str | int, ...]) -> float:
    kind = tables.types.get(conductor_type)
    if kind is None:
        raise CalcError("unknown-conductor-type", f"No Table 5 areas are held for type {conductor_type}.",
                        f"Use one of {', '.join(tables.types)}.", (Blame(where + ("type",), "not a held type"),))
    area = tables.areas.get((kind.area_column, size_label))
    if area is None:
        raise CalcError("unknown-conductor", f"Table 5 holds no {conductor_type} conductor of size {size_label}.",
                        "Use a size from 14 AWG to 1000 kcmil.", (Blame(where + ("size",), "not a Table 5 size"),))
    return area


def raceway_fill(tables: NecTables, raceway: str, conductors: tuple[FillConductor, ...],
                 where: tuple[str | int, ...] = ("conductors",)) -> FillResult:
    """The smallest trade size of ``raceway`` that takes ``conductors`` within the Table 1 fill."""
    sizes = tables.raceways.get(raceway)
    if sizes is None:
        raise CalcError("unknown-raceway", f"No Table 4 dimensions are held for raceway {raceway}.",
                        f"Use one of {', '.join(tables.raceways)}.", (Blame(("raceway",), "not a held raceway type"),))
    count = sum(c.count for c in conductors)
    steps: list[Step] = []
    total = 0.0
    for k, c in enumerate(conductors):
        area = conductor_area_m2(tables, c.conductor_type, c.size_label, where + (k,))
        total += area * c.count
        steps.append(Step(f"Area of {c.count} x {c.size_label} {c.conductor_type}",
                          f"{c.count} x {area / SQ_IN_M2:.4f} in²", area * c.count, "m²", tables.source(AREA_TABLE)))
    limit = tables.fill_limit_pct(count)
    steps.append(Step("Total conductor area", " + ".join(f"{s.value / SQ_IN_M2:.4f}" for s in steps) + " in²", total,
                      "m²"))
    steps.append(Step("Permitted fill", f"{count} conductor{'s' if count != 1 else ''}: "
                      + ("one conductor" if count == 1 else "two conductors" if count == 2 else "over two conductors"),
                      limit, "%", tables.source(FILL_TABLE)))
    # Chapter 9 Note 7: conductors all of one size (and type) may take the next whole number when the quotient's
    # decimal is 0.8 or more.
    one_size = len({(c.conductor_type, c.size_label) for c in conductors}) == 1
    each = total / count if count else 0.0
    considered = []
    chosen = None
    for s in sizes:
        allowed = s.area_m2 * limit / 100.0
        fits = total <= allowed * (1 + 1e-12)
        if one_size and not fits:
            quotient = allowed / each
            fits = count <= math.floor(quotient) + (1 if quotient - math.floor(quotient) >= 0.8 - 1e-9 else 0)
        considered.append(TradeSizeFill(s.trade_size, s.metric_designator, s.area_m2, allowed, 100.0 * total / s.area_m2, fits))
        if fits:
            chosen = considered[-1]
            break
    for t in considered:
        steps.append(Step(f"Trade size {t.trade_size} (metric designator {t.metric_designator})",
                          f"{limit:g} % of {t.internal_area_m2 / SQ_IN_M2:.3f} in² = {t.allowed_area_m2 / SQ_IN_M2:.4f} in²; "
                          f"fill {t.fill_pct:.1f} %: " + ("too small" if not t.fits else "fits" if t.fill_pct <= limit + 1e-9
                                                          else "fits by Chapter 9 Note 7 (quotient's decimal >= 0.8)"),
                          t.fill_pct, "%", tables.source(RACEWAY_TABLE)))
    return FillResult(raceway, RACEWAY_NAMES.get(raceway, raceway), count, total, limit, chosen, tuple(considered),
                      tuple(steps), note7=one_size)
