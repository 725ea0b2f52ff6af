"""A real server for end-to-end tests: `python -m service` in a subprocess, as `make run` starts it."""

from __future__ import annotations

import os
import signal
import socket
import subprocess
import sys
import time
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

import httpx
import pytest

ROOT = Path(__file__).resolve().parents[2]


# uvicorn drains and shuts down on SIGTERM, then re-raises the signal so the
# exit status still says why it stopped: -SIGTERM is a clean stop.
CLEAN_EXITS = (0, -signal.SIGTERM)


@dataclass
class LiveServer:
    process: subprocess.Popen
    base_url: str
    _output: str | None = None

    def stop(self, timeout_s: float = 15.0) -> int:
        if self.process.poll() is None:
            self.process.send_signal(signal.SIGTERM)
        code = self.process.wait(timeout=timeout_s)
        self.output()
        return code

    def output(self) -> str:
        """Everything the server wrote (stdout and stderr); complete once it has stopped."""
        if self._output is None and self.process.poll() is not None and self.process.stdout:
            self._output = self.process.stdout.read()
            self.process.stdout.close()
        return self._output or ""


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def start_server(**settings: str) -> LiveServer:
    port = free_port()
    env = {**os.environ, "AMPLINE_HOST": "127.0.0.1", "AMPLINE_PORT": str(port)}
    env.update({f"AMPLINE_{k.upper()}": v for k, v in settings.items()})
    process = subprocess.Popen([sys.executable, "-m", "service"], cwd=ROOT, env=env,
                               stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True)
    server = LiveServer(process, f"http://127.0.0.1:{port}")
    deadline = time.monotonic() + 30
    while time.monotonic() < deadline:
        if process.poll() is not None:
            raise RuntimeError(f"server exited early:\n{server.output()}")
        try:
            if httpx.get(server.base_url + "/readyz", timeout=1).status_code == 200:
                return server
        except httpx.TransportError:
            pass
        time.sleep(0.05)
    server.stop()
    raise RuntimeError("server did not become ready within 30 s")


@pytest.fixture(scope="module")
def live_server() -> Iterator[LiveServer]:
    server = start_server()
    try:
        yield server
    finally:
        server.stop()
