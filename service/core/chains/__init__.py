"""Extension-lead chain analysis: voltage, heat and protection along chained leads and reels.

The chain is a network solved by the one network solver (``circuit.py``);
``analyse_chain`` turns the solution into verdicts and recommendations.
"""

from .analysis import analyse_chain
from .model import Appliance, Chain, HeatingTask, Lead, Limits, Reel, SourceImpedance, Supply
from .report import ApplianceReport, ChainReport, ChainTotals, FaultReport, LeadReport, LengthLimit

__all__ = [
    "Appliance", "ApplianceReport", "Chain", "ChainReport", "ChainTotals", "FaultReport", "HeatingTask", "Lead",
    "LeadReport", "LengthLimit", "Limits", "Reel", "SourceImpedance", "Supply", "analyse_chain",
]
