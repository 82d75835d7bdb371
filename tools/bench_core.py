#!/usr/bin/env python
"""Throughput benchmark of the wind2d core (single process, single thread).

Measures zone updates per second for

* ``gas``: PLM (MC limiter) + HLLC + predictor-corrector, no field;
* ``mhd``: PLM (MC limiter) + HLLD + constrained transport,

on uniform periodic Cartesian grids (default 256^2 and 512^2).  The initial
state is a density wave advected along the diagonal plus a small pressure
perturbation; the MHD case adds a uniform in-plane field at 30 degrees to x and
a weak out-of-plane component.  Every step is a full ``Simulation.step()``
(CFL time step included), timed after a few warm-up steps so that numba
compilation and cache loading are excluded.

Also reported:

* memory: bytes per interior zone of all arrays the Simulation holds, plus, in a
  fresh subprocess, the growth of the resident set and the tracemalloc peak
  (numpy buffers included) while the simulation is built, set up and stepped;
* per-step allocations: tracemalloc peak during a few steps after warm-up
  (numpy / Python heap) and the number of allocations made inside numba kernels
  (NRT statistics, array arguments discounted), compared with one grid array;
* start-up: time from launching a fresh ``python -c`` process (import wind2d,
  build a grid, one step) to the end of its first step, with a warm numba cache;
* a per-kernel profile: every numba kernel called from Python during a step is
  timed in place (wrapped for the duration of the profile only), plus the Python
  glue; then the calls of one step are replayed one by one (fastest of a few
  repeats), which is less sensitive to other load on the machine;
* optionally the compiled C measuring stick (``--reference`` or
  ``--build-reference``), run on the same grids in the same session.  The timed
  steps are split into blocks (``--blocks``), each preceded by one C run, and the
  ratio reported is the median over blocks of wind2d's block rate over the C
  rate measured just before it, so that slowly changing load from other work
  on the machine affects both sides alike.

Rates are zone updates per second: interior cells x steps / seconds.

Usage::

    python tools/bench_core.py                       # full run, text report
    python tools/bench_core.py --build-reference     # ... with the C ratio
    python tools/bench_core.py --reference /tmp/benchref/hydro2d --json
    python tools/bench_core.py --quick --json        # smoke run (seconds)
"""
from __future__ import annotations

import argparse
import gc
import json
import math
import os
import platform
import re
import resource
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parents[1]

# ----------------------------------------------------------------- problem
RHO_AMP = 0.2        # density wave amplitude
P_AMP = 0.05         # pressure perturbation amplitude
ADV = 0.5            # advection velocity along x and y
B0 = 0.5             # in-plane field strength (plasma beta = 2 p / B0^2 = 8)
B_ANGLE = math.pi / 6.0
BZ = 0.05            # weak out-of-plane field

CASES = {
    "gas": dict(mhd=False, riemann="hllc",
                label="PLM(mc) + HLLC + predictor-corrector"),
    "mhd": dict(mhd=True, riemann="hlld",
                label="PLM(mc) + HLLD + CT + predictor-corrector"),
}

PERIODIC = {"x_low": "periodic", "x_high": "periodic",
            "y_low": "periodic", "y_high": "periodic"}

# default size of one C reference run, in zone updates (~1 s at 2-3e7/s)
REF_BUDGET = 300 * 256 * 256


def build_sim(case: str, n: int, n2: int | None = None, comm=None):
    """The benchmark state on a periodic Cartesian box of n x n2 square cells
    (n2 = n by default; the box is n/n2 by 1), on ``comm``'s ranks if given."""
    from wind2d import Simulation
    c = CASES[case]
    n2 = n if n2 is None else n2
    sim = Simulation("cartesian", x1=(0.0, n / n2, n), x2=(0.0, 1.0, n2), boundaries=PERIODIC,
                     gamma=5.0 / 3.0, mhd=c["mhd"], riemann=c["riemann"], limiter="mc",
                     courant=0.4, comm=comm)
    tp = 2.0 * math.pi
    sim.set_primitive(rho=lambda x, y: 1.0 + RHO_AMP * np.sin(tp * (x + y)),
                      vx=ADV, vy=ADV,
                      p=lambda x, y: 1.0 + P_AMP * np.sin(tp * x) * np.cos(2.0 * tp * y))
    if c["mhd"]:
        sim.set_field(b1=B0 * math.cos(B_ANGLE), b2=B0 * math.sin(B_ANGLE))
        sim.set_primitive(Bz=BZ)
    return sim


# ----------------------------------------------------------------- helpers
def _maxrss_bytes() -> int:
    r = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return int(r) if sys.platform == "darwin" else int(r) * 1024


def _current_rss_bytes() -> int | None:
    try:
        with open("/proc/self/statm") as f:
            return int(f.read().split()[1]) * os.sysconf("SC_PAGE_SIZE")
    except (OSError, ValueError, IndexError):
        return None


def _grid_array_bytes(sim) -> int:
    """Bytes of one float64 cell array including ghost cells."""
    m = sim.mesh
    return int(m.nt1 * m.nt2 * 8)


def held_array_bytes(obj, max_depth: int = 8) -> tuple[int, int]:
    """Total bytes (and count) of the distinct numpy buffers reachable from ``obj``
    through wind2d objects, lists, tuples and dicts (views count once)."""
    seen_obj, seen_buf = set(), set()
    total, count = 0, 0

    def visit(o, depth):
        nonlocal total, count
        if depth > max_depth or id(o) in seen_obj:
            return
        seen_obj.add(id(o))
        if isinstance(o, np.ndarray):
            root = o
            while isinstance(root.base, np.ndarray):
                root = root.base
            if id(root) not in seen_buf:
                seen_buf.add(id(root))
                total += root.nbytes
                count += 1
            return
        if isinstance(o, dict):
            for v in o.values():
                visit(v, depth + 1)
        elif isinstance(o, (list, tuple, set, frozenset)):
            for v in o:
                visit(v, depth + 1)
        elif type(o).__module__.startswith("wind2d") and hasattr(o, "__dict__"):
            for v in vars(o).values():
                visit(v, depth + 1)

    visit(obj, 0)
    return total, count


def _nrt_enable() -> bool:
    try:
        from numba.core.runtime import _nrt_python
        _nrt_python.memsys_enable_stats()
        from numba.core.runtime import rtsys
        rtsys.get_allocation_stats()
        return True
    except Exception:       # private numba API: optional
        return False


def _nrt_allocs() -> int | None:
    try:
        from numba.core.runtime import rtsys
        return int(rtsys.get_allocation_stats().alloc)
    except Exception:
        return None


def _count_arrays(args) -> int:
    n = 0
    for a in args:
        if isinstance(a, np.ndarray):
            n += 1
        elif isinstance(a, (tuple, list)):
            n += _count_arrays(a)
    return n


def _wind2d_dispatchers():
    """(module, attribute name, dispatcher) for every numba dispatcher bound at
    module level in an imported wind2d module."""
    from numba.core.dispatcher import Dispatcher
    out = []
    for mname, mod in list(sys.modules.items()):
        if mod is None or not (mname == "wind2d" or mname.startswith("wind2d.")):
            continue
        for attr, val in list(vars(mod).items()):
            if isinstance(val, Dispatcher):
                out.append((mod, attr, val))
    return out


def _kernel_name(disp) -> str:
    f = disp.py_func
    return f"{f.__module__.removeprefix('wind2d.')}.{f.__qualname__}"


# ----------------------------------------------------------------- timing
def time_steps(sim, steps: int, blocks: int = 1, before_block=None) -> dict:
    """Time ``steps`` calls of ``sim.step()`` in ``blocks`` consecutive blocks; each
    step is timed separately too.  ``before_block()`` (untimed here) runs before
    every block and returns a reference rate; the ratio of each block's rate to the
    reference rate measured just before it is robust against slowly changing load
    from other work on the machine."""
    cells = sim.mesh.n1 * sim.mesh.n2
    blocks = max(1, min(blocks, steps))
    sizes = [steps // blocks + (1 if b < steps % blocks else 0) for b in range(blocks)]
    per, out_blocks, total = [], [], 0.0
    gc_was = gc.isenabled()
    try:
        for nb in sizes:
            ref = before_block() if before_block is not None else None
            gc.disable()
            t_start = time.perf_counter()
            for _ in range(nb):
                t0 = time.perf_counter()
                sim.step()
                per.append(time.perf_counter() - t0)
            tb = time.perf_counter() - t_start
            if gc_was:
                gc.enable()
            total += tb
            blk = dict(steps=nb, seconds=tb, zone_updates_per_s=cells * nb / tb)
            if ref is not None:
                blk["reference_zone_updates_per_s"] = ref
                blk["ratio"] = blk["zone_updates_per_s"] / ref
            out_blocks.append(blk)
    finally:
        if gc_was:
            gc.enable()
    med = statistics.median(per)
    out = dict(steps=steps, seconds=total, zone_updates_per_s=cells * steps / total,
               median_step_s=med, median_step_zone_updates_per_s=cells / med,
               best_step_zone_updates_per_s=cells / min(per), blocks=out_blocks)
    if before_block is not None:
        refs = [b["reference_zone_updates_per_s"] for b in out_blocks]
        out["reference_zone_updates_per_s"] = statistics.median(refs)
        out["ratio_to_reference"] = statistics.median(b["ratio"] for b in out_blocks)
        out["ratio_of_rates"] = out["zone_updates_per_s"] / statistics.median(refs)
    return out


def step_allocations(sim, steps: int) -> dict:
    """Allocations while stepping: tracemalloc peak (Python / numpy heap) over
    ``steps`` steps, then, over as many further steps, the allocations made inside
    numba kernels (NRT counter minus the meminfos of unboxed array arguments)."""
    gc.collect()
    was_tracing = tracemalloc.is_tracing()
    if not was_tracing:
        tracemalloc.start()
    cur0, _ = tracemalloc.get_traced_memory()
    tracemalloc.reset_peak()
    for _ in range(steps):
        sim.step()
    cur1, peak = tracemalloc.get_traced_memory()
    if not was_tracing:
        tracemalloc.stop()
    grid = _grid_array_bytes(sim)
    out = dict(steps=steps, tracemalloc_peak_bytes=int(peak - cur0),
               tracemalloc_net_bytes=int(cur1 - cur0), grid_array_bytes=grid,
               peak_over_grid_array=(peak - cur0) / grid,
               numba_kernel_allocations_per_step=None)
    if not _nrt_enable():
        return out
    patched, nargs = [], [0]

    def wrap(fn):
        def counting(*a, **k):
            nargs[0] += _count_arrays(a) + _count_arrays(tuple(k.values()))
            return fn(*a, **k)
        return counting

    for mod, attr, disp in _wind2d_dispatchers():
        patched.append((mod, attr, disp))
        setattr(mod, attr, wrap(disp))
    try:
        a0 = _nrt_allocs()
        for _ in range(steps):
            sim.step()
        a1 = _nrt_allocs()
    finally:
        for mod, attr, disp in patched:
            setattr(mod, attr, disp)
    if a0 is not None and a1 is not None:
        out["numba_kernel_allocations_per_step"] = ((a1 - a0) - nargs[0]) / steps
        out["numba_array_arguments_per_step"] = nargs[0] / steps
    return out


BC_LABEL = "Boundaries.apply (total, incl. its kernels)"


def profile_kernels(sim, steps: int, replays: int = 5) -> dict:
    """Time every numba kernel called from Python during ``steps`` steps.

    ``kernels``: the kernels timed where they run inside ``sim.step()`` (each
    dispatcher wrapped for the duration of the profile only).  ``isolated``: the
    calls of one step recorded with their arguments and replayed ``replays``
    times each afterwards, fastest kept (less sensitive to other load on the
    machine; the kernels are idempotent for fixed inputs).  The state of ``sim``
    is not meaningful afterwards.
    """
    acc: dict[str, list] = {}
    patched, recorded, record, depth = [], [], [True], [0]

    def wrap(name, fn):
        def timed(*a, **k):
            if record[0] and depth[0] == 0:     # outermost calls only
                recorded.append((name, fn, a, k))
            depth[0] += 1
            t0 = time.perf_counter()
            try:
                r = fn(*a, **k)
            finally:
                dt = time.perf_counter() - t0
                depth[0] -= 1
            e = acc.setdefault(name, [0.0, 0])
            e[0] += dt
            e[1] += 1
            return r
        return timed

    names = {}
    for mod, attr, disp in _wind2d_dispatchers():
        name = names.setdefault(id(disp), _kernel_name(disp))
        patched.append((mod, attr, disp))
        setattr(mod, attr, wrap(name, disp))
    bc = sim.integrator.bc
    bc.apply = wrap(BC_LABEL, bc.apply)
    try:
        t0 = time.perf_counter()
        for s in range(steps):
            record[0] = s == 0
            sim.step()
        total = time.perf_counter() - t0
    finally:
        for mod, attr, disp in patched:
            setattr(mod, attr, disp)
        del bc.apply
    cells = sim.mesh.n1 * sim.mesh.n2
    kernels = {}
    ksum = 0.0
    for name, (t, c) in sorted(acc.items(), key=lambda kv: -kv[1][0]):
        kernels[name] = dict(ms_per_step=1e3 * t / steps, calls_per_step=c / steps,
                             ns_per_zone_per_step=1e9 * t / steps / cells, fraction=t / total)
        if name != BC_LABEL:
            ksum += t
    # replay the outermost calls of one step (calls nested in Boundaries.apply are
    # part of its replay)
    iso: dict[str, float] = {}
    for name, fn, a, k in recorded:
        best = math.inf
        for _ in range(replays):
            t0 = time.perf_counter()
            fn(*a, **k)
            best = min(best, time.perf_counter() - t0)
        iso[name] = iso.get(name, 0.0) + best
    isum = sum(iso.values())
    isolated = {name: dict(ms_per_step=1e3 * t, ns_per_zone_per_step=1e9 * t / cells,
                           fraction=t / isum)
                for name, t in sorted(iso.items(), key=lambda kv: -kv[1])}
    return dict(steps=steps, ms_per_step=1e3 * total / steps,
                ns_per_zone_per_step=1e9 * total / steps / cells, kernels=kernels,
                python_glue_ms_per_step=1e3 * (total - ksum) / steps,
                python_glue_fraction=(total - ksum) / total,
                isolated=dict(replays=replays, ms_per_step=1e3 * isum,
                              ns_per_zone_per_step=1e9 * isum / cells, kernels=isolated))


# ----------------------------------------------------------------- subprocesses
def memory_child(case: str, n: int, steps: int) -> dict:
    """Run in a fresh process: memory high-water marks of building and stepping."""
    import wind2d  # noqa: F401  (import cost outside the measurement)
    warm = build_sim(case, 16)          # load every kernel from the cache
    warm.step()
    warm.step()
    del warm
    gc.collect()
    rss0, cur_rss0 = _maxrss_bytes(), _current_rss_bytes()
    tracemalloc.start()
    sim = build_sim(case, n)
    _, setup_peak = tracemalloc.get_traced_memory()
    tracemalloc.reset_peak()
    for _ in range(steps):
        sim.step()
    _, step_peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    rss1, cur_rss1 = _maxrss_bytes(), _current_rss_bytes()
    held, narr = held_array_bytes(sim)
    cells = n * n
    out = dict(case=case, n=n, steps=steps, held_array_bytes=held, held_arrays=narr,
               held_bytes_per_zone=held / cells,
               tracemalloc_peak_build_bytes_per_zone=setup_peak / cells,
               tracemalloc_peak_total_bytes_per_zone=max(setup_peak, step_peak) / cells,
               maxrss_growth_bytes_per_zone=(rss1 - rss0) / cells,
               maxrss_note="growth of the high-water mark; 0 when the import of numba "
                           "already peaked higher")
    if cur_rss0 is not None and cur_rss1 is not None:
        out["rss_growth_bytes_per_zone"] = (cur_rss1 - cur_rss0) / cells
    return out


def run_memory_subprocess(case: str, n: int, steps: int) -> dict:
    cmd = [sys.executable, str(Path(__file__).resolve()), "--_child-memory",
           f"{case}:{n}:{steps}"]
    r = subprocess.run(cmd, capture_output=True, text=True, cwd=str(REPO))
    if r.returncode != 0:
        return dict(case=case, n=n, error=r.stderr.strip()[-2000:])
    return json.loads(r.stdout.strip().splitlines()[-1])


STARTUP_SNIPPET = """\
import time
t_enter = time.monotonic()
import json, math
import numpy as np
import wind2d
from wind2d import Simulation
t_import = time.monotonic()
n = {n}
tp = 2.0 * math.pi
sim = Simulation("cartesian", x1=(0.0, 1.0, n), x2=(0.0, 1.0, n),
                 boundaries={periodic!r}, gamma=5.0 / 3.0, mhd={mhd}, riemann={riemann!r},
                 limiter="mc", courant=0.4)
sim.set_primitive(rho=lambda x, y: 1.0 + {rho_amp} * np.sin(tp * (x + y)), vx={adv}, vy={adv},
                  p=lambda x, y: 1.0 + {p_amp} * np.sin(tp * x) * np.cos(2.0 * tp * y))
if {mhd}:
    sim.set_field(b1={b1}, b2={b2})
    sim.set_primitive(Bz={bz})
t_built = time.monotonic()
sim.step()
t_step = time.monotonic()
from numba.core.dispatcher import Dispatcher
import sys
hits = misses = 0
seen = set()
for name, mod in list(sys.modules.items()):
    if mod is None or not name.startswith("wind2d"):
        continue
    for v in list(vars(mod).values()):
        if isinstance(v, Dispatcher) and id(v) not in seen:
            seen.add(id(v))
            hits += sum(v.stats.cache_hits.values())
            misses += sum(v.stats.cache_misses.values())
print(json.dumps(dict(t_enter=t_enter, t_import=t_import, t_built=t_built, t_step=t_step,
                      cache_hits=hits, cache_misses=misses)))
"""


def startup_once(case: str, n: int) -> dict:
    c = CASES[case]
    code = STARTUP_SNIPPET.format(n=n, periodic=PERIODIC, mhd=c["mhd"], riemann=c["riemann"],
                                  rho_amp=RHO_AMP, p_amp=P_AMP, adv=ADV,
                                  b1=B0 * math.cos(B_ANGLE), b2=B0 * math.sin(B_ANGLE),
                                  bz=BZ)
    t_launch = time.monotonic()     # CLOCK_MONOTONIC: shared with the child
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                       cwd=str(REPO))
    t_exit = time.monotonic()
    if r.returncode != 0:
        return dict(error=r.stderr.strip()[-2000:])
    d = json.loads(r.stdout.strip().splitlines()[-1])
    return dict(to_end_of_first_step_s=d["t_step"] - t_launch,
                interpreter_start_s=d["t_enter"] - t_launch,
                import_s=d["t_import"] - d["t_enter"],
                build_and_set_up_s=d["t_built"] - d["t_import"],
                first_step_s=d["t_step"] - d["t_built"],
                process_wall_s=t_exit - t_launch,
                numba_cache_hits=d["cache_hits"], numba_cache_misses=d["cache_misses"])


def measure_startup(case: str, n: int, repeats: int, prime: bool) -> dict:
    if prime:
        startup_once(case, n)       # make sure the cache is written and the files are hot
    runs = [startup_once(case, n) for _ in range(repeats)]
    good = [r for r in runs if "error" not in r]
    if not good:
        return dict(case=case, n=n, error=runs[-1].get("error"))
    best = min(good, key=lambda r: r["to_end_of_first_step_s"])
    return dict(case=case, n=n, repeats=len(good),
                to_end_of_first_step_s=best["to_end_of_first_step_s"],
                median_to_end_of_first_step_s=statistics.median(
                    r["to_end_of_first_step_s"] for r in good),
                best_run=best)


# ----------------------------------------------------------------- C reference
def find_reference_source() -> Path | None:
    for p in (REPO / "shared" / "bench-reference", REPO.parent / "shared" / "bench-reference"):
        if (p / "hydro2d.c").is_file() and (p / "build.sh").is_file():
            return p
    return None


def build_reference(src: Path, workdir: Path) -> Path:
    """Copy the C measuring stick into ``workdir`` (outside the repository) and build it."""
    for name in ("hydro2d.c", "build.sh"):
        shutil.copy(src / name, workdir / name)
    subprocess.run(["sh", "build.sh"], cwd=str(workdir), check=True, capture_output=True,
                   text=True)
    return workdir / "hydro2d"


def run_reference(binary: Path, n: int, steps: int) -> float:
    """One run of the C program on an n x n grid; its zone updates per second."""
    r = subprocess.run([str(binary), str(n), str(n), str(steps)], capture_output=True,
                       text=True, check=True)
    m = re.search(r"zone_updates_per_s=([0-9.eE+-]+)", r.stdout)
    if not m:
        raise RuntimeError(f"unexpected output of {binary}: {r.stdout!r}")
    return float(m.group(1))


# ----------------------------------------------------------------- driver
def parse_args(argv):
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0],
                                formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--steps", type=int, default=None,
                   help="timed steps per case and grid (default 40; 3 with --quick)")
    p.add_argument("--warmup", type=int, default=None, help="untimed steps first (default 3)")
    p.add_argument("--sizes", type=str, default=None,
                   help="comma-separated grid sizes n (n x n cells; default 256,512)")
    p.add_argument("--cases", type=str, default="gas,mhd", help="gas, mhd or both")
    p.add_argument("--profile-steps", type=int, default=None,
                   help="steps of the per-kernel profile (default 8; 0 to skip)")
    p.add_argument("--alloc-steps", type=int, default=3,
                   help="steps of the per-step allocation check (0 to skip)")
    p.add_argument("--no-memory", action="store_true", help="skip the memory subprocesses")
    p.add_argument("--no-startup", action="store_true", help="skip the start-up measurement")
    p.add_argument("--startup-repeats", type=int, default=None,
                   help="fresh processes timed for start-up (default 3; best reported)")
    g = p.add_mutually_exclusive_group()
    g.add_argument("--reference", type=Path, default=None, metavar="HYDRO2D",
                   help="path of a built hydro2d binary to compare with")
    g.add_argument("--build-reference", action="store_true",
                   help="copy shared/bench-reference to a temporary folder, build it there "
                        "and compare with it")
    p.add_argument("--reference-src", type=Path, default=None,
                   help="folder with hydro2d.c and build.sh (default: shared/bench-reference)")
    p.add_argument("--reference-steps", type=int, default=None,
                   help=f"steps of each C run (default {REF_BUDGET} zone updates / n^2)")
    p.add_argument("--blocks", type=int, default=None,
                   help="split the timed steps into this many blocks, each preceded by "
                        "a C reference run when one is given (default 4; 1 with --quick)")
    p.add_argument("--quick", action="store_true",
                   help="smoke run: 32^2 grid, 3 steps, one start-up process")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--quiet", action="store_true", help="no progress lines on stderr")
    p.add_argument("--_child-memory", dest="child_memory", default=None,
                   help=argparse.SUPPRESS)
    a = p.parse_args(argv)
    q = a.quick
    a.steps = a.steps if a.steps is not None else (3 if q else 40)
    a.warmup = a.warmup if a.warmup is not None else (1 if q else 3)
    a.sizes = [int(s) for s in (a.sizes or ("32" if q else "256,512")).split(",") if s]
    a.cases = [c for c in a.cases.split(",") if c]
    for c in a.cases:
        if c not in CASES:
            p.error(f"--cases: unknown case {c!r}; allowed: {', '.join(CASES)}")
    a.blocks = a.blocks if a.blocks is not None else (1 if q else 4)
    a.profile_steps = a.profile_steps if a.profile_steps is not None else (2 if q else 8)
    a.startup_repeats = a.startup_repeats if a.startup_repeats is not None else (1 if q else 3)
    if a.steps < 1 or a.warmup < 1 or any(n < 4 for n in a.sizes):
        p.error("need --steps >= 1, --warmup >= 1 and grid sizes >= 4")
    return a


def machine_info() -> dict:
    import numba
    cpu = platform.processor() or platform.machine()
    try:
        with open("/proc/cpuinfo") as f:
            for line in f:
                if line.startswith("model name"):
                    cpu = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    return dict(cpu=cpu, logical_cpus=os.cpu_count(), python=platform.python_version(),
                numpy=np.__version__, numba=numba.__version__, platform=platform.platform())


def code_identity() -> dict:
    """Which wind2d source was measured: git HEAD, dirty flag, hash of wind2d/**/*.py."""
    import hashlib
    h = hashlib.sha256()
    for f in sorted((REPO / "wind2d").rglob("*.py")):
        h.update(str(f.relative_to(REPO)).encode())
        h.update(f.read_bytes())
    out = dict(wind2d_sources_sha256=h.hexdigest()[:16])
    try:
        head = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=str(REPO),
                              capture_output=True, text=True, check=True).stdout.strip()
        dirty = subprocess.run(["git", "status", "--porcelain", "--", "wind2d"],
                               cwd=str(REPO), capture_output=True, text=True,
                               check=True).stdout.strip() != ""
        out.update(git_head=head, wind2d_modified=dirty)
    except (OSError, subprocess.CalledProcessError):
        pass
    return out


def _loadavg():
    try:
        return list(os.getloadavg())
    except OSError:
        return None


def run(a, log) -> dict:
    t_begin = time.perf_counter()
    result = dict(benchmark="wind2d.bench_core", quick=a.quick, machine=machine_info(),
                  code=code_identity(), loadavg_start=_loadavg(),
                  settings=dict(steps=a.steps, warmup=a.warmup, sizes=a.sizes, cases=a.cases,
                                courant=0.4, limiter="mc"),
                  cases={c: CASES[c]["label"] for c in a.cases}, results=[])
    ref_binary, tmp = None, None
    if a.reference is not None:
        ref_binary = a.reference.resolve()
    elif a.build_reference:
        src = a.reference_src or find_reference_source()
        if src is None:
            raise SystemExit("--build-reference: shared/bench-reference not found; "
                             "give --reference-src")
        tmp = tempfile.TemporaryDirectory(prefix="wind2d-benchref-")
        log(f"building the C reference in {tmp.name}")
        ref_binary = build_reference(Path(src), Path(tmp.name))
    refs = {}
    try:
        import wind2d  # noqa: F401
        for n in a.sizes:
            for case in a.cases:
                log(f"{case} {n}^2: build + {a.warmup} warm-up step(s)")
                sim = build_sim(case, n)
                for _ in range(a.warmup):
                    sim.step()
                before = None
                if ref_binary is not None:
                    rsteps = a.reference_steps or max(1, REF_BUDGET // (n * n))
                    refs.setdefault(n, dict(n=n, steps=rsteps, runs=[]))

                    def before(n=n, rsteps=rsteps):
                        rate = run_reference(ref_binary, n, rsteps)
                        refs[n]["runs"].append(rate)
                        return rate
                log(f"{case} {n}^2: timing {a.steps} step(s) in {a.blocks} block(s)"
                    + (", each after a C run" if before else ""))
                r = dict(case=case, n=n, cells=n * n,
                         **time_steps(sim, a.steps, a.blocks, before))
                sim.integrator.max_dt()         # raises if the state went bad
                r["t_reached"] = sim.t
                r["held_bytes_per_zone"] = held_array_bytes(sim)[0] / (n * n)
                if a.alloc_steps > 0:
                    r["step_allocations"] = step_allocations(sim, a.alloc_steps)
                if a.profile_steps > 0:
                    log(f"{case} {n}^2: kernel profile over {a.profile_steps} step(s)")
                    r["profile"] = profile_kernels(sim, a.profile_steps)
                del sim
                gc.collect()
                result["results"].append(r)
        if ref_binary is not None:
            grids = {str(n): dict(v, zone_updates_per_s=statistics.median(v["runs"]))
                     for n, v in refs.items()}
            result["reference"] = dict(
                binary=str(ref_binary), grids=grids,
                note="C program: gas only (PLM mc + HLLC + predictor-corrector); MHD ratios "
                     "are indicative; ratio = median over blocks of the block rate over the "
                     "C rate measured just before the block")
    finally:
        if tmp is not None:
            tmp.cleanup()
    if not a.no_memory:
        mem = []
        for n in a.sizes:
            for case in a.cases:
                log(f"memory subprocess {case} {n}^2")
                mem.append(run_memory_subprocess(case, n, 2 if a.quick else 3))
        result["memory"] = mem
    if not a.no_startup:
        n_start = 32 if a.quick else 256
        result["startup"] = []
        for case in (a.cases if not a.quick else a.cases[:1]):
            log(f"start-up {case} {n_start}^2: {a.startup_repeats} fresh process(es)")
            result["startup"].append(measure_startup(case, n_start, a.startup_repeats,
                                                     prime=not a.quick))
    result["summary"] = {f"{r['case']}_{r['n']}": r["zone_updates_per_s"]
                         for r in result["results"]}
    result["loadavg_end"] = _loadavg()
    result["benchmark_wall_s"] = time.perf_counter() - t_begin
    return result


def _fmt_bytes(b: float) -> str:
    for unit in ("B", "kB", "MB", "GB"):
        if abs(b) < 1024 or unit == "GB":
            return f"{b:.0f} {unit}" if unit == "B" else f"{b:.1f} {unit}"
        b /= 1024.0
    return f"{b:.1f} GB"


def report(res: dict) -> str:
    L = []
    m = res["machine"]
    L.append(f"wind2d core throughput, single thread -- {m['cpu']} ({m['logical_cpus']} "
             f"logical CPUs), Python {m['python']}, numpy {m['numpy']}, numba {m['numba']}")
    code = res.get("code", {})
    la, lb = res.get("loadavg_start"), res.get("loadavg_end")
    L.append(f"  code: git {code.get('git_head', '?')}"
             f"{' + modified wind2d/' if code.get('wind2d_modified') else ''}, wind2d sources "
             f"sha256 {code.get('wind2d_sources_sha256')}; load average at start "
             f"{la[0] if la else float('nan'):.2f}, end {lb[0] if lb else float('nan'):.2f}")
    if la and m["logical_cpus"] and max(la[0], lb[0] if lb else 0.0) > m["logical_cpus"] - 0.5:
        L.append("  WARNING: the machine was busy with other work, so rates are noisy "
                 "(compare ratios; rerun when idle)")
    for c, lab in res["cases"].items():
        L.append(f"  {c}: {lab}")
    L.append("")
    hdr = (f"{'case':5} {'grid':>8} {'steps':>5} {'time/s':>7} {'zone-upd/s':>11} "
           f"{'median':>10} {'C ref':>10} {'ratio':>7} {'C/wind2d':>8}")
    L.append(hdr)
    for r in res["results"]:
        ref = r.get("reference_zone_updates_per_s")
        ra = r.get("ratio_to_reference")
        L.append(f"{r['case']:5} {str(r['n']) + '^2':>8} {r['steps']:5d} {r['seconds']:7.2f} "
                 f"{r['zone_updates_per_s']:11.3e} {r['median_step_zone_updates_per_s']:10.3e} "
                 + (f"{ref:10.3e} {ra:7.4f} {1 / ra:7.1f}x" if ref else f"{'-':>10} {'-':>7} "
                    f"{'-':>8}"))
    for r in res["results"]:
        if len(r.get("blocks", ())) > 1:
            rates = [b["zone_updates_per_s"] for b in r["blocks"]]
            line = (f"  {r['case']} {r['n']}^2 blocks: zone-upd/s {min(rates):.3e} .. "
                    f"{max(rates):.3e}")
            if "ratio" in r["blocks"][0]:
                rat = [b["ratio"] for b in r["blocks"]]
                line += f"; ratio {min(rat):.4f} .. {max(rat):.4f}"
            L.append(line)
    if "reference" in res:
        L.append(f"  C reference: {res['reference']['binary']}; "
                 f"{res['reference']['note']}")
    L.append("")
    L.append("memory per interior zone:")
    for r in res["results"]:
        L.append(f"  {r['case']:4} {r['n']:4d}^2: arrays held by the Simulation "
                 f"{r['held_bytes_per_zone']:.0f} B/zone")
    for mm in res.get("memory", []):
        if "error" in mm:
            L.append(f"  {mm['case']:4} {mm['n']:4d}^2: subprocess failed: {mm['error'][-300:]}")
            continue
        rss = mm.get("rss_growth_bytes_per_zone")
        L.append(f"  {mm['case']:4} {mm['n']:4d}^2 (fresh process): RSS growth "
                 + ("n/a" if rss is None else f"{rss:.0f} B/zone") + ", tracemalloc peak build "
                 f"{mm['tracemalloc_peak_build_bytes_per_zone']:.0f} B/zone, "
                 f"build+steps {mm['tracemalloc_peak_total_bytes_per_zone']:.0f} B/zone")
    L.append("")
    L.append("allocations per step (after warm-up):")
    for r in res["results"]:
        s = r.get("step_allocations")
        if not s:
            continue
        k = s.get("numba_kernel_allocations_per_step")
        L.append(f"  {r['case']:4} {r['n']:4d}^2: tracemalloc peak {_fmt_bytes(s['tracemalloc_peak_bytes'])}"
                 f" over {s['steps']} steps ({100 * s['peak_over_grid_array']:.3f}% of one grid "
                 f"array of {_fmt_bytes(s['grid_array_bytes'])}); allocations inside numba "
                 f"kernels per step: {'n/a' if k is None else f'{k:g}'}")
    if res.get("startup"):
        L.append("")
        L.append("start-up, fresh process with a warm numba cache (launch -> end of first step):")
        for s in res["startup"]:
            if "error" in s:
                L.append(f"  {s['case']} {s['n']}^2: failed: {s['error'][-300:]}")
                continue
            b = s["best_run"]
            L.append(f"  {s['case']:4} {s['n']}^2: {s['to_end_of_first_step_s']:.2f} s best of "
                     f"{s['repeats']} (median {s['median_to_end_of_first_step_s']:.2f} s): "
                     f"interpreter {b['interpreter_start_s']:.2f} s, import {b['import_s']:.2f} s,"
                     f" build {b['build_and_set_up_s']:.2f} s, first step {b['first_step_s']:.2f}"
                     f" s; numba cache hits {b['numba_cache_hits']}, misses "
                     f"{b['numba_cache_misses']}")
    for r in res["results"]:
        p = r.get("profile")
        if not p:
            continue
        L.append("")
        L.append(f"kernel profile {r['case']} {r['n']}^2 ({p['ms_per_step']:.1f} ms/step, "
                 f"{p['ns_per_zone_per_step']:.0f} ns/zone, over {p['steps']} steps):")
        for name, k in p["kernels"].items():
            L.append(f"  {name:48} {k['ms_per_step']:9.2f} ms/step "
                     f"{k['ns_per_zone_per_step']:7.1f} ns/zone {100 * k['fraction']:6.1f}%"
                     f"  ({k['calls_per_step']:g} calls/step)")
        L.append(f"  {'Python glue (step minus kernels)':48} {p['python_glue_ms_per_step']:9.2f}"
                 f" ms/step {100 * p['python_glue_fraction']:6.1f}%")
        iso = p.get("isolated")
        if iso:
            L.append(f"  isolated replay of one step's calls (fastest of {iso['replays']}): "
                     f"{iso['ms_per_step']:.1f} ms/step, {iso['ns_per_zone_per_step']:.0f} ns/zone")
            for name, k in iso["kernels"].items():
                L.append(f"    {name:46} {k['ms_per_step']:9.2f} ms/step "
                         f"{k['ns_per_zone_per_step']:7.1f} ns/zone {100 * k['fraction']:6.1f}%")
    L.append("")
    L.append(f"benchmark wall time {res['benchmark_wall_s']:.0f} s")
    return "\n".join(L)


def main(argv=None) -> dict:
    a = parse_args(argv)
    if a.child_memory:
        case, n, steps = a.child_memory.split(":")
        out = memory_child(case, int(n), int(steps))
        print(json.dumps(out))
        return out

    def log(msg):
        if not a.quiet:
            print(f"[bench_core] {msg}", file=sys.stderr, flush=True)

    res = run(a, log)
    print(json.dumps(res, indent=1) if a.json else report(res))
    return res


if __name__ == "__main__":
    main()
