"""Physical consistency of data tables that are still partly from memory.

These checks do not confirm a table against its publication (the reference tests do that); they catch a
mistyped cell in a table no stored reproduction could confirm, by the physics the table was computed from.
"""

from __future__ import annotations

import math

import pytest

from service.core.data import load_tables


@pytest.mark.parametrize(
    ("table_id", "reference_degc"),
    [
        ("iec60364-5-52-tableB52-14", 30.0),  # air, reference 30 °C
        ("iec60364-5-52-tableB52-15", 20.0),  # ground, reference 20 °C
    ],
)
def test_temperature_factors_follow_the_heat_balance(table_id, reference_degc):
    # common practice: at steady state I²R is proportional to the temperature rise, so the factor for an
    # ambient θ is sqrt((θmax - θ) / (θmax - θref)); NFPA 70 310.15(B) states the same equation for the NEC
    # tables. Each printed factor is that value rounded to two decimals.
    table = load_tables()[table_id]
    checked = 0
    for record in table.records():
        ambient = record["ambient_degc"]
        for column, theta_max in (("pvc_70", 70.0), ("xlpe_epr_90", 90.0)):
            factor = record[column]
            if factor is None:
                continue
            expected = math.sqrt((theta_max - ambient) / (theta_max - reference_degc))
            assert abs(factor - expected) <= 0.005 + 1e-9, (table_id, ambient, column, factor, round(expected, 4))
            checked += 1
    assert checked >= 20


def test_iec60228_class1_copper_is_not_the_class2_column():
    # IEC 60228:2004 Tables 1 and 2 differ from 185 mm² up (class 1 0.101, 0.0775, 0.0620, 0.0465; class 2
    # 0.0991, 0.0754, 0.0601, 0.0470 ohm/km): a file filled from a merged 'class 1 + 2' column would be wrong.
    class1 = {r["nominal_area_mm2"]: r["copper_plain"] for r in load_tables()["iec60228-table1"].records()}
    class2 = {r["nominal_area_mm2"]: r["copper_plain"] for r in load_tables()["iec60228-table2"].records()}
    for area in (185, 240, 300, 400):
        assert class1[area] != class2[area]
    # within class 1 the series from 150 mm² is 18.6 ohm mm²/km over the area, to the table's three figures
    for area in (150, 185, 240, 300, 400):
        assert class1[area] * area == pytest.approx(18.6, rel=0.006)
