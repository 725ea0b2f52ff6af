"""The one place physical quantities are parsed: text or numbers in, SI floats out.

Every physical input of the API accepts either a bare number in the field's
documented unit (SI, except temperatures in degrees Celsius) or a string made
of a number and a unit ("30 m", "98 ft", "2.5 mm^2", "3 kW", "35 degC").
pint checks the dimension.  Conductor sizes additionally accept "12 AWG",
"4/0 AWG" and "250 kcmil".

One pint registry is built per process (building one takes ~0.1 s); strings
are split into number and unit here rather than handed whole to pint, which is
faster and keeps offset units (degC) out of pint's multiplication rules.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache
from typing import Literal

import pint
from pint.util import string_preprocessor

from service.core.conductors import SizeSpec

_REGISTRY = pint.UnitRegistry(autoconvert_offset_to_baseunit=False)
_REGISTRY.formatter.default_format = "~P"
# pint knows the volt-ampere (apparent power) but not the var; both have the dimension of the watt, so which of
# the three a string names is read from its unit (see parse_power), never from its dimension.
_REGISTRY.define("volt_ampere_reactive = volt * ampere = var = VAr = VAR")


class QuantityError(ValueError):
    """A value that is not an acceptable quantity; ``message`` is for the client."""

    def __init__(self, message: str) -> None:
        super().__init__(message)
        self.message = message


@dataclass(frozen=True, slots=True)
class QuantityKind:
    """What a field holds: its dimension, its bare-number unit and its allowed range.

    ``minimum`` / ``maximum`` are in ``unit``; ``exclusive_minimum`` says whether
    the minimum itself is refused (zero length, zero power mean nothing).
    """

    name: str
    unit: str
    example: str
    minimum: float | None = None
    exclusive_minimum: bool = False
    maximum: float | None = None
    difference: bool = False
    """A temperature difference: "80 degC" is a rise of 80 K, not the temperature 80 °C."""

    def describe(self) -> str:
        bounds = []
        if self.minimum is not None:
            bounds.append(f"{'>' if self.exclusive_minimum else '>='} {self.minimum:g} {self.unit}")
        if self.maximum is not None:
            bounds.append(f"<= {self.maximum:g} {self.unit}")
        limits = f" Allowed: {' and '.join(bounds)}." if bounds else ""
        return (
            f"{self.name.capitalize()}: a number in {self.unit}, or a string with a unit "
            f"such as \"{self.example}\" (a string without a unit is refused).{limits}"
        )


LENGTH = QuantityKind("length", "m", "30 m", minimum=0.0, exclusive_minimum=True, maximum=1.0e6)
TEMPERATURE = QuantityKind("conductor or ambient temperature", "degC", "70 degC", minimum=-60.0, maximum=400.0)
VOLTAGE = QuantityKind("voltage", "V", "230 V", minimum=0.0, exclusive_minimum=True, maximum=1.0e6)
CURRENT = QuantityKind("current", "A", "16 A", minimum=0.0, exclusive_minimum=True, maximum=1.0e6)
POWER = QuantityKind("power", "W", "3 kW", minimum=0.0, exclusive_minimum=True, maximum=1.0e9)
# A protective device's rated current: only the ratings the device's standard lists are accepted (checked where
# the tables are: IEC 60898-1 5.3.2 for B/C/D, IEC 60269-1 for gG fuse-links, NEC Table 240.6(A)).
DEVICE_RATING = QuantityKind(
    "rated current In, a standard rating of the device (IEC 60898-1 5.3.2 preferred values for types B, C, D; "
    "IEC 60269-1 for gG; NEC Table 240.6(A)); another value is refused", "A", "32 A", minimum=0.0,
    exclusive_minimum=True, maximum=1.0e6)
ELECTRODE_RESISTANCE = QuantityKind(
    "resistance RA of the installation's earth electrode (TT); the earth-fault loop runs through it, so the loop "
    "impedance given (Ze, or the socket's earth loop) must not be less than RA", "ohm", "60 ohm", minimum=0.0,
    exclusive_minimum=True, maximum=1.0e6)
# A load's power: the unit says which (W, kW, hp: active P; VA, kVA: apparent S); a bare number is in watts.
AC_POWER = QuantityKind("power, active (W, kW) or apparent (VA, kVA) as its unit says", "W", "10 kVA", minimum=0.0,
                        exclusive_minimum=True, maximum=1.0e9)
LOAD_VOLTAGE = QuantityKind(
    "load voltage: single-phase line-to-neutral (within 10 % of U0), three-phase line-to-line (within 10 % of "
    "√3 U0); the NEC: the circuit voltage of supply.system (line-to-line for three-phase). Default from the supply",
    "V", "400 V", minimum=0.0, exclusive_minimum=True, maximum=1.0e6)
REACTIVE_POWER = QuantityKind("reactive power (positive lagging, negative leading)", "var", "2 kvar",
                               minimum=-1.0e9, maximum=1.0e9)
RESISTANCE = QuantityKind("resistance", "ohm", "0.35 ohm", minimum=0.0, maximum=1.0e12)
FREQUENCY = QuantityKind("frequency", "Hz", "50 Hz", minimum=0.0, exclusive_minimum=True, maximum=1.0e6)
# Network solver inputs.  Sources are signed (a DC source may be given
# reversed); reactance of a fixed impedance is signed (X < 0 is capacitive);
# source and cable reactances are inductive, so >= 0.
ANALYSIS_FREQUENCY = QuantityKind("analysis frequency (0 means a direct-current analysis)", "Hz", "50 Hz", minimum=0.0, maximum=1.0e6)
SOURCE_VOLTAGE = QuantityKind("source voltage", "V", "230 V", minimum=-1.0e6, maximum=1.0e6)
SOURCE_CURRENT = QuantityKind("source current", "A", "16 A", minimum=-1.0e6, maximum=1.0e6)
REACTANCE = QuantityKind("reactance", "ohm", "0.08 ohm", minimum=-1.0e12, maximum=1.0e12)
INDUCTIVE_REACTANCE = QuantityKind("inductive reactance", "ohm", "0.02 ohm", minimum=0.0, maximum=1.0e12)
REACTANCE_PER_LENGTH = QuantityKind("reactance per length", "ohm/m", "0.08 mohm/m", minimum=0.0, maximum=1.0)
INDUCTANCE = QuantityKind("inductance", "H", "10 mH", minimum=0.0, maximum=1.0e6)
CAPACITANCE = QuantityKind("capacitance", "F", "10 uF", minimum=0.0, exclusive_minimum=True, maximum=1.0e3)
SERIES_CAPACITANCE = QuantityKind("series capacitance (0 means none)", "F", "47 uF", minimum=0.0, maximum=1.0e3)
# Lead-chain inputs.
IMPEDANCE = QuantityKind("impedance", "ohm", "0.35 ohm", minimum=0.0, exclusive_minimum=True, maximum=1.0e6)
ENERGY = QuantityKind("energy", "J", "1.2 kWh", minimum=0.0, exclusive_minimum=True, maximum=1.0e12)
MASS = QuantityKind("mass", "kg", "10 kg", minimum=0.0, exclusive_minimum=True, maximum=1.0e6)
TEMPERATURE_RISE = QuantityKind("temperature rise", "K", "80 K", minimum=0.0, exclusive_minimum=True, maximum=1000.0,
                                difference=True)
RESIDUAL_CURRENT = QuantityKind("rated residual current", "A", "30 mA", minimum=0.0, exclusive_minimum=True, maximum=10.0)
PHASE_ANGLE = QuantityKind("phase angle", "deg", "-30 deg", minimum=-360.0, maximum=360.0)
# Conductor sizing inputs.
LENGTH_OR_ZERO = QuantityKind("length (0 for none)", "m", "0.3 m", minimum=0.0, maximum=1.0e6)
SOIL_THERMAL_RESISTIVITY = QuantityKind("soil thermal resistivity", "K*m/W", "1.5 K*m/W", minimum=0.0,
                                        exclusive_minimum=True, maximum=100.0)
LET_THROUGH_ENERGY = QuantityKind("let-through energy I²t", "A^2*s", "25000 A^2*s", minimum=0.0,
                                  exclusive_minimum=True, maximum=1.0e12)
DISCONNECTION_TIME = QuantityKind("disconnection time", "s", "0.4 s", minimum=0.0, exclusive_minimum=True, maximum=5.0)

MAX_QUANTITY_TEXT = 64
"""The longest text a quantity or conductor size may be (the contract's maxLength): longer is refused unread."""

# Every pattern below is matched against text already stripped and at most MAX_QUANTITY_TEXT long, and is built so
# that it cannot backtrack: possessive quantifiers (``++``, ``*+``), no quantifier nested in another, no lazy
# ``.*?`` followed by something that can also match spaces (the old ``(?P<unit>.*?)\s*$`` was quadratic: "1 a",
# 40,000 spaces and "b" took seconds).  tests/property/test_units_linear_time.py measures that.
_NUMBER_AND_UNIT = re.compile(
    r"(?P<number>[-+]?+(?:\d++(?:\.\d*+)?+|\.\d++)(?:[eE][-+]?+\d++)?+)\s*+(?P<unit>.*+)", re.DOTALL
)
_SUPERSCRIPT_DIGITS = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺", "0123456789-+")
# Spellings practitioners type that pint does not read as written.
_UNIT_SPELLINGS = (
    (re.compile(r"\b(mm|cm|m|in|ft)2\b"), r"\1^2"),
    # superscript exponents ("m²", "m³", "m⁻¹") as ^-exponents, which the power check below then reads
    (re.compile("[⁻⁺]?+[⁰¹²³⁴⁵⁶⁷⁸⁹]++"), lambda m: "^" + m[0].translate(_SUPERSCRIPT_DIGITS)),
    ("Ω", "ohm"),
    ("Ohm", "ohm"),
    ("°C", "degC"),
    ("°F", "degF"),
)


_OFFSET_AS_DIFFERENCE = re.compile(r"\b(degC|degF)\b")
# pint evaluates the numbers in a unit expression exactly: "9**9**9" is 9 to the power 387,420,489, which froze the
# process.  An exponent must be a plain number of at most two digits (and two decimals), not raised again, and
# never applied to a parenthesised group: "m^2", "m**-1", "A^2*s" pass; "9**9**9", "(9**99)**99", "m^(1/2)" do not.
_UNSAFE_POWER = re.compile(
    r"\)\s*+(?:\*\*|\^)"
    r"|(?:\*\*|\^)\s*+(?![-+]?+\d{1,2}+(?:\.\d{1,2}+)?+(?![\d.eE]))"
    r"|(?:\*\*|\^)\s*+[-+]?+[\d.]++\s*+(?:\*\*|\^)"
)


def _units_spelling(text: str) -> str:
    normalised = text
    for pattern, replacement in _UNIT_SPELLINGS:
        if isinstance(pattern, str):
            normalised = normalised.replace(pattern, replacement)
        else:
            normalised = pattern.sub(replacement, normalised)
    return normalised


@lru_cache(maxsize=512)
def _units(text: str) -> pint.Unit:
    return _REGISTRY.parse_units(_units_spelling(text))


def _check_finite(number: float) -> float:
    if not math.isfinite(number):
        raise QuantityError("must be a finite number (NaN and infinity are not accepted)")
    return number


def _check_range(value: float, kind: QuantityKind) -> float:
    if kind.minimum is not None:
        if kind.exclusive_minimum and value <= kind.minimum:
            raise QuantityError(f"must be greater than {kind.minimum:g} {kind.unit}, got {value:g} {kind.unit}")
        if not kind.exclusive_minimum and value < kind.minimum:
            raise QuantityError(f"must be at least {kind.minimum:g} {kind.unit}, got {value:g} {kind.unit}")
    if kind.maximum is not None and value > kind.maximum:
        raise QuantityError(f"must be at most {kind.maximum:g} {kind.unit}, got {value:g} {kind.unit}")
    return value


_NON_FINITE_WORD = re.compile(r"[-+]?+(?:nan|inf(?:inity)?+)\b", re.IGNORECASE)


def _bounded_text(text: str) -> str:
    """``text`` stripped, refused when longer than MAX_QUANTITY_TEXT (before any pattern or pint reads it)."""
    if len(stripped := text.strip()) > MAX_QUANTITY_TEXT:
        raise QuantityError(f"is longer than {MAX_QUANTITY_TEXT} characters: give a number and a unit, e.g. '30 m'")
    return stripped


def _split(text: str) -> tuple[float, str]:
    """``text`` (stripped, bounded) as its number and the unit text after it."""
    if _NON_FINITE_WORD.match(text):  # "nan", "inf", "infinity", "-Inf m": float() would read them
        raise QuantityError("must be a finite number (NaN and infinity are not accepted)")
    match = _NUMBER_AND_UNIT.fullmatch(text)
    if match is None:
        raise QuantityError(f"'{text[:40]}' is not a number followed by a unit (e.g. '30 m')")
    return _check_finite(float(match["number"])), match["unit"]


# The bare-number unit of each kind in words, for the message refusing a string without a unit.
_UNIT_WORDS = {
    "m": "metres", "m^2": "square metres", "degC": "degrees Celsius", "V": "volts", "A": "amperes", "W": "watts",
    "ohm": "ohms", "ohm/m": "ohms per metre", "Hz": "hertz", "H": "henries", "F": "farads", "J": "joules",
    "kg": "kilograms", "K": "kelvins", "deg": "degrees", "s": "seconds", "K*m/W": "kelvin metres per watt",
    "A^2*s": "ampere-squared seconds", "var": "var",
}

PowerKind = Literal["active", "apparent", "reactive"]
_POWER_UNITS = {"active": "W", "apparent": "VA", "reactive": "var"}


@dataclass(frozen=True, slots=True)
class Power:
    """A power as given: ``value`` in W (active), VA (apparent) or var (reactive), as ``kind`` says."""

    value: float
    kind: PowerKind

    @property
    def unit(self) -> str:
        return _POWER_UNITS[self.kind]


def _power_kind(unit: pint.Unit) -> PowerKind:
    """Which power a unit names: var is reactive, VA (or V·A) apparent, anything else (W, kW, hp) active."""
    names = dict(unit._units)  # noqa: SLF001 - pint's own record of the unit's factors and exponents
    if any(name.endswith("volt_ampere_reactive") for name in names):
        return "reactive"
    if any(name.endswith("volt_ampere") for name in names):
        return "apparent"
    if any(n.endswith("volt") and e == 1 for n, e in names.items()) and any(
            n.endswith("ampere") and e == 1 for n, e in names.items()):
        return "apparent"
    return "active"


def _parse(value: float | int | str, kind: QuantityKind) -> tuple[float, pint.Unit | None]:
    """``value`` in ``kind.unit``, and the unit it was given in (None for a bare number)."""
    if isinstance(value, bool):  # bool is an int subclass: refuse it explicitly
        raise QuantityError(f"expected a {kind.name}, got a boolean")
    if isinstance(value, (int, float)):
        return _check_range(_check_finite(float(value)), kind), None
    value = _bounded_text(value)
    number, unit_text = _split(value)
    if not unit_text:  # "30": metres or feet?  A string says its unit; only a JSON number takes the documented one
        raise QuantityError(f"'{value[:40]}' has no unit: give a unit, e.g. '{kind.example}', or a bare "
                            f"number (meaning {_UNIT_WORDS.get(kind.unit, kind.unit)})")
    if _UNSAFE_POWER.search(string_preprocessor(_units_spelling(unit_text))):  # the text as pint evaluates it
        raise QuantityError(f"'{unit_text[:40]}' is not a unit this service reads: an exponent must be a plain "
                            "number such as 2 or -1 (\"mm^2\", \"m**-1\")")
    if kind.difference:  # a rise in degrees Celsius or Fahrenheit is a difference, never a point on the scale
        unit_text = _OFFSET_AS_DIFFERENCE.sub(lambda m: "delta_" + m[1], _units_spelling(unit_text))
    try:
        unit = _units(unit_text)
        target = _units(kind.unit)
        converted = _REGISTRY.Quantity(number, unit).to(target).magnitude
    except pint.DimensionalityError:
        raise QuantityError(
            f"'{unit_text[:40]}' is not a unit of {kind.name} (expected something like '{kind.example}')"
        ) from None
    except Exception:  # noqa: BLE001 - pint's expression parser, fed arbitrary client text, raises assorted
        # types besides its own (AssertionError, tokenize.TokenError, KeyError...): each means "not a unit".
        raise QuantityError(f"'{unit_text[:40]}' is not a known unit") from None
    return _check_range(_check_finite(float(converted)), kind), unit


def parse_quantity(value: float | int | str, kind: QuantityKind) -> float:
    """Return ``value`` as a float in ``kind.unit``, or raise QuantityError.

    A power field read this way takes the power its unit names only (W active, var reactive): VA and var have
    the watt's dimension but are not watts.
    """
    number, unit = _parse(value, kind)
    expected = next((k for k, u in _POWER_UNITS.items() if u == kind.unit), None)
    if unit is not None and expected is not None and (found := _power_kind(unit)) != expected:
        raise QuantityError(f"'{value}' is {found} power: this field takes {expected} power ({kind.unit})")
    return number


def parse_power(value: float | int | str, kind: QuantityKind) -> Power:
    """A power field that may be active (W), apparent (VA) or reactive (var); a bare number is in watts."""
    number, unit = _parse(value, kind)
    return Power(number, "active" if unit is None else _power_kind(unit))


_AWG = re.compile(r"(?>(?P<gauge>[1-4]/0|\d{1,2}+)\s*+AWG|AWG\s*+(?P<gauge2>[1-4]/0|\d{1,2}+))", re.IGNORECASE)
_KCMIL = re.compile(r"(?P<kcmil>\d++(?:\.\d++)?+)\s*+(?:kcmil|MCM)", re.IGNORECASE)
_AREA = QuantityKind("conductor cross-sectional area", "m^2", "2.5 mm^2", minimum=0.0, exclusive_minimum=True, maximum=1.0e-2)


def parse_conductor_size(value: float | int | str) -> SizeSpec:
    """Parse a conductor size: an area ("2.5 mm^2", or a number in m^2), an AWG gauge or kcmil."""
    if isinstance(value, str):
        value = _bounded_text(value)
        if match := _AWG.fullmatch(value):
            return SizeSpec.awg(match["gauge"] or match["gauge2"])
        if match := _KCMIL.fullmatch(value):
            return SizeSpec.kcmil(float(match["kcmil"]))
    return SizeSpec.metric(parse_quantity(value, _AREA))
