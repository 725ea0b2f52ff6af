"""One worked step of a calculation, shared by every calculator of the core.

Each step is what a practitioner would write on a calculation sheet: what was
computed, by which formula, the value and its unit, and the table or clause
it came from when there is one.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True, slots=True)
class Step:
    name: str
    formula: str
    value: float
    unit: str
    source: str | None = None
