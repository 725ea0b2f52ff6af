"""Properties of NEC sizing and raceway fill that must hold for any circuit (hypothesis)."""

from __future__ import annotations

import dataclasses
import math

from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from service.core.errors import CalcError
from service.core.sizing.nec import RACEWAYS, SYSTEMS, FillConductor, NecCircuit, NecLoad, NecSizingInput, nec, raceway_fill
from service.core.sizing.nec.ways_out import describe

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


def _rank(result) -> tuple[float, float]:
    """Position of the chosen size among the candidates: fewest sets in parallel first, then the smallest size
    (infinite when none passes)."""
    if result.chosen is None:
        return (math.inf, math.inf)
    return (result.chosen.parallel_sets, nec().t.cmil[result.chosen.size_label])


def _verify(spec, ev):
    return nec().verify(dataclasses.replace(spec, parallel_sets=ev.parallel_sets), ev.size_label)


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
@given(nec_sizings(), st.floats(1.0, 2.0), st.sampled_from(["length", "ambient", "conductors"]))
def test_size_never_decreases_as_conditions_worsen(spec, factor, what):
    c = spec.circuit
    # (Not the load: more load may move the device past 100 A, where 110.14(C)(1)(b) allows the 75 °C column and a
    # smaller size can pass, 1 AWG at 100 A, 2 AWG at 110 A; what never falls is the ampacity, tested below.)
    if what == "length":
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
    again = _verify(spec, result.chosen)
    assert again.verdict == result.verdict and again.verdict in ("compliant", "not_fully_assessed")
    if result.rejected:
        smaller = _verify(spec, result.rejected[-1])
        assert smaller.verdict not in ("compliant", "not_fully_assessed") and smaller.binding_checks
        assert smaller.binding_checks[0] in {c.name for c in smaller.chosen.checks if not c.passes}
        # its ways out name the size the search chose, which passes (not boilerplate)
        assert f"{describe(result.chosen.size_label, result.chosen.parallel_sets)} every check with this device." \
            in smaller.ways_out


def _ampacity(result) -> float:
    return math.inf if result.chosen is None else result.chosen.iz_a


@st.composite
def large_sizings(draw) -> NecSizingInput:
    """Feeders up to 2,000 A, in raceways (sets each in their own or all in one) or in free air."""
    free_air = draw(st.booleans())
    circuit = NecCircuit(
        length_m=draw(st.floats(3.0, 200.0)), material=draw(st.sampled_from(["copper", "aluminium"])),
        conductor_type=draw(st.sampled_from(["THHN", "THW", "XHHW-2"])), ambient_c=draw(st.floats(10.0, 45.0)),
        raceway=None if free_air else draw(st.sampled_from([None, *RACEWAYS])), role="feeder",
        installation="free_air" if free_air else "raceway_or_cable",
        parallel_raceways="separate" if free_air else draw(st.sampled_from(["separate", "shared"])))
    return NecSizingInput(NecLoad(design_current_a=draw(st.floats(5.0, 2000.0)), power_factor=draw(st.floats(0.7, 1.0)),
                                  continuous_share=draw(st.floats(0.0, 1.0))),
                          circuit, draw(st.sampled_from(["208Y/120V", "480Y/277V", "240V"])))


@SETTINGS
@given(large_sizings(), st.floats(1.0, 1.5))
def test_chosen_ampacity_never_falls_as_the_load_rises(spec, factor):
    # NFPA 70-2023, 210.19(A)/215.2(A) and 240.4: more load never needs less ampacity. The search prefers the fewest
    # sets in parallel (310.10(G)), so across a change in the number of sets the chosen ampacity may fall (two sets
    # of 600 kcmil, then three of 350 kcmil); with the same number of sets it never does, and it always carries the load.
    more = dataclasses.replace(spec, load=dataclasses.replace(spec.load, design_current_a=spec.load.design_current_a * factor))
    base, larger = _size(spec), _size(more)
    if larger.chosen is not None:
        assert larger.chosen.iz_a >= more.load.design_current_a - 1e-9
    if base.chosen is not None and larger.chosen is not None and base.chosen.parallel_sets == larger.chosen.parallel_sets:
        assert larger.chosen.iz_a >= base.chosen.iz_a - 1e-9


@SETTINGS
@given(large_sizings())
def test_parallel_sets_only_from_1_0_awg(spec):
    # NFPA 70-2023, 310.10(G)(1): conductors in parallel 1/0 AWG and larger; Chapter 9 Table 8: 1/0 = 105,600 cmil
    result = _size(spec)
    t = nec().t
    for ev in (*result.rejected, *([result.chosen] if result.chosen else [])):
        assert ev.parallel_sets == 1 or t.cmil[ev.size_label] >= 105_600
    small = [label for label, cmil in t.cmil.items() if cmil < 105_600]
    for way in result.ways_out:
        if "in parallel" in way:
            assert not any(f"sets of {label} " in way for label in small)
    if result.chosen is not None and result.chosen.parallel_sets > 1:
        # parallel sets only when no single conductor passes: every single size was rejected
        assert {ev.size_label for ev in result.rejected if ev.parallel_sets == 1} == {
            c.line.size_label for c in nec().candidates(nec().plan(spec))}
        # 250.122(F)(1): the EGC is at least the Table 250.122 size for the device rating
        checks = {c.name: c for c in result.chosen.checks}
        assert checks["equipment_grounding_conductor"].passes


@SETTINGS
@given(large_sizings())
def test_termination_limit_is_always_the_table_310_16_column(spec):
    # NFPA 70-2023, 110.14(C)(1): the termination limit is the Table 310.16 ampacity of the termination column, also
    # for conductors in free air (Table 310.17 gives their own ampacity only)
    result = _size(spec)
    assume(result.chosen is not None)
    column = next(s for s in result.steps if s.name == "Termination temperature column").value
    termination = next(c for c in result.chosen.checks if c.name == "termination_ampacity").value
    table = nec().t.ampacity[(spec.circuit.material, int(column))]
    assert termination == result.chosen.parallel_sets * table[result.chosen.size_label]


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
