"""Properties of NEC sizing and raceway fill that must hold for any circuit (hypothesis)."""

from __future__ import annotations

import dataclasses
import math

from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from service.core.errors import CalcError
from service.core.sizing.nec import RACEWAYS, SYSTEMS, FillConductor, NecCircuit, NecLoad, NecSizingInput, nec, raceway_fill

SETTINGS = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
TYPES = ("TW", "THW", "THHN", "THWN-2", "XHHW-2")


@st.composite
def nec_sizings(draw) -> NecSizingInput:
    circuit = NecCircuit(
        length_m=draw(st.floats(3.0, 150.0)), material=draw(st.sampled_from(["copper", "aluminium"])),
        conductor_type=draw(st.sampled_from(TYPES)), ambient_c=draw(st.floats(10.0, 50.0)),
        raceway=draw(st.sampled_from([None, *RACEWAYS])),
        current_carrying_conductors=draw(st.sampled_from([None, 3, 4, 6, 9])),
        termination_rating_c=draw(st.sampled_from([None, 75])), role=draw(st.sampled_from(["branch", "feeder"])))
    return NecSizingInput(NecLoad(design_current_a=draw(st.floats(5.0, 300.0)), power_factor=draw(st.floats(0.7, 1.0)),
                                  continuous_share=draw(st.floats(0.0, 1.0))),
                          circuit, draw(st.sampled_from(sorted(SYSTEMS))))


def _size(spec):
    try:
        return nec().size(spec)
    except CalcError:  # e.g. an ambient beyond a 60 °C type's table
        assume(False)


def _rank(result) -> float:
    """Position of the chosen size among the candidates (infinite when none passes)."""
    if result.chosen is None:
        return math.inf
    return nec().t.cmil[result.chosen.size_label]


@SETTINGS
@given(nec_sizings())
def test_chosen_size_carries_125_percent_of_the_continuous_load(spec):
    result = _size(spec)
    assume(result.chosen is not None)
    ib, share = result.design_current_a, spec.load.continuous_share
    required = 1.25 * ib * share + ib * (1 - share)
    checks = {c.name: c for c in result.chosen.checks}
    assert checks["termination_ampacity"].value >= required - 1e-9  # 210.19(A)(1)(a), 215.2(A)(1)(a)
    assert result.device.rated_current_a >= required - 1e-9  # 210.20(A), 215.3
    protection = checks["overcurrent_protection"]  # 240.4: the device within the ampacity (or 240.4(B)'s next size)
    assert protection.passes and protection.value <= protection.limit + 1e-9


@SETTINGS
@given(nec_sizings(), st.floats(1.0, 2.0), st.sampled_from(["load", "length", "ambient", "conductors"]))
def test_size_never_decreases_as_conditions_worsen(spec, factor, what):
    c = spec.circuit
    if what == "load":
        worse = dataclasses.replace(spec, load=dataclasses.replace(spec.load, design_current_a=spec.load.design_current_a * factor))
    elif what == "length":
        worse = dataclasses.replace(spec, circuit=dataclasses.replace(c, length_m=c.length_m * factor))
    elif what == "ambient":
        worse = dataclasses.replace(spec, circuit=dataclasses.replace(c, ambient_c=c.ambient_c + 10 * (factor - 1)))
    else:
        own = 2 if SYSTEMS[spec.system].phases == "single" else 3
        count = c.current_carrying_conductors or own
        worse = dataclasses.replace(spec, circuit=dataclasses.replace(c, current_carrying_conductors=math.ceil(count * factor)))
    base = _size(spec)
    assert _rank(_size(worse)) >= _rank(base)


@SETTINGS
@given(nec_sizings())
def test_chosen_size_passes_verify_and_the_next_smaller_fails_a_named_check(spec):
    result = _size(spec)
    assume(result.chosen is not None)
    again = nec().verify(spec, result.chosen.size_label)
    assert again.verdict == "compliant"
    if result.rejected:
        smaller = nec().verify(spec, result.rejected[-1].size_label)
        assert smaller.verdict != "compliant" and smaller.binding_checks
        assert smaller.binding_checks[0] in {c.name for c in smaller.chosen.checks if not c.passes}


@st.composite
def fills(draw):
    t = nec().t
    sizes = sorted({label for (_, label) in t.areas}, key=lambda label: t.cmil[label])
    groups = draw(st.lists(st.tuples(st.sampled_from(TYPES), st.sampled_from(sizes[:14]), st.integers(1, 12)),
                           min_size=1, max_size=4))
    return draw(st.sampled_from(RACEWAYS)), tuple(FillConductor(*g) for g in groups)


@SETTINGS
@given(fills())
def test_fill_is_the_smallest_trade_size_within_the_limit(case):
    raceway, conductors = case
    t = nec().t
    result = raceway_fill(t, raceway, conductors)
    count = sum(c.count for c in conductors)
    limit = 53 if count == 1 else 31 if count == 2 else 40
    total = sum(t.areas[(t.types[c.conductor_type].area_column, c.size_label)] * c.count for c in conductors)
    one_size = len({(c.conductor_type, c.size_label) for c in conductors}) == 1

    def fits(area_m2: float) -> bool:
        allowed = area_m2 * limit / 100
        if total <= allowed * (1 + 1e-12):
            return True
        if not one_size:
            return False
        q = allowed / (total / count)  # Chapter 9 Note 7
        return count <= math.floor(q) + (1 if q - math.floor(q) >= 0.8 - 1e-9 else 0)

    trade_sizes = t.raceways[raceway]
    expected = next((s.trade_size for s in trade_sizes if fits(s.area_m2)), None)
    assert (None if result.chosen is None else result.chosen.trade_size) == expected
    assert all(not c.fits for c in result.considered[:-1])
