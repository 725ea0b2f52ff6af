"""The lead-chain model: a supply socket, leads plugged end to end, appliances on their outlets.

Plain SI floats (V, A, ohm, m, W, s, J, degC).  Leads are numbered from the
origin socket: lead 0 plugs into the socket, lead k into lead k-1's outlet.
An appliance on outlet k is plugged into lead k's outlet.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from service.core.conductors import Conductor
from service.core.cords import WoundState
from service.core.network.model import LoadModel

Earthing = Literal["TN-S", "TN-C-S", "TT"]


@dataclass(frozen=True, slots=True)
class SourceImpedance:
    resistance_ohm: float
    reactance_ohm: float = 0.0

    @property
    def magnitude_ohm(self) -> float:
        return abs(complex(self.resistance_ohm, self.reactance_ohm))


@dataclass(frozen=True, slots=True)
class Supply:
    """The origin socket.

    ``line_neutral`` is the loop impedance of the supply up to the socket (line
    out, neutral back); ``line_earth`` the earth-fault loop impedance there (Ze
    at the socket), when known.  ``device_kind`` is a circuit-breaker curve
    ("B", "C", "D") or "gG" for a fuse, with ``device_rating_a``.
    """

    nominal_voltage_v: float
    frequency_hz: float
    line_neutral: SourceImpedance
    line_earth: SourceImpedance | None
    earthing: Earthing
    device_kind: str | None
    device_rating_a: float | None
    rcd_sensitivity_a: float | None
    ambient_c: float = 30.0
    electrode_resistance_ohm: float | None = None  # RA, for a TT supply
    system: str = "standard"  # or a reduced-low-voltage site supply: "rlv_single_phase_cte", "rlv_three_phase_star"


@dataclass(frozen=True, slots=True)
class Reel:
    wound: WoundState
    layers: int | None = None  # layers still on the drum, when known
    marked_wound_rating_a: float | None = None


@dataclass(frozen=True, slots=True)
class Lead:
    name: str
    length_m: float
    conductor: Conductor
    marked_rating_a: float | None = None
    reel: Reel | None = None
    plug_fuse_a: float | None = None


WATER_SPECIFIC_HEAT_J_PER_KG_K = 4186.0  # liquid water near 20-60 °C, common practice


@dataclass(frozen=True, slots=True)
class HeatingTask:
    """Energy a heating appliance must deliver: given directly, or to warm a mass of water."""

    energy_j: float | None = None
    water_kg: float | None = None
    temperature_rise_k: float | None = None

    @property
    def needed_j(self) -> float:
        if self.energy_j is not None:
            return self.energy_j
        return float(self.water_kg) * WATER_SPECIFIC_HEAT_J_PER_KG_K * float(self.temperature_rise_k)


@dataclass(frozen=True, slots=True)
class Appliance:
    name: str
    outlet: int  # index of the lead whose outlet it is plugged into
    rated_power_w: float
    rated_voltage_v: float
    power_factor: float = 1.0
    leading: bool = False
    model: LoadModel = "constant_impedance"
    heating: HeatingTask | None = None
    hours_per_year: float | None = None


@dataclass(frozen=True, slots=True)
class Limits:
    voltage_drop_pct: float = 5.0  # from the origin of the installation (IEC 60364-5-52 Table G.52.1)
    upstream_voltage_drop_pct: float | None = None  # already used in the fixed wiring; None: not given, 0 taken
    tariff_per_kwh: float | None = None
    hours_per_year: float | None = None  # for all appliances without their own hours


@dataclass(frozen=True, slots=True)
class Chain:
    supply: Supply
    leads: tuple[Lead, ...]
    appliances: tuple[Appliance, ...]
    limits: Limits = Limits()
