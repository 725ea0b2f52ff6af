"""Third-harmonic currents in the neutral: IEC 60364-5-52:2009 Annex E, Table E.52.1.

In a balanced three-phase circuit the third harmonics of the three line
currents add in the neutral: IN = 3 x h x Ib (h the third-harmonic content of
the line current).  Table E.52.1 then either derates the cable on the line
current (15 to 33 %: factor 0.86, a correction factor like any other) or sizes
it on the neutral current (above 33 %), which is the ``neutral_ampacity`` check:
IN <= factor x Iz.  A content on a band boundary takes whichever of the two
bands asks more of the cable (the table's bands meet there).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from .model import Check, Factor, SizeEvaluation, SizingInput
from .tables import HARMONIC_TABLE, HarmonicBand, SizingTables

NEUTRAL_CHECK = "neutral_ampacity"


@dataclass(frozen=True, slots=True)
class HarmonicRule:
    content_pct: float
    band: HarmonicBand
    neutral_current_a: float
    source: str

    @property
    def on_neutral(self) -> bool:
        return self.band.size_on == "neutral"


def _demand(band: HarmonicBand, h: float, ib: float) -> float:
    """The tabulated capacity the band asks for, per ampere of line current (to compare bands on a boundary)."""
    current = 3.0 * h / 100.0 * ib if band.size_on == "neutral" else ib
    return current / band.factor


def applies(spec: SizingInput) -> bool:
    """Table E.52.1 is for three-phase circuits whose neutral runs with the lines (four- and five-core cables)."""
    return spec.load.third_harmonic_pct is not None and spec.load.phases == "three" and spec.circuit.neutral


def rule(spec: SizingInput, tables: SizingTables, ib: float) -> HarmonicRule | None:
    if not applies(spec):
        return None
    h = spec.load.third_harmonic_pct
    bands = [b for b in tables.harmonic_bands
             if b.above_pct <= h and (b.up_to_pct is None or h <= b.up_to_pct)]
    band = max(bands, key=lambda b: _demand(b, h, ib))
    return HarmonicRule(h, band, 3.0 * h / 100.0 * ib, tables.source(HARMONIC_TABLE))


def line_factor(r: HarmonicRule | None) -> tuple[Factor, ...]:
    """The 15 to 33 % band's factor on the line current, as a correction factor (nothing in the other bands)."""
    if r is None or r.on_neutral or r.band.factor == 1.0:
        return ()
    return (Factor("harmonics", r.band.factor, f"third-harmonic content {r.content_pct:g} % (band "
                   f"{r.band.above_pct:g} to {r.band.up_to_pct:g} %): size on the line current, factor "
                   f"{r.band.factor:g}", r.source, HARMONIC_TABLE),)


def neutral_check(r: HarmonicRule, ev: SizeEvaluation, sets: int = 1) -> Check:
    """IN <= factor x Iz: the neutral of each set carries IN / sets, each set's Iz is Iz / sets."""
    limit = r.band.factor * ev.iz_a
    return Check(NEUTRAL_CHECK, r.neutral_current_a <= limit * (1 + 1e-12), r.neutral_current_a, limit, "A",
                 "IN = 3 h Ib <= factor x Iz", "IEC 60364-5-52:2009, Annex E, Table E.52.1",
                 f"IN = 3 x {r.content_pct / 100:g} x Ib; band above {r.band.above_pct:g} %: size on the neutral "
                 f"current, factor {r.band.factor:g}; Iz {ev.iz_a:.4g} A" + (f" over {sets} sets" if sets > 1 else ""))


def with_neutral_check(r: HarmonicRule | None, evaluations: list[SizeEvaluation]) -> list[SizeEvaluation]:
    """Each evaluation with the neutral check after its current-carrying checks (when the rule sizes on it)."""
    if r is None or not r.on_neutral:
        return evaluations
    found = []
    for ev in evaluations:
        k = sum(1 for c in ev.checks if c.name in ("design_current_within_rating", "ampacity", "conventional_current"))
        found.append(replace(ev, checks=ev.checks[:k] + (neutral_check(r, ev),) + ev.checks[k:]))
    return found


def assumption(spec: SizingInput, r: HarmonicRule | None) -> str:
    h = spec.load.third_harmonic_pct
    if h is None:
        return ("Third-harmonic content not given: taken below 15 % of the line current (IEC 60364-5-52 Annex E, "
                "Table E.52.1: no reduction, neutral current not considered).")
    if r is None:
        why = ("single-phase: the neutral carries the line current" if spec.load.phases == "single"
               else "three-phase without a neutral: the third harmonics have no return path in the cable")
        return f"Third-harmonic content {h:g} % given but Table E.52.1 does not apply ({why})."
    text = (f"Third-harmonic content {h:g} %: neutral current IN = 3 x {h / 100:g} x Ib = {r.neutral_current_a:.4g} A "
            f"(IEC 60364-5-52 Annex E). ")
    if r.on_neutral:
        text += (f"Sized on the neutral current with factor {r.band.factor:g} (check {NEUTRAL_CHECK}); the line "
                 "conductors keep In <= Iz on the three-loaded-conductor rating.")
    elif r.band.factor < 1.0:
        text += f"Sized on the line current with factor {r.band.factor:g} (the harmonics correction factor)."
    else:
        text += "Below 15 %: no reduction."
    text += (" The voltage drop is the fundamental's: the neutral's third-harmonic current adds no drop at the "
             "fundamental frequency.")
    if spec.circuit.cable == "single_core":
        text += (" Table E.52.1 is written for four- and five-core cables; it is applied to single-core cables too, "
                 "with the neutral a fourth loaded conductor of the same size.")
    return text


def cautions(spec: SizingInput, r: HarmonicRule | None) -> tuple[str, ...]:
    if r is None or not r.on_neutral:
        return ()
    return (f"The neutral carries {r.neutral_current_a:.4g} A (3 x h x Ib), and the line device does "
            "not measure it: where the neutral current can exceed the neutral's capacity, overcurrent detection in "
            "the neutral is required (IEC 60364-4-43:2008, 431.2.3, from memory).",)
