"""Generation time and size of the clients tests/clients generates from openapi/v1/openapi.yaml.

    .venv/bin/python load_tests/bench_clients.py [--repeats 5]       # after make install-test

Prints, for openapi-python-client and openapi-typescript, the median wall time of the generator over the repeats
(each into a fresh temporary folder, as the tests do), and what it wrote: files and kilobytes (apparent sizes).
Figures in docs/benchmarks.md; nothing here is a timed assertion.
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
CONTRACT = ROOT / "openapi" / "v1" / "openapi.yaml"
GENERATORS_BIN = ROOT / ".venv-generators" / "bin"
NODE_BIN = ROOT / "tests" / "clients" / "node" / "node_modules" / ".bin"


def python_client(out: Path) -> list[str]:
    return [str(GENERATORS_BIN / "openapi-python-client"), "generate", "--path", str(CONTRACT),
            "--output-path", str(out / "ampline-api-client")]


def typescript_types(out: Path) -> list[str]:
    return [str(NODE_BIN / "openapi-typescript"), str(CONTRACT), "-o", str(out / "schema.d.ts")]


def measure(command, repeats: int) -> tuple[float, int, float]:
    """(median seconds, files, KB) of one generator."""
    env = {**os.environ, "PATH": f"{GENERATORS_BIN}{os.pathsep}{os.environ['PATH']}"}  # ruff, its post-hook
    times, files, size = [], 0, 0
    for _ in range(repeats):
        with tempfile.TemporaryDirectory() as folder:
            out = Path(folder)
            started = time.perf_counter()
            subprocess.run(command(out), check=True, capture_output=True, env=env)
            times.append(time.perf_counter() - started)
            written = [p for p in out.rglob("*") if p.is_file()]
            files, size = len(written), sum(p.stat().st_size for p in written)
    return statistics.median(times), files, size / 1024


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=5)
    repeats = parser.parse_args().repeats
    print(f"contract: {CONTRACT.relative_to(ROOT)}, {CONTRACT.stat().st_size / 1024:.0f} KB; median of {repeats}")
    for name, command in (("openapi-python-client", python_client), ("openapi-typescript", typescript_types)):
        seconds, files, kb = measure(command, repeats)
        print(f"{name:24} {seconds:6.2f} s  {files:4d} files  {kb:7.0f} KB")


if __name__ == "__main__":
    main()
