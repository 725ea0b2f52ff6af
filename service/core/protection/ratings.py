"""Is a given device rating one the device's standard lists?  A 37 A type B or a 7 A MCB is a typing error."""

from __future__ import annotations

import math

from .library import BREAKER_RATINGS_TABLE, FUSE_RATINGS_TABLE, ProtectionLibrary


def standard_ratings(device_type: str, lib: ProtectionLibrary) -> tuple[tuple[float, ...], str]:
    """Every standard rating of the type (IEC 60898-1 5.3.2 for B/C/D, IEC 60269-1 5.3.1 for gG) and its source."""
    if device_type == "gG":
        return lib.fuse_ratings, lib.source(FUSE_RATINGS_TABLE)
    return lib.breaker_ratings, lib.source(BREAKER_RATINGS_TABLE)


def nonstandard_rating(device_type: str, rated_current_a: float, ratings: tuple[float, ...],
                       source: str) -> str | None:
    """None for a listed rating; otherwise what is wrong, naming the list."""
    if any(math.isclose(rated_current_a, r, rel_tol=1e-9) for r in ratings):
        return None
    what = "gG fuse-link" if device_type == "gG" else f"type {device_type} circuit-breaker"
    listed = ", ".join(f"{r:g}" for r in ratings)
    return f"{rated_current_a:g} A is not a standard rating of a {what}: {source} lists {listed} A"
