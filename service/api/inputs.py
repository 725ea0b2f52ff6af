"""Turn request fields into core inputs, collecting every bad field at once.

Routes never parse units themselves: they hand each raw field and its JSON
location to a FieldReader, which calls the one parser in ``service.units`` and
remembers what failed.  ``done()`` raises a single 422 naming every bad field.
"""

from __future__ import annotations

from service.api.problems import RequestInvalid, pointer
from service.core.conductors import SizeSpec
from service.units import Power, QuantityError, QuantityKind, parse_conductor_size, parse_power, parse_quantity

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

    def power(self, value: float | str, kind: QuantityKind, *path: str | int) -> Power:
        """A power as given: active (W), apparent (VA) or reactive (var), by its unit; a bare number is in watts."""
        try:
            return parse_power(value, kind)
        except QuantityError as exc:
            self.problems.append((pointer(*path), exc.message))
            return Power(_BAD, "active")

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


def check_tt_loop(reader: FieldReader, earthing: str | None, loop_ohm: float, ra_ohm: float | None,
                  loop_path: tuple[str, ...], ra_path: tuple[str, ...]) -> None:
    """TT: the earth-fault loop runs through the installation's electrode, so its impedance cannot be below RA.

    IEC 60364-4-41:2005, 411.5.4: in a TT system Zs is the loop of the source, the line conductor, the protective
    conductor, the earthing conductor, the installation's earth electrode and the source's (from memory).
    """
    if earthing != "TT" or ra_ohm is None or not loop_ohm < ra_ohm:  # NaN (a bad field, already named) passes
        return
    why = (f"in a TT system the earth-fault loop includes the installation's earth electrode, so the loop impedance "
           f"{loop_ohm:.4g} ohm cannot be less than the electrode's resistance RA = {ra_ohm:.4g} ohm "
           "(IEC 60364-4-41 411.5.4)")
    reader.add(why + ": give the loop impedance measured or calculated through the electrode", *loop_path)
    reader.add(why + ": check the electrode resistance, or the earthing system", *ra_path)
