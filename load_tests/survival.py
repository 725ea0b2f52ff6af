"""Survival under hostile traffic: a real server keeps answering correctly and its memory stays flat (a script).

    .venv/bin/python load_tests/survival.py                  # make survival: 10,000 hostile requests
    .venv/bin/python load_tests/survival.py --hostile 1000   # what tests/e2e/test_survival.py runs in CI
    .venv/bin/python load_tests/survival.py --hostile 1000 --empty-arrays 20 --high-fill 5   # fewer costly ones

Starts ``python -m service`` as ``make run`` does (on a free 127.0.0.1 port, default settings except a 2 s
body timeout so slow bodies end quickly), warms it up (every kind once or twice, then WARMUP_HOSTILE requests
of the run's mix with the slow bodies running, before the memory baseline), then sends the hostile requests — wrong types, huge
numbers, deep nesting, unicode trickery, 10 MB bodies, bad content types, header floods, malformed HTTP —
while a pool of slowloris connections trickles bodies byte by byte throughout.  After every few hostile
requests a valid one of each kind is sent and its answer checked against an independent value or the
warm-up answer.  Fails (exit 1) if any valid answer is wrong or missing, if any hostile request at the
application level gets a 5xx or a non-problem+json error, if the server dies, or if its resident memory at
the end is 10 % or more above the figure after warm-up.  Prints a JSON summary.

Then the costly shapes of issue 21, ``--<shape> N`` of each (default 1,000; the CI test sends none): long strings
(100 KB of spaces inside a quantity, sizes one character past 64, in the resistance, raceway-fill and network
routes), bodies nested 500 deep (sizing and network), a network of 200,000 empty resistor arrays (about 13 MB),
high-fill networks (24,000 nodes joined by 36,000 random branches) and slow headers (connections trickling a
header block, SLOW_HEADER_CONNECTIONS at a time, each to be cut by the header timeout), shuffled, with valid
rounds between them. Throughout the timed part /healthz is polled on a connection of its own and the server's
RSS sampled; the verdict lines (PASS/FAIL, on stderr) are /healthz p99 under 100 ms, peak RSS under
RSS_LIMIT_BYTES (the README's bound) and no 5xx answer.
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
HEADER_TIMEOUT_S = 2
HEALTHZ_P99_LIMIT_S = 0.100  # issue 21: /healthz answers within 100 ms at p99 whatever else arrives
HEALTHZ_EVERY_S = 0.05
RSS_LIMIT_BYTES = 2**30  # README, Security: one server process stays under 1 GiB resident (the Kubernetes limit)
SLOW_HEADER_CONNECTIONS = 25  # slow-header connections open at once
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


# --------------------------------------------------------------------------- costly shapes (issue 21)

SHAPES = ("long-strings", "nesting-500", "empty-arrays", "high-fill", "slow-headers")
OVER_64 = "1" * 61 + " mm2"  # 65 characters: one past a size's maxLength
SPACED = "1 a" + " " * 100_000 + "b"  # 100 KB of spaces inside a quantity: a backtracking parser's worst case
EMPTY_ARRAY_ELEMENTS = 200_000  # about 13 MB, inside the network body limit (32 MiB)
HIGH_FILL_NODES, HIGH_FILL_BRANCHES = 24_000, 36_000  # README, Security: 204 MiB of LU factors and 21 s


def _network_with(element: dict) -> bytes:
    return json.dumps({"frequency": 0, "elements": [*DIVIDER["elements"], element]}).encode()


def _long_strings() -> list[tuple[str, str, str, bytes, dict[str, str]]]:
    cable = {"type": "cable_run", "id": "c", "a": "mid", "b": "0", "length": "5 m"}
    bodies = [
        ("/v1/conductors/resistance", {**RESISTANCE, "length": SPACED}),
        ("/v1/conductors/resistance", {**RESISTANCE, "size": OVER_64}),
        ("/v1/raceways/fill", {"raceway": "emt", "conductors": [{"type": "THHN", "size": OVER_64, "count": 3}]}),
        ("/v1/raceways/fill", {"raceway": "emt", "conductors": [{"type": "THHN", "size": SPACED, "count": 3}]}),
    ]
    items = [("long-strings", "POST", path, json.dumps(body).encode(), _JSON) for path, body in bodies]
    items.append(("long-strings", "POST", "/v1/networks/solve", _network_with({**cable, "size": OVER_64}), _JSON))
    items.append(("long-strings", "POST", "/v1/networks/solve", _network_with({**cable, "size": "4 mm^2",
                                                                                  "length": SPACED}), _JSON))
    return items


def _nesting_500() -> list[tuple[str, str, str, bytes, dict[str, str]]]:
    sizing = json.dumps({**SIZING, "load": {"power": "__nest__"}}).encode().replace(b'"__nest__"', _nested(500))
    network = b'{"frequency": 0, "elements": [' + b"[" * 500 + b"]" * 500 + b"]}"
    return [("nesting-500", "POST", "/v1/conductors/size", sizing, _JSON),
            ("nesting-500", "POST", "/v1/networks/solve", network, _JSON)]


def _empty_arrays() -> bytes:
    element = b'{"type":"resistor_array","id":"e%d","a":[],"b":[],"resistance":[]}'
    return b'{"frequency":0,"elements":[' + b",".join(element % n for n in range(EMPTY_ARRAY_ELEMENTS)) + b"]}"


def _high_fill(rng: random.Random) -> bytes:
    """A connected network of random distant branches: a random tree, then random chords, fed by one source."""
    a, b = [], []
    for node in range(2, HIGH_FILL_NODES + 1):
        a.append(node)
        b.append(rng.randint(1, node - 1))
    while len(a) < HIGH_FILL_BRANCHES:
        x, y = rng.randint(1, HIGH_FILL_NODES), rng.randint(1, HIGH_FILL_NODES)
        if x != y:
            a.append(x)
            b.append(y)
    resistance = [round(rng.uniform(0.1, 10.0), 3) for _ in a]
    return json.dumps({"frequency": 0, "elements": [
        {"type": "voltage_source", "id": "v", "pos": "1", "neg": "0", "voltage": 230},
        {"type": "resistor", "id": "ground", "a": "2", "b": "0", "resistance": 5},
        {"type": "resistor_array", "id": "mesh", "a": a, "b": b, "resistance": resistance}]}).encode()


def costly_shapes(rng: random.Random, counts: dict[str, int]) -> list[tuple[str, str, str, bytes, dict[str, str]]]:
    """``counts[kind]`` requests of each costly shape sent through the HTTP client (slow headers run apart)."""
    variants = {
        "long-strings": _long_strings,
        "nesting-500": _nesting_500,
        "empty-arrays": lambda: [("empty-arrays", "POST", "/v1/networks/solve", _empty_arrays(), _JSON)],
        "high-fill": lambda: [("high-fill", "POST", "/v1/networks/solve", _high_fill(rng), _JSON) for _ in range(3)],
    }
    items = []
    for kind, make in variants.items():
        if counts.get(kind, 0) > 0:
            items += list(itertools.islice(itertools.cycle(make()), counts[kind]))
    rng.shuffle(items)
    return items


def slow_headers(port: int, remaining: list[int], tally: Tally) -> None:
    """Open connections that trickle a header block byte by byte until ``remaining`` is spent; each must be cut
    by the header timeout (408, or closed) within a few timeouts."""
    head = b"GET /healthz HTTP/1.1\r\nHost: x\r\n" + b"x-trickle: " + b"t" * 10_000
    while True:
        with tally.lock:
            if remaining[0] <= 0:
                return
            remaining[0] -= 1
        started = time.monotonic()
        reply = b""
        try:
            with socket.create_connection(("127.0.0.1", port), timeout=HEADER_TIMEOUT_S * 5) as sock:
                sock.settimeout(0.1)
                for byte in itertools.cycle(head[i:i + 1] for i in range(len(head))):
                    if time.monotonic() - started > HEADER_TIMEOUT_S * 3:
                        break
                    try:
                        sock.sendall(byte)
                        reply = sock.recv(300)
                    except TimeoutError:
                        continue
                    except OSError:
                        break
                    break  # an answer, or b"" when the server closed the connection
        except OSError as exc:
            tally.fail(f"slow headers: could not connect ({exc!r})")
            continue
        held = time.monotonic() - started
        status = reply.split(b" ", 2)[1].decode() if reply.startswith(b"HTTP/1.1 ") else "closed"
        with tally.lock:
            tally.slow_headers[status] += 1
            tally.hostile["slow-headers"] += 1
        if held > HEADER_TIMEOUT_S * 2.5 or status not in ("408", "closed"):
            tally.fail(f"slow headers held {held:.1f} s, answered {reply[:100]!r}")


def poll_healthz(base: str, stop: threading.Event, tally: Tally) -> None:
    """Time GET /healthz every HEALTHZ_EVERY_S on a connection of its own, throughout the run."""
    with httpx.Client(base_url=base, timeout=30) as probe:
        while not stop.is_set():
            started = time.perf_counter()
            try:
                status = probe.get("/healthz").status_code
            except httpx.HTTPError as exc:
                status = repr(exc)
            tally.healthz_s[tally.phase].append(time.perf_counter() - started)
            if status != 200:
                tally.fail(f"/healthz answered {status}")
            stop.wait(HEALTHZ_EVERY_S)


def sample_rss(server: psutil.Process, stop: threading.Event, tally: Tally) -> None:
    while not stop.wait(0.2):
        try:
            tally.rss_peak = max(tally.rss_peak, rss(server))
        except psutil.NoSuchProcess:
            return


def _percentile(values: list[float], fraction: float) -> float:
    ordered = sorted(values)
    return ordered[min(len(ordered) - 1, int(fraction * len(ordered)))] if ordered else float("nan")


# --------------------------------------------------------------------------- the run

@dataclass
class Tally:
    hostile: Counter = field(default_factory=Counter)
    statuses: Counter = field(default_factory=Counter)
    valid: Counter = field(default_factory=Counter)
    failures: list[str] = field(default_factory=list)
    slow_bodies: Counter = field(default_factory=Counter)
    slow_headers: Counter = field(default_factory=Counter)
    healthz_s: dict[str, list[float]] = field(default_factory=lambda: {"classic": [], "shapes": []})
    phase: str = "classic"  # which part of the run /healthz is timed in
    rss_peak: int = 0
    lock: threading.Lock = field(default_factory=threading.Lock)

    def fail(self, message: str) -> None:
        with self.lock:
            if len(self.failures) < 50:
                self.failures.append(message)


def _free_port() -> int:
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


def start_server(log: Path, settings: dict[str, str] | None = None) -> tuple[subprocess.Popen, str]:
    """``python -m service`` on a free 127.0.0.1 port, once /readyz says 200; ``settings`` are AMPLINE_* values
    (by default this run's: short body and header timeouts, so slow clients end quickly)."""
    if settings is None:
        settings = {"AMPLINE_BODY_TIMEOUT_S": str(BODY_TIMEOUT_S), "AMPLINE_HEADER_TIMEOUT_S": str(HEADER_TIMEOUT_S)}
    port = _free_port()
    env = {**os.environ, "AMPLINE_HOST": "127.0.0.1", "AMPLINE_PORT": str(port), "AMPLINE_LOG_LEVEL": "warning",
           **settings}
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


def stop_server(process: subprocess.Popen) -> None:
    if process.poll() is None:
        process.send_signal(signal.SIGTERM)
        try:
            process.wait(20)
        except subprocess.TimeoutExpired:
            process.kill()
            process.wait()


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
            tally.fail(f"slow body: no 408 within {BODY_TIMEOUT_S * 3} s of trickling, got {reply[:100]!r}")


def rss(process: psutil.Process) -> int:
    """Resident memory of the server and its children (uvicorn may run workers as children)."""
    total = process.memory_info().rss
    for child in process.children(recursive=True):
        try:
            total += child.memory_info().rss
        except psutil.NoSuchProcess:
            pass
    return total


def run(hostile: int, seed: int = 7, shapes: dict[str, int] | None = None) -> dict:
    """``hostile`` requests of the classic mix, then ``shapes[kind]`` of each costly shape (none by default),
    every few of them a round of valid requests, with /healthz timed and the server's memory sampled throughout."""
    shapes = {kind: n for kind, n in (shapes or {}).items() if n > 0}
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
        watch_stop = threading.Event()
        watchers = [threading.Thread(target=poll_healthz, args=(base, watch_stop, tally), daemon=True),
                    threading.Thread(target=sample_rss, args=(server, watch_stop, tally), daemon=True)]
        try:
            with httpx.Client(base_url=base, timeout=60) as http:
                first: dict[str, dict] = {}
                for name, (path, body) in VALID.items():
                    answer = http.post(path, json=body)
                    answer.raise_for_status()
                    first[name] = answer.json()
                # Warm-up: every kind of request once or twice, then a few hundred of the run's own mix with the
                # slow bodies already trickling, so that start-up allocations (decoders, caches, the allocator's
                # arenas for 10 MB bodies arriving beside slow ones) are in the baseline and the measurement is of
                # growth under sustained load. Answers during the warm-up are checked like the rest.
                for item in hostile_http(rng) * 2 + costly_shapes(rng, {kind: 1 for kind in shapes}):
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

                def send_costly_shapes() -> None:
                    """The costly shapes in a shuffled mix with valid rounds, slow-header connections beside them."""
                    remaining = [shapes.get("slow-headers", 0)]
                    trickles = [threading.Thread(target=slow_headers, args=(port, remaining, tally), daemon=True)
                                for _ in range(min(SLOW_HEADER_CONNECTIONS, remaining[0]))]
                    for thread in trickles:
                        thread.start()
                    for k, item in enumerate(costly_shapes(rng, shapes)):
                        send_hostile(http, base, item, tally)
                        tally.hostile[item[0]] += 1
                        if (k + 1) % VALID_EVERY == 0:
                            send_valid(http, tally, first)
                        if process.poll() is not None:
                            tally.fail(f"the server exited ({process.returncode}) during the costly shapes")
                            return
                    while any(thread.is_alive() for thread in trickles):  # valid traffic while the last trickle
                        send_valid(http, tally, first)
                        time.sleep(0.1)

                alive = send_hostile_mix(WARMUP_HOSTILE, counted=False)
                rss_start = rss(server)
                tally.rss_peak = rss_start
                started = time.monotonic()
                for thread in watchers:
                    thread.start()
                if alive:
                    alive = send_hostile_mix(hostile, counted=True)
                if alive and shapes:
                    tally.phase = "shapes"
                    send_costly_shapes()
                stop.set()
                for thread in slow:
                    thread.join(BODY_TIMEOUT_S * 6)
                send_valid(http, tally, first)  # still answering at the end
                duration = time.monotonic() - started
                rss_end = rss(server)
                watch_stop.set()
                for thread in watchers:
                    thread.join(30)
        finally:
            stop.set()
            watch_stop.set()
            stop_server(process)
        server_log = log.read_text(errors="replace")
    growth = rss_end / rss_start - 1.0
    # The growth check finds leaks in the classic mix; the costly shapes leave the allocator's arenas and a
    # factorisation's pages grown (not a leak), so with them the bound is RSS_LIMIT_BYTES at every sample.
    if growth >= MEMORY_GROWTH_LIMIT and not shapes:
        tally.fail(f"resident memory grew {growth:.1%} (limit {MEMORY_GROWTH_LIMIT:.0%})")
    if not tally.slow_bodies:
        tally.fail("no slow body completed")
    if "Traceback" in server_log or "unhandled_exception" in server_log:
        tally.fail("the server logged an unhandled exception:\n" + server_log[-2000:])
    five_xx = sum(n for status, n in tally.statuses.items() if str(status).removeprefix("raw-").startswith("5"))
    polls = tally.healthz_s["classic"] + tally.healthz_s["shapes"]
    healthz_p99 = _percentile(polls, 0.99)
    verdicts = {
        f"/healthz p99 {1000 * healthz_p99:.1f} ms < {1000 * HEALTHZ_P99_LIMIT_S:.0f} ms": healthz_p99 < HEALTHZ_P99_LIMIT_S,
        f"server RSS peak {tally.rss_peak / 2**20:.1f} MiB < {RSS_LIMIT_BYTES / 2**20:.0f} MiB":
            tally.rss_peak < RSS_LIMIT_BYTES,
        f"5xx answers {five_xx} == 0": five_xx == 0,
    }
    healthz = {phase: {"polls": len(times), "p50_ms": round(1000 * _percentile(times, 0.50), 2),
                       "p99_ms": round(1000 * _percentile(times, 0.99), 2),
                       "max_ms": round(1000 * max(times, default=float("nan")), 2)}
               for phase, times in tally.healthz_s.items() if times}
    for line, passed in verdicts.items():
        if not passed:
            tally.fail(line)
    shape_flags = "".join(f" --{kind} {shapes.get(kind, 0)}" for kind in SHAPES)
    return {
        "command": f"python load_tests/survival.py --hostile {hostile} --seed {seed}{shape_flags}",
        "hostile_requests": sum(tally.hostile.values()),
        "hostile_by_kind": dict(sorted(tally.hostile.items())),
        "hostile_answers": {str(k): v for k, v in sorted(tally.statuses.items(), key=lambda kv: str(kv[0]))},
        "answers_5xx": five_xx,
        "slow_bodies": dict(tally.slow_bodies),
        "slow_headers": dict(tally.slow_headers),
        "valid_requests": sum(tally.valid.values()),
        "valid_wrong": tally.valid["wrong"],
        "healthz_p99_ms": round(1000 * healthz_p99, 2),
        "healthz_by_phase": healthz,  # classic: during the classic mix; shapes: during the costly shapes
        "rss_start_mib": round(rss_start / 2**20, 1),
        "rss_peak_mib": round(tally.rss_peak / 2**20, 1),
        "rss_end_mib": round(rss_end / 2**20, 1),
        "rss_growth_pct": round(100 * growth, 2),
        "verdicts": [("PASS " if passed else "FAIL ") + line for line, passed in verdicts.items()],
        "duration_s": round(duration, 1),
        "failures": tally.failures,
        "ok": not tally.failures,
    }


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n", 1)[0])
    parser.add_argument("--hostile", type=int, default=10_000, help="hostile requests of the classic mix (default 10,000)")
    for kind in SHAPES:
        parser.add_argument(f"--{kind}", type=int, default=1000, help=f"{kind} requests (default 1,000)")
    parser.add_argument("--seed", type=int, default=7)
    args = parser.parse_args()
    shapes = {kind: getattr(args, kind.replace("-", "_")) for kind in SHAPES}
    summary = run(args.hostile, args.seed, shapes)
    print(json.dumps(summary, indent=2))
    for line in summary["verdicts"]:
        print(line, file=sys.stderr)
    return 0 if summary["ok"] else 1


if __name__ == "__main__":
    sys.exit(main())
