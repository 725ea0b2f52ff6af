"""Load and soak tests of a real server (a script, not a test): ``make load``, ``make soak``.

    .venv/bin/python load_tests/load.py run                  # make load: capacity per endpoint, then the mix
    .venv/bin/python load_tests/load.py soak                 # make soak: the mix for 6 minutes, server RSS
    .venv/bin/python load_tests/load.py run --duration 20 --users 8 --mix-users 10 --pacing 0.5 --workers 1
    .venv/bin/python load_tests/load.py run --entries "GET /v1/meta" --set metrics_enabled=false

It starts ``python -m service`` on a free 127.0.0.1 port (load_tests/benchlib.BenchServer, as ``make run``
starts it, with the production log level: one JSON line per request, sent to /dev/null), runs locust
headless (load_tests/locustfile.py) for a fixed time per phase, stops the server, and prints tables.
Traffic goes to the loopback address only; every phase ends by itself.

``run`` phases, all in the same run against the same server:

1. capacity: each entry of load_tests/scenarios.py alone, ``--users`` users back to back (no think time),
   and the bare endpoint GET /healthz alone the same way: requests/s, p50/p95/p99, errors, the ratios to the
   bare endpoint, and the server's CPU time per request (from /proc);
2. the realistic mix at a fixed offered load (``--mix-users`` users, one request every ``--pacing`` seconds
   each), and the bare endpoint alone at the same load: the same columns, latency ratios to the bare one.

``soak``: the bare endpoint briefly, then the mix at the fixed load for ``--duration`` seconds, sampling the
server's resident memory (VmRSS of the server process and its children, /proc) every few seconds: RSS after
the warm-up, at the end, and the ratio.

The first ``--warmup`` seconds of each phase are left out of every figure.  Latencies are locust's client-side
times (request sent to response read), exact percentiles of every request (not locust's rounded ones).  The
client shares the machine with the server (on the 2-core machine, locust takes a good part of one core at
full rate), so the capacity figures are those of server and client together; the CPU columns say which used
what.  Targets are printed as met or not met; nothing here is asserted.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import tempfile
import threading
import time
from dataclasses import dataclass
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from benchlib import BenchServer  # noqa: E402
from scenarios import BARE, ENTRIES, active_entries  # noqa: E402

TICKS = os.sysconf("SC_CLK_TCK")
P99_TARGET_MS = 50.0
P99_TARGET_ROUTES = ("/v1/lead-chains/analyse", "/v1/conductors/size", "/v1/conductors/verify")


# --------------------------------------------------------------------------- /proc


def _tree(pid: int) -> list[int]:
    """The process and its descendants (uvicorn's worker processes when AMPLINE_WORKERS > 1)."""
    found, pending = [], [pid]
    while pending:
        p = pending.pop()
        found.append(p)
        try:
            for task in os.listdir(f"/proc/{p}/task"):
                with open(f"/proc/{p}/task/{task}/children") as fh:
                    pending.extend(int(c) for c in fh.read().split())
        except OSError:
            continue
    return found


def rss_mib(pid: int) -> float:
    total_kib = 0
    for p in _tree(pid):
        try:
            with open(f"/proc/{p}/status") as fh:
                for line in fh:
                    if line.startswith("VmRSS:"):
                        total_kib += int(line.split()[1])
        except OSError:
            pass
    return total_kib / 1024


def cpu_seconds(pid: int) -> float:
    total = 0
    for p in _tree(pid):
        try:
            with open(f"/proc/{p}/stat") as fh:
                fields = fh.read().rsplit(")", 1)[1].split()
            total += int(fields[11]) + int(fields[12])  # utime, stime
        except OSError:
            pass
    return total / TICKS


def _children_cpu() -> float:
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


# --------------------------------------------------------------------------- one phase


@dataclass
class Row:
    name: str
    count: int
    errors: int
    rps: float
    p50: float
    p95: float
    p99: float
    server_cpu_ms: float | None = None  # server CPU per request (only when the row is alone in its phase)


@dataclass
class Phase:
    label: str
    rows: list[Row]
    seconds: float
    server_cpu_pct: float
    client_cpu_pct: float
    rss_samples: list[tuple[float, float]]


def run_phase(server: BenchServer, label: str, user_class: str, entries: list[str] | None, users: int,
              pacing: float, duration: float, warmup: float, sample_rss_every: float = 0.0) -> Phase:
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "records.json"
        env = {**os.environ, "AMPLINE_LOAD_OUT": str(out), "AMPLINE_LOAD_PACING": str(pacing)}
        if entries is not None:
            env["AMPLINE_LOAD_ENTRIES"] = ",".join(entries)
        cmd = [sys.executable, "-m", "locust", "-f", str(HERE / "locustfile.py"), "--headless",
               "-u", str(users), "-r", str(users), "-t", f"{duration:g}s", "--stop-timeout", "10",
               "--host", server.base, "--only-summary", "--loglevel", "ERROR", "--exit-code-on-error", "0",
               user_class]
        pid = server.process.pid
        samples: list[tuple[float, float]] = []
        stop = threading.Event()

        def sampler() -> None:
            started = time.monotonic()
            while not stop.wait(sample_rss_every):
                samples.append((time.monotonic() - started, rss_mib(pid)))

        cpu0, child0, t0 = cpu_seconds(pid), _children_cpu(), time.monotonic()
        thread = threading.Thread(target=sampler, daemon=True) if sample_rss_every else None
        if thread:
            samples.append((0.0, rss_mib(pid)))
            thread.start()
        done = subprocess.run(cmd, env=env, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True,
                              timeout=duration + 120)
        elapsed = time.monotonic() - t0
        stop.set()
        if thread:
            thread.join()
            samples.append((elapsed, rss_mib(pid)))
        server_cpu, client_cpu = cpu_seconds(pid) - cpu0, _children_cpu() - child0
        if done.returncode != 0 or not out.exists():
            raise RuntimeError(f"locust failed ({done.returncode}):\n{done.stdout[-3000:]}")
        records = json.loads(out.read_text(encoding="utf-8"))
    rows = summarise(records, warmup)
    if len(rows) == 1:  # alone in its phase: the server's CPU is all this row's
        rows[0].server_cpu_ms = 1000 * server_cpu / max(1, sum(1 for _ in records))
    return Phase(label, rows, elapsed, 100 * server_cpu / elapsed, 100 * client_cpu / elapsed, samples)


def summarise(records: list, warmup: float) -> list[Row]:
    if not records:
        return []
    start = min(r[1] for r in records) + warmup
    kept = [r for r in records if r[1] >= start]
    end = max(r[1] for r in kept) if kept else start
    window = max(end - start, 1e-9)
    rows = []
    for name in dict.fromkeys(r[0] for r in kept):
        mine = [r for r in kept if r[0] == name]
        lat = np.asarray([r[2] for r in mine])
        p50, p95, p99 = np.percentile(lat, [50, 95, 99])
        rows.append(Row(name, len(mine), sum(1 for r in mine if r[3]), len(mine) / window, p50, p95, p99))
    return rows


# --------------------------------------------------------------------------- tables


def _f(x: float | None, digits: int = 1) -> str:
    return "-" if x is None else f"{x:.{digits}f}"


def capacity_table(phases: list[Phase], bare: Row) -> str:
    lines = ["| endpoint (alone) | req/s | p50 ms | p95 ms | p99 ms | errors | req/s / bare | p50 / bare | server CPU ms/req |",
             "|---|---:|---:|---:|---:|---:|---:|---:|---:|"]
    for ph in phases:
        for r in ph.rows:
            lines.append(f"| {r.name} | {r.rps:.0f} | {_f(r.p50)} | {_f(r.p95)} | {_f(r.p99)} | {r.errors}/{r.count} | "
                         f"{r.rps / bare.rps:.2f} | {r.p50 / bare.p50:.1f} | {_f(r.server_cpu_ms, 2)} |")
    return "\n".join(lines)


def mix_table(mix: Phase, bare: Row) -> str:
    lines = ["| endpoint (in the mix) | req/s | p50 ms | p95 ms | p99 ms | errors | p50 / bare | p99 / bare |",
             "|---|---:|---:|---:|---:|---:|---:|---:|",
             f"| {bare.name} (alone, same load) | {bare.rps:.1f} | {_f(bare.p50)} | {_f(bare.p95)} | {_f(bare.p99)} | "
             f"{bare.errors}/{bare.count} | 1.0 | 1.0 |"]
    order = {e.name: k for k, e in enumerate(ENTRIES)}
    for r in sorted(mix.rows, key=lambda r: order.get(r.name, 99)):
        lines.append(f"| {r.name} | {r.rps:.1f} | {_f(r.p50)} | {_f(r.p95)} | {_f(r.p99)} | {r.errors}/{r.count} | "
                     f"{r.p50 / bare.p50:.1f} | {r.p99 / bare.p99:.1f} |")
    total = sum(r.count for r in mix.rows)
    lines.append(f"| all | {sum(r.rps for r in mix.rows):.1f} | | | | {sum(r.errors for r in mix.rows)}/{total} | | |")
    return "\n".join(lines)


def cpu_note(ph: Phase) -> str:
    return (f"{ph.label}: {ph.seconds:.0f} s, server CPU {ph.server_cpu_pct:.0f} % of a core, "
            f"locust CPU {ph.client_cpu_pct:.0f} %")


def verdicts(capacity: list[Phase] | None, bare_cap: Row | None, mix: Phase, all_phases: list[Phase]) -> list[str]:
    out = []
    errors = sum(r.errors for ph in all_phases for r in ph.rows)
    out.append(f"- zero errors: {'met' if errors == 0 else f'NOT met ({errors} errors)'}")
    by_name = {e.name: e for e in ENTRIES}
    for r in mix.rows:
        e = by_name.get(r.name)
        if e and e.path in P99_TARGET_ROUTES:
            ok = r.p99 < P99_TARGET_MS
            out.append(f"- p99 under {P99_TARGET_MS:.0f} ms in the mix, {r.name}: {r.p99:.1f} ms, {'met' if ok else 'NOT met'}")
    for path in P99_TARGET_ROUTES:
        if not any(by_name.get(r.name) and by_name[r.name].path == path for r in mix.rows):
            out.append(f"- p99 target for {path}: not measured (entry pending or absent)")
    if capacity and bare_cap:
        for ph in capacity:
            for r in ph.rows:
                e = by_name.get(r.name)
                if e and e.calculation:
                    ratio = r.rps / bare_cap.rps
                    out.append(f"- at least half the bare throughput, {r.name}: {ratio:.2f}, {'met' if ratio >= 0.5 else 'NOT met'}")
    return out


# --------------------------------------------------------------------------- main


def served_paths(server: BenchServer) -> set[str]:
    document = server.client.get(server.base + "/schema/openapi.json").json()
    return set(document.get("paths", {}))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("mode", choices=["run", "soak"])
    ap.add_argument("--duration", type=float, help="seconds per capacity phase (run, default 15) or of the soak (default 360)")
    ap.add_argument("--mix-duration", type=float, default=45.0, help="seconds of the mix phase (run)")
    ap.add_argument("--users", type=int, default=8, help="users of each capacity phase, back to back")
    ap.add_argument("--mix-users", type=int, default=10, help="users of the mix phase")
    ap.add_argument("--pacing", type=float, default=0.5, help="seconds between one mix user's request starts")
    ap.add_argument("--warmup", type=float, help="seconds left out at the start of each phase (default 3; soak 60)")
    ap.add_argument("--workers", type=int, default=1, help="AMPLINE_WORKERS of the server")
    ap.add_argument("--entries", help="comma-separated entry names (default: all not pending)")
    ap.add_argument("--set", action="append", default=[], metavar="NAME=VALUE",
                    help="a server setting, e.g. --set metrics_enabled=false (AMPLINE_METRICS_ENABLED)")
    args = ap.parse_args()
    duration = args.duration or (15.0 if args.mode == "run" else 360.0)
    warmup = args.warmup if args.warmup is not None else (3.0 if args.mode == "run" else 60.0)

    extra = dict(s.split("=", 1) for s in args.set)
    server = BenchServer(**{"log_level": "info", "workers": str(args.workers), **extra})
    try:
        paths = served_paths(server)
        chosen = active_entries(args.entries.split(",") if args.entries else None)
        skipped = [e for e in chosen if e.path not in paths]
        chosen = [e for e in chosen if e.path in paths]
        print(f"server: python -m service, AMPLINE_WORKERS={args.workers}, "
              + "".join(f"AMPLINE_{k.upper()}={v}, " for k, v in extra.items()) + f"{server.base}; "
              f"{os.cpu_count()} CPUs; python {sys.version.split()[0]}")
        for e in ENTRIES:
            if e.pending:
                print(f"skipped {e.name}: {e.pending} (load_tests/scenarios.py)")
        for e in skipped:
            print(f"skipped {e.name}: route not served")
        names = [e.name for e in chosen]
        offered = args.mix_users / args.pacing
        phases: list[Phase] = []

        def phase(*a, **kw) -> Phase:
            ph = run_phase(server, *a, **kw)
            phases.append(ph)
            print(cpu_note(ph), flush=True)
            return ph

        if args.mode == "run":
            bare_cap = phase("capacity: " + BARE, "Bare", None, args.users, 0, duration, warmup).rows[0]
            capacity = [phase("capacity: " + n, "Mix", [n], args.users, 0, duration, warmup) for n in names]
            bare_load = phase(f"load: {BARE}", "Bare", None, args.mix_users, args.pacing, duration, warmup).rows[0]
            mix = phase("load: mix", "Mix", names, args.mix_users, args.pacing, args.mix_duration, warmup)
            print(f"\nCapacity: each endpoint alone, {args.users} users back to back, {duration:g} s each "
                  f"(first {warmup:g} s left out)\n")
            print(capacity_table([phases[0], *capacity], bare_cap))
            print(f"\nThe mix at a fixed offered load: {args.mix_users} users, one request each every "
                  f"{args.pacing:g} s (offered {offered:.0f} req/s), {args.mix_duration:g} s; weights "
                  + ", ".join(f"{e.name} {e.weight}" for e in chosen) + "\n")
            print(mix_table(mix, bare_load))
            print("\nTargets (measured, not asserted):")
            print("\n".join(verdicts(capacity, bare_cap, mix, phases)))
        else:
            bare_load = phase(f"load: {BARE}", "Bare", None, args.mix_users, args.pacing, 20.0, 3.0).rows[0]
            mix = phase("soak: mix", "Mix", names, args.mix_users, args.pacing, duration, warmup, sample_rss_every=5.0)
            print(f"\nSoak: the mix at {offered:.0f} req/s offered ({args.mix_users} users, pacing {args.pacing:g} s) "
                  f"for {duration:g} s (first {warmup:g} s left out of the latencies)\n")
            print(mix_table(mix, bare_load))
            samples = mix.rss_samples
            after_warmup = min(samples, key=lambda s: abs(s[0] - warmup))
            end = samples[-1]
            peak = max(s[1] for s in samples)
            ratio = end[1] / after_warmup[1]
            print(f"\nServer RSS (VmRSS, /proc): {samples[0][1]:.1f} MiB at the start, {after_warmup[1]:.1f} MiB after "
                  f"the warm-up ({after_warmup[0]:.0f} s), {end[1]:.1f} MiB at the end ({end[0]:.0f} s), "
                  f"peak {peak:.1f} MiB; end / after warm-up = {ratio:.3f}")
            print("RSS every 30 s: " + ", ".join(f"{t:.0f} s {m:.1f}" for t, m in samples if round(t) % 30 < 5))
            print("\nTargets (measured, not asserted):")
            print("\n".join(verdicts(None, None, mix, phases)))
            print(f"- memory at the end within 10 % of after the warm-up: {ratio:.3f}, "
                  f"{'met' if abs(ratio - 1) <= 0.10 else 'NOT met'}")
    finally:
        server.close()


if __name__ == "__main__":
    main()
