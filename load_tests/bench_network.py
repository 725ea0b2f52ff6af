"""Benchmark of the network solver on N x N resistor grids (a script, not a test).

    /tmp/v/bin/python load_tests/bench_network.py            # 1k .. 100k nodes
    /tmp/v/bin/python load_tests/bench_network.py --big      # adds the 1M-node grid

Grid: 4-neighbour resistors of random value (fixed seed), a 10 V source from
the first corner to the reference, the opposite corner *is* the reference
node, and a few current-source loads drawing 10 mA each to the reference.

Columns, all measured in the same run on the same network:
  (a)  solve() in-process from the typed model (one ResistorArray + scalar
       sources), results and checks included;
  (a2) the same with one Resistor dataclass per branch (sizes <= 100k), to
       show what a per-element model costs;
  (b)  the HTTP path: hook ``http_solve`` below, None until the HTTP layer
       exists (the lead fills it in);
  (c)  the floor: the same MNA matrix built straight from numpy arrays and
       solved with scipy alone (splu, same ordering);
  (d)  ngspice -b with .op on the same netlist (sizes up to ~10k nodes).
Medians over several repeats at small sizes, fewer at large ones.
"""

from __future__ import annotations

import argparse
import os
import resource
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))

from service.core.network import CurrentSource, Network, Resistor, VoltageSource, solve  # noqa: E402

# (b) hook: set to a function taking a Network and returning its voltages
# through the HTTP service (e.g. a client posting the JSON form).  Timed like (a).
http_solve: Callable[[Network], object] | None = None

LOADS = 5
V_SOURCE = 10.0
I_LOAD = 0.01


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
    ap.add_argument("--sides", type=int, nargs="*", default=[32, 100, 200, 316])
    args = ap.parse_args()
    sides = list(args.sides) + ([1000] if args.big else [])
    print(f"{'nodes':>9} {'(a) s':>9} {'(a2) s':>9} {'(b) s':>7} {'(c) s':>9} {'a/c':>6} {'(d) s':>8} {'d/a':>7}  max|dv|")
    for side in sides:
        nodes = side * side - 1
        a, b, r, loads = grid_arrays(side)
        repeats = 7 if nodes <= 20_000 else 3 if nodes <= 200_000 else 2
        net = typed_network(a, b, r, loads)
        # (c) and (a) alternate so that neither always runs on a cold heap.
        t_c_all, t_a_all = [], []
        for _ in range(repeats):
            t, x_raw = timed(lambda: raw_floor(a, b, r, loads, side * side), 1)
            t_c_all.append(t)
            t, sol = timed(lambda: solve(net), 1)
            t_a_all.append(t)
        t_c, t_a = statistics.median(t_c_all), statistics.median(t_a_all)
        v = sol.voltage_array()
        labels = np.array([int(s) for s in sol.node_names()]) if nodes <= 200_000 else np.arange(1, side * side)
        dv = float(np.max(np.abs(v - x_raw[labels - 1])))
        t_a2 = None
        if nodes <= 100_000:
            net2 = per_element_network(a, b, r, loads)
            t_a2, _ = timed(lambda: solve(net2), max(1, repeats // 2))
        t_b = timed(lambda: http_solve(net), repeats)[0] if http_solve else None
        t_d = run_ngspice(ngspice_netlist(a, b, r, loads)) if nodes <= 12_000 else None
        fmt = lambda t: f"{t:9.4f}" if t is not None else f"{'-':>9}"
        print(
            f"{nodes:9d} {fmt(t_a)} {fmt(t_a2)} {fmt(t_b)[2:]} {fmt(t_c)} {t_a / t_c:6.2f} "
            f"{fmt(t_d)[1:]} {(t_d / t_a if t_d else float('nan')):7.1f}  {dv:.1e}",
            flush=True,
        )
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"peak RSS of this process: {rss:.0f} MiB" + (" (dominated by the 1M-node LU factors)" if args.big else ""))


if __name__ == "__main__":
    main()
