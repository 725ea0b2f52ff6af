"""Conductor sizing and verification: the smallest compliant size, or every check on a chosen one.

A regime is a standard's tables and rules behind ``regimes.SizingRegime``:
IEC 60364 (regime.py, its check pipeline in engine.py and checks.py) and the
NEC (nec/).  Both share the search over candidate sizes (search.py), the
network solve of the voltage drop (circuit.py) and the result records (model.py).
Pure: SI floats in, frozen results out; a design that does not comply is a
verdict, a CalcError means no answer exists.
"""

from .checks import CHECK_ORDER
from .engine import design_current, size_conductor, verify_conductor
from .model import (
    ARRANGEMENTS,
    METHODS,
    SPACINGS,
    Check,
    CircuitSpec,
    Device,
    Factor,
    LimitsSpec,
    LoadSpec,
    NotAssessed,
    ProtectionSpec,
    ProtectiveConductorSpec,
    SizeEvaluation,
    SizingInput,
    SizingResult,
    Step,
    SupplySpec,
)
from .regime import Iec60364Regime, Regime, iec60364
from .regimes import REGIMES, SizingRegime, sizing_regime
from .tables import SizingTables, default_sizing_tables

__all__ = [
    "ARRANGEMENTS", "CHECK_ORDER", "METHODS", "SPACINGS", "Check", "CircuitSpec", "Device", "Factor",
    "Iec60364Regime", "LimitsSpec", "LoadSpec", "NotAssessed", "ProtectionSpec", "ProtectiveConductorSpec", "Regime",
    "SizeEvaluation", "SizingInput", "SizingResult", "SizingTables", "Step", "SupplySpec", "default_sizing_tables",
    "design_current", "iec60364", "size_conductor", "verify_conductor", "REGIMES", "SizingRegime", "sizing_regime",
]
