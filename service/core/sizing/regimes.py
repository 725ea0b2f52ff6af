"""The pluggable unit: a sizing regime answers size and verify for its own inputs, in the shared result records.

A regime is a set of tables (one data file each) and the rules that use them;
the search over candidate sizes (search.py), the network solve of the voltage
drop (circuit.py) and the result records (model.py) are shared.  Adding a
regime: implement ``SizingRegime`` and list it in ``REGIMES``; the HTTP edge
maps its request fields to the regime's input record.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any, Protocol

from .engine import size_conductor, verify_conductor
from .model import SizingResult
from .nec import nec
from .regime import iec60364


class SizingRegime(Protocol):
    key: str  # the request's selector
    name: str  # the standard and edition, as results name it

    def size(self, spec: Any) -> SizingResult: ...
    def verify(self, spec: Any, size: Any) -> SizingResult: ...  # size as the regime designates it (m², or a label)
    def table_ids(self) -> tuple[str, ...]: ...


class Iec60364Sizing:
    """IEC 60364 through its check pipeline (engine.py) and its tables and rules (regime.Iec60364Regime)."""

    key = "iec60364"

    def __init__(self) -> None:
        self.rules = iec60364()
        self.name = self.rules.name

    def size(self, spec: Any) -> SizingResult:
        return size_conductor(spec, self.rules)

    def verify(self, spec: Any, area_m2: float) -> SizingResult:
        return verify_conductor(spec, area_m2, self.rules)

    def table_ids(self) -> tuple[str, ...]:
        return self.rules.table_ids()


REGIMES: dict[str, Callable[[], SizingRegime]] = {"iec60364": Iec60364Sizing, "nec": nec}


def sizing_regime(key: str) -> SizingRegime:
    return REGIMES[key]()
