"""Schemas of POST /v1/networks/solve: a circuit network in, node voltages and element results out.

Requests: ``elements`` is a list tagged by ``type``.  Every physical value is a
number in the unit its description names or a string with a unit, except the
compact ``resistor_array`` form, whose arrays are bare numbers (ohms) so that a
100,000-node grid stays a few megabytes of JSON.

Responses: phasors are given as magnitude and angle (degrees) with the unit in
the field name; powers follow the passive sign convention (``p_w`` is absorbed
by the element) and sources add ``supplied_w`` / ``supplied_var``.  In a DC
analysis every angle is 0 or 180 (180 = negative value).
"""

from __future__ import annotations

from typing import Annotated, Literal, Union

import msgspec
from msgspec import Meta

from service.api.schemas.v1.common import (
    CalculationNotes,
    ConductorClassField,
    ConductorSizeField,
    MaterialField,
    Out,
    Strict,
    quantity,
)
from service.units import (
    AC_POWER,
    ANALYSIS_FREQUENCY,
    CAPACITANCE,
    INDUCTANCE,
    LENGTH,
    PHASE_ANGLE,
    REACTANCE,
    REACTANCE_PER_LENGTH,
    REACTIVE_POWER,
    RESISTANCE,
    SERIES_CAPACITANCE,
    SOURCE_CURRENT,
    SOURCE_VOLTAGE,
    TEMPERATURE,
    VOLTAGE,
)

# Integer labels of array elements; generous, but bounded so they fit int64 arithmetic.
MAX_NODE_LABEL = 2**40

ElementId = Annotated[str, Meta(min_length=1, max_length=100, description="Unique id of the element in this network.",
                                examples=["cable-hall", "L1-supply"])]
NodeName = Annotated[
    str,
    Meta(min_length=1, max_length=100,
         description=("Node name. Any non-empty text; names that are plain non-negative integers (\"0\", \"17\", "
                      "not \"017\") are the same nodes as the integer labels of array elements."),
         examples=["hall_db", "N", "0"]),
]
# Array labels and the optional node list are checked at the edge (422 naming the entry): litestar's
# OpenAPI output drops constraints on list items, and the contract must not promise less than we check.


class _Element(Strict, tag_field="type"):
    """Base of the element kinds; the tag field ``type`` selects one."""

    id: ElementId


class _TwoTerminalIn(_Element):
    """An element between nodes a and b."""

    a: NodeName
    b: NodeName


class ResistorIn(_TwoTerminalIn, tag="resistor"):
    resistance: quantity(RESISTANCE, "0.5 ohm", 10, "1.2 kohm")  # type: ignore[valid-type]
    """0 is an ideal short whose current is still reported."""


class ImpedanceIn(_TwoTerminalIn, tag="impedance"):
    """R + jX with X given directly, or R with L and/or C in series (X then follows the frequency).

    Leave out (or give 0) what is not there: capacitance 0 means no series capacitor.
    """

    resistance: quantity(RESISTANCE, "0.4 ohm", 0) = 0.0  # type: ignore[valid-type]
    reactance: quantity(REACTANCE, "0.3 ohm", "-12 ohm") = 0.0  # type: ignore[valid-type]
    # Fixed reactance at the analysis frequency (negative = capacitive); not together with inductance/capacitance.
    inductance: quantity(INDUCTANCE, "2 mH") = 0.0  # type: ignore[valid-type]
    capacitance: quantity(SERIES_CAPACITANCE, "47 uF") = 0.0  # type: ignore[valid-type]
    # Defaults rather than null for "not given": the contract then keeps each field's numeric bounds.


class InductorIn(_TwoTerminalIn, tag="inductor"):
    inductance: quantity(INDUCTANCE, "10 mH", 0.01)  # type: ignore[valid-type]


class CapacitorIn(_TwoTerminalIn, tag="capacitor"):
    capacitance: quantity(CAPACITANCE, "20 uF", 2.0e-5)  # type: ignore[valid-type]


OptionalNode = Annotated[str, Meta(min_length=1, max_length=100)] | None
SOURCE_TERMINALS = ("Terminals: a (positive) and b (negative), like every two-terminal element; pos and neg are "
                    "the same terminals under their earlier names, kept for v1 callers. Give one pair, not both.")


class VoltageSourceIn(_Element, tag="voltage_source", kw_only=True):
    """An EMF from its negative terminal (b, or neg) to its positive one (a, or pos) behind an optional internal
    impedance: on open circuit v(a) - v(b) = voltage.

    AC: ``voltage`` is the RMS magnitude (>= 0) at angle ``phase``.  DC: a signed value, ``phase`` 0.
    """

    a: Annotated[OptionalNode, Meta(description="Positive terminal's node. " + SOURCE_TERMINALS)] = None
    b: Annotated[OptionalNode, Meta(description="Negative terminal's node. " + SOURCE_TERMINALS)] = None
    pos: Annotated[OptionalNode, Meta(description="Positive terminal's node: the same as a. " + SOURCE_TERMINALS)] = None
    neg: Annotated[OptionalNode, Meta(description="Negative terminal's node: the same as b. " + SOURCE_TERMINALS)] = None
    voltage: quantity(SOURCE_VOLTAGE, "230 V", 12)  # type: ignore[valid-type]
    phase: quantity(PHASE_ANGLE, "0 deg", -120) = 0.0  # type: ignore[valid-type]
    internal_resistance: quantity(RESISTANCE, "0.25 ohm") = 0.0  # type: ignore[valid-type]
    internal_reactance: quantity(REACTANCE, "0.15 ohm", "-0.4 ohm") = 0.0  # type: ignore[valid-type]
    # Positive: inductive (a transformer or generator). Negative: capacitive (a source behind a series capacitor,
    # AC only: at DC a series capacitor blocks the current, so a negative value is refused there).


class CurrentSourceIn(_TwoTerminalIn, tag="current_source"):
    """Drives ``current`` out of node ``a``, through the source, into node ``b``."""

    current: quantity(SOURCE_CURRENT, "2 A", 0.5)  # type: ignore[valid-type]
    phase: quantity(PHASE_ANGLE, "0 deg") = 0.0  # type: ignore[valid-type]


class SwitchIn(_TwoTerminalIn, tag="switch"):
    """Closed: an ideal short whose current is reported.  Open: no connection."""

    closed: Annotated[bool, Meta(description="true: an ideal short whose current is reported; false: no connection.")]


class CableRunIn(_TwoTerminalIn, tag="cable_run"):
    """A run of one conductor size; its resistance comes from the conductor library at the conductor temperature."""

    length: quantity(LENGTH, "25 m", "82 ft")  # type: ignore[valid-type]
    size: ConductorSizeField
    material: MaterialField = "copper"
    conductor_class: ConductorClassField = 2
    conductor_temperature: quantity(TEMPERATURE, "70 degC", 20) = 70.0  # type: ignore[valid-type]
    # 70 °C: thermoplastic (PVC) insulation at full load, the usual design temperature (common practice).
    go_and_return: Annotated[bool, Meta(description=(
        "true when the run's current goes out and comes back in this run (a single-phase or DC loop modelled as one "
        "element): the length counts twice."))] = False
    reactance_per_length: quantity(REACTANCE_PER_LENGTH, "0.08 mohm/m", "0.08 ohm/km") = 0.0  # type: ignore[valid-type]
    # Series reactance per metre of one conductor at the analysis frequency; 0 (resistance only) unless given.


class NetworkLoadIn(_TwoTerminalIn, tag="load"):
    """A load rated ``rated_power`` (active P, or apparent S) at ``rated_voltage``; ``model`` says how it follows the
    voltage.  Its reactive power comes from ``power_factor``, or is given as ``rated_reactive_power``."""

    rated_power: quantity(AC_POWER, "3 kW", "10 kVA", 2000)  # type: ignore[valid-type]
    rated_voltage: quantity(VOLTAGE, "230 V")  # type: ignore[valid-type]
    power_factor: Annotated[float | None, Meta(description=(
        "cos φ at rated voltage, in (0, 1]; default 1, or from rated_reactive_power. With an active rated_power, "
        "S = P / cos φ; with an apparent one, P = S cos φ. Ignored at DC."), examples=[0.95])] = None
    rated_reactive_power: quantity(REACTIVE_POWER, "2 kvar", -500) | None = None  # type: ignore[valid-type]
    """Q at rated voltage instead of power_factor (positive lagging, negative leading): with an active rated_power
    S = √(P² + Q²), with an apparent one P = √(S² − Q²).  AC only."""
    leading: Annotated[bool, Meta(description=(
        "true for a capacitive (leading) load; lagging (inductive) otherwise. With rated_reactive_power its sign "
        "says it."))] = False
    model: Annotated[
        Literal["constant_impedance", "constant_current", "constant_power"],
        Meta(description=("How the load follows its terminal voltage V: constant_impedance S = S_rated (V/V_rated)², "
                          "constant_current S = S_rated (V/V_rated), constant_power S = S_rated. Below 0.7 of "
                          "rated voltage the last two see options.on_load_undervoltage.")),
    ] = "constant_impedance"


class ThreePhaseSupplyIn(_Element, tag="three_phase_supply"):
    """Three star-connected EMFs 120° apart (L1 at 0°), each behind an optional internal impedance.  AC only."""

    l1: NodeName
    l2: NodeName
    l3: NodeName
    neutral: NodeName
    line_to_neutral_voltage: quantity(VOLTAGE, "230 V", "240 V")  # type: ignore[valid-type]
    sequence: Literal["positive", "negative", "L1-L2-L3", "L1-L3-L2"] = "positive"
    internal_resistance: quantity(RESISTANCE, "0.02 ohm") = 0.0  # type: ignore[valid-type]
    internal_reactance: quantity(REACTANCE, "0.04 ohm") = 0.0  # type: ignore[valid-type]
    # Per phase; positive inductive, negative capacitive.


class ResistorArrayIn(_Element, tag="resistor_array"):
    """Many resistors in three arrays of equal length: branch i joins node labels a[i] and b[i].

    Labels are integers from 0 to 2^40 (label 17 is node "17"); resistances are bare numbers in ohms, > 0.
    """

    a: Annotated[list[int], Meta(description="Node label of each branch's first terminal, 0 to 2^40.")]
    b: Annotated[list[int], Meta(description="Node label of each branch's second terminal, 0 to 2^40; not equal to a.")]
    resistance: Annotated[list[float], Meta(description="Branch resistances in ohms, each > 0 and <= 1e12.")]


ElementIn = Union[
    ResistorIn, ImpedanceIn, InductorIn, CapacitorIn, VoltageSourceIn, CurrentSourceIn, SwitchIn,
    CableRunIn, NetworkLoadIn, ThreePhaseSupplyIn, ResistorArrayIn,
]


class NodePairIn(Strict):
    a: NodeName
    b: NodeName


class SolveOptionsIn(Strict):
    thevenin_between: Annotated[list[NodePairIn], Meta(
        description=("Node pairs (a, b) between which to report the Thevenin equivalent of the solved network; at "
                     "most AMPLINE_MAX_THEVENIN_PAIRS (default 20), more gets 422."),
    )] = []
    on_load_undervoltage: Annotated[Literal["error", "constant_impedance"], Meta(description=(
        "A constant-power or constant-current load that would sit below 0.7 of its rated voltage: \"error\" refuses "
        "the network (422, naming the load and the most power the network could deliver to it); "
        "\"constant_impedance\" models it as the impedance it has at 0.7 pu and lists it in guarded_loads."))] = "error"
    max_iterations: Annotated[int, Meta(ge=1, le=100, description=(
        "Most Newton-Raphson steps for networks with constant-power or constant-current loads."))] = 30
    node_voltages: Annotated[Literal["objects", "columns", "omit"], Meta(description=(
        "Layout of the node voltages: \"objects\" (node_voltages, one object per node), \"columns\" "
        "(node_voltage_columns, three parallel arrays: compact for big networks) or \"omit\"."))] = "objects"
    array_branch_values: Annotated[bool, Meta(description=(
        "Also return every branch's current and power for array elements, as parallel arrays."))] = False


# One float object: msgspec fills a left-out field with this very object, and a decoded number is a new one.
DEFAULT_FREQUENCY = float("50.0")


def frequency_given(req: NetworkSolveRequest) -> bool:
    """True when the request gave a frequency (even 50 Hz), False when it left it out."""
    return req.frequency is not DEFAULT_FREQUENCY


class NetworkSolveRequest(Strict):
    elements: Annotated[list[ElementIn], Meta(description="The network's elements, each tagged by type.")]
    # Left out: 50 Hz, and the answer says so (notes.assumptions and warnings): the route tells a left-out
    # frequency from a given one by the default object's identity (frequency_given).
    frequency: quantity(ANALYSIS_FREQUENCY, "50 Hz", 60, 0) = DEFAULT_FREQUENCY  # type: ignore[valid-type]
    reference_node: Annotated[str, Meta(min_length=1, max_length=100, description=(
        "The 0 V node every voltage is measured from (often the neutral or the negative pole)."),
        examples=["N", "0"])] = "0"
    nodes: Annotated[list[NodeName] | None, Meta(description=(
        "Optional list of the network's node names. When given, an element terminal naming any other node (a "
        "typing slip) is refused with 422; integer labels of array elements are not checked against it."))] = None
    options: SolveOptionsIn = msgspec.field(default_factory=SolveOptionsIn)


# --------------------------------------------------------------------------- responses


class _Result(Out, omit_defaults=True):
    """Fields that do not apply to an element (None) are left out."""


class NodeVoltageOut(Out):
    node: str
    magnitude_v: float
    angle_deg: float
    re_v: float
    """Real part of the node voltage (DC: the signed voltage)."""
    im_v: float
    """Imaginary part (0 at DC)."""


class NodeVoltageColumns(Out):
    """Node voltages as parallel arrays (``options.node_voltages = "columns"``)."""

    nodes: list[str]
    magnitude_v: list[float]
    angle_deg: list[float]
    re_v: list[float]
    """Real parts (DC: the signed voltages)."""
    im_v: list[float]
    """Imaginary parts (0 at DC)."""


class _ElementResult(_Result, tag_field="type"):
    """Base of the element results; ``type`` is the element's type in the request."""

    id: str


class _TwoTerminal(_ElementResult):
    """A two-terminal element: V = v(a) - v(b) across it, I from a to b through it.

    For a voltage source a is ``pos`` and b is ``neg``, so a source delivering power shows p_w < 0.
    """

    a: str
    b: str
    voltage_magnitude_v: float
    voltage_angle_deg: float
    current_magnitude_a: float
    current_angle_deg: float
    voltage_re_v: float
    """Real part of V = v(a) - v(b) (DC: the signed value)."""
    voltage_im_v: float
    current_re_a: float
    """Real part of the current from a to b through the element (DC: the signed value)."""
    current_im_a: float
    p_w: float
    q_var: float
    s_va: float
    power_factor: float | None = None
    """|P| / |S|; left out when S = 0."""
    power_factor_sense: str | None = None
    """"lagging" when the element absorbs reactive power, "leading" when it delivers it, or "unity"; for sources,
    the sense of the power delivered ("lagging": the network draws reactive power from the source)."""
    supplied_w: float | None = None
    supplied_var: float | None = None
    internal_loss_w: float | None = None
    load_model: str | None = None
    rated_power_drawn_pct: float | None = None
    """Loads: active power drawn as a percentage of the rated power."""
    below_guard_voltage: bool | None = None
    resistance_ohm: float | None = None
    """Cable runs: the run's resistance used (both ways when go_and_return)."""
    reactance_ohm: float | None = None
    resistance_ohm_per_m: float | None = None
    """Cable runs: the conductor's resistance per metre at the conductor temperature."""


# One result type per two-terminal element type, tagged like the request ("type": "cable_run"...).
_TWO_TERMINAL_RESULTS: dict[type, type] = {
    req: msgspec.defstruct(req.__name__.removesuffix("In") + "Out", [], bases=(_TwoTerminal,),
                           tag=req.__struct_config__.tag, module=__name__)
    for req in (ResistorIn, ImpedanceIn, InductorIn, CapacitorIn, VoltageSourceIn, CurrentSourceIn, SwitchIn,
                CableRunIn, NetworkLoadIn)
}


class SupplyPhaseOut(Out):
    line: str
    node: str
    current_magnitude_a: float
    """Out of the supply's line terminal into the network: the direction of supply. (A voltage source reports its
    current from a to b through the source, so the two differ in sign; p_w and q_var follow one convention.)"""
    current_angle_deg: float
    current_re_a: float
    """Real part of the same current, out of the line terminal."""
    current_im_a: float
    voltage_to_neutral_magnitude_v: float
    voltage_to_neutral_angle_deg: float
    voltage_to_neutral_re_v: float
    voltage_to_neutral_im_v: float
    supplied_w: float
    supplied_var: float
    p_w: float
    """Active power absorbed by this phase of the source (passive sign convention, as for every element): negative
    when it delivers, = -supplied_w."""
    q_var: float
    """Reactive power absorbed (passive sign convention), = -supplied_var."""


class LineToLineOut(Out):
    lines: str
    magnitude_v: float
    angle_deg: float
    re_v: float
    im_v: float


class ThreePhaseSupplyOut(_ElementResult, tag="three_phase_supply"):
    phases: list[SupplyPhaseOut]
    line_to_line: list[LineToLineOut]
    neutral_current_magnitude_a: float
    """I1 + I2 + I3, returning from the network into the supply's neutral terminal."""
    neutral_current_angle_deg: float
    neutral_current_re_a: float
    neutral_current_im_a: float
    supplied_w: float
    supplied_var: float
    p_w: float
    """Active power absorbed by the supply (passive sign convention, as for every element): = -supplied_w."""
    q_var: float
    """Reactive power absorbed (passive sign convention): = -supplied_var."""
    s_va: float
    internal_loss_w: float
    power_factor: float | None = None
    power_factor_sense: str | None = None


class ResistorArrayOut(_ElementResult, tag="resistor_array"):
    count: int
    p_w: float
    q_var: float
    max_current_a: float
    branch_current_magnitude_a: list[float] | None = None
    branch_current_angle_deg: list[float] | None = None
    """Per-branch values (``options.array_branch_values``), in the order of the request's arrays; a -> b."""
    branch_current_re_a: list[float] | None = None
    branch_current_im_a: list[float] | None = None
    branch_p_w: list[float] | None = None


# Request element type -> its result type.
RESULT_OF: dict[type, type] = {
    **_TWO_TERMINAL_RESULTS, ThreePhaseSupplyIn: ThreePhaseSupplyOut, ResistorArrayIn: ResistorArrayOut,
}
ElementOut = Union[tuple(RESULT_OF.values())]  # type: ignore[valid-type]


class NetworkTotalsOut(Out):
    supplied_w: float
    """By all sources, at their terminals."""
    supplied_var: float
    consumed_by_loads_w: float
    consumed_by_loads_var: float
    conductor_loss_w: float
    """I²R in resistors, impedances and cable runs."""
    cable_loss_w: float
    """The part of conductor_loss_w that is in cable runs."""
    network_reactive_var: float
    source_internal_loss_w: float
    """In the sources' internal resistance (not part of supplied_w)."""


class TheveninOut(_Result):
    a: str
    b: str
    open_circuit_voltage_magnitude_v: float
    open_circuit_voltage_angle_deg: float
    open_circuit_voltage_re_v: float
    open_circuit_voltage_im_v: float
    resistance_ohm: float
    reactance_ohm: float
    impedance_ohm: float
    """|Z| of the Thevenin equivalent with every load connected (resistance_ohm + j reactance_ohm). The loads lie in
    parallel with the source path, so this is lower than the loop impedance a fault current meets: compare
    source_loop_impedance_ohm, not this, with a maximum Zs."""
    short_circuit_current_magnitude_a: float | None = None
    """Voc / Z through a short from a to b with the loads connected; left out when Z = 0."""
    short_circuit_current_angle_deg: float | None = None
    short_circuit_current_re_a: float | None = None
    short_circuit_current_im_a: float | None = None
    source_loop_resistance_ohm: float | None = None
    """Resistance between a and b with every `load` element disconnected and the sources zeroed: the source-side
    loop (supply impedance plus the conductors to a and b). Left out when a or b has no path to the reference node
    without the loads."""
    source_loop_reactance_ohm: float | None = None
    """Reactance of the same source-side loop (positive inductive)."""
    source_loop_impedance_ohm: float | None = None
    """|Z| of the source-side loop, loads disconnected: the value to compare with a maximum earth-fault loop
    impedance Zs. Elements other than `load` (resistors, impedances) stay connected."""


class NetworkSolveResult(Out):
    """The solved network.

    One sign convention for every element: V = v(a) - v(b) across it and I from a to b through it (a voltage
    source's a is its positive terminal); p_w and q_var are the power it absorbs (passive sign convention), so a
    source that delivers shows p_w < 0, and supplied_w = -p_w for every source. A three-phase supply's phase
    currents are given out of its line terminals, the direction of supply. Every phasor comes as magnitude and
    angle (degrees) and as real and imaginary parts; at DC the real part is the signed value.
    """

    analysis: Literal["ac", "dc"]
    frequency_hz: float
    reference_node: str
    node_count: int
    """Nodes solved for (the reference node excluded)."""
    element_count: int
    """Elements in the request (an array element counts once)."""
    converged: bool
    iterations: int
    """Linear solves done: 1 for a linear network, 1 + Newton steps with constant-power/current loads."""
    max_kcl_residual_a: float
    """Largest current imbalance at any node, recomputed from the element currents."""
    power_balance_residual_va: float
    """|S supplied - S absorbed by every element|."""
    totals: NetworkTotalsOut
    elements: list[ElementOut]
    thevenin: list[TheveninOut]
    guarded_loads: list[str]
    """Loads modelled as impedances below the guard voltage (options.on_load_undervoltage = "constant_impedance")."""
    warnings: list[str]
    """What the caller should check before using the answer: a default taken for a value not given (the
    frequency), node names used by only one element terminal (often a misspelling), and any accuracy warning
    (a KCL residual above 1e-9 of the largest element current). Empty when there is nothing to say."""
    notes: CalculationNotes
    node_voltages: list[NodeVoltageOut] | None = None
    node_voltage_columns: NodeVoltageColumns | None = None
