"""A defective NEC data file stops start-up (DataTableError) instead of sizing wrongly."""

from __future__ import annotations

import dataclasses

import pytest

from service.core.data import load_tables
from service.core.errors import DataTableError
from service.core.sizing.nec.tables import NecTables


def _with(table_id: str, change) -> dict:
    tables = dict(load_tables())
    table = tables[table_id]
    tables[table_id] = dataclasses.replace(table, rows=tuple(change(list(map(list, table.rows)))))
    return tables


def _set(row: int, column: int, value):
    def change(rows):
        rows[row][column] = value
        return [tuple(r) for r in rows]
    return change


def test_the_packaged_tables_load():
    assert NecTables(load_tables()).ampacity[("copper", 75)]["12 AWG"] == 25  # NFPA 70-2023, Table 310.16


@pytest.mark.parametrize("table_id, change, message", [
    ("nec-table310-16", _set(3, 2, 30), "rise with the size"),  # 8 AWG copper 75 °C typed below 10 AWG's 35 A
    ("nec-table310-16", _set(2, 3, 35), "must exceed"),  # 10 AWG copper 90 °C typed equal to its 75 °C 35 A
    ("nec-table310-15-b1-1", _set(4, 1, 0.98), "1 at 30 °C"),
    ("nec-table310-15-c1", _set(1, 1, 1.1), "must not rise"),
    ("nec-ch9-table4", _set(1, 3, 0.2), "rise with the trade size"),
    ("nec-ch9-table5", _set(1, 1, 0.0001), "rise with the size"),
    ("nec-ch9-table9", _set(5, 2, 0.045), "exceed that in PVC"),  # 4 AWG steel X typed below PVC 0.048
    ("nec-table250-122", _set(1, 0, 10), "must rise"),
])
def test_a_defect_stops_start_up(table_id, change, message):
    with pytest.raises(DataTableError, match=message):
        NecTables(_with(table_id, change))
