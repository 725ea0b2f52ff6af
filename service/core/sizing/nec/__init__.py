"""The North American regime: NFPA 70-2023 (NEC) conductor sizing and Chapter 9 raceway fill."""

from .fill import FillConductor, FillResult, TradeSizeFill, raceway_fill
from .model import RACEWAYS, SYSTEMS, NecCircuit, NecLoad, NecSizingInput
from .regime import CHECK_ORDER, NecRegime, nec
from .tables import NecTables, default_nec_tables

__all__ = ["CHECK_ORDER", "RACEWAYS", "SYSTEMS", "FillConductor", "FillResult", "NecCircuit", "NecLoad",
           "NecRegime", "NecSizingInput", "NecTables", "TradeSizeFill", "default_nec_tables", "nec", "raceway_fill"]
