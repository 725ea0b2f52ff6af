"""Ways out of a failing NEC design, each from the check that binds and the request's own numbers.

Every suggestion names a concrete change: the size (or sets in parallel, never below 1/0 AWG, 310.10(G)(1)) that the
same search finds to pass, the run length that brings the drop within its guidance, the device rating or
interrupting rating that is needed.  Nothing is proposed that the inputs already have.
"""

from __future__ import annotations

import dataclasses
import math
from typing import TYPE_CHECKING

from ..model import SizeEvaluation
from .plan import Plan
from .rules import EDITION

if TYPE_CHECKING:
    from .regime import NecRegime

SET_WORDS = {2: "two", 3: "three", 4: "four", 5: "five", 6: "six"}
SIZE_CHECKS = ("termination_ampacity", "ampacity", "overcurrent_protection", "small_conductor_protection",
               "voltage_drop", "total_voltage_drop")


def describe(size_label: str, sets: int) -> str:
    """ "8 AWG passes", or "two sets of 3/0 AWG in parallel (310.10(G)) pass"."""
    if sets == 1:
        return f"{size_label} passes"
    return f"{SET_WORDS.get(sets, str(sets))} sets of {size_label} in parallel ({EDITION}, 310.10(G)) pass"


def _shorter_run(length_m: float, drop_pct: float | None, allowed_pct: float) -> float | None:
    """The longest run whose drop is within ``allowed_pct``: the drop of a run at a given current is proportional
    to its length (rounded down to 0.1 m)."""
    if drop_pct is None or drop_pct <= 0.0 or allowed_pct <= 0.0:
        return None
    return math.floor(10.0 * length_m * allowed_pct / drop_pct) / 10.0


def ways_out(regime: NecRegime, plan: Plan, mode: str, failed: SizeEvaluation, binding: tuple[str, ...]) -> tuple[str, ...]:
    """Suggestions for the binding checks of ``failed`` (the size verified, or the largest size the search tried)."""
    from .regime import DEVICE_CHECKS, MAX_PARALLEL_SETS, TOTAL_DROP_PCT  # the regime imports this module

    spec, t = plan.spec, regime.t
    checks = {c.name: c for c in failed.checks}
    here = f"{failed.size_label}" if failed.parallel_sets == 1 else f"{failed.parallel_sets} x {failed.size_label}"
    required = plan.load.required_a
    out: list[str] = []
    for name in binding:
        check = checks[name]
        if name == "device_rating":
            rating = next((r for r in t.ratings if r >= required - 1e-9), None)
            if rating is not None:
                out.append(f"Give a device of at least {required:.4g} A: {rating:g} A, the next standard rating of "
                           f"Table 240.6(A), passes (or leave the rating out for the service to choose it).")
        elif name == "breaking_capacity":
            out.append(f"Use a device with an interrupting rating of at least {check.limit / 1000:.4g} kA at "
                       f"{plan.system.name}, the available fault current given ({EDITION}, 110.9)"
                       + ("" if plan.interrupting_given else "; give protection.interrupting_rating if the device's "
                          f"marked rating is above the {plan.interrupting_rating_a / 1000:g} kA assumed") + ".")
        elif name == "overcurrent_protection" and not plan.device.chosen_by_service:
            fits = [r for r in t.ratings if required - 1e-9 <= r <= check.limit + 1e-9]
            if fits:
                out.append(f"A {fits[-1]:g} A device passes 240.4 on {here} and still covers the {required:.4g} A "
                           "needed.")
        elif name == "termination_ampacity" and plan.termination_c == 60 and plan.insulation_c >= 75 \
                and spec.circuit.termination_rating_c is None:
            at_75 = failed.parallel_sets * t.ampacity[(spec.circuit.material, 75)].get(failed.size_label, 0.0)
            if at_75 >= required - 1e-9:
                out.append(f"With equipment terminations listed for 75 °C (termination_rating 75), {here} carries "
                           f"{at_75:g} A at the terminations, enough for the {required:.4g} A needed.")
        elif name == "equipment_grounding_conductor":
            need = next((label for label, cmil in t.cmil.items() if math.isclose(cmil, check.limit)), None)
            if need is not None:
                out.append(f"Use an EGC of at least {need} ({check.limit:,.0f} cmil), or leave its size to the "
                           "service (mode minimum).")
        elif name in ("voltage_drop", "total_voltage_drop"):
            allowed = plan.drop_limit_pct if name == "voltage_drop" else TOTAL_DROP_PCT - spec.upstream_drop_pct
            run = _shorter_run(spec.circuit.length_m, failed.voltage_drop_pct, allowed)
            if run is not None and run > 0.0:
                out.append(f"Shorten the run to {run:g} m or less: {here} then keeps the drop within {allowed:.3g} %.")
            elif name == "total_voltage_drop":
                out.append(f"The upstream drop ({spec.upstream_drop_pct:g} %) leaves nothing of the 5 %: reduce it.")
    device_fails = [n for n in binding if n in DEVICE_CHECKS]
    if any(n in SIZE_CHECKS for n in binding) or (mode == "size" and device_fails):
        # The conductor the same search finds, with a device that passes its own checks where this one does not.
        fixed = dataclasses.replace(spec, parallel_sets=1)
        if "breaking_capacity" in device_fails:
            fixed = dataclasses.replace(fixed, interrupting_rating_a=spec.available_fault_current_a)
        if "device_rating" in device_fails:
            fixed = dataclasses.replace(fixed, rated_current_a=None)
        device = "that device" if device_fails else "this device"
        if mode == "size" and not device_fails:
            alternative = None  # the search already tried every size and set
        else:
            alternative = regime.size(fixed)
        if alternative is not None and alternative.chosen is not None:
            found = alternative.chosen
            out.append(f"{describe(found.size_label, found.parallel_sets)} every check with {device}.")
        else:
            failing = [n for n in (binding if alternative is None else alternative.binding_checks) if n in SIZE_CHECKS]
            out.append(f"Even {SET_WORDS[MAX_PARALLEL_SETS]} sets of the largest size in parallel fail "
                       f"{', '.join(failing)}" + (f" with {device}" if device_fails else "")
                       + ": split the load over more than one circuit or feeder"
                       + (", or serve it at a higher voltage" if any("drop" in n for n in failing) else "") + ".")
    return tuple(dict.fromkeys(out))
