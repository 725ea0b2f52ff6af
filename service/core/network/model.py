"""The network model: frozen dataclasses in plain SI units.

Conventions (the HTTP layer and every caller rely on them):

* Nodes are named by non-empty strings.  The reference node is ``"0"`` by
  default, as in SPICE netlists, and can be renamed per network (e.g. "N" or
  "PE").  Its voltage is 0 V and every other node voltage is measured from it.
* Node names that are canonical non-negative decimal integers ("0", "17", not
  "017") are the same nodes as the integer labels used by array elements
  (:class:`ResistorArray`), so a big grid can be given compactly and still be
  joined to named elements.
* AC quantities are RMS phasors at ``frequency_hz``; ``frequency_hz`` None or 0
  means DC.  Angles at the API surface are degrees.
* An element's current is reported in the direction a -> b *through* the
  element (for a VoltageSource: pos -> neg through the source, so a source that
  delivers power shows a negative current, as in SPICE).
* CurrentSource(a, b): the current flows from a through the source to b, i.e.
  it is drawn out of node a and pushed into node b (SPICE's ``I a b``).
* Reactances given in ohms (cable runs, source internal impedance) are taken
  as inductive reactances at the analysis frequency: at DC they vanish.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal, Union

import numpy as np

LoadModel = Literal["constant_impedance", "constant_current", "constant_power"]
LOAD_MODELS: tuple[str, ...] = ("constant_impedance", "constant_current", "constant_power")
PhaseSequence = Literal["positive", "negative", "L1-L2-L3", "L1-L3-L2"]
# "L1-L2-L3" is another name for positive sequence, "L1-L3-L2" for negative.
POSITIVE_SEQUENCE = ("positive", "L1-L2-L3")
NEGATIVE_SEQUENCE = ("negative", "L1-L3-L2")


@dataclass(frozen=True, slots=True)
class Resistor:
    id: str
    a: str
    b: str
    resistance_ohm: float  # 0 is allowed: an ideal short whose current is reported

    kind = "resistor"
    terminals = ("a", "b")


@dataclass(frozen=True, slots=True)
class Impedance:
    """A fixed complex impedance R + jX at the analysis frequency (X < 0 is capacitive).

    It carries no frequency information, so in a DC network only X == 0 is
    accepted; use SeriesRLC, Inductor or Capacitor for parts whose impedance
    depends on frequency.
    """

    id: str
    a: str
    b: str
    resistance_ohm: float
    reactance_ohm: float = 0.0

    kind = "impedance"
    terminals = ("a", "b")


@dataclass(frozen=True, slots=True)
class SeriesRLC:
    """R, L and C in series; ``capacitance_f`` None means no capacitor.

    At DC the inductor is a short and a capacitor (if any) is an open.
    """

    id: str
    a: str
    b: str
    resistance_ohm: float = 0.0
    inductance_h: float = 0.0
    capacitance_f: float | None = None

    kind = "series_rlc"
    terminals = ("a", "b")


@dataclass(frozen=True, slots=True)
class Inductor:
    id: str
    a: str
    b: str
    inductance_h: float

    kind = "inductor"
    terminals = ("a", "b")


@dataclass(frozen=True, slots=True)
class Capacitor:
    id: str
    a: str
    b: str
    capacitance_f: float

    kind = "capacitor"
    terminals = ("a", "b")


@dataclass(frozen=True, slots=True)
class VoltageSource:
    """EMF ``voltage_v`` (RMS magnitude for AC; signed value for DC) behind R + jX.

    ``pos`` is at +E relative to ``neg`` on open circuit.  At DC ``phase_deg``
    must be 0 (give a negative voltage instead).
    """

    id: str
    pos: str
    neg: str
    voltage_v: float
    phase_deg: float = 0.0
    internal_resistance_ohm: float = 0.0
    internal_reactance_ohm: float = 0.0

    kind = "voltage_source"
    terminals = ("pos", "neg")


@dataclass(frozen=True, slots=True)
class CurrentSource:
    """Drives ``current_a`` from a through the source to b (out of a, into b)."""

    id: str
    a: str
    b: str
    current_a: float
    phase_deg: float = 0.0

    kind = "current_source"
    terminals = ("a", "b")


@dataclass(frozen=True, slots=True)
class Switch:
    """Closed: an ideal short with its current reported.  Open: no connection."""

    id: str
    a: str
    b: str
    closed: bool

    kind = "switch"
    terminals = ("a", "b")


@dataclass(frozen=True, slots=True)
class CableRun:
    """A run of conductor whose per-metre values are already at operating temperature.

    ``go_and_return`` True doubles the length (the current goes out and comes
    back in the same run, e.g. a single-phase or DC loop).  Its losses count as
    conductor losses in the totals.
    """

    id: str
    a: str
    b: str
    length_m: float
    resistance_ohm_per_m: float
    reactance_ohm_per_m: float = 0.0
    go_and_return: bool = False

    kind = "cable_run"
    terminals = ("a", "b")

    @property
    def loop_length_m(self) -> float:
        return self.length_m * (2.0 if self.go_and_return else 1.0)


@dataclass(frozen=True, slots=True)
class Load:
    """A load rated ``rated_power_w`` (active power) at ``rated_voltage_v``.

    ``power_factor`` in (0, 1]; lagging (inductive, Q > 0) unless ``leading``.
    The model says how the drawn power follows the terminal voltage V:
    constant_impedance  S = S_rated (|V|/V_rated)^2   (linear)
    constant_current    S = S_rated (|V|/V_rated)     (Newton-Raphson)
    constant_power      S = S_rated                   (Newton-Raphson)
    At DC the power factor is ignored.
    """

    id: str
    a: str
    b: str
    rated_power_w: float
    rated_voltage_v: float
    power_factor: float = 1.0
    leading: bool = False
    model: LoadModel = "constant_impedance"

    kind = "load"
    terminals = ("a", "b")

    @property
    def rated_complex_power_va(self) -> complex:
        """S = P + jQ at rated voltage (Q > 0 lagging)."""
        q = self.rated_power_w * math.tan(math.acos(self.power_factor))
        return complex(self.rated_power_w, -q if self.leading else q)


@dataclass(frozen=True, slots=True)
class ThreePhaseSupply:
    """Three star-connected EMFs of equal magnitude, 120 degrees apart.

    L1 is at 0 degrees; ``sequence`` "positive" (or "L1-L2-L3") puts L2 at
    -120 deg and L3 at +120 deg, "negative" (or "L1-L3-L2") swaps L2 and L3.  Each phase may have an
    internal impedance.  AC only.  Put ``neutral`` on the reference node (or
    connect it to it) or the whole network floats.
    """

    id: str
    l1: str
    l2: str
    l3: str
    neutral: str
    line_to_neutral_voltage_v: float
    sequence: PhaseSequence = "positive"
    internal_resistance_ohm: float = 0.0
    internal_reactance_ohm: float = 0.0

    kind = "three_phase_supply"
    terminals = ("l1", "l2", "l3", "neutral")

    @property
    def phase_angles_deg(self) -> tuple[float, float, float]:
        return (0.0, -120.0, 120.0) if self.sequence in POSITIVE_SEQUENCE else (0.0, 120.0, -120.0)


@dataclass(frozen=True, slots=True, eq=False)
class ResistorArray:
    """Many resistors in one element, for big grids: numpy arrays of equal length.

    ``a`` and ``b`` are non-negative integer node labels (label k is node "k"),
    ``resistance_ohm`` strictly positive.  Results are reported as arrays.
    """

    id: str
    a: np.ndarray
    b: np.ndarray
    resistance_ohm: np.ndarray

    kind = "resistor_array"
    terminals = ()


Element = Union[
    Resistor,
    Impedance,
    SeriesRLC,
    Inductor,
    Capacitor,
    VoltageSource,
    CurrentSource,
    Switch,
    CableRun,
    Load,
    ThreePhaseSupply,
    ResistorArray,
]


@dataclass(frozen=True, slots=True, kw_only=True, eq=False)
class Network:
    elements: tuple[Element, ...]
    frequency_hz: float | None = None
    reference_node: str = "0"

    @property
    def is_dc(self) -> bool:
        return not self.frequency_hz

    @classmethod
    def from_arrays(
        cls,
        a: np.ndarray,
        b: np.ndarray,
        resistance_ohm: np.ndarray,
        *,
        others: tuple[Element, ...] = (),
        array_id: str = "R",
        frequency_hz: float | None = None,
        reference_node: str = "0",
    ) -> Network:
        """A resistor network from integer node-label arrays plus any other elements."""
        arr = ResistorArray(
            array_id,
            np.asarray(a, dtype=np.int64),
            np.asarray(b, dtype=np.int64),
            np.asarray(resistance_ohm, dtype=np.float64),
        )
        return cls(elements=(arr, *others), frequency_hz=frequency_hz, reference_node=reference_node)


@dataclass(frozen=True, slots=True, kw_only=True)
class SolveOptions:
    """Knobs of :func:`solve`; the defaults suit building services.

    * ``tolerance_a``: Newton stops when the largest KCL mismatch is below
      max(tolerance_a, relative_tolerance * largest current in the network).
    * ``load_guard_voltage_pu``: below this fraction of its rated voltage a
      constant-power or constant-current load is modelled as the constant
      impedance it has at the guard voltage.  Real equipment does not keep
      drawing rated power down to 0 V (it stalls or trips), and the guard keeps
      Newton's equations defined at V = 0.  0.7 pu is the usual changeover in
      load-flow practice.  # common practice
    * ``on_load_undervoltage``: "error" raises when a nonlinear load ends below
      the guard (VoltageCollapseError if the power cannot be transferred at
      all, LoadUndervoltageError otherwise); "constant_impedance" returns the
      guarded solution and lists those loads in ``Solution.guarded_loads``.
    * ``thevenin_between``: node pairs (a, b) for which to report the
      Thevenin equivalent of the solved network seen between a and b.
    * ``deadline_s``: a wall-clock budget in seconds for the load-flow
      iteration, counted from the start of the solve; None (the default) means
      only ``max_iterations`` bounds it.  It is checked after every Newton step,
      so a step in progress is finished (the overrun is at most one step), and
      before every sparse factorisation (a factorisation under way cannot be
      stopped).  Running out raises DeadlineExceededError (a ConvergenceError).
    * ``factor_max_bytes``: the most bytes the LU factors of any one factorisation of the solve may take; None
      (the default) means unbounded.  Each factorisation is measured as soon as it is made and, above the
      limit, dropped and refused with FactorTooLargeError: it bounds what a solve keeps and stops it from
      factorising again, but not the peak of that one factorisation (SuperLU cannot be given a limit).
    * ``impedance_form_ratio``: an element impedance below this fraction of the network's impedance scale (the
      median |Z| of its impedance elements) is solved in impedance form, with its current as an unknown of the
      equations, instead of as an admittance 1/Z.  The equations are the same; the admittance form would put
      1/Z, many orders above the rest, on the diagonal and lose the other elements' digits, and the element's
      current would come out as a difference of two nearly equal node voltages times 1/Z.  Listed in
      ``Solution.assumptions``.
    """

    max_iterations: int = 30
    tolerance_a: float = 1e-9
    relative_tolerance: float = 1e-12
    load_guard_voltage_pu: float = 0.7
    on_load_undervoltage: Literal["error", "constant_impedance"] = "error"
    thevenin_between: tuple[tuple[str, str], ...] = ()
    deadline_s: float | None = None
    impedance_form_ratio: float = 1e-6
    factor_max_bytes: float | None = None
