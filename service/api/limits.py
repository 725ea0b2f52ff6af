"""Abuse limits on list lengths, set by AMPLINE_MAX_* settings rather than fixed in the schema.

The schema states the default in each list's description; the service's own limit is checked here, before
any calculation, and every list over its limit is named in one 422 (with the setting that governs it).
"""

from __future__ import annotations

from service.api.problems import RequestInvalid, pointer
from service.api.settings import Settings


def refuse_long_lists(*checks: tuple[int, int, str, tuple[str, ...]]) -> None:
    """Each check is (length, limit, setting name, path); raise one 422 naming every list over its limit."""
    over = [(pointer(*path), f"{length} items; this service accepts at most {limit} ({setting})")
            for length, limit, setting, path in checks if length > limit]
    if over:
        raise RequestInvalid(over)


def refuse_long_chain(leads: int, appliances: int, settings: Settings) -> None:
    refuse_long_lists((leads, settings.max_chain_leads, "AMPLINE_MAX_CHAIN_LEADS", ("leads",)),
                      (appliances, settings.max_chain_appliances, "AMPLINE_MAX_CHAIN_APPLIANCES", ("appliances",)))


def refuse_many_fill_groups(groups: int, settings: Settings) -> None:
    refuse_long_lists((groups, settings.max_fill_conductor_groups, "AMPLINE_MAX_FILL_CONDUCTOR_GROUPS",
                       ("conductors",)))


def refuse_many_thevenin_pairs(pairs: int, settings: Settings) -> None:
    refuse_long_lists((pairs, settings.max_thevenin_pairs, "AMPLINE_MAX_THEVENIN_PAIRS",
                       ("options", "thevenin_between")))
