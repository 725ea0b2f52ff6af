"""Turn request fields into core inputs, collecting every bad field at once.

Routes never parse units themselves: they hand each raw field and its JSON
location to a FieldReader, which calls the one parser in ``service.units`` and
remembers what failed.  ``done()`` raises a single 422 naming every bad field.
"""

from __future__ import annotations

from service.api.problems import RequestInvalid, pointer
from service.core.conductors import SizeSpec
from service.units import QuantityError, QuantityKind, parse_conductor_size, parse_quantity

_BAD = float("nan")  # placeholder returned for a failed field; never reaches the core


class FieldReader:
    def __init__(self) -> None:
        self.problems: list[tuple[str, str]] = []

    def quantity(self, value: float | str, kind: QuantityKind, *path: str | int) -> float:
        try:
            return parse_quantity(value, kind)
        except QuantityError as exc:
            self.problems.append((pointer(*path), exc.message))
            return _BAD

    def size(self, value: float | str, *path: str | int) -> SizeSpec:
        try:
            return parse_conductor_size(value)
        except QuantityError as exc:
            self.problems.append((pointer(*path), exc.message))
            return SizeSpec.metric(_BAD)

    def add(self, message: str, *path: str | int) -> None:
        self.problems.append((pointer(*path), message))

    def done(self) -> None:
        if self.problems:
            raise RequestInvalid(self.problems)
