"""Survival under hostile traffic: a real server keeps answering correctly and its memory stays flat (a script).

    .venv/bin/python load_tests/survival.py                  # make survival: 10,000 hostile requests
    .venv/bin/python load_tests/survival.py --hostile 1000   # what tests/e2e/test_survival.py runs in CI

Starts ``python -m service`` as ``make run`` does (on a free 127.0.0.1 port, default settings except a 2 s
body timeout so slow bodies end quickly), warms it up (every kind once or twice, then WARMUP_HOSTILE requests
of the run's mix with the slow bodies running, before the memory baseline), then sends the hostile requests — wrong types, huge
numbers, deep nesting, unicode trickery, 10 MB bodies, bad content types, header floods, malformed HTTP —
while a pool of slowloris connections trickles bodies byte by byte throughout.  After every few hostile
requests a valid one of each kind is sent and its answer checked against an independent value or the
warm-up answer.  Fails (exit 1) if any valid answer is wrong or missing, if any hostile request at the
application level gets a 5xx or a non-problem+json error, if the server dies, or if its resident memory at
the end is 10 % or more above the figure after warm-up.  Prints a JSON summary.
"""

from __future__ import annotations

import argparse
import itertools
import json
import os
import random
import signal
import socket
import subprocess
import sys
import tempfile
import threading
import time
from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path

import httpx
import psutil

ROOT = Path(__file__).resolve().parents[1]
BODY_TIMEOUT_S = 2
MEMORY_GROWTH_LIMIT = 0.10
VALID_EVERY = 5  # a round of valid requests after this many hostile ones
SLOW_CONNECTIONS = 8
WARMUP_HOSTILE = 300  # hostile requests of the run's mix before the memory baseline (not counted)


# --------------------------------------------------------------------------- valid requests and their answers

RESISTANCE = {"size": "1.5 mm^2", "length": "18 m", "conductor_class": 2, "conductor_temperature": 20}
RESISTANCE_LOOP_OHM = 2 * 12.1e-3 * 18  # IEC 60228:2004, Table 2: 1.5 mm² class 2 copper, 12.1 ohm/km at 20 °C
DIVIDER = {"frequency": 0, "elements": [
    {"type": "voltage_source", "id": "v", "pos": "a", "neg": "0", "voltage": 12},
    {"type": "resistor", "id": "r1", "a": "a", "b": "mid", "resistance": 3},
    {"type": "resistor", "id": "r2", "a": "mid", "b": "0", "resistance": 1},
]}
DIVIDER_MID_V = 12 * 1 / (3 + 1)  # Ohm's law: a 3:1 divider of 12 V
CHAIN = {"supply": {"loop_impedance": {"resistance": "0.45 ohm"}, "earth_loop_impedance": {"resistance": "0.7 ohm"},
                    "device": {"type": "B", "rated_current": "16 A"}},
         "leads": [{"length": "25 m", "size": "1.5 mm^2"}], "appliances": [{"rated_power": "2 kW"}]}
SIZING = {"load": {"power": "6 kW"}, "circuit": {"length": "20 m", "method": "C"},
          "protection": {"device": {"type": "B", "rated_current": "32 A"}}, "supply": {"ze": "0.35 ohm"}}

VALID = {
    "resistance": ("/v1/conductors/resistance", RESISTANCE),
    "network": ("/v1/networks/solve", DIVIDER),
    "chain": ("/v1/lead-chains/analyse", CHAIN),
    "sizing": ("/v1/conductors/size", SIZING),
}


def _mid_voltage(body: dict) -> float:
    return next(n["magnitude_v"] for n in body["node_voltages"] if n["node"] == "mid")


def _close(a: float, b: float) -> bool:
    return abs(a - b) <= 1e-9 * max(1.0, abs(b))


# Independent figures where there is one; for the chain and sizing, the answer given during warm-up (the
# same request must keep getting the same answer whatever else the server has been sent meanwhile).
CHECKS = {
    "resistance": lambda body, _: _close(body["loop_ohm"], RESISTANCE_LOOP_OHM),
    "network": lambda body, _: _close(_mid_voltage(body), DIVIDER_MID_V),
    "chain": lambda body, first: body["totals"] == first["totals"] and body["verdict"] == first["verdict"],
    "sizing": lambda body, first: body["chosen"] == first["chosen"] and body["verdict"] == first["verdict"],
}


# --------------------------------------------------------------------------- hostile requests

def _nested(depth: int) -> bytes:
    return b'{"a":' * depth + b"1" + b"}" * depth


TEN_MB = 10 * 1024 * 1024
_JSON = {"content-type": "application/json"}


def hostile_http(rng: random.Random) -> list[tuple[str, str, str, bytes, dict[str, str]]]:
    """(kind, method, path, body, headers) sent through a normal HTTP client; all must get a clean 4xx."""
    big = json.dumps({"size": "1.5 mm^2", "length": "1 m", "padding": "x" * 100}).encode()
    return [
        ("wrong-types", "POST", "/v1/conductors/resistance", b'{"size": 1.5, "length": [1], "material": true}', _JSON),
        ("wrong-types", "POST", "/v1/networks/solve", b'{"elements": "resistor", "frequency": {}}', _JSON),
        ("wrong-types", "POST", "/v1/lead-chains/analyse", b'{"supply": [], "leads": {"0": 1}}', _JSON),
        ("wrong-types", "POST", "/v1/conductors/verify", b'[1, 2, 3]', _JSON),
        ("huge-numbers", "POST", "/v1/conductors/resistance", b'{"size": "1.5 mm^2", "length": 1e999}', _JSON),
        ("huge-numbers", "POST", "/v1/conductors/resistance",
         b'{"size": "1.5 mm^2", "length": ' + b"9" * 5000 + b"}", _JSON),
        ("huge-numbers", "POST", "/v1/conductors/resistance", b'{"size": "1e308 mm^2", "length": "1e308 km"}', _JSON),
        ("huge-numbers", "POST", "/v1/networks/solve", json.dumps({"frequency": 1e308, "elements": [
            {"type": "voltage_source", "id": "v", "pos": "a", "neg": "0", "voltage": 1e308},
            {"type": "resistor", "id": "r", "a": "a", "b": "0", "resistance": 1e-308}]}).encode(), _JSON),
        ("huge-numbers", "POST", "/v1/conductors/resistance", b'{"size": "1.5 mm^2", "length": NaN}', _JSON),
        ("deep-nesting", "POST", "/v1/conductors/resistance", b"[" * 200_000, _JSON),
        ("deep-nesting", "POST", "/v1/networks/solve", _nested(50_000), _JSON),
        ("deep-nesting", "POST", "/v1/lead-chains/analyse",
         b'{"supply": ' + _nested(5_000) + b', "leads": []}', _JSON),
        ("unicode", "POST", "/v1/conductors/resistance", '{"size": "1.5 мм^2", "length": "30 м"}'.encode(), _JSON),
        ("unicode", "POST", "/v1/conductors/resistance",
         '{"size": "1.5\u202emm^2", "length": "3\u200b0 m"}'.encode(), _JSON),
        ("unicode", "POST", "/v1/conductors/resistance", b'{"size": "\\ud800", "length": "\\u0000 m"}', _JSON),
        ("unicode", "POST", "/v1/conductors/resistance", b'{"size": "\xc0\xaf", "length": "\xff\xfe"}', _JSON),
        ("unicode", "POST", "/v1/conductors/resistance", b"\xef\xbb\xbf" + json.dumps(RESISTANCE).encode(), _JSON),
        ("unicode", "POST", "/v1/conductors/resistance", json.dumps(RESISTANCE).encode("utf-16"),
         {"content-type": "application/json; charset=utf-16"}),
        ("unicode", "POST", "/v1/conductors/resistance",
         json.dumps({"size": "\U0001f50c" * 5000, "length": "ﾃｽﾄ"}).encode(), _JSON),
        ("content-type", "POST", "/v1/conductors/resistance", json.dumps(RESISTANCE).encode(),
         {"content-type": "text/plain"}),
        ("content-type", "POST", "/v1/conductors/resistance", b"<size>1.5</size>", {"content-type": "application/xml"}),
        ("content-type", "POST", "/v1/networks/solve", b"--x\r\n\r\n--x--", {"content-type": "multipart/form-data; boundary=x"}),
        ("content-type", "POST", "/v1/conductors/resistance", json.dumps(RESISTANCE).encode(), {}),
        ("duplicate-keys", "POST", "/v1/conductors/resistance",
         b'{"size": "1.5 mm^2", "size": "999 mm^2", "length": "1 m"}', _JSON),
        ("unknown-fields", "POST", "/v1/conductors/resistance", big, _JSON),
        ("methods", "DELETE", "/v1/conductors/resistance", b"", {}),
        ("methods", "PUT", "/v1/networks/solve", json.dumps(DIVIDER).encode(), _JSON),
        ("paths", "GET", "/v1/" + "a/" * 2000, b"", {}),
        ("paths", "GET", "/v1/../../etc/passwd", b"", {}),
        ("paths", "GET", "/v1/conductors?material=" + "x" * 4000 + "&conductor_class=-1", b"", {}),
        ("header-flood", "GET", "/v1/meta", b"", {f"x-flood-{n}": "y" * 50 for n in range(300)}),
        ("header-flood", "POST", "/v1/conductors/resistance", json.dumps(RESISTANCE).encode(),
         {**_JSON, "x-request-id": "z" * 8000, "cookie": "c=" + "k" * 8000}),
        ("body-size", "POST", "/v1/conductors/resistance", b" " * (TEN_MB - 2) + b"{}", _JSON),
        ("body-size", "POST", "/v1/networks/solve", b'{"elements": [' + b"0," * (TEN_MB // 2) + b"0]}", _JSON),
        ("random-bytes", "POST", "/v1/conductors/size", rng.randbytes(rng.randint(1, 5000)), _JSON),
    ]


def hostile_raw() -> list[tuple[str, bytes]]:
    """Byte streams that are not valid HTTP, sent on a raw socket: the server must close or refuse them."""
    return [
        ("malformed-http", b"GARBAGE\r\n\r\n"),
        ("malformed-http", b"POST /v1/conductors/resistance HTTP/1.1\r\nHost: x\r\nContent-Length: -5\r\n\r\n"),
        ("malformed-http", b"POST /v1/conductors/resistance HTTP/1.1\r\nHost: x\r\nContent-Length: 99999999999999\r\n"
                           b"content-type: application/json\r\n\r\n{}"),
        ("malformed-http", b"POST /v1/networks/solve HTTP/1.1\r\nHost: x\r\nTransfer-Encoding: chunked\r\n"
                           b"content-type: application/json\r\n\r\nZZZ\r\n{}\r\n0\r\n\r\n"),
        ("malformed-http", b"GET / HTTP/1.1\r\n" + b"X: " + b"h" * 200_000 + b"\r\n\r\n"),
        ("malformed-http", b"GET /v1/meta HTTP/9.9\r\nHost: x\r\n\r\n"),
        ("malformed-http", b"\x16\x03\x01\x02\x00\x01\x00\x01\xfc\x03\x03" + bytes(64)),  # a TLS hello on plain HTTP
    ]


# --------------------------------------------------------------------------- the run

@dataclass
class Tally:
    hostile: Counter = field(default_factory=Counter)
    statuses: Counter = field(default_factory=Counter)
    valid: Counter = field(default_factory=Counter)
    failures: list[str] = field(default_factory=list)
    slow_bodies: Counter = field(default_factory=Counter)
    lock: threading.Lock = field(default_factory=threading.Lock)

    def fail(self, message: str) -> None:
        with self.lock:
            if len(self.failures) < 50:
                self.failures.append(message)


def _free_port() -> int:
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


def start_server(log: Path) -> tuple[subprocess.Popen, str]:
    port = _free_port()
    env = {**os.environ, "AMPLINE_HOST": "127.0.0.1", "AMPLINE_PORT": str(port), "AMPLINE_LOG_LEVEL": "warning",
           "AMPLINE_BODY_TIMEOUT_S": str(BODY_TIMEOUT_S)}
    out = log.open("w")
    process = subprocess.Popen([sys.executable, "-m", "service"], cwd=ROOT, env=env, stdout=out,
                               stderr=subprocess.STDOUT)
    base = f"http://127.0.0.1:{port}"
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline:
        if process.poll() is not None:
            raise RuntimeError(f"the server exited during start-up:\n{log.read_text()}")
        try:
            if httpx.get(base + "/readyz", timeout=2).status_code == 200:
                return process, base
        except httpx.TransportError:
            pass
        time.sleep(0.05)
    process.kill()
    raise RuntimeError("the server was not ready within 60 s")


def send_valid(http: httpx.Client, tally: Tally, first: dict[str, dict]) -> None:
    for name, (path, body) in VALID.items():
        try:
            answer = http.post(path, json=body)
            ok = answer.status_code == 200 and CHECKS[name](answer.json(), first.get(name))
            detail = f"{answer.status_code} {answer.text[:200]}"
        except (httpx.HTTPError, ValueError, KeyError, StopIteration) as exc:
            ok, detail = False, repr(exc)
        tally.valid["ok" if ok else "wrong"] += 1
        if not ok:
            tally.fail(f"valid {name}: {detail}")


def send_hostile(http: httpx.Client, base: str, item, tally: Tally) -> None:
    kind, method, path, body, headers = item
    try:
        answer = http.request(method, path, content=body, headers=headers)
    except httpx.HTTPError as exc:  # the server may refuse a flood by closing: fine, if it keeps serving
        tally.statuses["closed"] += 1
        if kind not in ("header-flood", "body-size", "paths"):
            tally.fail(f"{kind} {method} {path[:60]}: connection error {exc!r}")
        return
    tally.statuses[answer.status_code] += 1
    media = answer.headers.get("content-type", "")
    if answer.status_code >= 500 or (answer.status_code >= 400 and not media.startswith("application/problem+json")
                                     and kind != "header-flood"):
        tally.fail(f"{kind} {method} {path[:60]}: {answer.status_code} {media} {answer.text[:200]}")


def send_raw(port: int, kind: str, data: bytes, tally: Tally) -> None:
    with socket.create_connection(("127.0.0.1", port), timeout=10) as sock:
        try:
            sock.sendall(data)
            reply = sock.recv(200)
        except OSError:  # reset by the server: a refusal too
            reply = b""
    status = reply.split(b" ", 2)[1].decode("ascii", "replace") if reply.startswith(b"HTTP/1.1 ") else "closed"
    tally.statuses[f"raw-{status}"] += 1
    if status.startswith("5"):
        tally.fail(f"{kind}: {reply[:120]!r}")


def slowloris(port: int, stop: threading.Event, tally: Tally) -> None:
    """Keep one connection busy trickling a body a byte at a time; expect the body timeout's 408 each time."""
    while not stop.is_set():
        try:
            with socket.create_connection(("127.0.0.1", port), timeout=BODY_TIMEOUT_S * 5) as sock:
                sock.sendall(b"POST /v1/conductors/resistance HTTP/1.1\r\nHost: x\r\ncontent-type: application/json\r\n"
                             b"content-length: 4000\r\n\r\n")
                sock.settimeout(0.3)
                reply = b""
                for _ in range(BODY_TIMEOUT_S * 10):
                    try:
                        sock.sendall(b" ")
                        reply = sock.recv(300)
                    except TimeoutError:
                        continue
                    except OSError:
                        break
                    if reply:
                        break
        except OSError as exc:
            tally.fail(f"slow body: could not connect ({exc!r})")
            return
        status = reply.split(b" ", 2)[1].decode() if reply.startswith(b"HTTP/1.1 ") else "none"
        with tally.lock:
            tally.slow_bodies[status] += 1
        if status != "408":
            tally.fail(f"slow body answered {reply[:100]!r}")


def rss(process: psutil.Process) -> int:
    """Resident memory of the server and its children (uvicorn may run workers as children)."""
    total = process.memory_info().rss
    for child in process.children(recursive=True):
        try:
            total += child.memory_info().rss
        except psutil.NoSuchProcess:
            pass
    return total


def run(hostile: int, seed: int = 7) -> dict:
    rng = random.Random(seed)
    tally = Tally()
    with tempfile.TemporaryDirectory() as tmp:
        log = Path(tmp) / "server.log"
        process, base = start_server(log)
        port = int(base.rsplit(":", 1)[1])
        server = psutil.Process(process.pid)
        stop = threading.Event()
        slow = [threading.Thread(target=slowloris, args=(port, stop, tally), daemon=True)
                for _ in range(SLOW_CONNECTIONS)]
        try:
            with httpx.Client(base_url=base, timeout=30) as http:
                first: dict[str, dict] = {}
                for name, (path, body) in VALID.items():
                    answer = http.post(path, json=body)
                    answer.raise_for_status()
                    first[name] = answer.json()
                # Warm-up: every kind of request once or twice, then a few hundred of the run's own mix with the
                # slow bodies already trickling, so that start-up allocations (decoders, caches, the allocator's
                # arenas for 10 MB bodies arriving beside slow ones) are in the baseline and the measurement is of
                # growth under sustained load. Answers during the warm-up are checked like the rest.
                for item in hostile_http(rng) * 2:
                    send_hostile(http, base, item, Tally())
                for _ in range(50):
                    send_valid(http, Tally(), first)
                for thread in slow:
                    thread.start()
                raw_items = itertools.cycle(hostile_raw())
                http_items: list = []

                def send_hostile_mix(count: int, counted: bool) -> bool:
                    """Send ``count`` hostile requests (a valid round every VALID_EVERY); False if the server died."""
                    for k in range(count):
                        if not http_items:
                            http_items.extend(hostile_http(rng))
                            rng.shuffle(http_items)
                        if k % 10 == 9:
                            kind, data = next(raw_items)
                            send_raw(port, kind, data, tally)
                        else:
                            item = http_items.pop()
                            kind = item[0]
                            send_hostile(http, base, item, tally)
                        if counted:
                            tally.hostile[kind] += 1
                        if (k + 1) % VALID_EVERY == 0:
                            send_valid(http, tally, first)
                        if process.poll() is not None:
                            tally.fail(f"the server exited ({process.returncode}) after {k + 1} hostile requests")
                            return False
                    return True

                alive = send_hostile_mix(WARMUP_HOSTILE, counted=False)
                rss_start = rss(server)
                started = time.monotonic()
                if alive:
                    send_hostile_mix(hostile, counted=True)
                stop.set()
                for thread in slow:
                    thread.join(BODY_TIMEOUT_S * 6)
                send_valid(http, tally, first)  # still answering at the end
                duration = time.monotonic() - started
                rss_end = rss(server)
        finally:
            stop.set()
            if process.poll() is None:
                process.send_signal(signal.SIGTERM)
                try:
                    process.wait(20)
                except subprocess.TimeoutExpired:
                    process.kill()
        server_log = log.read_text(errors="replace")
    growth = rss_end / rss_start - 1.0
    if growth >= MEMORY_GROWTH_LIMIT:
        tally.fail(f"resident memory grew {growth:.1%} (limit {MEMORY_GROWTH_LIMIT:.0%})")
    if not tally.slow_bodies:
        tally.fail("no slow body completed")
    if "Traceback" in server_log or "unhandled_exception" in server_log:
        tally.fail("the server logged an unhandled exception:\n" + server_log[-2000:])
    return {
        "command": f"python load_tests/survival.py --hostile {hostile} --seed {seed}",
        "hostile_requests": sum(tally.hostile.values()),
        "hostile_by_kind": dict(sorted(tally.hostile.items())),
        "hostile_answers": {str(k): v for k, v in sorted(tally.statuses.items(), key=lambda kv: str(kv[0]))},
        "slow_bodies": dict(tally.slow_bodies),
        "valid_requests": sum(tally.valid.values()),
        "valid_wrong": tally.valid["wrong"],
        "rss_start_mib": round(rss_start / 2**20, 1),
        "rss_end_mib": round(rss_end / 2**20, 1),
        "rss_growth_pct": round(100 * growth, 2),
        "duration_s": round(duration, 1),
        "failures": tally.failures,
        "ok": not tally.failures,
    }


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n", 1)[0])
    parser.add_argument("--hostile", type=int, default=10_000, help="hostile requests to send (default 10,000)")
    parser.add_argument("--seed", type=int, default=7)
    args = parser.parse_args()
    summary = run(args.hostile, args.seed)
    print(json.dumps(summary, indent=2))
    return 0 if summary["ok"] else 1


if __name__ == "__main__":
    sys.exit(main())
