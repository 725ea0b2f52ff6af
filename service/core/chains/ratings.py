"""What current each lead may carry where it is: its rating after ambient and reel derating.

The base is the lead's marked rating when given (the maker's word for that
product), otherwise the tabulated rating of a cord of its size (BS 7671
Table 4F3A).  A reel with cable still on its drum carries less: its marked
wound rating when the drum is full and the maker gives one, otherwise the base
times the reeling-drum factor for the layers left (BS 7671 Table 4F1A note 2).
"""

from __future__ import annotations

from dataclasses import dataclass

from service.core.cords import CordLibrary, Factor
from service.core.errors import Blame, CalcError

from .model import Chain, Lead


@dataclass(frozen=True, slots=True)
class LeadRating:
    base_a: float
    base_source: str
    ambient: Factor | None  # None: no rating at this ambient
    drum: Factor | None  # None: not a reel
    effective_a: float | None  # None: not rated at this ambient
    wound_rating_used: bool


def lead_rating(lead: Lead, index: int, ambient_c: float, cords: CordLibrary) -> LeadRating:
    nec_cord = lead.conductor.size_system == "awg" and lead.conductor.material.name == "copper"
    if lead.marked_rating_a is not None:
        base, source = lead.marked_rating_a, "marked rating"
    elif nec_cord and lead.conductor.size_label in cords.nec_two_conductor_a:
        base = cords.nec_two_conductor_a[lead.conductor.size_label]
        source = "NEC 2023 Table 400.5(A)(1), column B (two current-carrying conductors)"
    else:
        tabulated = cords.rating_for(lead.conductor.area_m2)
        if tabulated is None or lead.conductor.material.name != "copper":
            raise CalcError(
                code="lead-rating-unknown",
                detail=f"Lead {index} ({lead.conductor.size_label} {lead.conductor.material.name}) has no marked "
                       "rating and no tabulated flexible-cord rating.",
                how_to_fix="Give the lead's marked current rating (marked_rating), or use a copper cord of "
                           "0.5-4 mm² whose rating BS 7671 Table 4F3A lists.",
                blames=(Blame(("leads", index, "marked_rating"), "needed: this size has no tabulated cord rating"),),
            )
        base, source = tabulated.single_phase_a, "BS 7671 Table 4F3A, single-phase"
    ambient = cords.nec_ambient_factor(ambient_c) if nec_cord else cords.ambient_factor(ambient_c)
    drum = cords.drum_factor(lead.reel.wound, lead.reel.layers) if lead.reel is not None else None
    if ambient is None:
        return LeadRating(base, source, None, drum, None, False)
    rating = base * ambient.value
    wound_rating_used = False
    if drum is not None and drum.value < 1.0:
        reel = lead.reel
        use_marked = reel is not None and reel.marked_wound_rating_a is not None and (
            reel.wound == "fully" or reel.layers is None)
        if use_marked:
            rating = reel.marked_wound_rating_a * ambient.value
            wound_rating_used = True
        else:
            rating *= drum.value
    return LeadRating(base, source, ambient, drum, rating, wound_rating_used)


def chain_ratings(chain: Chain, cords: CordLibrary) -> tuple[LeadRating, ...]:
    return tuple(lead_rating(lead, k, chain.supply.ambient_c, cords) for k, lead in enumerate(chain.leads))
