"""NEC 110.14(C)(1): the termination limit comes from the Table 310.16 column, also for conductors in free air.

Expected ampacities typed from NFPA 70-2023, Table 310.16 (75 °C copper column, the reproductions named in
test_nec_tables.py): 4/0 AWG 230 A, 250 kcmil 255 A, 300 kcmil 285 A, 350 kcmil 310 A, 400 kcmil 335 A.
"""

from __future__ import annotations

from service.core.sizing.nec import NecCircuit, NecLoad, NecSizingInput, nec


def _free_air_feeder(amps: float) -> NecSizingInput:
    return NecSizingInput(NecLoad(design_current_a=amps, continuous_share=1.0),
                          NecCircuit(length_m=10.0, role="feeder", installation="free_air"), "480Y/277V")


def test_250_a_continuous_free_air_feeder_needs_400_kcmil():
    result = nec().size(_free_air_feeder(250.0))
    # NEC 2023, 215.2(A)(1)(a) and 215.3: 1.25 x 250 A = 312.5 A; Table 240.6(A): next standard rating 350 A
    assert result.device.rated_current_a == 350.0
    # NEC 2023, 110.14(C)(1)(b): device > 100 A, 75 °C terminations, read from Table 310.16:
    # 350 kcmil 310 A < 312.5 A, 400 kcmil 335 A >= 312.5 A. (Table 310.17 would let 4/0 AWG, 360 A, through.)
    assert result.chosen.size_label == "400 kcmil"
    checks = {c.name: c for c in result.chosen.checks}
    assert checks["termination_ampacity"].value == 335.0 and checks["termination_ampacity"].passes
    assert "Table 310.16" in checks["termination_ampacity"].source


def test_4_0_awg_free_air_fails_the_termination_check():
    # NEC 2023, 110.14(C)(1): 4/0 AWG copper, 75 °C column of Table 310.16: 230 A < 312.5 A
    result = nec().verify(_free_air_feeder(250.0), "4/0 AWG")
    checks = {c.name: c for c in result.chosen.checks}
    assert checks["termination_ampacity"].value == 230.0 and not checks["termination_ampacity"].passes
    assert result.verdict == "non_compliant"
