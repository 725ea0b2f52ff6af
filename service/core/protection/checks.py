"""Input checks shared by the protection calculators: bad inputs are CalcErrors with a blame."""

from __future__ import annotations

import math

from service.core.errors import Blame, CalcError

Location = tuple[str | int, ...]


def fail(code: str, location: Location, detail: str, how_to_fix: str, blame: str) -> CalcError:
    """A CalcError blaming one input (returned, for the caller to raise)."""
    return CalcError(code=code, detail=detail, how_to_fix=how_to_fix, blames=(Blame(location, blame),))


def require_positive(value: object, location: Location, what: str) -> float:
    """``value`` as a float when it is a positive finite number; CalcError otherwise."""
    if isinstance(value, bool) or not (isinstance(value, (int, float)) and math.isfinite(value) and value > 0):
        raise fail("invalid-input", location, f"{what} must be a positive finite number, got {value!r}.",
                   f"Give {what} as a positive number.", f"{what} must be positive and finite")
    return float(value)


def require_choice(value: object, choices: tuple[str, ...], location: Location, what: str) -> str:
    if value not in choices:
        raise fail("invalid-input", location, f"Unknown {what} {value!r}.", f"Use one of {', '.join(choices)}.",
                   f"not a known {what}")
    return str(value)
