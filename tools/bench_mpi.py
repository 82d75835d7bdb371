#!/usr/bin/env python
"""Parallel scaling benchmark of wind2d MHD (PLM + HLLD + CT) with MPI ranks.

Two measurements, in the same run, each configuration launched as its own
``mpiexec -n N`` subprocess:

* **weak scaling**: a fixed tile per rank (``--tile``, default 256 x 256 cells):
  256 x 256 on 1 rank, 512 x 256 on 2, 512 x 512 on 4, 1024 x 512 on 8, ... (the
  global grid is chosen so that ``wind2d.grid.tiles.decompose`` cuts it into
  exactly one tile per rank).  Efficiency at N ranks is

      (zone updates / s per rank at N) / (zone updates / s at 1 rank);

* **strong scaling**: a fixed grid (``--strong-size``, default 512 x 512) on
  every rank count; efficiency is ``t1 / (N tN)``.

The problem is the one of ``tools/bench_core.py`` (a smooth density wave
advected along the diagonal of a uniform periodic Cartesian box, with an
in-plane field at 30 degrees and a weak out-of-plane field), so that every
cell costs the same and no rank waits for another because of the data.  Each
rank builds its ``Simulation(..., comm=world())`` tile, takes ``--warmup``
steps (numba dispatch and cache loading), meets the others at a barrier, times
``--steps`` full ``Simulation.step()`` calls (CFL step with its allreduce,
ghost exchanges, everything) and meets them again; rank 0 prints one JSON line.
A zone update is one interior cell advanced by one step.

Each configuration is run ``--repeats`` times (default 3), the configurations
interleaved round-robin so that slow changes of the load on the machine reach
all of them alike; the best and the median of the repeats are reported, and the
efficiencies are given from the best figures and from the medians.

Where the time goes, in the timed steps of every multi-rank run:

* ``halo``: time inside ``Halo.exchange`` (packing, messages, waiting for the
  neighbour, unpacking), ``dt``: inside ``Simulation.max_dt`` (local CFL kernel
  and the two allreduces), the rest is local computation;
* ``cpu/wall``: the process CPU time of each rank over the wall time; below 1
  means the rank was not running (other load on the machine took its core);
* ``other load``: cores kept busy by processes outside the benchmark during
  the timed steps (from ``/proc/stat``, Linux only);
* **independent tiles** (weak scaling, N > 1): the same N tiles stepped as N
  serial simulations side by side in one ``mpiexec -n N`` job, with no
  communication at all.  Its efficiency is what sharing the machine (memory
  bandwidth, shared cache, clock) costs by itself; the ratio of the weak
  efficiency to it is what the communication costs;
* **breakdown** (``--breakdown``, on by default): one more run per weak
  configuration with a barrier before every ghost exchange and every time-step
  reduction, so that waiting for a slower rank (``sync wait``) is separated from
  the exchange proper.  The barriers slow the run a little; its figures are not
  used for the efficiencies.

Usage::

    python tools/bench_mpi.py                          # 1 and 2 ranks, table
    python tools/bench_mpi.py --ranks 1,2,4,8,16 --json
    python tools/bench_mpi.py --quick --ranks 1        # smoke run (seconds)
    python tools/bench_mpi.py --bind core              # pin each rank to a core

The worker (run by mpiexec, not by hand)::

    mpiexec -n 2 python tools/bench_mpi.py --worker --n1 512 --n2 256 --steps 100
"""
from __future__ import annotations

import argparse
import json
import os
import platform
import shutil
import statistics
import subprocess
import sys
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
TAG = "wind2d-bench-mpi"

# ----------------------------------------------------------------- problem
# the state of tools/bench_core.py (MHD case), so the two benchmarks compare
sys.path.insert(0, str(Path(__file__).resolve().parent))
from bench_core import CASES, build_sim as _core_build  # noqa: E402

LABEL = "MHD: " + CASES["mhd"]["label"] + ", periodic Cartesian box"

# single-threaded children: one core per rank, nothing else
CHILD_ENV = {"OMP_NUM_THREADS": "1", "OPENBLAS_NUM_THREADS": "1", "MKL_NUM_THREADS": "1",
             "NUMBA_NUM_THREADS": "1", "PYTHONUNBUFFERED": "1"}


def build_sim(n1: int, n2: int, comm):
    """The benchmark MHD state on an n1 x n2 box of square cells."""
    return _core_build("mhd", n1, n2, comm)


# ----------------------------------------------------------------- worker
def _proc_stat_busy() -> int | None:
    """Busy clock ticks of the whole machine since boot (Linux), or None."""
    try:
        with open("/proc/stat") as f:
            v = [int(x) for x in f.readline().split()[1:]]
    except (OSError, ValueError):
        return None
    idle = v[3] + (v[4] if len(v) > 4 else 0)          # idle + iowait
    return sum(v[:8]) - idle                            # without guest (counted in user)


class _Timer:
    """Accumulates the wall time spent inside a wrapped callable."""

    def __init__(self, fn, barrier=None, sync=None):
        self.fn, self.barrier, self.sync = fn, barrier, sync
        self.on = False
        self.total = 0.0
        self.calls = 0

    def __call__(self, *a, **k):
        if not self.on:
            return self.fn(*a, **k)
        if self.barrier is not None:
            t = time.perf_counter()
            self.barrier()
            self.sync.total += time.perf_counter() - t
        t = time.perf_counter()
        try:
            return self.fn(*a, **k)
        finally:
            self.total += time.perf_counter() - t
            self.calls += 1


class _Acc:
    def __init__(self):
        self.total = 0.0


def worker(args) -> int:
    sys.path.insert(0, str(REPO))
    try:
        from mpi4py import MPI
        cw = MPI.COMM_WORLD
    except ImportError:              # a 1-rank run without mpi4py
        MPI, cw = None, None
    from wind2d.parallel import world

    size = cw.size if cw is not None else 1
    rank = cw.rank if cw is not None else 0
    independent = args.mode == "independent"
    comm = None if independent else world()
    sim = build_sim(args.n1, args.n2, comm)
    m = sim.mesh
    tiles = (sim.tiling.px, sim.tiling.py) if sim.tiling is not None else (1, 1)

    barrier = cw.Barrier if (cw is not None and args.mode == "breakdown") else None
    sync = _Acc()
    halo_t = dt_t = None
    halo = sim.boundaries.halo
    if halo is not None:
        halo_t = _Timer(halo.exchange, barrier, sync)
        halo.exchange = halo_t               # instance attribute: only this run
    dt_t = _Timer(sim.max_dt, barrier, sync)
    sim.max_dt = dt_t                        # step() calls self.max_dt()

    for _ in range(args.warmup):
        sim.step()
    for t in (halo_t, dt_t):
        if t is not None:
            t.on = True
    if cw is not None:
        cw.Barrier()
    busy0 = _proc_stat_busy() if rank == 0 else None
    c0 = time.process_time()
    t0 = time.perf_counter()
    for _ in range(args.steps):
        sim.step()
    t_mine = time.perf_counter() - t0
    cpu_mine = time.process_time() - c0
    if independent and cw is not None:
        # keep stepping (untimed) until every rank is done, so that the tiles
        # share the machine for the whole of every rank's timed steps
        req = cw.Ibarrier()
        while not req.Test():
            sim.step()
    if cw is not None:
        cw.Barrier()
    wall = time.perf_counter() - t0
    cpu_window = time.process_time() - c0
    busy1 = _proc_stat_busy() if rank == 0 else None
    for t in (halo_t, dt_t):
        if t is not None:
            t.on = False
    sim.max_dt()                             # the final state is finite

    mine = {"rank": rank, "cells": m.n1 * m.n2, "tile": [m.n1, m.n2],
            "elapsed_s": t_mine, "cpu_s": cpu_mine, "cpu_window_s": cpu_window, "wall_s": wall,
            "halo_s": halo_t.total if halo_t is not None else 0.0,
            "halo_calls": halo_t.calls if halo_t is not None else 0,
            "dt_s": dt_t.total, "sync_wait_s": sync.total}
    ranks = cw.gather(mine, root=0) if cw is not None else [mine]
    if rank != 0:
        return 0
    tick = os.sysconf("SC_CLK_TCK") if hasattr(os, "sysconf") else 100
    other = None
    if busy0 is not None and busy1 is not None and wall * tick >= 50:   # >= 50 ticks
        ours = sum(r["cpu_window_s"] for r in ranks)
        other = max(0.0, (busy1 - busy0) / tick - ours) / wall
    if independent:
        # every rank's own rate; the job's figure is the sum
        rate = sum(r["cells"] * args.steps / r["elapsed_s"] for r in ranks)
        elapsed = max(r["elapsed_s"] for r in ranks)
    else:
        elapsed = max(r["elapsed_s"] for r in ranks)   # equal to round-off (barrier)
        rate = args.n1 * args.n2 * args.steps / elapsed
    out = {"tag": TAG, "mode": args.mode, "ranks": size, "grid": [args.n1, args.n2],
           "tiles": list(tiles), "steps": args.steps, "warmup": args.warmup,
           "elapsed_s": elapsed, "wall_s": wall, "zone_updates_per_s": rate,
           "other_load_cores": other, "per_rank": ranks}
    print(json.dumps(out), flush=True)
    return 0


# ----------------------------------------------------------------- launcher
def find_mpiexec() -> str | None:
    return shutil.which("mpiexec", path=str(Path(sys.executable).parent)) or \
        shutil.which("mpiexec")


def weak_grid(n: int, tile: int) -> tuple[int, int, int, int]:
    """Global grid (n1, n2) and tiling (px, py) with one tile x tile block per rank."""
    from wind2d.grid.tiles import decompose
    facs = sorted(((a, n // a) for a in range(1, n + 1) if n % a == 0),
                  key=lambda f: (abs(f[0] - f[1]), -f[0]))
    for px, py in facs:
        t = decompose(px * tile, py * tile, n, True, True)
        if (t.px, t.py) == (px, py):
            return px * tile, py * tile, px, py
    raise RuntimeError(f"no global grid gives {n} tiles of {tile} x {tile}")


def launch(n: int, n1: int, n2: int, mode: str, opts, mpiexec) -> dict:
    cmd = [sys.executable, str(Path(__file__).resolve()), "--worker", "--mode", mode,
           "--n1", str(n1), "--n2", str(n2), "--steps", str(opts.steps),
           "--warmup", str(opts.warmup)]
    if mpiexec is not None:
        bind = ["-bind-to", opts.bind] if opts.bind != "none" else []
        cmd = [mpiexec, "-n", str(n), *bind, *cmd]
    elif n > 1:
        raise RuntimeError("no mpiexec found: only --ranks 1 can run")
    env = dict(os.environ, **CHILD_ENV)
    env.pop("WIND2D_MPI", None)
    r = subprocess.run(cmd, cwd=REPO, capture_output=True, text=True, env=env,
                       timeout=opts.timeout)
    for line in reversed(r.stdout.splitlines()):
        if line.startswith("{") and TAG in line:
            res = json.loads(line)
            res["command"] = " ".join(cmd)
            return res
    raise RuntimeError(f"worker failed (exit {r.returncode}): {' '.join(cmd)}\n"
                       f"{r.stdout[-2000:]}\n{r.stderr[-4000:]}")


def _stats(samples: list[dict]) -> dict:
    rates = [s["zone_updates_per_s"] for s in samples]
    times = [s["elapsed_s"] / s["steps"] for s in samples]
    return {"zone_updates_per_s_best": max(rates),
            "zone_updates_per_s_median": statistics.median(rates),
            "step_s_best": min(times), "step_s_median": statistics.median(times)}


def _share(samples: list[dict]) -> dict:
    """Fractions of the timed steps spent in halo / dt (median over repeats, max over
    ranks), cpu/wall (min over ranks) and the other load on the machine."""
    def med(f):
        return statistics.median(f(s) for s in samples)
    other = [s["other_load_cores"] for s in samples if s.get("other_load_cores") is not None]
    return {"halo_fraction": med(lambda s: max(r["halo_s"] / r["elapsed_s"]
                                               for r in s["per_rank"])),
            "dt_fraction": med(lambda s: max(r["dt_s"] / r["elapsed_s"]
                                             for r in s["per_rank"])),
            "cpu_over_wall_min": med(lambda s: min(r["cpu_s"] / r["elapsed_s"]
                                                   for r in s["per_rank"])),
            "other_load_cores": statistics.median(other) if other else None,
            # independent tiles: how much slower the slowest rank was than the fastest
            # (identical work; a synchronised run waits for the slowest every step)
            "rank_spread_median": med(lambda s: 1.0 - min(r["elapsed_s"] for r in s["per_rank"])
                                      / max(r["elapsed_s"] for r in s["per_rank"]))}


def run_all(opts, log) -> dict:
    mpiexec = find_mpiexec()
    ranks = opts.ranks
    if mpiexec is None and any(n > 1 for n in ranks):
        raise SystemExit("bench_mpi: no mpiexec found (install mpi4py and an MPI, e.g. "
                         "pip install mpich mpi4py); only --ranks 1 can run")
    configs = []            # (kind, ranks, n1, n2, mode)
    for n in ranks:
        n1, n2, _, _ = weak_grid(n, opts.tile)
        configs.append(("weak", n, n1, n2, "mpi"))
        if n > 1 and opts.independent:
            configs.append(("independent", n, opts.tile, opts.tile, "independent"))
    if opts.strong_size > 0:
        for n in ranks:
            configs.append(("strong", n, opts.strong_size, opts.strong_size, "mpi"))

    # prime the numba cache once, so that no measured job compiles
    launch(1, 8, 8, "mpi", argparse.Namespace(**{**vars(opts), "steps": 1, "warmup": 1}),
           mpiexec)
    samples = {c: [] for c in configs}
    for rep in range(opts.repeats):
        for c in configs:
            kind, n, n1, n2, mode = c
            res = launch(n, n1, n2, mode, opts, mpiexec)
            samples[c].append(res)
            log(f"  [{rep + 1}/{opts.repeats}] {kind:11s} {n:3d} rank(s) {n1}x{n2}: "
                f"{res['zone_updates_per_s'] / 1e6:8.3f} M zone-updates/s")
    breakdown = []
    if opts.breakdown:
        for n in ranks:
            if n > 1:
                n1, n2, _, _ = weak_grid(n, opts.tile)
                breakdown.append(launch(n, n1, n2, "breakdown", opts, mpiexec))

    out = {"benchmark": LABEL, "machine": _machine(), "options": {
        "ranks": ranks, "steps": opts.steps, "warmup": opts.warmup, "tile": opts.tile,
        "strong_size": opts.strong_size, "repeats": opts.repeats, "bind": opts.bind,
        "mpiexec": mpiexec},
        "weak": [], "independent": [], "strong": [], "breakdown": []}
    base = {}
    for kind in ("weak", "independent", "strong"):
        for c in configs:
            if c[0] != kind:
                continue
            _, n, n1, n2, _ = c
            s = samples[c]
            row = {"ranks": n, "grid": [n1, n2], "tiles": s[0]["tiles"],
                   "cells_per_rank": n1 * n2 // n if kind != "independent" else n1 * n2,
                   **_stats(s), **_share(s), "command": s[0]["command"],
                   "samples_zone_updates_per_s": [x["zone_updates_per_s"] for x in s],
                   "samples_step_s": [x["elapsed_s"] / x["steps"] for x in s]}
            for q in ("best", "median"):
                row[f"zone_updates_per_s_per_rank_{q}"] = \
                    row[f"zone_updates_per_s_{q}"] / n
            out[kind].append(row)
    for kind in ("weak", "strong"):
        one = [r for r in out[kind] if r["ranks"] == 1]
        base[kind] = one[0] if one else None
    for kind in ("weak", "independent"):
        b = base["weak"]
        for row in out[kind]:
            for q in ("best", "median"):
                row[f"efficiency_{q}"] = (row[f"zone_updates_per_s_per_rank_{q}"]
                                          / b[f"zone_updates_per_s_{q}"]) if b else None
    for row in out["strong"]:
        b = base["strong"]
        for q in ("best", "median"):
            row[f"efficiency_{q}"] = (b[f"step_s_{q}"] / (row["ranks"]
                                                          * row[f"step_s_{q}"])) if b else None
            row[f"speedup_{q}"] = (b[f"step_s_{q}"] / row[f"step_s_{q}"]) if b else None
    ind = {r["ranks"]: r for r in out["independent"]}
    for row in out["weak"]:
        i = ind.get(row["ranks"])
        row["communication_efficiency_median"] = (
            row["efficiency_median"] / i["efficiency_median"]) \
            if i is not None and row["efficiency_median"] is not None else None
    for b in breakdown:
        st = b["steps"]
        per = [{"rank": r["rank"], "step_ms": 1e3 * r["elapsed_s"] / st,
                "compute_ms": 1e3 * (r["elapsed_s"] - r["halo_s"] - r["dt_s"]
                                     - r["sync_wait_s"]) / st,
                "halo_ms": 1e3 * r["halo_s"] / st, "dt_ms": 1e3 * r["dt_s"] / st,
                "sync_wait_ms": 1e3 * r["sync_wait_s"] / st,
                "halo_exchanges_per_step": r["halo_calls"] / st,
                "cpu_over_wall": r["cpu_s"] / r["elapsed_s"]} for r in b["per_rank"]]
        out["breakdown"].append({"ranks": b["ranks"], "grid": b["grid"], "tiles": b["tiles"],
                                 "zone_updates_per_s": b["zone_updates_per_s"],
                                 "other_load_cores": b["other_load_cores"],
                                 "per_rank": per, "command": b["command"]})
    return out


def _machine() -> dict:
    load = None
    try:
        load = os.getloadavg()
    except OSError:
        pass
    try:
        import mpi4py
        from mpi4py import MPI
        mpi = f"mpi4py {mpi4py.__version__}, " + MPI.Get_library_version().splitlines()[0]
    except Exception:                                   # noqa: BLE001
        mpi = None
    return {"cpus": os.cpu_count(), "processor": platform.processor() or platform.machine(),
            "python": platform.python_version(), "mpi": mpi, "loadavg_at_end": load}


# ----------------------------------------------------------------- report
def _pct(x):
    return "   -  " if x is None else f"{100 * x:5.1f}%"


def _m(x):
    return f"{x / 1e6:7.3f}"


def report(res: dict) -> str:
    o, mc = res["options"], res["machine"]
    lines = [f"wind2d MPI scaling -- {res['benchmark']}",
             f"{o['steps']} timed steps after {o['warmup']} warm-up, best / median of "
             f"{o['repeats']} runs per configuration, bind: {o['bind']}",
             f"machine: {mc['cpus']} cpus, {mc['processor']}, python {mc['python']}, "
             f"{mc['mpi']}",
             "rates in M zone-updates/s; halo / dt: share of the step in Halo.exchange "
             "(waiting for the neighbour included) / Simulation.max_dt (slowest rank); "
             "cpu/wall: lowest rank; other: cores busy outside the benchmark", ""]
    head = (f"{'ranks':>5} {'grid':>11} {'tiles':>6} {'best':>8} {'median':>8} "
            f"{'/rank best':>10} {'/rank med':>9} {'eff best':>8} {'eff med':>8} "
            f"{'halo':>6} {'dt':>6} {'cpu/wall':>8} {'other':>6}")

    def row(r, eff=True):
        oth = r["other_load_cores"]
        return (f"{r['ranks']:5d} {r['grid'][0]:>5d}x{r['grid'][1]:<5d} "
                f"{r['tiles'][0]:>2d}x{r['tiles'][1]:<3d} "
                f"{_m(r['zone_updates_per_s_best']):>8} {_m(r['zone_updates_per_s_median']):>8} "
                f"{_m(r['zone_updates_per_s_per_rank_best']):>10} "
                f"{_m(r['zone_updates_per_s_per_rank_median']):>9} "
                f"{_pct(r.get('efficiency_best')):>8} {_pct(r.get('efficiency_median')):>8} "
                f"{_pct(r['halo_fraction']):>6} {_pct(r['dt_fraction']):>6} "
                f"{r['cpu_over_wall_min']:8.2f} "
                f"{'  -' if oth is None else f'{oth:6.2f}':>6}")
    if res["weak"]:
        lines += [f"weak scaling: {o['tile']} x {o['tile']} cells per rank; "
                  "eff = (rate per rank at N) / (rate at 1 rank)", head]
        lines += [row(r) for r in res["weak"]]
        if res["independent"]:
            lines += ["", "independent tiles: N serial simulations of one tile each, side by "
                      "side, no communication (cost of sharing the machine)", head]
            lines += [row(r) for r in res["independent"]]
            for r in res["independent"]:
                lines.append(f"  {r['ranks']} ranks: slowest independent tile "
                             f"{_pct(r['rank_spread_median'])} slower than the fastest "
                             "(median): same work, so this is the machine's unevenness, "
                             "paid at every synchronisation of a parallel run")
            for r in res["weak"]:
                if r.get("communication_efficiency_median") is not None:
                    lines.append(f"  {r['ranks']} ranks: weak eff / independent eff = "
                                 f"{_pct(r['communication_efficiency_median'])} (medians): "
                                 "the part of the loss due to the parallel code itself")
        lines.append("")
    if res["strong"]:
        lines += [f"strong scaling: {o['strong_size']} x {o['strong_size']} cells; "
                  "eff = t1 / (N tN)",
                  f"{'ranks':>5} {'tiles':>6} {'ms/step best':>12} {'median':>8} "
                  f"{'M zu/s best':>11} {'median':>8} {'speedup':>8} {'eff best':>8} "
                  f"{'eff med':>8} {'halo':>6} {'dt':>6} {'cpu/wall':>8}"]
        for r in res["strong"]:
            lines.append(
                f"{r['ranks']:5d} {r['tiles'][0]:>2d}x{r['tiles'][1]:<3d} "
                f"{1e3 * r['step_s_best']:12.2f} {1e3 * r['step_s_median']:8.2f} "
                f"{_m(r['zone_updates_per_s_best']):>11} "
                f"{_m(r['zone_updates_per_s_median']):>8} "
                f"{r['speedup_median'] if r['speedup_median'] else float('nan'):8.2f} "
                f"{_pct(r['efficiency_best']):>8} {_pct(r['efficiency_median']):>8} "
                f"{_pct(r['halo_fraction']):>6} {_pct(r['dt_fraction']):>6} "
                f"{r['cpu_over_wall_min']:8.2f}")
        lines.append("")
    cpus = mc["cpus"] or 1
    over = sorted({r["ranks"] for k in ("weak", "strong") for r in res[k]
                   if r["ranks"] > cpus})
    if over:
        lines += [f"note: {', '.join(map(str, over))} rank(s) on {cpus} cpus are "
                  "oversubscribed: those rows measure time sharing, not scaling", ""]
    noisy = [f"{k} {r['ranks']}" for k in ("weak", "independent", "strong")
             for r in res[k] if r["ranks"] <= cpus and (
                 (r["other_load_cores"] or 0) > 0.1 or r["cpu_over_wall_min"] < 0.95)]
    if noisy:
        lines += ["warning: other load on the machine during " + ", ".join(noisy)
                  + " (other > 0.1 core or cpu/wall < 0.95): medians are unreliable, "
                  "rerun on a quiet machine or trust the best figures", ""]
    for b in res["breakdown"]:
        lines += [f"breakdown, weak {b['ranks']} ranks ({b['grid'][0]}x{b['grid'][1]}), with a "
                  "barrier before each exchange / time-step reduction (ms per step):",
                  f"  {'rank':>4} {'step':>8} {'compute':>8} {'halo':>8} {'dt':>8} "
                  f"{'sync wait':>9} {'exch/step':>9} {'cpu/wall':>8}"]
        for p in b["per_rank"]:
            lines.append(f"  {p['rank']:4d} {p['step_ms']:8.3f} {p['compute_ms']:8.3f} "
                         f"{p['halo_ms']:8.3f} {p['dt_ms']:8.3f} {p['sync_wait_ms']:9.3f} "
                         f"{p['halo_exchanges_per_step']:9.1f} {p['cpu_over_wall']:8.2f}")
        lines.append("")
    return "\n".join(lines)


# ----------------------------------------------------------------- main
def _ranks(text: str) -> list[int]:
    try:
        out = [int(x) for x in text.split(",") if x.strip()]
    except ValueError:
        raise argparse.ArgumentTypeError(f"--ranks {text!r}: a comma-separated list of "
                                         "integers, e.g. 1,2,4") from None
    if not out or any(n < 1 for n in out):
        raise argparse.ArgumentTypeError(f"--ranks {text!r}: rank counts must be >= 1")
    return sorted(set(out))


def parse(argv):
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0],
                                formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--ranks", type=_ranks, default=[1, 2],
                   help="rank counts, comma-separated (default 1,2); 1 is the baseline")
    p.add_argument("--steps", type=int, default=None, help="timed steps (default 100)")
    p.add_argument("--warmup", type=int, default=None, help="untimed steps first (default 5)")
    p.add_argument("--tile", type=int, default=None,
                   help="weak scaling: cells per rank along each axis (default 256)")
    p.add_argument("--strong-size", type=int, default=None,
                   help="strong scaling: cells along each axis (default 512; 0 = skip)")
    p.add_argument("--repeats", type=int, default=None, help="runs per configuration "
                   "(default 3)")
    p.add_argument("--bind", default="none", choices=("none", "core", "hwthread", "socket"),
                   help="mpiexec -bind-to (MPICH hydra); default none")
    p.add_argument("--no-independent", dest="independent", action="store_false",
                   help="skip the independent-tiles comparison")
    p.add_argument("--no-breakdown", dest="breakdown", action="store_false",
                   help="skip the barrier-separated time breakdown")
    p.add_argument("--quick", action="store_true",
                   help="smoke run: tile 32, strong 64, 5 steps, 1 repeat")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--quiet", action="store_true", help="no progress lines")
    p.add_argument("--timeout", type=float, default=900.0,
                   help="seconds allowed per launched job (default 900)")
    # worker side (run by mpiexec)
    p.add_argument("--worker", action="store_true", help=argparse.SUPPRESS)
    p.add_argument("--mode", default="mpi", choices=("mpi", "independent", "breakdown"),
                   help=argparse.SUPPRESS)
    p.add_argument("--n1", type=int, default=256, help=argparse.SUPPRESS)
    p.add_argument("--n2", type=int, default=256, help=argparse.SUPPRESS)
    a = p.parse_args(argv)
    q = a.quick
    for name, full, quick in (("steps", 100, 5), ("warmup", 5, 2), ("tile", 256, 32),
                              ("strong_size", 512, 64), ("repeats", 3, 1)):
        if getattr(a, name) is None:
            setattr(a, name, quick if q else full)
    for name in ("steps", "warmup", "tile", "repeats"):
        v = getattr(a, name)
        if v < (0 if name == "warmup" else 1):
            p.error(f"--{name} = {v}: must be >= {0 if name == 'warmup' else 1}")
    if a.tile < 2 or (a.strong_size and a.strong_size < 2 * max(a.ranks)):
        p.error("--tile must be >= 2 and --strong-size >= 2 x the largest rank count")
    return a


def main(argv=None):
    opts = parse(argv)
    if opts.worker:
        return worker(opts)
    cpus = os.cpu_count() or 1

    def log(msg):
        if not opts.quiet:
            print(msg, file=sys.stderr, flush=True)

    if max(opts.ranks) > cpus:
        print(f"warning: {max(opts.ranks)} ranks on {cpus} cpus: oversubscribed, the "
              "rows with more ranks than cpus measure time sharing, not scaling", file=sys.stderr)
    res = run_all(opts, log)
    if opts.json:
        print(json.dumps(res, indent=1))
    else:
        print(report(res))
    return res


if __name__ == "__main__":
    r = main()
    sys.exit(r if isinstance(r, int) else 0)
