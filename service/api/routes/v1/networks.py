"""Network solver endpoint: POST /v1/networks/solve.

The handler is built per app by :func:`network_route_handlers` because its
body limit is a setting (AMPLINE_MAX_NETWORK_BODY_BYTES): a 100,000-node grid
is several megabytes, far above the service's general 1 MiB limit.  Every
solve runs on the compute pool (service.api.compute), within the compute
deadline, so a long solve stalls neither health probes nor other requests.
"""

from __future__ import annotations

import time
from typing import Annotated

import msgspec
import numpy as np
from litestar import post
from litestar.datastructures import State
from litestar.enums import RequestEncodingType
from litestar.handlers import HTTPRouteHandler
from litestar.openapi.datastructures import ResponseSpec
from litestar.openapi.spec import Example
from litestar.params import Body

from service.api.compute import ComputeDeadlineExceeded, calculate
from service.api.contract import request_examples
from service.api.metrics import observe_network_solve
from service.api.network_input import (
    DEFAULT_FREQUENCY_HZ,
    CableUse,
    ParsedNetwork,
    element_count,
    explain,
    terminals,
    to_network,
)
from service.api.problems import error_responses
from service.api.routes.v1.conductors import source_refs
from service.api.schemas.v1 import networks as s
from service.api.schemas.v1.common import GENERAL_CAUTIONS, CalculationNotes, Step
from service.api.settings import Settings
from service.core.conductors import temperature_law_source
from service.core.network import (
    ArrayElementResult,
    DeadlineExceededError,
    NetworkError,
    Phasor,
    Solution,
    ThreePhaseSupplyResult,
    prepare,
)
from service.core.network.fill import IN_PROCESS_MARGIN
from service.core.network.worker import solve_in_worker

# Below this many elements a network is solved on the event loop: such a solve takes tens of milliseconds at
# most (a 1,862-element grid of separate resistors: 24 ms), and a
# thread hand-over would double its CPU cost under load (service/api/compute.py). Bigger ones go to the
# compute pool so that probes and small requests keep being answered during a long solve. Counted as the element
# limit counts them (network_input.element_count: an array is one plus its branches, so empty arrays count too).
INLINE_ELEMENTS = 2_000
FREQUENCY_ASSUMED = f"frequency not given: {DEFAULT_FREQUENCY_HZ:g} Hz assumed"
# Steps listed one by one for at most this many cable runs / Thevenin pairs (the rest are summarised).
STEPS_SHOWN = 20
DEAD_ENDS_SHOWN = 10


def solve_network(req: s.NetworkSolveRequest, settings: Settings) -> s.NetworkSolveResult:
    started = time.monotonic()
    parsed = to_network(req, settings)
    try:
        # Extreme but valid inputs (1e-300 ohm next to 1e12 ohm) can overflow on the way; the core checks every
        # result for finiteness and refuses with 422, so numpy's floating-point warnings are only noise here.
        with np.errstate(divide="ignore", over="ignore", under="ignore", invalid="ignore"):
            sol = _solve(parsed, settings.compute_deadline_s - (time.monotonic() - started),
                         settings.network_worker_cpu_s)
            return _result(req, parsed, sol)  # element records are built lazily, so inside the guard too
    except DeadlineExceededError as err:  # the solver's own deadline (the compute deadline): same answer as the pool's
        raise ComputeDeadlineExceeded(settings.compute_deadline_s, waiting=False) from err
    except NetworkError as err:
        raise explain(err, req) from err


def _solve(parsed: ParsedNetwork, time_left_s: float, worker_cpu_s: int) -> Solution:
    """In this process when the factors' estimate (core fill.py, before any factorisation), with its margin, fits
    the memory setting, as grids of up to about 55,000 nodes (DC; 38,000 AC) and radial networks do under the default; otherwise in a worker process with an address-space
    limit, killed at the deadline and held to AMPLINE_NETWORK_WORKER_CPU_S of CPU (core worker.py), so that a topology that fills in far more can neither grow
    this process nor compute on after its 503. The factors are measured against the setting either way."""
    prepared = prepare(parsed.network, parsed.options)
    estimate = prepared.estimated_factor_bytes()
    budget = parsed.options.factor_max_bytes
    if estimate is None or budget is None or estimate * IN_PROCESS_MARGIN <= budget:
        return prepared.solve()
    return solve_in_worker(parsed.network, parsed.options, max(time_left_s, 0.0), cpu_s=worker_cpu_s)


# --------------------------------------------------------------------------- response


def _mag_ang(p: Phasor) -> tuple[float, float]:
    return p.magnitude, p.angle_deg


def _columns(values: np.ndarray) -> tuple[list[float], list[float]]:
    """Magnitudes and angles in degrees; 0 (even -0.0, which np.angle puts at 180°) has angle 0, as in Phasor.of."""
    return np.abs(values).tolist(), np.where(values == 0, 0.0, np.degrees(np.angle(values))).tolist()


def _node_order(req: s.NetworkSolveRequest, names: list[str]) -> np.ndarray:
    """Named nodes in the order the request first names them, then array labels in numeric order."""
    rank = {n: r for r, n in enumerate(dict.fromkeys(getattr(e, t) for e in req.elements for t in terminals(e)))}
    named = [i for i, n in enumerate(names) if n in rank]
    named.sort(key=lambda i: rank[names[i]])
    if len(named) == len(names):
        return np.asarray(named, dtype=np.int64)
    rest = np.ones(len(names), dtype=bool)
    rest[named] = False
    return np.concatenate([np.asarray(named, dtype=np.int64), np.flatnonzero(rest)])


_FLIP_SENSE = {"lagging": "leading", "leading": "lagging"}


def _two_terminal(el, out_type: type, cable: CableUse | None):
    vm, va = _mag_ang(el.voltage)
    im, ia = _mag_ang(el.current)
    sense = el.power_factor_sense
    if el.supplied_w is not None:  # a source: say the sense of what it delivers
        sense = _FLIP_SENSE.get(sense, sense)
    return out_type(
        id=el.id, a=el.a, b=el.b,
        voltage_magnitude_v=vm, voltage_angle_deg=va, current_magnitude_a=im, current_angle_deg=ia,
        voltage_re_v=el.voltage.real, voltage_im_v=el.voltage.imag, current_re_a=el.current.real,
        current_im_a=el.current.imag,
        p_w=el.p_w, q_var=el.q_var, s_va=el.s_va,
        power_factor=el.power_factor, power_factor_sense=sense,
        supplied_w=el.supplied_w, supplied_var=el.supplied_var, internal_loss_w=el.internal_loss_w,
        load_model=el.load_model,
        rated_power_drawn_pct=None if el.rated_power_fraction is None else 100.0 * el.rated_power_fraction,
        below_guard_voltage=True if el.below_guard_voltage else None,
        resistance_ohm=cable.resistance_ohm if cable else None,
        reactance_ohm=cable.reactance_ohm if cable else None,
        resistance_ohm_per_m=cable.resistance_ohm_per_m if cable else None,
    )


def _three_phase(el: ThreePhaseSupplyResult) -> s.ThreePhaseSupplyOut:
    phases = [
        s.SupplyPhaseOut(
            line=ph.line, node=ph.node,
            current_magnitude_a=ph.line_current.magnitude, current_angle_deg=ph.line_current.angle_deg,
            current_re_a=ph.line_current.real, current_im_a=ph.line_current.imag,
            voltage_to_neutral_magnitude_v=ph.voltage_to_neutral.magnitude,
            voltage_to_neutral_angle_deg=ph.voltage_to_neutral.angle_deg,
            voltage_to_neutral_re_v=ph.voltage_to_neutral.real, voltage_to_neutral_im_v=ph.voltage_to_neutral.imag,
            supplied_w=ph.supplied_w, supplied_var=ph.supplied_var, p_w=-ph.supplied_w, q_var=-ph.supplied_var,
        )
        for ph in el.phases
    ]
    ll = [s.LineToLineOut(lines=x.lines, magnitude_v=x.voltage.magnitude, angle_deg=x.voltage.angle_deg,
                          re_v=x.voltage.real, im_v=x.voltage.imag)
          for x in el.line_to_line_voltages]
    return s.ThreePhaseSupplyOut(
        id=el.id, phases=phases, line_to_line=ll,
        neutral_current_magnitude_a=el.neutral_current.magnitude,
        neutral_current_angle_deg=el.neutral_current.angle_deg,
        neutral_current_re_a=el.neutral_current.real, neutral_current_im_a=el.neutral_current.imag,
        supplied_w=el.supplied_w, supplied_var=el.supplied_var, p_w=-el.supplied_w, q_var=-el.supplied_var, s_va=el.s_va, internal_loss_w=el.internal_loss_w,
        power_factor=el.power_factor, power_factor_sense=el.power_factor_sense,
    )


def _array(el: ArrayElementResult, sol: Solution, branches: bool) -> s.ResistorArrayOut:
    out = dict(id=el.id, count=el.count, p_w=el.p_w, q_var=el.q_var, max_current_a=el.max_current_a)
    if branches:
        values = sol.array_values(el.id)
        mag, ang = _columns(values.current)
        out.update(branch_current_magnitude_a=mag, branch_current_angle_deg=ang, branch_p_w=values.p_w.tolist(),
                   branch_current_re_a=values.current.real.tolist(),
                   branch_current_im_a=np.imag(values.current).tolist())
    return s.ResistorArrayOut(**out)


def _elements(req: s.NetworkSolveRequest, parsed: ParsedNetwork, sol: Solution) -> list[s.ElementOut]:
    out: list[s.ElementOut] = []
    for k, (e, r) in enumerate(zip(req.elements, sol.element_results())):
        if isinstance(r, ThreePhaseSupplyResult):
            out.append(_three_phase(r))
        elif isinstance(r, ArrayElementResult):
            out.append(_array(r, sol, req.options.array_branch_values))
        else:
            out.append(_two_terminal(r, s.RESULT_OF[type(e)], parsed.cables.get(k)))
    return out


def _thevenin(sol: Solution) -> list[s.TheveninOut]:
    out = []
    for t in sol.thevenin:
        isc = t.short_circuit_current
        out.append(s.TheveninOut(
            a=t.a, b=t.b,
            open_circuit_voltage_magnitude_v=t.open_circuit_voltage.magnitude,
            open_circuit_voltage_angle_deg=t.open_circuit_voltage.angle_deg,
            open_circuit_voltage_re_v=t.open_circuit_voltage.real, open_circuit_voltage_im_v=t.open_circuit_voltage.imag,
            resistance_ohm=t.resistance_ohm, reactance_ohm=t.reactance_ohm, impedance_ohm=t.impedance_ohm,
            short_circuit_current_magnitude_a=isc.magnitude if isc else None,
            short_circuit_current_angle_deg=isc.angle_deg if isc else None,
            short_circuit_current_re_a=isc.real if isc else None, short_circuit_current_im_a=isc.imag if isc else None,
            source_loop_resistance_ohm=None if t.source_side is None else t.source_side.real,
            source_loop_reactance_ohm=None if t.source_side is None else t.source_side.imag,
            source_loop_impedance_ohm=None if t.source_side is None else abs(t.source_side),
        ))
    return out


def _notes(req: s.NetworkSolveRequest, parsed: ParsedNetwork, sol: Solution) -> CalculationNotes:
    t = sol.totals
    kinds = {type(e) for e in req.elements}
    nonlinear = any(isinstance(e, s.NetworkLoadIn) and e.model != "constant_impedance" for e in req.elements)
    steps = [
        Step(name="Unknowns", formula="node voltages (reference node excluded), modified nodal analysis Y·V = I",
             value=float(sol.node_count), unit="nodes"),
        Step(name="Solution",
             formula=("Newton-Raphson on the constant-power/current loads, a sparse LU solve per step" if nonlinear
                      else "one sparse LU solve"),
             value=float(sol.iterations), unit="linear solves"),
        Step(name="Kirchhoff's current law check", formula="max over nodes of |sum of currents leaving the node|",
             value=sol.max_kcl_residual_a, unit="A"),
        Step(name="Power balance check", formula="|S supplied - sum of S absorbed by every element|",
             value=sol.power_balance_residual_va, unit="VA"),
        Step(name="Active power supplied", formula="sum over sources of Re(V·I*) at their terminals",
             value=t.supplied_w, unit="W"),
        Step(name="Conductor losses", formula="sum of I²R in resistors, impedances and cable runs",
             value=t.conductor_loss_w, unit="W"),
    ]
    for k, use in list(parsed.cables.items())[:STEPS_SHOWN]:
        c = use.conductor
        kc, ref = c.material.temperature_constant_c, c.reference_temperature_c
        e = req.elements[k]
        steps.append(Step(
            name=f"Cable run {e.id}: resistance per metre at {use.temperature_c:g} °C",
            formula=f"R_t = R_{ref:g} x ({kc:g} + t) / ({kc:g} + {ref:g}), {c.size_label} {c.material.name} class "
                    f"{c.conductor_class}",
            value=use.resistance_ohm_per_m, unit="ohm/m", source=temperature_law_source(c.material),
        ))
        steps.append(Step(
            name=f"Cable run {e.id}: resistance", formula="R = R_t x L" + (" x 2 (go and return)" if e.go_and_return else ""),
            value=use.resistance_ohm, unit="ohm",
        ))
    for k, formula, value in parsed.load_steps[:STEPS_SHOWN]:
        unit = "W" if formula.startswith("P") else "1"
        steps.append(Step(name=f"Load {req.elements[k].id}: rated " + ("active power" if unit == "W" else "power factor"),
                          formula=formula, value=value, unit=unit, source="common practice: S² = P² + Q², P = S cos φ"))
    for th in sol.thevenin[:STEPS_SHOWN]:
        steps.append(Step(
            name=f"Thevenin impedance between {th.a} and {th.b}",
            formula="Z_th = V(a) - V(b) with 1 A injected at a and drawn at b, every source set to zero "
                    "(loads connected)",
            value=th.impedance_ohm, unit="ohm",
        ))
        if th.source_side is not None:
            steps.append(Step(
                name=f"Source-side loop impedance between {th.a} and {th.b}",
                formula="the same with every load element disconnected: the loop a fault current takes from the "
                        "source (compare this with a maximum Zs)",
                value=abs(th.source_side), unit="ohm",
            ))

    if sol.frequency_hz:
        assumptions = [f"Sinusoidal steady state at {sol.frequency_hz:g} Hz: values are RMS phasors, angles in degrees "
                       "relative to the sources' 0° reference."]
    else:
        assumptions = ["DC steady state: inductors are short circuits, capacitors open circuits; "
                       "an angle of 180° means a negative value."]
    assumptions.append(f"Voltages are measured from the reference node {req.reference_node!r} (0 V).")
    assumptions.append("Elements are ideal and linear (R, L, C, switches, sources behind the internal impedance "
                       "given); powers follow the passive sign convention.")
    if s.NetworkLoadIn in kinds:
        assumptions.append(
            "Loads follow their model with voltage: constant impedance S ∝ V², constant current S ∝ V, constant "
            "power S fixed; below 0.7 of rated voltage a constant-power or constant-current load is taken as the "
            "impedance it has at 0.7 pu (common practice in load-flow studies).")
    if parsed.cables:
        assumptions.append(
            "Cable runs use the tabulated maximum DC resistance of the conductor, corrected to the conductor "
            "temperature with the linear law; skin and proximity effects are neglected and the reactance is as "
            "given (0 when not given). Conductors in parallel or of other cores are not modelled unless given.")
    if s.ThreePhaseSupplyIn in kinds:
        assumptions.append("Three-phase supplies are balanced star EMFs 120° apart with L1 at 0°; the neutral "
                           "current is I1 + I2 + I3.")

    if not parsed.frequency_given:
        assumptions.append(FREQUENCY_ASSUMED)
    assumptions.extend(sol.assumptions)
    if sol.thevenin:
        assumptions.append("Thevenin equivalents are taken with every load connected (impedance_ohm), so they sit "
                           "below the supply-and-conductor loop; the source-side loop (source_loop_impedance_ohm) "
                           "disconnects every element of type load and keeps the rest, resistors included.")
    cautions = list(GENERAL_CAUTIONS)
    cautions.append("Steady-state currents and voltages only: fault currents, protective devices, disconnection "
                    "times, current-carrying capacity and voltage-drop limits are not assessed here.")
    if sol.guarded_loads:
        cautions.append("These loads would sit below 0.7 of their rated voltage and were modelled as impedances: "
                        + ", ".join(sol.guarded_loads[:DEAD_ENDS_SHOWN]) + ". Real equipment may stall or trip there.")
    tables = sorted({u.conductor.table_id for u in parsed.cables.values()})
    sources = source_refs(*tables, "conductor-materials") if tables else []
    return CalculationNotes(steps=steps, assumptions=assumptions, sources=sources, cautions=cautions)


def _warnings(req: s.NetworkSolveRequest, parsed: ParsedNetwork, sol: Solution) -> list[str]:
    """What the caller should check before using the answer (also in notes where it is an assumption).

    Dead ends are listed unless the request gave its nodes: then every name was checked against that list.
    """
    out = [] if parsed.frequency_given else [FREQUENCY_ASSUMED]
    if parsed.dead_ends and req.nodes is None:
        shown = ", ".join(repr(n) for n in parsed.dead_ends[:DEAD_ENDS_SHOWN])
        more = len(parsed.dead_ends) - DEAD_ENDS_SHOWN
        out.append(f"Node(s) named by only one element terminal (dead ends; check the spelling): {shown}"
                   + (f" and {more} more" if more > 0 else "") + ".")
    return out + list(sol.warnings)


def _result(req: s.NetworkSolveRequest, parsed: ParsedNetwork, sol: Solution) -> s.NetworkSolveResult:
    t = sol.totals
    layout = req.options.node_voltages
    node_objects = node_columns = None
    if layout != "omit":
        names = sol.node_names()
        order = _node_order(req, names)
        v = sol.voltage_array()[order]
        mag, ang = _columns(v)
        re, im = v.real.tolist(), np.imag(v).tolist()
        ordered = [names[i] for i in order.tolist()]
        if layout == "objects":
            node_objects = [s.NodeVoltageOut(node=n, magnitude_v=x, angle_deg=y, re_v=r, im_v=i)
                            for n, x, y, r, i in zip(ordered, mag, ang, re, im)]
        else:
            node_columns = s.NodeVoltageColumns(nodes=ordered, magnitude_v=mag, angle_deg=ang, re_v=re, im_v=im)
    return s.NetworkSolveResult(
        analysis="ac" if sol.frequency_hz else "dc",
        frequency_hz=sol.frequency_hz,
        reference_node=sol.reference_node,
        node_count=sol.node_count,
        element_count=len(req.elements),
        converged=sol.converged,
        iterations=sol.iterations,
        max_kcl_residual_a=sol.max_kcl_residual_a,
        power_balance_residual_va=sol.power_balance_residual_va,
        totals=s.NetworkTotalsOut(
            supplied_w=t.supplied_w, supplied_var=t.supplied_var,
            consumed_by_loads_w=t.consumed_by_loads_w, consumed_by_loads_var=t.consumed_by_loads_var,
            conductor_loss_w=t.conductor_loss_w, cable_loss_w=t.cable_loss_w,
            network_reactive_var=t.network_reactive_var, source_internal_loss_w=t.source_internal_loss_w,
        ),
        elements=_elements(req, parsed, sol),
        thevenin=_thevenin(sol),
        guarded_loads=list(sol.guarded_loads), warnings=_warnings(req, parsed, sol),
        notes=_notes(req, parsed, sol),
        node_voltages=node_objects,
        node_voltage_columns=node_columns,
    )


# --------------------------------------------------------------------------- examples and route

_EXAMPLES = {
    "Market stall on a 12 V battery: LED strip and a till through 6 m of 2.5 mm² flexible twin (DC)":
        s.NetworkSolveRequest(
            frequency=0,
            reference_node="battery_neg",
            elements=[
                s.VoltageSourceIn(id="battery", pos="battery_pos", neg="battery_neg", voltage="12.6 V",
                                  internal_resistance="0.02 ohm"),
                s.CableRunIn(id="feed", a="battery_pos", b="stall_pos", length="6 m", size="2.5 mm^2",
                             conductor_class=5, conductor_temperature="30 degC", go_and_return=True),
                s.NetworkLoadIn(id="led_strip", a="stall_pos", b="battery_neg", rated_power="36 W", rated_voltage="12 V"),
                s.NetworkLoadIn(id="till", a="stall_pos", b="battery_neg", rated_power="24 W", rated_voltage="12 V",
                         model="constant_power"),
            ],
            options=s.SolveOptionsIn(thevenin_between=[s.NodePairIn(a="stall_pos", b="battery_neg")]),
        ),
    "Village hall refit: 230 V supply, 25 m of 10 mm² sub-main, water heater, lighting and a dishwasher (AC)":
        s.NetworkSolveRequest(
            frequency="50 Hz",
            reference_node="N",
            elements=[
                s.VoltageSourceIn(id="supply", pos="origin", neg="N", voltage="230 V",
                                  internal_resistance="0.25 ohm", internal_reactance="0.15 ohm"),
                s.CableRunIn(id="sub_main", a="origin", b="hall_db", length="25 m", size="10 mm^2",
                             conductor_temperature="70 degC", go_and_return=True,
                             reactance_per_length="0.08 mohm/m"),
                s.NetworkLoadIn(id="water_heater", a="hall_db", b="N", rated_power="3 kW", rated_voltage="230 V"),
                s.NetworkLoadIn(id="lighting", a="hall_db", b="N", rated_power="1.2 kW", rated_voltage="230 V",
                         power_factor=0.95, model="constant_power"),
                s.NetworkLoadIn(id="dishwasher", a="hall_db", b="N", rated_power="2.2 kW", rated_voltage="230 V",
                         power_factor=0.9, model="constant_current"),
            ],
            options=s.SolveOptionsIn(thevenin_between=[s.NodePairIn(a="hall_db", b="N")]),
        ),
    "Small farm building on 230/400 V three-phase: 40 m of 16 mm² four-core, unequal loads per line (AC)":
        s.NetworkSolveRequest(
            frequency=50,
            reference_node="N",
            elements=[
                s.ThreePhaseSupplyIn(id="supply", l1="L1", l2="L2", l3="L3", neutral="N",
                                     line_to_neutral_voltage="230 V", internal_resistance="0.05 ohm",
                                     internal_reactance="0.03 ohm"),
                *[s.CableRunIn(id=f"cable_{x}", a=x, b=f"barn_{x}", length="40 m", size="16 mm^2",
                               conductor_temperature="70 degC", reactance_per_length="0.08 mohm/m")
                  for x in ("L1", "L2", "L3", "N")],
                s.NetworkLoadIn(id="grain_dryer_L1", a="barn_L1", b="barn_N", rated_power="7 kW", rated_voltage="230 V",
                         power_factor=0.85),
                s.NetworkLoadIn(id="lighting_L2", a="barn_L2", b="barn_N", rated_power="1.5 kW", rated_voltage="230 V"),
                s.NetworkLoadIn(id="heaters_L3", a="barn_L3", b="barn_N", rated_power="4 kW", rated_voltage="230 V"),
            ],
        ),
}

_DESCRIPTION = (
    "Steady-state solution of a circuit network, DC or AC at one frequency (modified nodal analysis, sparse LU; "
    "Newton-Raphson when constant-power or constant-current loads are present). Elements: resistor, impedance "
    "(R + jX, or R/L/C), inductor, capacitor, voltage and current sources, switch, cable run (resistance from the "
    "conductor library at the conductor temperature), load (rated power at rated voltage, power factor, constant "
    "impedance/current/power), three-phase supply, and `resistor_array`, a compact form for large resistor "
    "networks. Returns node voltages, every element's current and powers, totals, two independent checks "
    "(Kirchhoff's current law and power balance), optional Thevenin equivalents, and `notes`. A network with no "
    "solution gets 422 naming the elements and nodes at fault: floating parts, loops of ideal voltage sources, "
    "current sources cutting a part off, loads asking more power than the network can transfer. The body limit of "
    "this route, and the most nodes and elements per network, are settings (AMPLINE_MAX_NETWORK_*). An exact L-C "
    "resonance is a 422 `resonant-network` naming the elements that cancel; accuracy limits are stated in "
    "`warnings`. A network whose LU factors would outgrow the memory setting (AMPLINE_NETWORK_FACTOR_MAX_BYTES; "
    "many branches joining distant nodes fill in far more than a grid) is a 422 `network-too-costly`. An array "
    "element counts one plus one per branch toward the element limit, and an empty array is refused.\n\n"
    "Sign convention, one for every element: V = v(a) - v(b) across it and I from a to b through it (a voltage "
    "source's a is its positive terminal, also accepted as pos); p_w and q_var are the power the element absorbs "
    "(passive sign convention), so a source that delivers shows p_w < 0 and supplied_w = -p_w. A three-phase "
    "supply's phase currents are given out of its line terminals, the direction of supply, with p_w and q_var "
    "absorbed like every element's. Every phasor comes as magnitude and angle (degrees) and as real and imaginary "
    "parts; at DC the real part is the signed value. Thevenin equivalents keep the loads connected; beside each, "
    "the source-side loop impedance disconnects every load element."
)


def _response_examples() -> list[Example]:
    settings = Settings()
    return [Example(summary=name, value=msgspec.to_builtins(solve_network(req, settings)))
            for name, req in _EXAMPLES.items()]


_REQUEST_EXAMPLES = request_examples("solveNetwork", _EXAMPLES)
_RESPONSE_EXAMPLES = _response_examples()


def network_route_handlers(settings: Settings) -> list[HTTPRouteHandler]:
    """The network routes of one app, with that app's limits."""

    @post(
        "/networks/solve",
        operation_id="solveNetwork",
        summary="Solve a circuit network (DC or AC)",
        description=_DESCRIPTION,
        status_code=200,
        request_max_body_size=settings.max_network_body_bytes,
        responses={
            **error_responses(422, compute=True),
            200: ResponseSpec(
                data_container=s.NetworkSolveResult,
                generate_examples=False,
                description="Node voltages, element results, totals and checks, with steps, assumptions and cautions.",
                examples=_RESPONSE_EXAMPLES,
            ),
        },
        tags=["networks"],
    )
    async def solve_network_route(
        data: Annotated[s.NetworkSolveRequest, Body(media_type=RequestEncodingType.JSON, examples=_REQUEST_EXAMPLES)],
        state: State,
    ) -> s.NetworkSolveResult:
        elements = element_count(data)
        result = await calculate(state, solve_network, data, settings, inline=elements < INLINE_ELEMENTS)
        if settings.metrics_enabled:  # here, not in solve_network, which also computes the contract's examples
            observe_network_solve(result.analysis, result.iterations, result.node_count, elements)
        return result

    return [solve_network_route]
