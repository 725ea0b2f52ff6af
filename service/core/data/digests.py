"""SHA-256 digests of the table files, checked against the committed manifest.

Shape and physical checks cannot see a plausible wrong value (7.98 typed as 7.0
ohm/km passes both), so every table file's bytes must match the digest recorded
in ``MANIFEST.sha256`` when the table was last checked against its source.  The
manifest is in ``sha256sum`` format (``<hex>  <file name>``, one file a line, sorted),
so ``sha256sum -c MANIFEST.sha256`` checks it too.  It is only ever written by
``python -m service.core.data.manifest --write``: a deliberate act after a table is
added or corrected, never something the loader does for itself.
"""

from __future__ import annotations

import hashlib
import re
from collections.abc import Iterable, Mapping
from importlib.resources.abc import Traversable

MANIFEST_NAME = "MANIFEST.sha256"
REGENERATE = "python -m service.core.data.manifest --write"
_LINE = re.compile(r"^(?P<digest>[0-9a-f]{64}) [ *](?P<name>[A-Za-z0-9._-]+\.json)$")


class ManifestError(ValueError):
    """The manifest itself is missing or malformed."""


def digest(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def table_files(directory: Traversable) -> list[Traversable]:
    """The table files of a directory, by name."""
    return sorted((e for e in directory.iterdir() if e.name.endswith(".json")), key=lambda e: e.name)


def manifest_text(digests: Mapping[str, str]) -> str:
    return "".join(f"{digests[name]}  {name}\n" for name in sorted(digests))


def compute_manifest(directory: Traversable) -> str:
    """The manifest the directory's table files have now."""
    return manifest_text({entry.name: digest(entry.read_bytes()) for entry in table_files(directory)})


def read_manifest(directory: Traversable) -> dict[str, str]:
    """File name -> recorded digest; ManifestError if the manifest is missing or a line is not a digest line."""
    entry = directory / MANIFEST_NAME
    if not entry.is_file():
        raise ManifestError(f"{MANIFEST_NAME}: missing (regenerate it with `{REGENERATE}` once the tables are checked)")
    recorded: dict[str, str] = {}
    for number, line in enumerate(entry.read_text(encoding="ascii").splitlines(), start=1):
        match = _LINE.match(line)
        if match is None or match["name"] in recorded:
            raise ManifestError(f"{MANIFEST_NAME}: line {number} is not one '<sha256>  <file>.json' line per file")
        recorded[match["name"]] = match["digest"]
    return recorded


def manifest_defects(recorded: Mapping[str, str], actual: Mapping[str, str]) -> list[str]:
    """One message per file whose bytes differ from the manifest, or that only one side lists, each naming it."""
    defects = []
    for name in sorted(set(recorded) | set(actual)):
        if name not in actual:
            defects.append(f"{name}: listed in {MANIFEST_NAME} but missing")
        elif name not in recorded:
            defects.append(f"{name}: not listed in {MANIFEST_NAME}")
        elif recorded[name] != actual[name]:
            defects.append(f"{name}: differs from its SHA-256 in {MANIFEST_NAME} (edited since it was checked)")
    return defects


def defects_summary(defects: Iterable[str]) -> str:
    return "; ".join(defects) + f" — if the change is deliberate and checked, regenerate with `{REGENERATE}`"
