"""NEC 110.9: the interrupting rating of the overcurrent device against the fault current available at its line
terminals, as the check breaking_capacity; not assessed (and said so) when the fault current is not given."""

from __future__ import annotations

from service.core.sizing.nec import NecCircuit, NecLoad, NecSizingInput, nec


def _feeder(**changes) -> NecSizingInput:
    base = dict(load=NecLoad(design_current_a=120.0, continuous_share=0.0),
                circuit=NecCircuit(length_m=20.0, raceway="emt", role="feeder"), system="480Y/277V")
    return NecSizingInput(**{**base, **changes})


def _check(result, name):
    return next((c for c in result.chosen.checks if c.name == name), None) if result.chosen else None


def test_fault_current_above_the_given_rating_fails():
    # NEC 2023, 110.9: an interrupting rating sufficient for the current available at the line terminals;
    # 22 kA available, 14 kA rated -> not sufficient, whatever the conductor
    result = nec().size(_feeder(interrupting_rating_a=14_000.0, available_fault_current_a=22_000.0))
    assert result.verdict == "no_compliant_size"
    assert result.binding_checks == ("breaking_capacity",)
    check = next(c for c in result.rejected[-1].checks if c.name == "breaking_capacity")
    assert check.value == 14_000.0 and check.limit == 22_000.0 and not check.passes and "110.9" in check.source
    assert any("22 kA" in w and "110.9" in w for w in result.ways_out)
    # with a device that passes 110.9, the conductor: 120 A on a 125 A device (Table 240.6(A)), 75 °C terminations
    # (110.14(C)(1)(b)); Table 310.16 copper 75 °C: 2 AWG 115 A < 120 A, 1 AWG 130 A
    assert "1 AWG passes every check with that device." in result.ways_out


def test_fault_current_within_the_given_rating_passes():
    # NEC 2023, 110.9: 22 kA rated >= 18 kA available
    result = nec().size(_feeder(interrupting_rating_a=22_000.0, available_fault_current_a=18_000.0))
    assert result.verdict == "compliant" and _check(result, "breaking_capacity").passes


def test_rating_not_given_takes_10_ka_and_says_so():
    # 10 kA for molded-case breakers: common practice, from memory (named in the answer as an assumption)
    result = nec().size(_feeder(available_fault_current_a=12_000.0))
    check = next(c for c in result.rejected[-1].checks if c.name == "breaking_capacity")
    assert check.value == 10_000.0 and not check.passes and "assumed" in check.detail
    assert any("10 kA is assumed" in a for a in result.assumptions)


def test_no_fault_current_is_not_assessed_never_a_pass():
    # NEC 2023, 110.9 cannot be assessed without the available fault current: no check, and a caution says so
    result = nec().size(_feeder())
    assert _check(result, "breaking_capacity") is None
    assert any(c.startswith("Not assessed: breaking_capacity") for c in result.cautions)
