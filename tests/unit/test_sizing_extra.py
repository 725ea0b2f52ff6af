"""Issue 14, IEC 60364 regime: D1 grouping of single-core cables, harmonic neutral current, parallel sets and
ways out that fit the case."""

from __future__ import annotations

import dataclasses
import math

import pytest

from service.core.sizing import CircuitSpec, LoadSpec, ProtectionSpec, SupplySpec, size_conductor, verify_conductor
from tests.unit.test_sizing import spec  # the same base circuit: 20 A, 25 m, method C, type B, Ze 0.35 ohm

MM2 = 1e-6


def grouping(result) -> float:
    return next(f.value for f in result.factors if f.name == "grouping")


# -- item 7: D1 grouping of single-core cables -----------------------------------------------------

@pytest.mark.parametrize(("n", "spacing", "single_core", "multicore"), [
    # IEC 60364-5-52:2009, Table B.52.19 (from memory): single-core cables in single-way ducts against
    # multicore cables in single-way ducts
    (2, "touching", 0.80, 0.85),
    (3, "0.25_m", 0.80, 0.85),
    (4, "0.5_m", 0.80, 0.85),
    (6, "0.25_m", 0.70, 0.80),
])
def test_d1_single_core_groups_take_the_single_core_part_of_b52_19(n, spacing, single_core, multicore):
    def circuit(cable):
        return CircuitSpec(length_m=25.0, method="D1", cable=cable, grouped_circuits=n, arrangement="buried",
                           spacing=spacing)
    single = size_conductor(spec(circuit=circuit("single_core")))
    multi = size_conductor(spec(circuit=circuit("multicore")))
    assert grouping(single) == single_core  # IEC 60364-5-52:2009, Table B.52.19, single-core part (from memory)
    assert grouping(multi) == multicore  # IEC 60364-5-52:2009, Table B.52.19, multicore part (from memory)
    factor = next(f for f in single.factors if f.name == "grouping")
    assert factor.table_id == "iec60364-5-52-tableB52-19-single-core" and "single-core" in factor.basis


def test_single_core_duct_factor_above_the_multicore_one_stops_start_up():
    from service.core.data import load_tables
    from service.core.errors import DataTableError
    from service.core.sizing.tables import SizingTables
    tables = dict(load_tables())
    t = tables["iec60364-5-52-tableB52-19-single-core"]
    rows = [list(r) for r in t.rows]
    rows[0][1] = 0.9  # 2 circuits touching: above the multicore 0.85 (Table B.52.19: single-core groups worse)
    tables[t.table_id] = dataclasses.replace(t, rows=tuple(tuple(r) for r in rows))
    with pytest.raises(DataTableError, match="not above its factor"):
        SizingTables(tables)
