"""Errors raised by the core when an answer cannot be computed.

A non-compliant design is *not* an error (it is a verdict in a result); these
are raised only for inputs that make the calculation impossible.  Each error
carries the input locations it blames so the HTTP layer can point at them.
"""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True, slots=True)
class Blame:
    """One input the error is about.

    ``location`` is a tuple path into the caller's input (e.g. ``("elements", 3,
    "resistance")``); the HTTP layer turns it into a JSON pointer.
    """

    location: tuple[str | int, ...]
    message: str


@dataclass(eq=False)
class CalcError(Exception):
    """Base class: the inputs are understood but admit no answer."""

    code: str
    detail: str
    how_to_fix: str = ""
    blames: tuple[Blame, ...] = field(default_factory=tuple)

    def __post_init__(self) -> None:
        super().__init__(self.detail)


def calc_error(code: str, detail: str, how_to_fix: str, *blames: tuple[tuple[str | int, ...], str]) -> CalcError:
    """A CalcError blaming each (location, message) pair given."""
    return CalcError(code=code, detail=detail, how_to_fix=how_to_fix, blames=tuple(Blame(loc, msg) for loc, msg in blames))


class UnknownConductor(CalcError):
    """No conductor in the library matches the requested size/material/class."""


class DataTableError(Exception):
    """A packaged data table failed validation (a build defect, not a client error)."""
