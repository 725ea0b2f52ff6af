"""The table files must match the committed SHA-256 manifest, and only a deliberate --write changes it.

Issue 21, item 9: a one-value edit (7.98 -> 7.0 ohm/km in IEC 60228 Table 3) passed every shape and physical
check and was then served as published.  The digests catch any edit; regenerating them is a separate command.
"""

from __future__ import annotations

import shutil
from importlib import resources
from pathlib import Path

import pytest

from service.core.data import read_tables
from service.core.data.digests import MANIFEST_NAME, REGENERATE, compute_manifest, digest, manifest_defects, \
    read_manifest, table_files
from service.core.data.manifest import main as manifest_main
from service.core.errors import DataTableError

PACKAGED = Path(str(resources.files("service.core.data")))
CLASS5 = "iec60228_table3_class5.json"


@pytest.fixture
def tables_copy(tmp_path: Path) -> Path:
    """A copy of the packaged table files and their manifest, to edit."""
    for entry in PACKAGED.iterdir():
        if entry.name.endswith(".json") or entry.name == MANIFEST_NAME:
            shutil.copy(entry, tmp_path / entry.name)
    return tmp_path


def _edit_class5(directory: Path) -> None:
    """The issue's edit: 7.98 ohm/km (a class 5 copper value, IEC 60228:2004 Table 3) typed as 7.0."""
    path = directory / CLASS5
    text = path.read_text(encoding="utf-8")
    assert text.count("7.98") == 1
    path.write_text(text.replace("7.98", "7.0"), encoding="utf-8")


def test_every_packaged_table_file_matches_the_committed_manifest():
    actual = {entry.name: digest(entry.read_bytes()) for entry in table_files(PACKAGED)}
    defects = manifest_defects(read_manifest(PACKAGED), actual)
    assert defects == [], f"table files differ from {MANIFEST_NAME}: {defects}; check them, then `{REGENERATE}`"


def test_the_committed_manifest_is_exactly_what_the_write_tool_produces():
    # sha256sum format, sorted: `sha256sum -c MANIFEST.sha256` checks it too
    assert (PACKAGED / MANIFEST_NAME).read_text(encoding="ascii") == compute_manifest(PACKAGED)


def test_an_edited_table_is_refused_naming_the_file(tables_copy):
    _edit_class5(tables_copy)
    with pytest.raises(DataTableError, match=rf"{CLASS5}: differs from its SHA-256") as refused:
        read_tables(tables_copy)
    assert REGENERATE in str(refused.value)


def test_the_edit_passes_every_other_check_so_only_the_digest_stops_it(tables_copy):
    """Without the manifest the edited value is loaded and would be served: the digest is the only guard."""
    _edit_class5(tables_copy)
    (tables_copy / MANIFEST_NAME).write_text(compute_manifest(tables_copy), encoding="ascii")
    class5 = read_tables(tables_copy)["iec60228-table3"]
    assert any(7.0 in row for row in class5.rows) and not any(7.98 in row for row in class5.rows)


def test_a_table_file_missing_from_the_manifest_is_refused(tables_copy):
    shutil.copy(tables_copy / CLASS5, tables_copy / "zz_new_table.json")
    with pytest.raises(DataTableError, match=rf"zz_new_table.json: not listed in {MANIFEST_NAME}"):
        read_tables(tables_copy)


def test_a_listed_table_file_that_is_gone_is_refused(tables_copy):
    (tables_copy / CLASS5).unlink()
    with pytest.raises(DataTableError, match=rf"{CLASS5}: listed in {MANIFEST_NAME} but missing"):
        read_tables(tables_copy)


@pytest.mark.parametrize("manifest", [None, "not a digest line\n", f"{'0' * 64}  {CLASS5}\n{'0' * 64}  {CLASS5}\n"])
def test_a_missing_or_malformed_manifest_is_refused(tables_copy, manifest):
    if manifest is None:
        (tables_copy / MANIFEST_NAME).unlink()
    else:
        (tables_copy / MANIFEST_NAME).write_text(manifest, encoding="ascii")
    with pytest.raises(DataTableError, match=MANIFEST_NAME):
        read_tables(tables_copy)


def test_regenerating_is_a_deliberate_write_and_checking_never_writes(tables_copy, capsys):
    _edit_class5(tables_copy)
    before = (tables_copy / MANIFEST_NAME).read_bytes()
    assert manifest_main([], directory=tables_copy) == 1  # the check names the file and leaves the manifest alone
    assert CLASS5 in capsys.readouterr().err
    assert (tables_copy / MANIFEST_NAME).read_bytes() == before
    with pytest.raises(DataTableError):
        read_tables(tables_copy)  # loading never regenerates it either
    assert (tables_copy / MANIFEST_NAME).read_bytes() == before
    assert manifest_main(["--write"], directory=tables_copy) == 0
    assert manifest_main([], directory=tables_copy) == 0
    assert "iec60228-table3" in read_tables(tables_copy)
