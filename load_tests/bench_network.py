"""Benchmark of the network solver on N x N resistor grids (a script, not a test).

    .venv/bin/python load_tests/bench_network.py            # 1k .. 100k nodes  (or: make bench)
    .venv/bin/python load_tests/bench_network.py --big      # adds the 1M-node grid
    .venv/bin/python load_tests/bench_network.py --no-http  # skip column (b)

Grid: 4-neighbour resistors of random value (fixed seed), a 10 V source from
the first corner to the reference, the opposite corner *is* the reference
node, and a few current-source loads drawing 10 mA each to the reference.

Columns, all measured in the same run on the same network:
  (a)  solve() in-process from the typed model (one ResistorArray + scalar
       sources), results and checks included;
  (a2) the same with one Resistor dataclass per branch (sizes <= 100k), to
       show what a per-element model costs;
  (b)  the whole HTTP path: the client encodes the compact JSON form
       (resistor_array) from the numpy arrays, POSTs it to a real uvicorn
       server (``python -m service`` on a free loopback port, started by this
       script) and decodes the answer (node voltages as columns);
  (c)  the floor: the same MNA matrix built straight from numpy arrays and
       solved with scipy alone (splu, same ordering);
  (d)  ngspice -b with .op on the same netlist (sizes up to ~10k nodes).
Every time is a median over several repeats (fewer at large sizes); the
ratios are of those medians.  max|dv| compares (a) and (b) with (c).
"""

from __future__ import annotations

import argparse
import os
import resource
import shutil
import signal
import socket
import statistics
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable

import msgspec
import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..")
sys.path.insert(0, ROOT)

from service.core.network import CurrentSource, Network, Resistor, VoltageSource, solve  # noqa: E402

LOADS = 5
V_SOURCE = 10.0
I_LOAD = 0.01


class HttpSolver:
    """Column (b): a real server in a subprocess and a keep-alive client."""

    def __init__(self, max_nodes: int) -> None:
        import httpx

        with socket.socket() as sock:
            sock.bind(("127.0.0.1", 0))
            port = sock.getsockname()[1]
        env = {**os.environ, "AMPLINE_HOST": "127.0.0.1", "AMPLINE_PORT": str(port), "AMPLINE_LOG_LEVEL": "warning",
               "AMPLINE_MAX_NETWORK_NODES": str(max_nodes + 10), "AMPLINE_MAX_NETWORK_ELEMENTS": str(3 * max_nodes),
               "AMPLINE_MAX_NETWORK_BODY_BYTES": str(max(64 * 1_048_576, 100 * max_nodes))}  # ~66 B/node
        self.process = subprocess.Popen([sys.executable, "-m", "service"], cwd=ROOT, env=env,
                                        stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        self.url = f"http://127.0.0.1:{port}/v1/networks/solve"
        self.client = httpx.Client(timeout=600)
        deadline = time.monotonic() + 30
        while True:
            try:
                if self.client.get(f"http://127.0.0.1:{port}/readyz").status_code == 200:
                    break
            except httpx.TransportError:
                if time.monotonic() > deadline:
                    self.close()
                    raise RuntimeError("the benchmark server did not start") from None
                time.sleep(0.05)

    def solve(self, a, b, r, load_nodes) -> dict:
        body = msgspec.json.encode({
            "frequency": 0,
            "elements": [
                {"type": "resistor_array", "id": "R", "a": a.tolist(), "b": b.tolist(), "resistance": r.tolist()},
                {"type": "voltage_source", "id": "V1", "pos": "1", "neg": "0", "voltage": V_SOURCE},
                *({"type": "current_source", "id": f"I{k}", "a": str(int(nd)), "b": "0", "current": I_LOAD}
                  for k, nd in enumerate(load_nodes)),
            ],
            "options": {"node_voltages": "columns"},
        })
        answer = self.client.post(self.url, content=body, headers={"content-type": "application/json"})
        if answer.status_code != 200:
            raise RuntimeError(f"HTTP {answer.status_code}: {answer.text[:300]}")
        return msgspec.json.decode(answer.content)

    def close(self) -> None:
        self.client.close()
        self.process.send_signal(signal.SIGTERM)
        self.process.wait(timeout=30)


def http_voltages(answer: dict) -> tuple[np.ndarray, np.ndarray]:
    """(labels, signed voltages) from a columns answer; DC angles are 0 or 180."""
    cols = answer["node_voltage_columns"]
    labels = np.asarray([int(n) for n in cols["nodes"]], dtype=np.int64)
    sign = np.where(np.asarray(cols["angle_deg"]) == 0.0, 1.0, -1.0)
    return labels, sign * np.asarray(cols["magnitude_v"])


def grid_arrays(n_side: int, seed: int = 1):
    """Edge arrays of an n_side x n_side grid; labels 1..n^2, far corner relabelled 0."""
    rng = np.random.default_rng(seed)
    lab = np.arange(1, n_side * n_side + 1, dtype=np.int64).reshape(n_side, n_side)
    lab[-1, -1] = 0  # the far corner is the reference node
    a = np.concatenate([lab[:, :-1].ravel(), lab[:-1, :].ravel()])
    b = np.concatenate([lab[:, 1:].ravel(), lab[1:, :].ravel()])
    r = rng.uniform(0.5, 2.0, a.size)
    load_nodes = rng.choice(np.arange(2, n_side * n_side), LOADS, replace=False)
    return a, b, r, load_nodes


def typed_network(a, b, r, load_nodes) -> Network:
    others = (VoltageSource("V1", "1", "0", V_SOURCE),) + tuple(
        CurrentSource(f"I{k}", str(int(nd)), "0", I_LOAD) for k, nd in enumerate(load_nodes)
    )
    return Network.from_arrays(a, b, r, others=others)


def per_element_network(a, b, r, load_nodes) -> Network:
    res = tuple(Resistor(f"R{k}", str(x), str(y), float(v)) for k, (x, y, v) in enumerate(zip(a.tolist(), b.tolist(), r)))
    base = typed_network(a[:0], b[:0], r[:0], load_nodes)
    return Network(elements=res + base.elements[1:])


def raw_floor(a, b, r, load_nodes, n_labels: int) -> np.ndarray:
    """The same MNA system straight from arrays: node label k -> row k-1, one source row."""
    n = n_labels - 1  # labels 1..n_labels-1 are unknowns, 0 is the reference
    g = 1.0 / r
    ia, ib = a - 1, b - 1  # reference -> -1
    diag = np.bincount(ia[ia >= 0], g[ia >= 0], n) + np.bincount(ib[ib >= 0], g[ib >= 0], n)
    both = (ia >= 0) & (ib >= 0)
    rows = np.concatenate([np.arange(n), ia[both], ib[both], [0, n]])
    cols = np.concatenate([np.arange(n), ib[both], ia[both], [n, 0]])
    vals = np.concatenate([diag, -g[both], -g[both], [1.0, 1.0]])
    mat = sp.csc_matrix((vals, (rows, cols)), shape=(n + 1, n + 1))
    rhs = np.zeros(n + 1)
    np.subtract.at(rhs, load_nodes - 1, I_LOAD)
    rhs[n] = V_SOURCE
    return spla.splu(mat, permc_spec="MMD_AT_PLUS_A").solve(rhs)


def ngspice_netlist(a, b, r, load_nodes) -> str:
    lines = ["* resistor grid"]
    lines += [f"R{k} {x} {y} {v!r}" for k, (x, y, v) in enumerate(zip(a.tolist(), b.tolist(), r.tolist()))]
    lines.append(f"V1 1 0 DC {V_SOURCE}")
    lines += [f"I{k} {int(nd)} 0 DC {I_LOAD}" for k, nd in enumerate(load_nodes)]
    lines += [".op", ".end", ""]
    return "\n".join(lines)


def timed(fn: Callable[[], object], repeats: int) -> tuple[float, object]:
    times, out = [], None
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times), out


def run_ngspice(netlist: str) -> float | None:
    exe = shutil.which("ngspice")
    if exe is None:
        return None
    with tempfile.TemporaryDirectory() as tmp:
        path = os.path.join(tmp, "grid.cir")
        with open(path, "w") as fh:
            fh.write(netlist)
        t0 = time.perf_counter()
        subprocess.run([exe, "-b", path], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=True, timeout=120)
        return time.perf_counter() - t0


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--big", action="store_true", help="also solve the 1000 x 1000 (1M-node) grid")
    ap.add_argument("--no-http", action="store_true", help="skip column (b)")
    ap.add_argument("--sides", type=int, nargs="*", default=[32, 100, 200, 316])
    args = ap.parse_args()
    sides = list(args.sides) + ([1000] if args.big else [])
    http = None if args.no_http else HttpSolver(max(sides) ** 2)
    print(f"{'nodes':>9} {'(a) s':>8} {'(a2) s':>8} {'(b) s':>8} {'(c) s':>8} {'(d) s':>8} "
          f"{'a/c':>6} {'b/c':>6} {'d/a':>7}  max|dv| a, b")
    try:
        for side in sides:
            row(side, http)
    finally:
        if http is not None:
            http.close()
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"peak RSS of this process: {rss:.0f} MiB" + (" (dominated by the 1M-node LU factors)" if args.big else ""))


def row(side: int, http: HttpSolver | None) -> None:
    nodes = side * side - 1
    a, b, r, loads = grid_arrays(side)
    repeats = 7 if nodes <= 20_000 else 3 if nodes <= 200_000 else 2
    net = typed_network(a, b, r, loads)
    # (c), (a) and (b) alternate so that none always runs on a cold heap.
    t_c_all, t_a_all, t_b_all = [], [], []
    answer = None
    for _ in range(repeats):
        t, x_raw = timed(lambda: raw_floor(a, b, r, loads, side * side), 1)
        t_c_all.append(t)
        t, sol = timed(lambda: solve(net), 1)
        t_a_all.append(t)
        if http is not None:
            t, answer = timed(lambda: http.solve(a, b, r, loads), 1)
            t_b_all.append(t)
    t_c, t_a = statistics.median(t_c_all), statistics.median(t_a_all)
    t_b = statistics.median(t_b_all) if t_b_all else None
    v = sol.voltage_array()
    labels = np.array([int(s) for s in sol.node_names()]) if nodes <= 200_000 else np.arange(1, side * side)
    dv = float(np.max(np.abs(v - x_raw[labels - 1])))
    dv_b = None
    if answer is not None:
        lab_b, v_b = http_voltages(answer)
        dv_b = float(np.max(np.abs(v_b - x_raw[lab_b - 1])))
    t_a2 = None
    if nodes <= 100_000:
        net2 = per_element_network(a, b, r, loads)
        t_a2, _ = timed(lambda: solve(net2), max(1, repeats // 2))
    t_d = run_ngspice(ngspice_netlist(a, b, r, loads)) if nodes <= 12_000 else None

    def fmt(t: float | None, width: int = 8, digits: int = 4) -> str:
        return f"{t:{width}.{digits}f}" if t is not None else f"{'-':>{width}}"

    print(
        f"{nodes:9d} {fmt(t_a)} {fmt(t_a2)} {fmt(t_b)} {fmt(t_c)} {fmt(t_d)} "
        f"{fmt(t_a / t_c, 6, 2)} {fmt(t_b / t_c if t_b else None, 6, 2)} {fmt(t_d / t_a if t_d else None, 7, 1)}  "
        f"{dv:.1e}, " + (f"{dv_b:.1e}" if dv_b is not None else "-"),
        flush=True,
    )


if __name__ == "__main__":
    main()
