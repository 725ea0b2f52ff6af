"""NEC conductors in parallel (310.10(G)), their EGCs (250.122(F)) and the adjustment of 310.15(C)(1) when all sets
share one raceway; and ways_out built from the binding check.

Ampacities typed from NFPA 70-2023, Table 310.16 (copper: 75 °C 300 kcmil 285 A, 350 kcmil 310 A, 400 kcmil 335 A,
1000 kcmil 545 A; 90 °C 350 kcmil 350 A, 400 kcmil 380 A); Table 250.122: 600 A -> 1 AWG copper; Table
310.15(C)(1): 4-6 conductors 80 %; Chapter 9 Table 8: 1/0 AWG 105,600 cmil.
"""

from __future__ import annotations

import dataclasses

import pytest

from service.core.errors import CalcError
from service.core.sizing.nec import NecCircuit, NecLoad, NecSizingInput, nec


def _feeder_600(**circuit) -> NecSizingInput:
    return NecSizingInput(NecLoad(design_current_a=600.0, continuous_share=0.0),
                          NecCircuit(length_m=30.0, raceway="emt", role="feeder", **circuit), "480Y/277V",
                          rated_current_a=600.0)


def _checks(ev) -> dict:
    return {c.name: c for c in ev.checks}


def test_600_a_feeder_two_sets_of_350_kcmil_in_separate_raceways():
    result = nec().size(_feeder_600())
    # one conductor: 1000 kcmil 545 A < 600 A (Table 310.16, 75 °C, 110.14(C)(1)(b)) -> no single size passes
    assert all(ev.parallel_sets > 1 for ev in [result.chosen]) and result.verdict in ("compliant", "not_fully_assessed")
    # NEC 2023, 310.10(G): two sets; 300 kcmil 2 x 285 = 570 A < 600 A, 350 kcmil 2 x 310 = 620 A >= 600 A
    assert (result.chosen.parallel_sets, result.chosen.size_label) == (2, "350 kcmil")
    checks = _checks(result.chosen)
    assert checks["termination_ampacity"].value == 620.0
    # NEC 2023, 250.122(F)(1)(b) and Table 250.122: an EGC in each raceway, full size on the 600 A device: 1 AWG
    assert result.chosen.pe_size_label == "1 AWG" and "each of the 2 raceways" in checks["equipment_grounding_conductor"].condition
    # Every single size was tried and rejected before sets in parallel (fewest sets first)
    assert [ev.size_label for ev in result.rejected if ev.parallel_sets == 1][-1] == "1000 kcmil"


def test_two_sets_in_one_raceway_count_six_conductors():
    # NEC 2023, 310.15(C)(1): 2 x 3 = 6 current-carrying conductors -> 80 %; THHN 90 °C column as the base:
    # 350 kcmil 2 x 350 x 0.8 = 560 A < 600 A; 400 kcmil 2 x 380 x 0.8 = 608 A >= 600 A
    result = nec().size(_feeder_600(parallel_raceways="shared"))
    assert (result.chosen.parallel_sets, result.chosen.size_label) == (2, "400 kcmil")
    assert _checks(result.chosen)["ampacity"].value == pytest.approx(608.0)
    # NEC 2023, 250.122(F)(1)(a): one EGC in the single raceway, sized on the device: 1 AWG
    assert result.chosen.pe_size_label == "1 AWG"


def test_parallel_below_1_0_awg_is_refused():
    # NEC 2023, 310.10(G)(1): parallel conductors 1/0 AWG and larger
    spec = dataclasses.replace(_feeder_600(), parallel_sets=2)
    with pytest.raises(CalcError):
        nec().verify(spec, "1 AWG")
    assert nec().verify(spec, "350 kcmil").verdict in ("compliant", "not_fully_assessed")


def test_no_parallel_set_is_below_1_0_awg():
    # NEC 2023, 310.10(G)(1); Chapter 9 Table 8: 1/0 AWG = 105,600 cmil
    result = nec().size(_feeder_600())
    t = nec().t
    assert all(t.cmil[ev.size_label] >= 105_600 for ev in result.rejected if ev.parallel_sets > 1)


def test_ways_out_name_the_parallel_sets_that_pass():
    # NEC 2023, 310.10(G): 500 kcmil alone (380 A at 75 °C) fails; two sets of 350 kcmil pass (above)
    result = nec().verify(_feeder_600(), "500 kcmil")
    assert result.verdict == "non_compliant"
    assert any(w.startswith("two sets of 350 kcmil in parallel") for w in result.ways_out)


def test_ways_out_name_the_next_size():
    # NEC 2023, 240.4(D)(3): 14 AWG copper at most 15 A; a 20 A device needs 12 AWG (240.4(D)(5), Table 310.16 60 °C
    # 12 AWG 20 A)
    spec = NecSizingInput(NecLoad(design_current_a=12.0, continuous_share=1.0), NecCircuit(length_m=10.0), "120V",
                          rated_current_a=20.0)
    result = nec().verify(spec, "14 AWG")
    assert "small_conductor_protection" in result.binding_checks
    assert "12 AWG passes every check with this device." in result.ways_out
    assert not any("parallel" in w for w in result.ways_out)


def test_ways_out_shorten_the_run_to_a_length_that_passes():
    # NEC 2023, 210.19(A) Informational Note No. 4: 3 % guidance. The suggested length must pass, a longer one fail.
    spec = NecSizingInput(NecLoad(design_current_a=16.0, continuous_share=1.0), NecCircuit(length_m=60.0), "120V")
    result = nec().verify(spec, "12 AWG")
    assert "voltage_drop" in result.binding_checks
    way = next(w for w in result.ways_out if w.startswith("Shorten the run to"))
    length = float(way.removeprefix("Shorten the run to ").split(" m")[0])
    at = lambda m: _checks(nec().verify(dataclasses.replace(spec, circuit=dataclasses.replace(spec.circuit, length_m=m)),  # noqa: E731
                                        "12 AWG").chosen)["voltage_drop"].passes
    assert at(length) and not at(length + 0.5)
