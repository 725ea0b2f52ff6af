"""Start-up time of the service: from spawning ``python -m service`` to the first 200 from /readyz (a script).

    .venv/bin/python load_tests/startup.py               # make startup: 9 starts
    .venv/bin/python load_tests/startup.py --starts 15 --workers 2

Each start spawns the server as ``make run`` does (on a free 127.0.0.1 port), polls GET /readyz every 10 ms
with a fresh connection, records the time of the first 200, then stops the server with SIGTERM and waits for
it.  Baselines measured in the same run, alternating with the starts so that none always runs on a cold page
cache: the bare interpreter (``python -c pass``) and importing the service's dependencies alone (litestar,
msgspec, numpy, scipy.sparse.linalg, pint, structlog, uvicorn, prometheus_client), each timed to its exit.
Prints medians (and min/max) and the ratios of the medians.
"""

from __future__ import annotations

import argparse
import os
import signal
import socket
import statistics
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
IMPORTS = ("import litestar, msgspec, numpy, scipy.sparse.linalg, pint, structlog, uvicorn, prometheus_client, "
           "litestar.plugins.prometheus")


def _free_port() -> int:
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


def time_to_ready(workers: int) -> float:
    port = _free_port()
    env = {**os.environ, "AMPLINE_HOST": "127.0.0.1", "AMPLINE_PORT": str(port), "AMPLINE_LOG_LEVEL": "warning",
           "AMPLINE_WORKERS": str(workers)}
    started = time.perf_counter()
    process = subprocess.Popen([sys.executable, "-m", "service"], cwd=ROOT, env=env,
                               stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        while True:
            try:
                with urllib.request.urlopen(f"http://127.0.0.1:{port}/readyz", timeout=2) as answer:
                    if answer.status == 200:
                        return time.perf_counter() - started
            except (urllib.error.URLError, ConnectionError, TimeoutError):
                pass
            if process.poll() is not None:
                raise RuntimeError(f"the server exited during start-up ({process.returncode})")
            if time.perf_counter() - started > 60:
                raise RuntimeError("not ready within 60 s")
            time.sleep(0.01)
    finally:
        process.send_signal(signal.SIGTERM)
        process.wait(timeout=30)


def time_to_exit(code: str) -> float:
    started = time.perf_counter()
    subprocess.run([sys.executable, "-c", code], cwd=ROOT, check=True)
    return time.perf_counter() - started


def _stats(samples: list[float]) -> str:
    return f"median {statistics.median(samples):.3f} s (min {min(samples):.3f}, max {max(samples):.3f})"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--starts", type=int, default=9)
    ap.add_argument("--workers", type=int, default=1, help="AMPLINE_WORKERS of the server")
    args = ap.parse_args()
    ready, bare, imports = [], [], []
    time_to_ready(args.workers)  # warm the page cache once; not counted
    for _ in range(args.starts):
        bare.append(time_to_exit("pass"))
        imports.append(time_to_exit(IMPORTS))
        ready.append(time_to_ready(args.workers))
    r, b, i = (statistics.median(x) for x in (ready, bare, imports))
    print(f"python {sys.version.split()[0]}, {os.cpu_count()} CPUs, AMPLINE_WORKERS={args.workers}, {args.starts} starts")
    print(f"python -m service to first 200 from /readyz: {_stats(ready)}")
    print(f"baseline, python -c pass:                   {_stats(bare)}")
    print(f"baseline, importing the dependencies:       {_stats(imports)}")
    print(f"ratios of medians: ready / bare interpreter {r / b:.1f}, ready / dependency imports {r / i:.2f}")


if __name__ == "__main__":
    main()
