"""Shared pieces of the benchmark scripts: a real server in a subprocess, and medians of timings."""

from __future__ import annotations

import os
import signal
import socket
import statistics
import subprocess
import sys
import time
from collections.abc import Callable
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))


class BenchServer:
    """`python -m service` on a free loopback port (as `make run` starts it) and a keep-alive client."""

    def __init__(self, **settings: str) -> None:
        import httpx

        with socket.socket() as sock:
            sock.bind(("127.0.0.1", 0))
            port = sock.getsockname()[1]
        env = {**os.environ, "AMPLINE_HOST": "127.0.0.1", "AMPLINE_PORT": str(port), "AMPLINE_LOG_LEVEL": "warning"}
        env.update({f"AMPLINE_{k.upper()}": v for k, v in settings.items()})
        self.process = subprocess.Popen([sys.executable, "-m", "service"], cwd=ROOT, env=env,
                                        stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        self.base = f"http://127.0.0.1:{port}"
        self.client = httpx.Client(timeout=600)
        deadline = time.monotonic() + 30
        while True:
            try:
                if self.client.get(self.base + "/readyz").status_code == 200:
                    return
            except httpx.TransportError:
                pass
            if time.monotonic() > deadline or self.process.poll() is not None:
                self.close()
                raise RuntimeError("the benchmark server did not start")
            time.sleep(0.05)

    def post(self, path: str, body: bytes):
        answer = self.client.post(self.base + path, content=body, headers={"content-type": "application/json"})
        if answer.status_code != 200:
            raise RuntimeError(f"HTTP {answer.status_code}: {answer.text[:300]}")
        return answer

    def close(self) -> None:
        self.client.close()
        if self.process.poll() is None:
            self.process.send_signal(signal.SIGTERM)
            self.process.wait(timeout=30)


def median_seconds(fn: Callable[[], object], repeats: int, warmup: int = 3) -> float:
    for _ in range(warmup):
        fn()
    samples = []
    for _ in range(repeats):
        started = time.perf_counter()
        fn()
        samples.append(time.perf_counter() - started)
    return statistics.median(samples)
