"""What one NEC sizing request fixes for every candidate size, and the candidates themselves."""

from __future__ import annotations

from dataclasses import dataclass

from service.core.conductors import Conductor
from service.core.steps import Step

from ..model import Check, Device
from .model import NecSizingInput, System
from .rules import Derating, LoadSplit


@dataclass(frozen=True, slots=True)
class Candidate:
    line: Conductor
    insulation_a: float  # one conductor: Table 310.16 (or 310.17) at the insulation's rating
    termination_a: float  # one conductor: Table 310.16 at the termination column
    sets: int = 1  # conductors in parallel per line (310.10(G))


@dataclass(frozen=True, slots=True)
class Plan:
    """What one request fixes for every candidate size."""

    spec: NecSizingInput
    system: System
    load: LoadSplit
    device: Device
    insulation_c: int
    termination_c: int
    derate: Derating
    conductors: int
    impedance_group: str
    drop_limit_pct: float
    steps: tuple[Step, ...]
    own_conductors: int  # the circuit's own current-carrying conductors (2 single-phase, 3 three-phase)
    breaking: Check | None  # 110.9: the interrupting rating against the available fault current (None: not given)
    interrupting_rating_a: float
    interrupting_given: bool
