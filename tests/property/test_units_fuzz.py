"""Fuzzing the one unit parser: whatever text a client sends, the only failure is a QuantityError."""

from __future__ import annotations

import math

from hypothesis import example, given, settings
from hypothesis import strategies as st

from service.units import CURRENT, LENGTH, POWER, TEMPERATURE, TEMPERATURE_RISE, QuantityError, parse_conductor_size, parse_quantity

KINDS = st.sampled_from([LENGTH, CURRENT, POWER, TEMPERATURE, TEMPERATURE_RISE])
UNITS = st.sampled_from(["m", "ft", "mm^2", "kW", "A", "degC", "K", "kg", "AWG", "kcmil", "**", "(", ")", "/", "e", "1/0",
                         "°C", "Ω", "mm²", " ", "", "inf", "nan", "__class__", "m ** 9999", "1e999"])
NUMBERS = st.one_of(st.floats(allow_nan=True, allow_infinity=True), st.integers(-10**30, 10**30))
TEXT = st.one_of(
    st.text(max_size=64),
    st.builds(lambda n, u: f"{n} {u}", NUMBERS, UNITS),
    st.builds(lambda n, u, v: f"{n}{u}{v}", NUMBERS, UNITS, UNITS),
)


def _accepts_only_quantity_errors(call) -> object:
    try:
        value = call()
    except QuantityError as exc:
        assert exc.message  # every refusal says why
        return None
    return value


@settings(max_examples=400, deadline=None, derandomize=True)
@given(TEXT, KINDS)
@example("1 m ** 9999", LENGTH)
@example("3 m/(m-m)", LENGTH)
@example("2 __import__", LENGTH)
@example("10 delta_degC", TEMPERATURE_RISE)
def test_any_text_is_a_finite_in_range_number_or_a_quantity_error(text, kind):
    value = _accepts_only_quantity_errors(lambda: parse_quantity(text, kind))
    if value is not None:
        assert isinstance(value, float) and math.isfinite(value)
        if kind.minimum is not None:
            assert value > kind.minimum if kind.exclusive_minimum else value >= kind.minimum
        if kind.maximum is not None:
            assert value <= kind.maximum


@settings(max_examples=200, deadline=None, derandomize=True)
@given(NUMBERS, KINDS)
def test_any_bare_number_is_accepted_in_range_or_refused(number, kind):
    value = _accepts_only_quantity_errors(lambda: parse_quantity(number, kind))
    if value is not None:
        assert math.isfinite(value) and value == float(number)


@settings(max_examples=300, deadline=None, derandomize=True)
@given(st.one_of(TEXT, NUMBERS))
def test_any_conductor_size_text_parses_or_is_a_quantity_error(text):
    _accepts_only_quantity_errors(lambda: parse_conductor_size(text))
