"""Published data tables, one JSON file per table, loaded and validated once.

Each file names its standard, edition and table number and says whether every
value was checked against the published table (``provenance``).  ``load_tables``
first checks every file's bytes against its SHA-256 in ``MANIFEST.sha256`` (so
a plausible but wrong edit is refused too), then validates the shape and
physical sense of every file, and raises DataTableError on the first defect, so
a broken table stops the service at start-up instead of producing wrong answers
later.
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass
from functools import lru_cache
from importlib import resources
from importlib.resources.abc import Traversable
from typing import Any

from service.core.data.digests import (ManifestError, defects_summary, digest, manifest_defects, read_manifest,
                                       table_files)
from service.core.errors import DataTableError

PROVENANCES = ("published", "from memory", "published, some rows from memory")
_REQUIRED = ("table_id", "standard", "edition", "table", "title", "quantity", "unit", "provenance", "columns", "rows")


@dataclass(frozen=True, slots=True)
class DataTable:
    table_id: str
    standard: str
    edition: str
    table: str
    title: str
    quantity: str
    unit: str
    provenance: str
    verified_against: str
    columns: tuple[str, ...]
    rows: tuple[tuple[Any, ...], ...]
    file_name: str

    def records(self) -> list[dict[str, Any]]:
        return [dict(zip(self.columns, row)) for row in self.rows]

    def column(self, name: str) -> list[Any]:
        index = self.columns.index(name)
        return [row[index] for row in self.rows]


def _check(condition: bool, file_name: str, message: str) -> None:
    if not condition:
        raise DataTableError(f"{file_name}: {message}")


def _parse(file_name: str, raw: dict[str, Any]) -> DataTable:
    for key in _REQUIRED:
        _check(key in raw, file_name, f"missing key '{key}'")
    _check(raw["provenance"] in PROVENANCES, file_name, f"provenance must be one of {PROVENANCES}")
    columns = tuple(raw["columns"])
    _check(len(columns) == len(set(columns)) and len(columns) > 0, file_name, "columns must be unique and non-empty")
    rows = []
    for index, row in enumerate(raw["rows"]):
        _check(isinstance(row, list) and len(row) == len(columns), file_name, f"row {index} has the wrong length")
        for value in row:
            if isinstance(value, float):
                _check(math.isfinite(value) and value > 0, file_name, f"row {index} holds a non-positive or non-finite number")
        rows.append(tuple(row))
    _check(len(rows) > 0, file_name, "no rows")
    return DataTable(
        table_id=raw["table_id"],
        standard=raw["standard"],
        edition=raw["edition"],
        table=raw["table"],
        title=raw["title"],
        quantity=raw["quantity"],
        unit=raw["unit"],
        provenance=raw["provenance"],
        verified_against=raw.get("verified_against", ""),
        columns=columns,
        rows=tuple(rows),
        file_name=file_name,
    )


@lru_cache(maxsize=1)
def load_tables() -> dict[str, DataTable]:
    """All packaged tables by table_id (cached: the files never change at run time)."""
    return read_tables(resources.files(__name__))


def read_tables(directory: Traversable) -> dict[str, DataTable]:
    """The tables of a directory by table_id, each file's bytes first checked against the directory's manifest."""
    try:
        recorded = read_manifest(directory)
    except ManifestError as exc:
        raise DataTableError(str(exc)) from None
    contents = {entry.name: entry.read_bytes() for entry in table_files(directory)}
    defects = manifest_defects(recorded, {name: digest(data) for name, data in contents.items()})
    if defects:
        raise DataTableError(defects_summary(defects))
    tables: dict[str, DataTable] = {}
    for name, data in contents.items():
        try:
            raw = json.loads(data.decode("utf-8"))
        except (UnicodeDecodeError, json.JSONDecodeError) as exc:
            raise DataTableError(f"{name}: not valid JSON ({exc})") from None
        table = _parse(name, raw)
        _check(table.table_id not in tables, name, f"duplicate table_id '{table.table_id}'")
        tables[table.table_id] = table
    return tables
