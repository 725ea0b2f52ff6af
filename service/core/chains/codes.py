"""The stable codes of the lead-chain checks, and the one record every check is reported in.

A check's ``code`` is its machine-readable name: an app acts on it, never on the sentence in ``problems``.
The response schema's Literal is built from CHAIN_CHECK_CODES, and tests/unit/test_chain_check_codes.py fails on
a code the core emits that is not listed here.  ``passes`` is None when the check could not be made; then
``missing_inputs`` names the request fields that would let it be made.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

CHAIN_CHECK_CODES: tuple[str, ...] = (
    "lead_temperature",  # the lead's current within its effective rating: conductor within the cord's 60 °C
    "lead_overload",  # overload protection In <= Iz (IEC 60364-4-43, 433.1)
    "lead_conventional_current",  # overload protection I2 <= 1.45 Iz (IEC 60364-4-43, 433.1)
    "cord_withstand",  # k² S² >= I² t of the far-end line-neutral fault (IEC 60364-4-43, 434.5.2)
    "plug_fuse_coordination",  # the lead's plug fuse carries the current that flows through it
    "appliance_voltage",  # drop from the origin of the installation to the appliance within the limit
    "earth_fault_disconnection",  # far-end earth fault cleared in the Table 41.1 time (IEC 60364-4-41, 411)
    "line_neutral_disconnection",  # far-end line-neutral fault cleared by the overcurrent device
    "voltage_drop_budget",  # upstream drop + the chain's share within the limit (IEC 60364-5-52, Table G.52.1)
    "supply_collapse",  # the chain can supply every appliance at all
)

Verdict = Literal["pass", "fail", "not_assessed"]

# Which route set the greatest usable length of a lead type (LengthLimit.governed_by).
LENGTH_ROUTES: tuple[str, ...] = ("voltage_drop", "earth_fault_overcurrent", "earth_fault_rcd",
                                  "line_neutral_overcurrent")


@dataclass(frozen=True, slots=True)
class ChainCheck:
    code: str
    passes: bool | None  # None: not assessed
    value: float | None
    limit: float | None
    unit: str
    source: str
    missing_inputs: tuple[str, ...] = ()

    def __post_init__(self) -> None:
        if self.code not in CHAIN_CHECK_CODES:  # a programming error, caught by the tests
            raise ValueError(f"unlisted chain check code {self.code!r}")


def verdict_of(checks) -> Verdict:
    """fail if any check failed; otherwise not_assessed if any could not be made; pass only if all were made and passed."""
    checks = tuple(checks)
    if any(c.passes is False for c in checks):
        return "fail"
    if any(c.passes is None for c in checks):
        return "not_assessed"
    return "pass"


def missing_of(checks) -> tuple[str, ...]:
    return tuple(dict.fromkeys(m for c in checks if c.passes is None for m in c.missing_inputs))
