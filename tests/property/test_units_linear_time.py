"""The unit parser's cost grows at most linearly with its input (issue 21, item 1).

A conductor size of "1 a", 40,000 spaces and "b" used to take seconds of CPU: the number-and-unit pattern ended in
``(?P<unit>.*?)\\s*$``, which tries every split of the spaces between the lazy unit and the trailing ``\\s*``
(quadratic).  No check here has an absolute time threshold: each compares the time for a long input with the
time for a short one, as medians of repeated runs, against a bound far above linear growth and far below
quadratic growth, so a loaded 2-core machine does not make it flaky.  # common practice (complexity by ratio)
"""

from __future__ import annotations

import re
import statistics
import time

from hypothesis import example, given, settings
from hypothesis import strategies as st

import service.units as units
from service.units import LENGTH, MAX_QUANTITY_TEXT, QuantityError, parse_conductor_size, parse_quantity


def _median_seconds(call, rounds: int = 7, loops: int = 20) -> float:
    samples = []
    for _ in range(rounds):
        start = time.perf_counter()
        for _ in range(loops):
            call()
        samples.append((time.perf_counter() - start) / loops)
    return statistics.median(samples)


def _refused_or_parsed(parse, text):
    def call():
        try:
            parse(text)
        except QuantityError:
            pass
    return call


# How the parser uses each of its patterns (a new pattern must be added here, see the test below).
PATTERN_USES = {
    "_NUMBER_AND_UNIT": lambda p, s: p.fullmatch(s),
    "_NON_FINITE_WORD": lambda p, s: p.match(s),
    "_AWG": lambda p, s: p.fullmatch(s),
    "_KCMIL": lambda p, s: p.fullmatch(s),
    "_OFFSET_AS_DIFFERENCE": lambda p, s: p.sub("x", s),
    "_UNIT_SPELLINGS": lambda p, s: units._units_spelling(s),  # noqa: SLF001 - the patterns as the parser applies them
    "_UNSAFE_POWER": lambda p, s: p.search(s),
}


def test_every_pattern_of_the_parser_is_measured():
    patterns = {name for name, value in vars(units).items() if isinstance(value, re.Pattern)}
    patterns |= {"_UNIT_SPELLINGS"} if any(isinstance(p, re.Pattern) for p, _ in units._UNIT_SPELLINGS) else set()  # noqa: SLF001
    assert patterns == set(PATTERN_USES)


ALPHABET = st.sampled_from(list("1 a.b0e-+/AWGkcmilMm2°C\t*^()²⁹⁻"))
PIECE = st.text(ALPHABET, min_size=0, max_size=6)
PAD = st.text(ALPHABET, min_size=1, max_size=3)
SHORT, LONG = 64, 64 * 16  # 16 times the length: linear growth is 16x, quadratic 256x
BOUND = 64


@settings(max_examples=30, deadline=None, derandomize=True)
@given(PIECE, PAD, PIECE)
@example("1 a", " ", "b")  # issue 21: "1 a" + spaces + "b"
@example("1", " ", "m x")
@example("1", "1", "x")
@example("AWG", " ", "x")
@example("1", " ", "kcmilx")
def test_each_pattern_runs_in_linear_time(head, pad, tail):
    for name, use in PATTERN_USES.items():
        pattern = getattr(units, name)
        def text(n):
            return head + pad * (n // len(pad)) + tail
        short, long = text(SHORT * 8), text(LONG * 8)
        ratio = _median_seconds(lambda: use(pattern, long)) / _median_seconds(lambda: use(pattern, short))
        assert ratio < BOUND, (name, head, pad, tail, ratio)


def test_a_long_adversarial_size_costs_no_more_than_a_short_one():
    # issue 21: a 10,000-character size is refused within a generous multiple of the time a 100-character one takes
    # (the length ratio is 100; the old quadratic pattern made it about 10,000).
    def adversarial(n):
        return "1 a" + " " * (n - 4) + "b"
    long = _median_seconds(_refused_or_parsed(parse_conductor_size, adversarial(10_000)), rounds=5, loops=3)
    short = _median_seconds(_refused_or_parsed(parse_conductor_size, adversarial(100)), rounds=5, loops=3)
    assert long / short < 200


@settings(max_examples=200, deadline=None, derandomize=True)
@given(st.text(min_size=MAX_QUANTITY_TEXT + 1, max_size=4 * MAX_QUANTITY_TEXT).filter(
    lambda s: len(s.strip()) > MAX_QUANTITY_TEXT))
def test_text_past_the_cap_is_refused_unread(text):
    for parse in (parse_conductor_size, lambda t: parse_quantity(t, LENGTH)):
        try:
            parse(text)
        except QuantityError as exc:
            assert f"longer than {MAX_QUANTITY_TEXT} characters" in exc.message
        else:
            raise AssertionError(f"{text!r} was accepted")


def test_whitespace_around_a_value_is_stripped_before_the_cap():
    # common practice: a value padded with spaces means the value
    assert parse_quantity("  30 m \t", LENGTH) == 30.0
    assert parse_conductor_size("\t12 AWG  ") == parse_conductor_size("12 AWG")
    assert parse_conductor_size(" 250 kcmil ") == parse_conductor_size("250 kcmil")
    assert parse_quantity(" " * 100 + "30 m" + " " * 100, LENGTH) == 30.0  # the cap counts the value, not padding


# pint evaluates the numbers of a unit expression exactly: "9**9**9" (9 to the power 387,420,489) froze the process
# for good, within 64 characters.  Found while fixing issue 21, item 1.  # common practice (Python's exact integers)
POWER_TOWERS = ["1 9**9**9", "1 9^9^9", "1 m*9**9**9", "1 9⁹⁹⁹⁹⁹⁹⁹⁹⁹", "1 9**⁹⁹⁹⁹⁹⁹", "1 ((9**99)**99)**99",
                "1 9**9,9**9,9", "1 9^1e9", "1 m^(1/2)", "1 m**999"]


def test_power_towers_are_refused_before_pint_evaluates_them():
    for text in POWER_TOWERS:
        try:
            parse_quantity(text, LENGTH)
        except QuantityError as exc:
            assert "an exponent must be a plain number" in exc.message, (text, exc.message)
        else:
            raise AssertionError(f"{text!r} was accepted")


def test_plain_exponents_still_parse():
    # IEC 60228:2004 sizes are written in mm²; the rest are plain SI unit algebra (common practice)
    assert parse_conductor_size("2.5 mm²") == parse_conductor_size("2.5 mm^2") == parse_conductor_size("2.5 mm2")
    assert parse_quantity("1 m³/m²", LENGTH) == 1.0
    assert parse_quantity("1 m⁻¹*m²", LENGTH) == 1.0
    assert parse_quantity("1 m**2 / m", LENGTH) == 1.0
    assert parse_quantity("1 m^1.5/m^0.5", LENGTH) == 1.0


TOKENS = st.sampled_from(["9", "99", "**", "^", "⁹", "⁹⁹", "(", ")", ",", " ", "m", "e9", "-", "*", "/", ".5", "squared"])


@settings(max_examples=300, deadline=None, derandomize=True)
@given(st.lists(TOKENS, max_size=16))
def test_any_power_expression_is_answered(tokens):
    # a regression here hangs rather than fails: Python cannot interrupt an exact power in C
    text = "1 " + "".join(tokens)
    try:
        parse_quantity(text, LENGTH)
    except QuantityError:
        pass
