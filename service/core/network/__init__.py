"""Circuit-network solver: sparse modified nodal analysis, DC and single-frequency AC.

Usage::

    from service.core.network import Network, Resistor, VoltageSource, solve
    net = Network(elements=(VoltageSource("V1", "1", "0", 230.0), Resistor("R1", "1", "0", 10.0)))
    sol = solve(net)
    sol.voltage("1").voltage.magnitude, sol.element("R1").p_w

Pure: numpy and scipy only.  See model.py for conventions and units.
"""

from .errors import (
    ConvergenceError,
    CurrentSourceCutsetError,
    DeadlineExceededError,
    DuplicateElementIdError,
    EmptyNetworkError,
    FactorTooLargeError,
    FloatingNodesError,
    InvalidNodeError,
    InvalidValueError,
    LoadUndervoltageError,
    NetworkError,
    NonFiniteResultError,
    ResonanceError,
    SingularNetworkError,
    VoltageCollapseError,
    VoltageSourceLoopError,
)
from .loads import max_transferable_power
from .model import (
    CableRun,
    Capacitor,
    CurrentSource,
    Element,
    Impedance,
    Inductor,
    Load,
    Network,
    Resistor,
    ResistorArray,
    SeriesRLC,
    SolveOptions,
    Switch,
    ThreePhaseSupply,
    VoltageSource,
)
from .results import (
    ArrayElementResult,
    ArrayValues,
    ElementResult,
    LineToLineVoltage,
    NodeVoltage,
    Phasor,
    PowerTotals,
    Solution,
    SupplyPhaseResult,
    TheveninEquivalent,
    ThreePhaseSupplyResult,
)
from .solver import PreparedNetwork, prepare, solve

__all__ = [
    "ArrayElementResult", "ArrayValues", "CableRun", "Capacitor", "ConvergenceError", "CurrentSource",
    "CurrentSourceCutsetError", "DeadlineExceededError", "DuplicateElementIdError", "Element", "ElementResult", "EmptyNetworkError",
    "FactorTooLargeError", "FloatingNodesError", "Impedance", "Inductor", "InvalidNodeError", "InvalidValueError",
    "LineToLineVoltage", "Load", "LoadUndervoltageError", "Network", "NetworkError", "NodeVoltage",
    "NonFiniteResultError", "Phasor", "PowerTotals", "PreparedNetwork", "ResonanceError", "Resistor", "ResistorArray", "SeriesRLC",
    "SingularNetworkError", "Solution", "SolveOptions", "SupplyPhaseResult", "Switch",
    "TheveninEquivalent", "ThreePhaseSupply", "ThreePhaseSupplyResult", "VoltageCollapseError",
    "VoltageSource", "VoltageSourceLoopError", "max_transferable_power", "prepare", "solve",
]
