"""NEC details of issue 14: the fuse-only ratings of Table 240.6(A), the effective-Z column of Chapter 9 Table 9,
and the tabulated ampacity as a float (the same type as the IEC regime's)."""

from __future__ import annotations

import pytest

from service.core.sizing.nec import NecCircuit, NecLoad, NecSizingInput, default_nec_tables, nec

KFT = 304.8


@pytest.fixture(scope="module")
def t():
    return default_nec_tables()


def test_fuse_only_ratings_are_listed(t):
    # NEC Table 240.6(A) (NFPA 70-2023, 240.6(A), from memory): "additional standard ampere ratings for fuses shall
    # be 1, 3, 6, 10, and 601"
    for rating in (1, 3, 6, 10, 601):
        assert rating in t.fuse_ratings
        assert rating not in t.ratings  # not a circuit-breaker rating: the service never chooses it for a breaker
    assert t.fuse_ratings[0] == 1 and 15 in t.fuse_ratings and 6000 in t.fuse_ratings


@pytest.mark.parametrize("material, raceway, size, z_kft", [
    # NEC Chapter 9, Table 9, "Effective Z at 0.85 PF" (sfasoft.com 'A.C. for 600 Volt' reproduction)
    ("copper", "pvc", "14 AWG", 2.7), ("copper", "steel", "8 AWG", 0.70), ("copper", "pvc", "3/0 AWG", 0.088),
    ("copper", "aluminium", "3/0 AWG", 0.092), ("copper", "steel", "3/0 AWG", 0.094),
    ("copper", "steel", "250 kcmil", 0.073), ("copper", "pvc", "1000 kcmil", 0.032),
    ("aluminium", "pvc", "12 AWG", 2.8), ("aluminium", "steel", "3/0 AWG", 0.14),
    ("aluminium", "aluminium", "500 kcmil", 0.061), ("aluminium", "steel", "1000 kcmil", 0.046),
])
def test_table_9_effective_z_column(t, material, raceway, size, z_kft):
    assert t.impedance[(material, raceway, size)].z085_ohm_per_m * KFT == pytest.approx(z_kft)


def test_effective_z_step_reads_the_table_at_0_85():
    # NEC Chapter 9, Table 9: 250 kcmil copper in steel conduit, Z at 0.85 PF = 0.073 ohm/kft, where
    # R cos θ + X sin θ from the rounded R (0.054) and X (0.052) gives 0.0733 (Note 2)
    spec = NecSizingInput(NecLoad(design_current_a=180.0, power_factor=0.85, continuous_share=0.0),
                          NecCircuit(length_m=30.0, raceway="emt", role="feeder"), "480Y/277V", rated_current_a=200.0)
    steps = {s.name: s for s in nec().verify(spec, "250 kcmil").steps}
    assert steps["Chosen size: effective Z"].value * KFT == pytest.approx(0.073)
    assert "0.85 PF" in steps["Chosen size: effective Z"].formula


def test_effective_z_away_from_0_85_uses_note_2():
    # NEC Chapter 9, Table 9, Note 2: at pf 1 the effective Z is R: 250 kcmil copper, steel conduit, 0.054 ohm/kft
    spec = NecSizingInput(NecLoad(design_current_a=180.0, power_factor=1.0, continuous_share=0.0),
                          NecCircuit(length_m=30.0, raceway="emt", role="feeder"), "480Y/277V", rated_current_a=200.0)
    steps = {s.name: s for s in nec().verify(spec, "250 kcmil").steps}
    assert steps["Chosen size: effective Z"].value * KFT == pytest.approx(0.054)


def test_tabulated_ampacity_is_a_float():
    # NEC Table 310.16, 75 °C copper 12 AWG: 25 A; the IEC regime answers It as a float, so does the NEC
    spec = NecSizingInput(NecLoad(design_current_a=16.0, continuous_share=1.0),
                          NecCircuit(length_m=10.0, conductor_type="THW"), "120V")
    chosen = nec().size(spec).chosen
    assert type(chosen.tabulated_capacity_a) is float and type(chosen.iz_a) is float
    assert chosen.tabulated_capacity_a == 25.0
