"""Maximum disconnection times for automatic disconnection of supply (IEC 60364-4-41).

Which circuits get which time (411.3.2):

* final circuits within the scope of 411.3.2.2 take Table 41.1 (by earthing
  system, U0 band, AC or DC);
* every other circuit, distribution circuits included, takes 5 s in a TN
  system (411.3.2.3) and 1 s in a TT system (411.3.2.4).

The scope of 411.3.2.2 is where the two editions differ:

* IEC 60364-4-41:2005: final circuits not exceeding 32 A;
* with Amendment 1 (2017): final circuits with a rated current not exceeding
  63 A with one or more socket-outlets, and 32 A supplying only fixed connected
  current-using equipment.  The amendment text itself was not read here; the
  wording is that of the national adoptions of the amended standard
  (BS 7671:2018 411.3.2.2 and DIN VDE 0100-410:2018-10), as reproduced in
  stored public pages.  The times in Table 41.1 are the same in both editions.

TN-S, TN-C and TN-C-S are all TN here.  Table 41.1's note lets a TT circuit
disconnected by an overcurrent protective device, with protective equipotential
bonding to all extraneous-conductive-parts (411.3.1.2), use the TN times; pass
``tt_overcurrent_with_bonding=True`` for that.  IT systems (411.6) are not
covered.  Table 41.1 starts above U0 = 50 V; below that no time is given and a
CalcError says so.  Where the table has Note 1 instead of a time (DC, 50 V <
U0 <= 120 V), ``time_s`` is None: disconnection is not required for protection
against electric shock, though it may be for other reasons.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from .checks import fail, require_choice, require_positive
from .library import DISCONNECTION_TABLE, DisconnectionBand, ProtectionLibrary, default_protection

CircuitKind = Literal["socket_outlets", "fixed_equipment", "distribution"]
Edition = Literal["2005", "2005+A1:2017"]
CIRCUIT_KINDS = ("socket_outlets", "fixed_equipment", "distribution")
EDITIONS = ("2005", "2005+A1:2017")
DEFAULT_EDITION: Edition = "2005+A1:2017"

# 411.3.2.2 scope: (edition, circuit kind) -> largest rated current that takes Table 41.1
FINAL_CIRCUIT_LIMIT_A = {
    ("2005", "socket_outlets"): 32.0,
    ("2005", "fixed_equipment"): 32.0,
    ("2005+A1:2017", "socket_outlets"): 63.0,
    ("2005+A1:2017", "fixed_equipment"): 32.0,
}
OTHER_CIRCUIT_TIME_S = {"TN": 5.0, "TT": 1.0}  # 411.3.2.3 (TN), 411.3.2.4 (TT)
OTHER_CIRCUIT_CLAUSE = {"TN": "411.3.2.3", "TT": "411.3.2.4"}
TN_ALIASES = {"TN", "TN-S", "TN-C", "TN-C-S"}


@dataclass(frozen=True, slots=True)
class DisconnectionTime:
    time_s: float | None
    earthing: str  # "TN" or "TT", after aliases
    u0_v: float
    ac: bool
    circuit_kind: str
    rated_current_a: float
    edition: str
    source: str  # clause or table, with the standard and edition
    table_id: str | None  # the data table used, None for a clause value
    note: str


def normalise_earthing(earthing: str) -> str:
    """'TN-C-S' -> 'TN', 'tt' -> 'TT'; CalcError for IT or anything unknown."""
    name = str(earthing).strip().upper()
    if name in TN_ALIASES:
        return "TN"
    if name == "TT":
        return "TT"
    if name == "IT":
        raise fail("unsupported-earthing", ("earthing",),
            "IT systems are not covered: the first fault needs no disconnection and the second-fault rules of IEC 60364-4-41 411.6 are not implemented.",
            "Use TN (TN-S, TN-C, TN-C-S) or TT.",
            "IT is not supported")
    raise fail("invalid-input", ("earthing",),
        f"Unknown earthing system {earthing!r}.",
        "Use TN, TN-S, TN-C, TN-C-S or TT.",
        "not a known earthing system")


def _band(bands: tuple[DisconnectionBand, ...], u0_v: float) -> DisconnectionBand:
    for band in bands:
        if u0_v > band.u0_above_v and (band.u0_up_to_v is None or u0_v <= band.u0_up_to_v):
            return band
    lowest = bands[0].u0_above_v
    raise fail("outside-table", ("u0",),
        f"IEC 60364-4-41 Table 41.1 gives no disconnection time for U0 = {u0_v:g} V: it starts above {lowest:g} V.",
        f"Give the nominal line-to-earth voltage U0 (above {lowest:g} V); lower voltages are extra-low voltage, outside this table.",
        f"not above {lowest:g} V")


def required_disconnection_time(
    earthing: str,
    u0_v: float,
    circuit_kind: CircuitKind,
    rated_current_a: float,
    ac: bool = True,
    *,
    edition: Edition = DEFAULT_EDITION,
    tt_overcurrent_with_bonding: bool = False,
    library: ProtectionLibrary | None = None,
) -> DisconnectionTime:
    """Maximum disconnection time for a circuit, and the clause or table it comes from."""
    lib = library or default_protection()
    system = normalise_earthing(earthing)
    u0_v = require_positive(u0_v, ("u0",), "U0")
    rated_current_a = require_positive(rated_current_a, ("rated_current",), "the rated current")
    require_choice(circuit_kind, CIRCUIT_KINDS, ("circuit_kind",), "circuit kind")
    require_choice(edition, EDITIONS, ("edition",), "edition")
    standard = f"IEC 60364-4-41:{edition}"
    common = dict(u0_v=u0_v, ac=ac, circuit_kind=circuit_kind, rated_current_a=rated_current_a, edition=edition)
    band = _band(lib.disconnection[system], u0_v)  # U0 outside the table is an error for every circuit

    limit = FINAL_CIRCUIT_LIMIT_A.get((edition, circuit_kind))
    if limit is None or rated_current_a > limit:
        why = ("a distribution circuit" if limit is None
               else f"a {circuit_kind.replace('_', ' ')} final circuit above {limit:g} A, outside 411.3.2.2")
        clause = OTHER_CIRCUIT_CLAUSE[system]
        return DisconnectionTime(
            time_s=OTHER_CIRCUIT_TIME_S[system], earthing=system, source=f"{standard}, {clause}", table_id=None,
            note=f"{why}: {system} system, {clause}", **common,
        )

    note = f"final circuit within 411.3.2.2 ({circuit_kind.replace('_', ' ')}, up to {limit:g} A)"
    if system == "TT" and tt_overcurrent_with_bonding:
        band = _band(lib.disconnection["TN"], u0_v)
        note += "; TT with overcurrent device and protective equipotential bonding: TN times (note to Table 41.1)"
    time_s = band.ac_s if ac else band.dc_s
    upper = "no upper limit" if band.u0_up_to_v is None else f"up to {band.u0_up_to_v:g} V"
    note += f"; U0 band above {band.u0_above_v:g} V, {upper}, {'AC' if ac else 'DC'}"
    if time_s is None:
        note += ("; Table 41.1 Note 1: disconnection is not required for protection against electric shock "
                 "but may be required for other reasons, such as thermal effects")
    return DisconnectionTime(
        time_s=time_s, earthing=system, source=f"{standard}, Table 41.1 (411.3.2.2)", table_id=DISCONNECTION_TABLE,
        note=note, **common,
    )
