"""The one unit parser: numbers in the documented unit or strings with a unit, SI out.

Conversion factors are exact by definition: 1 ft = 0.3048 m and 1 in = 25.4 mm
(international yard and pound agreement, 1959); 1 kcmil = 1000 circular mils.
"""

from __future__ import annotations

import math

import pytest

from service.core.conductors import KCMIL_M2
import service.units as units
from service.units import (
    AC_POWER,
    CURRENT,
    LENGTH,
    POWER,
    REACTIVE_POWER,
    TEMPERATURE,
    VOLTAGE,
    QuantityError,
    QuantityKind,
    parse_conductor_size,
    parse_power,
    parse_quantity,
)


@pytest.mark.parametrize(
    ("text", "kind", "expected"),
    [
        ("30 m", LENGTH, 30.0),
        ("98 ft", LENGTH, 98 * 0.3048),  # 1 ft = 0.3048 m exactly (1959 agreement)
        ("100 ft", LENGTH, 30.48),
        ("12 in", LENGTH, 0.3048),
        ("1.5 km", LENGTH, 1500.0),
        (" 7 m ", LENGTH, 7.0),
        ("1e3 m", LENGTH, 1000.0),
        ("16 A", CURRENT, 16.0),
        ("500 mA", CURRENT, 0.5),
        ("3 kW", POWER, 3000.0),
        ("230 V", VOLTAGE, 230.0),
        ("11 kV", VOLTAGE, 11000.0),
        ("35 degC", TEMPERATURE, 35.0),
        ("35 °C", TEMPERATURE, 35.0),
        ("95 degF", TEMPERATURE, 35.0),  # (95 - 32) x 5/9
        ("308.15 K", TEMPERATURE, 35.0),
    ],
)
def test_strings_with_units_convert_to_the_fields_unit(text, kind, expected):
    assert parse_quantity(text, kind) == pytest.approx(expected, rel=1e-12)


def test_bare_numbers_are_taken_in_the_documented_unit():
    assert parse_quantity(12.5, LENGTH) == 12.5
    assert parse_quantity(16, CURRENT) == 16.0
    assert parse_quantity(-10, TEMPERATURE) == -10.0  # temperatures may be below zero


@pytest.mark.parametrize(
    ("value", "kind", "fragment"),
    [
        (math.nan, LENGTH, "finite"),
        (math.inf, LENGTH, "finite"),
        ("nan m", LENGTH, "finite"),
        ("-Infinity", LENGTH, "finite"),
        ("1e400 m", LENGTH, "finite"),
        (-3, LENGTH, "greater than 0"),
        ("0 m", LENGTH, "greater than 0"),
        ("-2 kW", POWER, "greater than 0"),
        ("30 kg", LENGTH, "not a unit of length"),
        ("2.5 mm^2", LENGTH, "not a unit of length"),
        ("16 A", VOLTAGE, "not a unit of voltage"),
        ("30 flibbets", LENGTH, "not a known unit"),
        ("thirty metres", LENGTH, "not a number"),
        ("", LENGTH, "not a number"),
        (True, LENGTH, "boolean"),
        ("-300 degC", TEMPERATURE, "at least"),
        ("3 parsec", LENGTH, "at most"),
        # VA, var and W share a dimension but are different quantities (IEC 60050-131, from memory): never silently W
        ("10 kVA", POWER, "apparent power: this field takes active power (W)"),
        ("10 kvar", POWER, "reactive power: this field takes active power (W)"),
        ("10 kW", REACTIVE_POWER, "active power: this field takes reactive power (var)"),
        ("10 kVA", REACTIVE_POWER, "apparent power: this field takes reactive power (var)"),
    ],
)
def test_bad_quantities_are_refused_with_a_message(value, kind, fragment):
    with pytest.raises(QuantityError) as caught:
        parse_quantity(value, kind)
    assert fragment in caught.value.message


def test_offset_units_are_converted_not_multiplied():
    # pint refuses arithmetic on degC; conversion of a temperature point must still work.
    assert parse_quantity("0 degC", TEMPERATURE) == 0.0
    assert parse_quantity("32 degF", TEMPERATURE) == pytest.approx(0.0, abs=1e-12)


@pytest.mark.parametrize(
    ("text", "system", "attr", "expected"),
    [
        ("2.5 mm^2", "metric", "area_m2", 2.5e-6),
        ("2.5 mm2", "metric", "area_m2", 2.5e-6),
        ("2.5 mm²", "metric", "area_m2", 2.5e-6),
        (1.5e-6, "metric", "area_m2", 1.5e-6),
        ("12 AWG", "awg", "gauge", "12"),
        ("AWG 12", "awg", "gauge", "12"),
        ("4/0 AWG", "awg", "gauge", "4/0"),
        ("1/0 awg", "awg", "gauge", "1/0"),
        ("250 kcmil", "kcmil", "kcmil_value", 250.0),
        ("500 MCM", "kcmil", "kcmil_value", 500.0),
    ],
)
def test_conductor_sizes(text, system, attr, expected):
    size = parse_conductor_size(text)
    assert size.system == system
    value = getattr(size, attr)
    assert value == (pytest.approx(expected) if isinstance(expected, float) else expected)


def test_kcmil_area_is_a_thousand_circular_mils():
    # 1 circular mil = pi/4 x (0.001 in)^2 and 1 in = 25.4 mm (definitions)
    assert KCMIL_M2 == pytest.approx(1000 * math.pi / 4 * (0.001 * 0.0254) ** 2, rel=1e-15)
    assert KCMIL_M2 * 1e6 == pytest.approx(0.506707, rel=1e-6)  # 1 kcmil = 0.5067 mm², common practice


@pytest.mark.parametrize("text", ["2.5 m", "30 kg", "12 gauge", "5/0 AWG", "-2.5 mm^2", "0 mm^2"])
def test_bad_conductor_sizes(text):
    with pytest.raises(QuantityError):
        parse_conductor_size(text)


ALL_KINDS = [k for k in vars(units).values() if isinstance(k, QuantityKind)]


@pytest.mark.parametrize("kind", ALL_KINDS, ids=lambda k: k.name[:30])
def test_a_string_without_a_unit_is_refused_for_every_kind(kind):
    # common practice: "30" could be metres or feet; only a JSON number takes the documented unit (issue 14, item 13)
    with pytest.raises(QuantityError) as caught:
        parse_quantity("30", kind)
    assert "give a unit" in caught.value.message and "or a bare number (meaning" in caught.value.message
    assert caught.value.message.count(kind.example) == 1


def test_the_bare_string_message_names_the_unit_in_words():
    with pytest.raises(QuantityError) as caught:
        parse_quantity("30", LENGTH)
    assert caught.value.message == "'30' has no unit: give a unit, e.g. '30 m', or a bare number (meaning metres)"
    assert parse_quantity(30, LENGTH) == 30.0  # the bare JSON number is metres, as documented


def test_a_conductor_size_without_a_unit_is_refused():
    with pytest.raises(QuantityError):
        parse_conductor_size("2.5")  # mm² or m²? say so


@pytest.mark.parametrize(
    ("text", "value", "kind"),
    [
        ("10 kVA", 10_000.0, "apparent"),
        ("1.5 MVA", 1.5e6, "apparent"),
        ("500 VA", 500.0, "apparent"),
        ("10 kV*A", 10_000.0, "apparent"),  # volt times ampere is apparent power (IEC 60050-131-11-41, from memory)
        ("4 kvar", 4000.0, "reactive"),
        ("4 kVAr", 4000.0, "reactive"),
        ("10 kW", 10_000.0, "active"),
        ("2 hp", 2 * 745.6998715822702, "active"),  # 1 hp = 745.699872 W (mechanical horsepower, common practice)
        (3000, 3000.0, "active"),  # a bare number is in watts
    ],
)
def test_power_keeps_whether_it_is_active_apparent_or_reactive(text, value, kind):
    power = parse_power(text, AC_POWER)
    assert power.value == pytest.approx(value, rel=1e-12) and power.kind == kind


def test_reactive_power_is_signed():
    assert parse_quantity("-2 kvar", REACTIVE_POWER) == -2000.0  # negative: leading (capacitive), common practice
