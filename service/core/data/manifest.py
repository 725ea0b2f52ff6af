"""Check or regenerate the table manifest: ``python -m service.core.data.manifest [--write]``.

Without ``--write`` it prints each table file that differs from ``MANIFEST.sha256``
and exits 1 if any does.  ``--write`` records the files as they are now: run it only
after checking a new or corrected table against its published source.
"""

from __future__ import annotations

import argparse
import sys
from importlib import resources
from importlib.resources.abc import Traversable

from service.core.data.digests import (MANIFEST_NAME, ManifestError, compute_manifest, digest, manifest_defects,
                                       read_manifest, table_files)


def main(argv: list[str] | None = None, directory: Traversable | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m service.core.data.manifest", description=__doc__.splitlines()[0])
    parser.add_argument("--write", action="store_true", help=f"rewrite {MANIFEST_NAME} from the table files as they are")
    args = parser.parse_args(argv)
    directory = directory or resources.files("service.core.data")
    if args.write:
        text = compute_manifest(directory)
        (directory / MANIFEST_NAME).write_text(text, encoding="ascii")  # type: ignore[attr-defined]
        print(f"wrote {MANIFEST_NAME}: {len(text.splitlines())} table files")
        return 0
    try:
        recorded = read_manifest(directory)
    except ManifestError as exc:
        print(exc, file=sys.stderr)
        return 1
    defects = manifest_defects(recorded, {e.name: digest(e.read_bytes()) for e in table_files(directory)})
    for defect in defects:
        print(defect, file=sys.stderr)
    print(f"{MANIFEST_NAME}: {'%d defect(s)' % len(defects) if defects else 'every table file matches'}")
    return 1 if defects else 0


if __name__ == "__main__":
    sys.exit(main())
