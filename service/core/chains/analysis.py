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
from service.core.protection.adiabatic import ADIABATIC_LIMIT_S

from .circuit import FAULT_TEMPERATURE_C, appliance_id, conductor_temperature, lead_id, solve_chain
from .codes import ChainCheck, missing_of, verdict_of
from .lengths import length_limits
from .model import Chain
from .plug_fuses import plug_fuse_earth_fault, plug_fuse_of, plug_fuse_overload, plug_fuse_problem, plug_fuse_tables
from .supply_rules import disconnection_rule, earth_fault_u0, rlv_rcd_limit, rlv_rcd_problem
from .ratings import LeadRating, chain_ratings
from .report import (
    ApplianceReport,
    ChainReport,
    ChainTotals,
    FaultReport,
    HeatingReport,
    LeadReport,
    LineNeutralFault,
    Step,
    UnsuppliedAppliance,
)
from .advice import recommendations
from .verdicts import (
    cord_withstand_check,
    line_neutral_check,
    line_neutral_fault,
    overload_checks,
    upstream_devices,
)

DROP_LIMIT_SOURCE = "IEC 60364-5-52:2009, Annex G, Table G.52.1 (other uses than lighting: 5 %)"
RATING_SOURCE = ("BS 7671:2018 Table 4F3A (cord ratings), Table 4F1A note 2 (drums); conductor temperature "
                 "t = ta + (60 - ta)(I / Iz)² (BS 7671:2018 Appendix 4, 6.1, from memory)")
COLLAPSE_CODES = ("voltage_collapse", "load_undervoltage")
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


def _lead_reports(chain: Chain, ratings: tuple[LeadRating, ...], solution: Solution,
                  temperatures: tuple[float, ...], fault: FaultReport) -> tuple[LeadReport, ...]:
    u_nominal = chain.supply.nominal_voltage_v
    s = chain.supply
    devices = upstream_devices(s.device_kind, s.device_rating_a, tuple(lead.plug_fuse_a for lead in chain.leads))
    reports = []
    for k, (lead, rating, upstream, temperature) in enumerate(zip(chain.leads, ratings, devices, temperatures)):
        result = solution.element(lead_id(k))
        v_in = solution.voltage(f"L{k}").voltage.magnitude
        v_out = solution.voltage(f"L{k + 1}").voltage.magnitude
        current = result.current.magnitude
        problems = []
        loading = None
        heat = conductor_temperature(s.ambient_c, current, rating.effective_a)
        if rating.effective_a is None:
            problems.append(f"no rating at {s.ambient_c:g} °C ambient (BS 7671 Table 4F3A stops at 55 °C)")
        else:
            loading = 100.0 * current / rating.effective_a
            if current > rating.effective_a * (1 + 1e-9):
                problems.append(f"overloaded: {current:.3g} A against an effective rating of {rating.effective_a:.3g} A "
                                f"(conductor estimated at {temperature:.0f} °C, above the cord's "
                                f"{CORD_MAX_CONDUCTOR_C:g} °C limit)")
        checks = [ChainCheck("lead_temperature", rating.effective_a is not None and current <= rating.effective_a * (1 + 1e-9),
                             heat, CORD_MAX_CONDUCTOR_C, "degC", RATING_SOURCE)]
        plug_fuse = plug_fuse_overload(lead, k, current)
        if lead.plug_fuse_a is not None:
            fuse_ok = current <= lead.plug_fuse_a * (1 + 1e-9)
            checks.append(ChainCheck("plug_fuse_coordination", fuse_ok, current, lead.plug_fuse_a, "A",
                                     "IEC 60364-4-43:2008, 433.1 (Ib <= In); how the fuse meets the current: BS 1362 "
                                     "time-current zones (plug_fuse)"))
        if (problem := plug_fuse_problem(plug_fuse)) is not None:
            problems.append(problem)
        device, overload, overload_problems = overload_checks(rating.effective_a, upstream)
        checks += overload
        problems += overload_problems
        checks.append(cord_withstand_check(lead, fault.line_neutral))
        if checks[-1].passes is False:
            problems.append("its conductors do not withstand a far-end line-neutral fault until the origin device "
                            "clears it (IEC 60364-4-43, 434.5.2)")
        reports.append(LeadReport(
            index=k, name=lead.name, size_label=lead.conductor.size_label, length_m=lead.length_m, current_a=current,
            input_voltage_v=v_in, output_voltage_v=v_out, drop_v=v_in - v_out,
            drop_pct=100.0 * (v_in - v_out) / u_nominal, loss_w=result.p_w, conductor_temperature_c=temperature,
            rating=rating, loading_pct=loading, overload_device=None if device is None else device.label,
            overload_device_rating_a=None if device is None else device.rated_current_a,
            overload_protected={"pass": True, "fail": False}.get(verdict_of(overload)),
            problems=tuple(problems), checks=tuple(checks), plug_fuse=plug_fuse,
        ))
    return tuple(reports)


def _upstream_drop_pct(chain: Chain) -> float:
    given = chain.limits.upstream_voltage_drop_pct
    return 0.0 if given is None else given


def _appliance_reports(chain: Chain, solution: Solution, socket_v: float) -> tuple[ApplianceReport, ...]:
    reports = []
    tariff = chain.limits.tariff_per_kwh
    upstream = _upstream_drop_pct(chain)
    for j, a in enumerate(chain.appliances):
        result = solution.element(appliance_id(j))
        power = result.p_w
        heating = None
        if a.heating is not None:
            needed = a.heating.needed_j
            heating = HeatingReport(needed, needed / power if power > 0 else math.inf, needed / a.rated_power_w)
        hours = a.hours_per_year if a.hours_per_year is not None else chain.limits.hours_per_year
        energy = None if hours is None else power * hours * 3600.0 / J_PER_KWH
        from_origin = upstream + 100.0 * (socket_v - result.voltage.magnitude) / chain.supply.nominal_voltage_v
        check = ChainCheck("appliance_voltage", from_origin <= chain.limits.voltage_drop_pct, from_origin,
                           chain.limits.voltage_drop_pct, "%", _drop_source(chain))
        reports.append(ApplianceReport(
            index=j, name=a.name, outlet=a.outlet, voltage_v=result.voltage.magnitude, current_a=result.current.magnitude,
            power_w=power, power_pct_of_rated=100.0 * power / a.rated_power_w,
            drop_from_socket_pct=100.0 * (socket_v - result.voltage.magnitude) / chain.supply.nominal_voltage_v,
            heating=heating, energy_kwh_per_year=energy,
            cost_per_year=None if energy is None or tariff is None else energy * tariff, checks=(check,),
        ))
    return tuple(reports)


def _drop_source(chain: Chain) -> str:
    limit = DROP_LIMIT_SOURCE if chain.limits.voltage_drop_pct == 5.0 else "the limit given in the request"
    return f"{limit}, counted from the origin of the installation (upstream drop + the chain's share)"


def _earth_fault_verdict(chain: Chain, earth_loop: float | None, check, has_protection: bool,
                         credit=None) -> ChainCheck:
    s = chain.supply
    source = "IEC 60364-4-41:2005, 411.4.4 and Table 41.1: If = Cmin x U0 / Zs >= Ia"
    missing = []
    if earth_loop is None:
        missing.append("supply.earth_loop_impedance")
    if not has_protection:
        missing.append("supply.device")
    if credit is not None and credit.complies:  # a plug fuse whose own plug the origin protects clears it in time
        return ChainCheck("earth_fault_disconnection", True, credit.fault_current_a, credit.operating_current_a, "A",
                          f"{source}; {credit.device}: {credit.basis} ({credit.source})")
    if check is None:
        return ChainCheck("earth_fault_disconnection", None, None, None, "A", source, tuple(missing))
    routes = [r for r in (check.overcurrent, check.rcd) if r is not None]
    shown = check.overcurrent if check.route == "overcurrent" else check.rcd if check.route == "rcd" else \
        min(routes, key=lambda r: r.operating.current_a)
    source = f"{source}; {shown.operating.source}"
    if check.route == "rcd" and check.rcd.touch_voltage_complies is None and s.earthing == "TT":
        return ChainCheck("earth_fault_disconnection", None, check.fault_current_a, shown.operating.current_a, "A",
                          source + "; TT: RA x IΔn <= 50 V (411.5.3) not assessed", ("supply.electrode_resistance",))
    return ChainCheck("earth_fault_disconnection", check.complies, check.fault_current_a, shown.operating.current_a,
                      "A", source)


def _origin_earth_fault(s, u0: float, zs_ohm: float, device, rcd, time_s: float):
    """The earth fault at a point of loop impedance ``zs_ohm`` against the origin's devices (RCD included)."""
    tt_with_ra = s.earthing == "TT" and rcd is not None and s.electrode_resistance_ohm is not None
    return earth_fault_check(u0, zs_ohm, device, time_s, rcd=rcd,
                             ra_ohm=s.electrode_resistance_ohm if tt_with_ra else None,
                             earthing=s.earthing if (s.earthing != "TT" or tt_with_ra) else None)


def _covered_by_upstream(chain: Chain, u0: float, device, rcd, time_s: float):
    """covered(k): an earth fault at lead k's plug (the outlet of lead k - 1) is cleared in time upstream of it.

    The loop there is the socket's Ze plus the line and protective conductors of leads 0 to k - 1 at the fault
    temperature (IEC 60364-4-41 411.4.4: Zs = Ze + R1 + R2); lead 0's plug is in the origin socket itself."""
    ze = chain.supply.line_earth.magnitude_ohm

    def covered(k: int) -> bool:
        if k == 0:
            return True
        if device is None and rcd is None:
            return False
        return _origin_earth_fault(chain.supply, u0, _upstream_loop_ohm(chain, ze, k), device, rcd, time_s).complies
    return covered


def _upstream_loop_ohm(chain: Chain, start_ohm: float, k: int) -> float:
    """The loop impedance at lead k's plug: ``start_ohm`` at the socket plus the go and return conductors of leads
    0 to k - 1 at the fault temperature (a cord's line, neutral and protective conductors are of one size)."""
    return start_ohm + sum(2.0 * lead.conductor.resistance_per_m_at(FAULT_TEMPERATURE_C) * lead.length_m
                           for lead in chain.leads[:k])


def _plug_fuse_line_neutral(chain: Chain, z_ln: float, device, time_s: float):
    """The far-end line-neutral fault as the best plug fuse clears it, or None when none can be credited.

    A plug fuse in lead k's plug interrupts the fault current for every cord it flows through, but guards only
    what follows its plug: it counts where a line-neutral fault at that plug is cleared in time by the origin
    device (lead 0's plug is in the socket itself)."""
    u = chain.supply.nominal_voltage_v
    best = None
    for k, lead in enumerate(chain.leads):
        fuse = plug_fuse_of(lead, k)
        if fuse is None:
            continue
        if k > 0:
            if device is None:
                continue
            at_plug = _upstream_loop_ohm(chain, chain.supply.line_neutral.magnitude_ohm, k)
            if not line_neutral_fault(u, at_plug, device, time_s).complies:
                continue
        try:
            found = line_neutral_fault(u, z_ln, fuse, time_s)
        except CalcError:  # no time-current zone held for this rating: it guarantees nothing in time
            continue
        rank = (found.complies, -(found.clearing_time_s if found.clearing_time_s is not None else float("inf")))
        if best is None or rank > best[0]:
            best = (rank, found)
    return None if best is None or not best[1].complies else best[1]


def _line_neutral_time(disconnection) -> float:
    """Table 41.1's time for the supply; where it sets none, the 5 s of 434.5.2's adiabatic limit."""
    return disconnection.time_s if disconnection is not None and disconnection.time_s is not None else ADIABATIC_LIMIT_S


def _line_neutral_time_source(disconnection) -> str:
    if disconnection is not None and disconnection.time_s is not None:
        return disconnection.source
    return "Table 41.1 sets no time for this supply: 5 s, the limit of IEC 60364-4-43 434.5.2"


def _fault_report(chain: Chain, solution: Solution) -> FaultReport:
    s = chain.supply
    ln = solution.thevenin[0]
    z_ln = ln.impedance_ohm
    problems = []
    earth_loop = solution.thevenin[1].impedance_ohm if s.line_earth is not None else None
    device = _overcurrent_device(chain)
    rcd = None if s.rcd_sensitivity_a is None else ResidualCurrentDevice(s.rcd_sensitivity_a)
    disconnection = check = line_neutral = credit = None
    u0 = earth_fault_u0(s)
    plug_fused = any(lead.plug_fuse_a is not None for lead in chain.leads)
    rating = s.device_rating_a if s.device_rating_a is not None else 16.0
    try:
        if device is not None or rcd is not None or plug_fused:
            disconnection = disconnection_rule(s, rating)
        if earth_loop is None:
            problems.append("the socket's earth-fault loop impedance is not known: disconnection not assessed")
        elif device is None and rcd is None and not plug_fused:
            problems.append("no protective device given at the origin: disconnection not assessed")
        elif disconnection.time_s is not None and (device is not None or rcd is not None):
            check = _origin_earth_fault(s, u0, earth_loop, device, rcd, disconnection.time_s)
        if device is not None:
            line_neutral = line_neutral_fault(s.nominal_voltage_v, z_ln, device, _line_neutral_time(disconnection))
    except CalcError as exc:
        raise _relocated(exc, ("supply",)) from None
    # Plug fuses: their own errors already name the lead's field (leads/k/plug_fuse).
    if plug_fused and not (line_neutral is not None and line_neutral.complies):
        line_neutral = _plug_fuse_line_neutral(chain, z_ln, device, _line_neutral_time(disconnection)) or line_neutral
    if (earth_loop is not None and disconnection is not None and disconnection.time_s is not None and plug_fused
            and not (check is not None and check.complies)):
        covered = _covered_by_upstream(chain, u0, device, rcd, disconnection.time_s)
        credit = plug_fuse_earth_fault(chain, CMIN_LOW_VOLTAGE * u0, earth_loop, disconnection.time_s, covered)
    rlv_problem = rlv_rcd_problem(s, earth_loop, check)
    if rlv_problem is not None:
        problems.append(rlv_problem)
    assessed = check or credit
    if assessed is not None and not (assessed.complies or (credit is not None and credit.complies)):
        problems.append(f"an earth fault at the far end is not cleared within {assessed.required_time_s:g} s: "
                        f"Zs = {earth_loop:.3g} ohm gives {assessed.fault_current_a:.3g} A")
    if line_neutral is None:
        problems.append("no overcurrent device given at the origin: a line-neutral fault at the far end is not "
                        "assessed (an RCD does not see it)")
    elif line_neutral is not None and not line_neutral.complies:
        took = ("is not guaranteed to clear it within 5 s" if line_neutral.clearing_time_s is None
                else f"is guaranteed to clear it only within {line_neutral.clearing_time_s:.3g} s")
        problems.append(f"a line-neutral fault at the far end gives {line_neutral.fault_current_a:.3g} A, but the "
                        f"{line_neutral.device} needs {line_neutral.operating.current_a:.3g} A to clear within "
                        f"{line_neutral.required_time_s:g} s, and {took}")
    earth = _earth_fault_verdict(chain, earth_loop, check, device is not None or rcd is not None or plug_fused, credit)
    if rlv_problem is not None and (limit := rlv_rcd_limit(s)) is not None:  # the RCD route fails its 50 V rule
        earth = ChainCheck("earth_fault_disconnection", False, earth_loop, limit[0], "ohm", limit[1])
    checks = (earth, line_neutral_check(line_neutral, _line_neutral_time_source(disconnection)))
    return FaultReport(
        line_neutral_loop_ohm=z_ln, prospective_short_circuit_a=s.nominal_voltage_v / z_ln,
        earth_loop_ohm=earth_loop, disconnection=disconnection, earth_fault=check,
        conductor_temperature_c=FAULT_TEMPERATURE_C, problems=tuple(problems), line_neutral=line_neutral,
        checks=checks, plug_fuse_credit=credit,
    )


def _totals(chain: Chain, leads, appliances, solution: Solution) -> ChainTotals:
    socket_v = solution.voltage("L0").voltage.magnitude
    lowest = min((a.voltage_v for a in appliances), default=solution.voltage(f"L{len(chain.leads)}").voltage.magnitude)
    drop = socket_v - lowest
    drop_pct = 100.0 * drop / chain.supply.nominal_voltage_v
    from_origin = _upstream_drop_pct(chain) + drop_pct
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
        upstream_drop_pct=_upstream_drop_pct(chain), drop_from_origin_pct=from_origin,
        drop_limit_pct=chain.limits.voltage_drop_pct, drop_complies=from_origin <= chain.limits.voltage_drop_pct,
        loss_w=loss, delivered_w=delivered, supply_current_a=solution.element("supply").current.magnitude,
        loss_kwh_per_year=loss_kwh, loss_cost_per_year=None if loss_kwh is None or tariff is None else loss_kwh * tariff,
        delivered_kwh_per_year=sum(a.energy_kwh_per_year for a in appliances if a.energy_kwh_per_year is not None)
        if any(a.energy_kwh_per_year is not None for a in appliances) else None,
    )


def _fault_steps(fault: FaultReport) -> list[Step]:
    steps = [Step("Line-neutral loop at the far end", "Z(socket) + sum of line and neutral conductors at "
                  f"{FAULT_TEMPERATURE_C:g} °C (Thevenin impedance)", fault.line_neutral_loop_ohm, "ohm")]
    ln = fault.line_neutral
    if ln is not None:
        steps.append(Step("Line-neutral fault current at the far end", "If = Cmin x U0 / Z(line-neutral)",
                          ln.fault_current_a, "A", "IEC 60909-0, Table 1: Cmin = 0.95"))
        steps.append(Step("Current to clear it in time", ln.operating.basis, ln.operating.current_a, "A",
                          ln.operating.source))
        if ln.clearing_time_s is not None:
            steps.append(Step("Time the origin device takes", ln.clearing_basis or "", ln.clearing_time_s, "s"))
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
    return steps


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
                      totals.total_drop_pct, "%"))
    steps.append(Step("Drop from the origin of the installation", "upstream drop + the chain's share",
                      totals.drop_from_origin_pct, "%", _drop_source(chain)))
    return tuple(steps + _fault_steps(fault))


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
        "Plug fuses (BS 1362) are credited with clearing the far-end earth fault by their maximum operating "
        "characteristic, straight in log-log between the published zone limits (conservative, common practice), "
        "and only where the devices upstream clear an earth fault at the fuse's own plug in time; ratings without a "
        "held zone are not credited. Their conventional fusing current is not taken as I2 of IEC 60364-4-43, so a "
        "lead that only a plug fuse could protect against overload is not assessed for I2 <= 1.45 Iz.",
        "The cords' short-circuit withstand is checked for a line-neutral fault at the far end, with I² t taken as "
        "If² x the origin device's guaranteed clearing time (an upper bound of its let-through energy).",
        "The line-neutral fault is held to the disconnection time of Table 41.1 for the supply (common practice).",
    ]
    if chain.limits.upstream_voltage_drop_pct is None:
        found.append("upstream_voltage_drop not given: the fixed wiring's drop from the origin of the installation "
                     "to the socket is taken as 0 %, so the chain has the whole of the limit (give it to be sure).")
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


def _table_ids(chain: Chain, fault: FaultReport) -> tuple[str, ...]:
    tables = {"iec60228-table3", "iec60228-table2", "conductor-materials", "bs7671-table4f3a",
              "bs7671-table4f3a-ambient", "bs7671-table4f1a-drums", "iec60364-4-43-table43a",
              "iec60898-1-conventional-currents", "iec60269-1-conventional-currents"}
    tables.update(plug_fuse_tables(chain, fault))
    for lead in chain.leads:
        tables.update(cord_tables(lead.conductor))
    if fault.disconnection is not None and fault.disconnection.table_id:
        tables.add(fault.disconnection.table_id)
    if fault.line_neutral is not None:
        tables.add(fault.line_neutral.operating.table_id)
    if fault.earth_fault is not None:
        for route in (fault.earth_fault.overcurrent, fault.earth_fault.rcd):
            if route is not None:
                tables.add(route.operating.table_id)
    return tuple(sorted(tables))


def analyse_chain(chain: Chain, cords: CordLibrary | None = None) -> ChainReport:
    _check_layout(chain)
    cords = cords or default_cords()
    ratings = chain_ratings(chain, cords)
    try:
        solved = solve_chain(chain, tuple(r.effective_a for r in ratings))
    except NetworkError as exc:
        if exc.code in COLLAPSE_CODES and chain.appliances:
            return _collapsed(chain, ratings, exc)
        raise _chain_error(exc) from None
    solution = solved.solution
    fault = _fault_report(chain, solution)
    leads = _lead_reports(chain, ratings, solution, solved.temperatures_c, fault)
    socket_v = solution.voltage("L0").voltage.magnitude
    appliances = _appliance_reports(chain, solution, socket_v)
    totals = _totals(chain, leads, appliances, solution)
    limits = length_limits(chain, fault)
    failed = [f"lead {r.index} ({r.name}): {p}" for r in leads for p in r.problems]
    if not totals.drop_complies:
        failed.append(f"voltage drop {totals.drop_from_origin_pct:.3g} % from the origin of the installation "
                      f"({totals.upstream_drop_pct:.3g} % upstream, {totals.total_drop_pct:.3g} % in the chain) "
                      f"exceeds the {totals.drop_limit_pct:g} % limit")
    failed += [p for p in fault.problems if "not assessed" not in p]
    budget = ChainCheck("voltage_drop_budget", totals.drop_complies, totals.drop_from_origin_pct,
                        totals.drop_limit_pct, "%", _drop_source(chain))
    every = [c for r in (*leads, *appliances, fault) for c in r.checks] + [budget]
    return ChainReport(
        leads=leads, appliances=appliances, totals=totals, fault=fault, length_limits=limits,
        verdict=verdict_of(every), failed_checks=tuple(failed), checks=(budget,), missing_inputs=missing_of(every),
        unsupplied=(),
        recommendations=recommendations(chain, leads, appliances, totals, fault, limits, cords),
        steps=_steps(chain, leads, totals, fault), assumptions=_assumptions(chain, solved.temperatures_settled),
        table_ids=_table_ids(chain, fault), temperature_rounds=solved.rounds, temperatures_settled=solved.temperatures_settled,
        solver_iterations=solution.iterations, max_kcl_residual_a=solution.max_kcl_residual_a,
        power_balance_residual_va=solution.power_balance_residual_va,
    )


def _appliance_index(element_id: str) -> int | None:
    prefix = appliance_id(0)[:-1]
    tail = element_id[len(prefix):]
    return int(tail) if element_id.startswith(prefix) and tail.isdigit() else None


def _unsupplied(chain: Chain, exc: NetworkError) -> tuple[UnsuppliedAppliance, ...]:
    """The appliances the solver names, by their given names, with the most the chain can deliver to each."""
    limits = {}
    for record in exc.data.get("loads", []):
        j = _appliance_index(str(record.get("element", "")))
        if j is not None and record.get("max_power_w") is not None:
            limits[j] = float(record["max_power_w"])
    indices = list(dict.fromkeys(j for j in map(_appliance_index, exc.element_ids) if j is not None))
    indices = indices or list(limits) or list(range(len(chain.appliances)))
    return tuple(UnsuppliedAppliance(j, chain.appliances[j].name, chain.appliances[j].rated_power_w, limits.get(j))
                 for j in indices if 0 <= j < len(chain.appliances))


COLLAPSE_SOURCE = {
    "voltage_collapse": "no operating point: the power asked exceeds the most the chain can transfer "
                        "(max transferable power through the chain's Thevenin impedance)",
    "load_undervoltage": "the appliance would run far below its rated voltage, where its load model no longer holds",
}


def _collapsed(chain: Chain, ratings: tuple[LeadRating, ...], exc: NetworkError) -> ChainReport:
    """A chain that cannot supply its appliances: a verdict (fail, supply_collapse), not an error.

    The fault loops do not depend on the loads, so the far-end fault checks and the length limits are still
    made, on the chain solved without its appliances.
    """
    unsupplied = _unsupplied(chain, exc)
    source = COLLAPSE_SOURCE.get(exc.code, exc.code)
    checks = tuple(ChainCheck("supply_collapse", False, a.rated_power_w, a.max_power_w, "W", source)
                   for a in unsupplied)
    empty = replace(chain, appliances=())
    solved = solve_chain(empty, tuple(r.effective_a for r in ratings))
    fault = _fault_report(chain, solved.solution)
    failed = [f"appliance {a.index} ({a.name}): the chain cannot supply its {a.rated_power_w:.4g} W"
              + ("" if a.max_power_w is None else f"; at most {a.max_power_w:.4g} W can reach it") for a in unsupplied]
    failed += [p for p in fault.problems if "not assessed" not in p]
    every = checks + fault.checks
    return ChainReport(
        leads=(), appliances=(), totals=None, fault=fault, length_limits=length_limits(chain, fault),
        verdict=verdict_of(every), failed_checks=tuple(failed), checks=checks, missing_inputs=missing_of(every),
        unsupplied=unsupplied,
        recommendations=("Shorten the chain, use leads with a larger conductor, move the appliance to a nearer outlet, "
                         "or split the load across two sockets.",),
        steps=tuple(_fault_steps(fault)), assumptions=_assumptions(chain, solved.temperatures_settled),
        table_ids=_table_ids(chain, fault), temperature_rounds=0, temperatures_settled=False,
        solver_iterations=int(exc.data.get("iterations", 0) or 0), max_kcl_residual_a=math.nan,
        power_balance_residual_va=math.nan,
    )


def _chain_error(exc: NetworkError) -> CalcError:
    """A solver error in terms of the chain that is not a collapse (those are verdicts, see _collapsed)."""
    indices = [j for j in map(_appliance_index, exc.element_ids) if j is not None]
    detail = f"The chain could not be solved ({exc.detail})."
    blames = tuple(Blame(("appliances", j), "the chain cannot be solved with this appliance") for j in indices)
    return CalcError(
        code=exc.code, detail=detail,
        how_to_fix="Shorten the chain, use leads with a larger conductor, move the appliance to a nearer outlet, "
                   "or split the load across two sockets.",
        blames=blames or (Blame(("appliances",), "the chain cannot be solved with these appliances"),),
    )
