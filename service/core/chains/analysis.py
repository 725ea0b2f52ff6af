"""analyse_chain: voltage, heat and protection along chained leads and cable reels.

The chain is solved as a network by the one solver (circuit.py); this module
turns the solution into per-lead and per-appliance verdicts, the earth-fault
check at the far end, the longest usable length of each lead type, and plain
recommendations.
"""

from __future__ import annotations

import math
from dataclasses import replace

from service.core.cord_conductors import cord_assumption, cord_tables
from service.core.cords import CORD_MAX_CONDUCTOR_C, CordLibrary, default_cords
from service.core.errors import Blame, CalcError
from service.core.network import NetworkError, Solution
from service.core.protection import (
    CircuitBreaker,
    GGFuse,
    ResidualCurrentDevice,
    CMIN_LOW_VOLTAGE,
    earth_fault_check,
    is_rlv,
)

from .circuit import FAULT_TEMPERATURE_C, appliance_id, lead_id, solve_chain
from .lengths import length_limits
from .model import Chain
from .plug_fuses import plug_fuse_earth_fault, plug_fuse_overload, plug_fuse_problem, plug_fuse_tables
from .supply_rules import disconnection_rule, earth_fault_u0, rlv_rcd_problem
from .ratings import LeadRating, chain_ratings
from .report import (
    ApplianceReport,
    ChainReport,
    ChainTotals,
    FaultReport,
    HeatingReport,
    LeadReport,
    Step,
)
from .advice import recommendations

DROP_LIMIT_SOURCE = "IEC 60364-5-52:2009, Annex G, Table G.52.1 (other uses than lighting: 5 %)"
J_PER_KWH = 3.6e6


def _check_layout(chain: Chain) -> None:
    if not chain.leads:
        raise CalcError(code="empty-chain", detail="The chain has no leads.",
                        how_to_fix="Give at least one lead, starting with the one plugged into the socket.",
                        blames=(Blame(("leads",), "at least one lead is needed"),))
    bad = [(j, a) for j, a in enumerate(chain.appliances) if not 0 <= a.outlet < len(chain.leads)]
    if bad:
        raise CalcError(
            code="no-such-outlet",
            detail="; ".join(f"appliance {j} is on outlet {a.outlet}, but the chain has outlets 0 to "
                             f"{len(chain.leads) - 1}" for j, a in bad),
            how_to_fix="Number outlets by lead, from 0 for the lead plugged into the socket.",
            blames=tuple(Blame(("appliances", j, "outlet"), f"outlet {a.outlet} does not exist") for j, a in bad),
        )


def _relocated(exc: CalcError, prefix: tuple[str | int, ...]) -> CalcError:
    return replace(exc, blames=tuple(Blame(prefix + b.location, b.message) for b in exc.blames))


def _overcurrent_device(chain: Chain):
    s = chain.supply
    if s.device_kind is None or s.device_rating_a is None:
        return None
    try:
        if s.device_kind == "gG":
            return GGFuse(s.device_rating_a)
        return CircuitBreaker(s.device_kind, s.device_rating_a)  # type: ignore[arg-type]
    except CalcError as exc:
        raise _relocated(exc, ("supply",)) from None


def _upstream_devices(chain: Chain) -> list[tuple[str, float] | None]:
    """For each lead, the smallest overcurrent device between the socket's supply and the lead."""
    s = chain.supply
    smallest = None if s.device_rating_a is None else (f"origin device {s.device_kind} {s.device_rating_a:g} A",
                                                       s.device_rating_a)
    found = []
    for k, lead in enumerate(chain.leads):
        if lead.plug_fuse_a is not None and (smallest is None or lead.plug_fuse_a < smallest[1]):
            smallest = (f"plug fuse {lead.plug_fuse_a:g} A of lead {k}", lead.plug_fuse_a)
        found.append(smallest)
    return found


def _lead_reports(chain: Chain, ratings: tuple[LeadRating, ...], solution: Solution,
                  temperatures: tuple[float, ...]) -> tuple[LeadReport, ...]:
    u_nominal = chain.supply.nominal_voltage_v
    reports = []
    for k, (lead, rating, device, temperature) in enumerate(zip(chain.leads, ratings, _upstream_devices(chain), temperatures)):
        result = solution.element(lead_id(k))
        v_in = solution.voltage(f"L{k}").voltage.magnitude
        v_out = solution.voltage(f"L{k + 1}").voltage.magnitude
        current = result.current.magnitude
        problems = []
        loading = None
        if rating.effective_a is None:
            problems.append(f"no rating at {chain.supply.ambient_c:g} °C ambient (BS 7671 Table 4F3A stops at 55 °C)")
        else:
            loading = 100.0 * current / rating.effective_a
            if current > rating.effective_a * (1 + 1e-9):
                problems.append(f"overloaded: {current:.3g} A against an effective rating of {rating.effective_a:.3g} A "
                                f"(conductor estimated at {temperature:.0f} °C, above the cord's "
                                f"{CORD_MAX_CONDUCTOR_C:g} °C limit)")
        plug_fuse = plug_fuse_overload(lead, k, current)
        if (problem := plug_fuse_problem(plug_fuse)) is not None:
            problems.append(problem)
        protected = None
        if device is not None and rating.effective_a is not None:
            protected = device[1] <= rating.effective_a * (1 + 1e-9)
        reports.append(LeadReport(
            index=k, name=lead.name, size_label=lead.conductor.size_label, length_m=lead.length_m, current_a=current,
            input_voltage_v=v_in, output_voltage_v=v_out, drop_v=v_in - v_out,
            drop_pct=100.0 * (v_in - v_out) / u_nominal, loss_w=result.p_w, conductor_temperature_c=temperature,
            rating=rating, loading_pct=loading, overload_device=None if device is None else device[0],
            overload_device_rating_a=None if device is None else device[1], overload_protected=protected,
            problems=tuple(problems), plug_fuse=plug_fuse,
        ))
    return tuple(reports)


def _appliance_reports(chain: Chain, solution: Solution, socket_v: float) -> tuple[ApplianceReport, ...]:
    reports = []
    tariff = chain.limits.tariff_per_kwh
    for j, a in enumerate(chain.appliances):
        result = solution.element(appliance_id(j))
        power = result.p_w
        heating = None
        if a.heating is not None:
            needed = a.heating.needed_j
            heating = HeatingReport(needed, needed / power if power > 0 else math.inf, needed / a.rated_power_w)
        hours = a.hours_per_year if a.hours_per_year is not None else chain.limits.hours_per_year
        energy = None if hours is None else power * hours * 3600.0 / J_PER_KWH
        reports.append(ApplianceReport(
            index=j, name=a.name, outlet=a.outlet, voltage_v=result.voltage.magnitude, current_a=result.current.magnitude,
            power_w=power, power_pct_of_rated=100.0 * power / a.rated_power_w,
            drop_from_socket_pct=100.0 * (socket_v - result.voltage.magnitude) / chain.supply.nominal_voltage_v,
            heating=heating, energy_kwh_per_year=energy,
            cost_per_year=None if energy is None or tariff is None else energy * tariff,
        ))
    return tuple(reports)


def _fault_report(chain: Chain, solution: Solution) -> FaultReport:
    s = chain.supply
    ln = solution.thevenin[0]
    z_ln = ln.impedance_ohm
    problems = []
    earth_loop = solution.thevenin[1].impedance_ohm if s.line_earth is not None else None
    device = _overcurrent_device(chain)
    rcd = None if s.rcd_sensitivity_a is None else ResidualCurrentDevice(s.rcd_sensitivity_a)
    disconnection = check = credit = None
    u0 = earth_fault_u0(s)
    plug_fused = any(lead.plug_fuse_a is not None for lead in chain.leads)
    if earth_loop is None:
        problems.append("the socket's earth-fault loop impedance is not known: disconnection not assessed")
    elif device is None and rcd is None and not plug_fused:
        problems.append("no protective device given at the origin: disconnection not assessed")
    else:
        rating = s.device_rating_a if s.device_rating_a is not None else 16.0
        try:
            disconnection = disconnection_rule(s, rating)
            if disconnection.time_s is not None and (device is not None or rcd is not None):
                tt_with_ra = s.earthing == "TT" and rcd is not None and s.electrode_resistance_ohm is not None
                check = earth_fault_check(
                    u0, earth_loop, device, disconnection.time_s, rcd=rcd,
                    ra_ohm=s.electrode_resistance_ohm if tt_with_ra else None,
                    earthing=s.earthing if (s.earthing != "TT" or tt_with_ra) else None)
        except CalcError as exc:
            raise _relocated(exc, ("supply",)) from None
        if disconnection.time_s is not None and plug_fused and not (check is not None and check.complies):
            credit = plug_fuse_earth_fault(chain, CMIN_LOW_VOLTAGE * u0, earth_loop, disconnection.time_s)
        if (rlv_problem := rlv_rcd_problem(s, earth_loop, check)) is not None:
            problems.append(rlv_problem)
        assessed = check or credit
        if assessed is not None and not (assessed.complies or (credit is not None and credit.complies)):
            problems.append(f"an earth fault at the far end is not cleared within {assessed.required_time_s:g} s: "
                            f"Zs = {earth_loop:.3g} ohm gives {assessed.fault_current_a:.3g} A")
    return FaultReport(
        line_neutral_loop_ohm=z_ln, prospective_short_circuit_a=s.nominal_voltage_v / z_ln,
        earth_loop_ohm=earth_loop, disconnection=disconnection, earth_fault=check,
        conductor_temperature_c=FAULT_TEMPERATURE_C, problems=tuple(problems), plug_fuse_credit=credit,
    )


def _totals(chain: Chain, leads, appliances, solution: Solution) -> ChainTotals:
    socket_v = solution.voltage("L0").voltage.magnitude
    lowest = min((a.voltage_v for a in appliances), default=solution.voltage(f"L{len(chain.leads)}").voltage.magnitude)
    drop = socket_v - lowest
    drop_pct = 100.0 * drop / chain.supply.nominal_voltage_v
    loss = sum(r.loss_w for r in leads)
    delivered = sum(a.power_w for a in appliances)
    hours = chain.limits.hours_per_year
    if hours is None:
        known = [a.hours_per_year for a in chain.appliances if a.hours_per_year is not None]
        hours = max(known) if known else None
    loss_kwh = None if hours is None else loss * hours * 3600.0 / J_PER_KWH
    tariff = chain.limits.tariff_per_kwh
    return ChainTotals(
        socket_voltage_v=socket_v, lowest_appliance_voltage_v=lowest, total_drop_v=drop, total_drop_pct=drop_pct,
        drop_limit_pct=chain.limits.voltage_drop_pct, drop_complies=drop_pct <= chain.limits.voltage_drop_pct,
        loss_w=loss, delivered_w=delivered, supply_current_a=solution.element("supply").current.magnitude,
        loss_kwh_per_year=loss_kwh, loss_cost_per_year=None if loss_kwh is None or tariff is None else loss_kwh * tariff,
        delivered_kwh_per_year=sum(a.energy_kwh_per_year for a in appliances if a.energy_kwh_per_year is not None)
        if any(a.energy_kwh_per_year is not None for a in appliances) else None,
    )


def _steps(chain: Chain, leads, totals: ChainTotals, fault: FaultReport) -> tuple[Step, ...]:
    steps = [Step("Socket voltage under load", "|E - I x Z(line-neutral, socket)|", totals.socket_voltage_v, "V")]
    for r in leads:
        steps.append(Step(f"Lead {r.index} effective rating", "base x ambient factor x drum factor (or marked wound rating)",
                          r.rating.effective_a if r.rating.effective_a is not None else 0.0, "A",
                          ("NEC 2023 Table 400.5(A)(1), Table 310.15(B)(1); BS 7671:2018 Table 4F1A note 2"
                           if r.rating.base_source.startswith("NEC") else "BS 7671:2018 Table 4F3A, Table 4F1A note 2")))
        steps.append(Step(f"Lead {r.index} conductor temperature", "t_a + (t_max - t_a) (I / I_rating)^2",
                          r.conductor_temperature_c, "degC", "BS 7671:2018 Appendix 4, 6.1 (from memory)"))
        steps.append(Step(f"Lead {r.index} drop", "|V_in| - |V_out| (network solution)", r.drop_v, "V"))
    steps.append(Step("Chain drop to the lowest appliance", "(|V_socket| - |V_lowest|) / U0 x 100",
                      totals.total_drop_pct, "%", DROP_LIMIT_SOURCE if chain.limits.voltage_drop_pct == 5.0 else None))
    steps.append(Step("Line-neutral loop at the far end", "Z(socket) + sum of line and neutral conductors at "
                      f"{FAULT_TEMPERATURE_C:g} °C (Thevenin impedance)", fault.line_neutral_loop_ohm, "ohm"))
    if fault.earth_loop_ohm is not None:
        steps.append(Step("Earth-fault loop at the far end", "Zs = Ze + sum(R1 + R2) (Thevenin impedance)",
                          fault.earth_loop_ohm, "ohm", "IEC 60364-4-41:2005, 411.4.4"))
    if fault.earth_fault is not None:
        check = fault.earth_fault
        steps.append(Step("Earth-fault current", check.fault_current_formula, check.fault_current_a, "A", check.cmin_source))
        if check.overcurrent is not None:
            steps.append(Step("Current for disconnection", check.overcurrent.operating.basis,
                              check.overcurrent.operating.current_a, "A", check.overcurrent.operating.source))
            steps.append(Step("Maximum Zs for the origin device", check.max_zs_formula, check.overcurrent.max_zs_ohm, "ohm"))
    credit = fault.plug_fuse_credit
    if credit is not None and credit.operating_current_a is not None:
        steps.append(Step(f"Current for disconnection by the {credit.device}", credit.basis,
                          credit.operating_current_a, "A", credit.source))
    return tuple(steps)


def _assumptions(chain: Chain, settled: bool) -> tuple[str, ...]:
    found = [
        "Single-phase chain: each lead's line and neutral conductors are modelled as one go-and-return run.",
        "Conductor resistance from IEC 60228 maximum values at the estimated conductor temperature, iterated with "
        "the load flow" + ("" if settled else " (the estimate had not settled in the allowed rounds: the last is used)")
        + ".",
        "Cord reactance is neglected: for conductors up to 4 mm² it is a few per cent of the resistance (common practice).",
        f"Fault loops use conductors at {CORD_MAX_CONDUCTOR_C:g} °C, the cord's maximum operating temperature, "
        "which gives the highest loop impedance in service (conservative).",
        "The protective conductor of each lead has the same cross-section as its line conductor (usual for cords).",
        "Voltage drop is measured from the origin socket under load; the fixed installation's own drop upstream of "
        "the socket is not included.",
        "Plug fuses (BS 1362) are credited with clearing the far-end earth fault by their maximum operating "
        "characteristic, straight in log-log between the published zone limits (conservative, common practice); "
        "ratings without a held zone are not credited.",
    ]
    if is_rlv(chain.supply.system):
        found.append(f"Reduced low voltage site supply: U0 = {earth_fault_u0(chain.supply):g} V to earth, "
                     "disconnection within 5 s (BS 7671:2018 411.8, a national rule); no 30 mA RCD required.")
    found += sorted({a for lead in chain.leads if (a := cord_assumption(lead.conductor)) is not None})
    if any(lead.conductor.size_system == "awg" for lead in chain.leads):
        found.append("AWG cords are rated by NEC Table 400.5(A)(1) column B (two current-carrying conductors, the "
                     "equipment grounding conductor not counted) at the 60 °C cord rating; a reel on its drum takes "
                     "the BS 7671 Table 4F1A drum factors, the NEC giving none.")
    if any(a.heating is not None for a in chain.appliances):
        found.append("Heating tasks: all the electrical power an appliance draws goes into the task (no losses).")
    if chain.limits.hours_per_year is None and any(a.hours_per_year for a in chain.appliances):
        found.append("Lead losses per year assume every appliance runs together for the longest hours given.")
    return tuple(found)


def analyse_chain(chain: Chain, cords: CordLibrary | None = None) -> ChainReport:
    _check_layout(chain)
    cords = cords or default_cords()
    ratings = chain_ratings(chain, cords)
    try:
        solved = solve_chain(chain, tuple(r.effective_a for r in ratings))
    except NetworkError as exc:
        raise _chain_error(exc) from None
    solution = solved.solution
    leads = _lead_reports(chain, ratings, solution, solved.temperatures_c)
    socket_v = solution.voltage("L0").voltage.magnitude
    appliances = _appliance_reports(chain, solution, socket_v)
    fault = _fault_report(chain, solution)
    totals = _totals(chain, leads, appliances, solution)
    limits = length_limits(chain, fault)
    failed = [f"lead {r.index} ({r.name}): {p}" for r in leads for p in r.problems]
    if not totals.drop_complies:
        failed.append(f"voltage drop {totals.total_drop_pct:.3g} % exceeds the {totals.drop_limit_pct:g} % limit")
    failed += [p for p in fault.problems if fault.earth_fault is not None or fault.plug_fuse_credit is not None]
    tables = {"iec60228-table3", "iec60228-table2", "conductor-materials", "bs7671-table4f3a",
              "bs7671-table4f3a-ambient", "bs7671-table4f1a-drums"}
    if fault.disconnection is not None and fault.disconnection.table_id:
        tables.add(fault.disconnection.table_id)
    tables.update(plug_fuse_tables(chain, fault))
    for lead in chain.leads:
        tables.update(cord_tables(lead.conductor))
    if fault.earth_fault is not None:
        for route in (fault.earth_fault.overcurrent, fault.earth_fault.rcd):
            if route is not None:
                tables.add(route.operating.table_id)
    return ChainReport(
        leads=leads, appliances=appliances, totals=totals, fault=fault, length_limits=limits,
        verdict="fail" if failed else "pass", failed_checks=tuple(failed),
        recommendations=recommendations(chain, leads, appliances, totals, fault, limits, cords),
        steps=_steps(chain, leads, totals, fault), assumptions=_assumptions(chain, solved.temperatures_settled),
        table_ids=tuple(sorted(tables)), temperature_rounds=solved.rounds, temperatures_settled=solved.temperatures_settled,
        solver_iterations=solution.iterations, max_kcl_residual_a=solution.max_kcl_residual_a,
        power_balance_residual_va=solution.power_balance_residual_va,
    )


def _appliance_index(element_id: str) -> int | None:
    prefix = appliance_id(0)[:-1]
    tail = element_id[len(prefix):]
    return int(tail) if element_id.startswith(prefix) and tail.isdigit() else None


def _chain_error(exc: NetworkError) -> CalcError:
    """A solver error in terms of the chain: the elements it names are our appliances.

    Appliances at rated voltage that the chain cannot supply (constant-power
    loads past the transfer limit, or left below the guard voltage) are the
    usual cause; the detail then gives the most each could be given.
    """
    indices = [j for j in map(_appliance_index, exc.element_ids) if j is not None]
    limits = {}
    for record in exc.data.get("loads", []):
        j = _appliance_index(str(record.get("element", "")))
        if j is not None and record.get("max_power_w") is not None:
            limits[j] = record["max_power_w"]
    named = [f"appliance {j}" + (f" (at most {limits[j]:.4g} W can reach it)" if j in limits else "") for j in indices]
    detail = {
        "voltage_collapse": "The chain cannot deliver the power these constant-power appliances ask for",
        "load_undervoltage": "These appliances would run far below their rated voltage, where a constant-power or "
                             "constant-current model no longer holds",
    }.get(exc.code, f"The chain could not be solved ({exc.detail})")
    detail += (": " + "; ".join(named) if named else "") + "."
    blames = tuple(Blame(("appliances", j), "the chain cannot supply this appliance") for j in indices)
    return CalcError(
        code=exc.code, detail=detail,
        how_to_fix="Shorten the chain, use leads with a larger conductor, move the appliance to a nearer outlet, "
                   "or split the load across two sockets.",
        blames=blames or (Blame(("appliances",), "the chain cannot supply these appliances"),),
    )
