#!/usr/bin/env python
"""Cost of the cosmic-ray module (single process, single thread).

1. Zone updates per second of MHD alone and of MHD with cosmic rays (field-
   aligned diffusion plus streaming) on the same periodic Cartesian grid, in
   the same run, for each grid size asked for (default 64^2, 128^2, 256^2):
   the timed steps alternate in blocks between the two simulations and the
   ratio reported is the median over blocks of the per-step times (MHD+CR /
   MHD), so slow load changes on the machine affect both alike.  Each block is
   timed by the wall clock and by the CPU time of this thread; on a machine
   shared with other work the CPU-time ratio is the steadier one (time spent
   waiting for a core is not counted).  Both runs take the same fixed step
   (the comparison is per step).  Target of the issue: ratio <= 1.6.
2. The module's kernel, timed alone (fastest of several repeats) on the state
   of the 128^2 grid (or ``--size``): one stage (coefficients, face fluxes and
   implicit update fused in one sweep over rows; first-order and second-order
   stage), and the coefficients alone as the snapshot output computes them.
3. A wind-like problem: an (R, z) grid with the axis, a stratified magnetised
   atmosphere in uniform gravity with cosmic-ray pressure equal to the gas
   pressure at the base, diffusion along the vertical field and streaming,
   outflow at the top and outer edges; V_m = 20 times the largest gas signal
   speed |v| + c_fast of the initial state.  Reported: wall time per unit
   simulated time and steps per unit time, next to the same problem without
   cosmic rays (gas CFL step).

Usage::

    python tools/bench_cr.py                    # text report
    python tools/bench_cr.py --json             # one JSON object
    python tools/bench_cr.py --quick            # smoke run (seconds)
    python tools/bench_cr.py --sizes 128 --blocks 21   # one grid, more blocks
"""
from __future__ import annotations

import argparse
import json
import statistics
import sys
import time

import numpy as np

from wind2d import Simulation
from wind2d.physics.cosmic_rays import CosmicRays
from wind2d.physics.gravity import Gravity, Uniform

PERIODIC = {"x_low": "periodic", "x_high": "periodic", "y_low": "periodic",
            "y_high": "periodic"}


def _box(n, with_cr):
    mods = []
    if with_cr:
        mods = [CosmicRays.from_keys("cartesian", max_speed=20.0,
                                     diffusion={"parallel": 0.01, "perpendicular": 0.001},
                                     streaming={})]
    sim = Simulation("cartesian", (0, 1, n), (0, 1, n), PERIODIC, mhd=True, riemann="hlld",
                     modules=mods)
    sim.set_field(b1=np.cos(np.pi / 6), b2=np.sin(np.pi / 6))
    fields = dict(rho=lambda x, y: 1 + 0.2 * np.sin(2 * np.pi * (x + y)), p=1.0, vx=0.3, vy=0.1,
                  Bz=0.1)
    if with_cr:
        fields["Ec"] = lambda x, y: 1 + np.exp(-((x - .5) ** 2 + (y - .5) ** 2) / 0.02)
    sim.set_primitive(**fields)
    return sim, (mods[0] if mods else None)


def throughput(n: int, steps: int, blocks: int) -> dict:
    """Per-step cost of MHD+CR relative to MHD, alternating blocks (wall and CPU time)."""
    mhd, _ = _box(n, False)
    crs, _ = _box(n, True)
    dt = 0.1 * min(mhd.max_dt(), crs.max_dt())
    for sim in (mhd, crs):
        for _ in range(3):
            sim.step(dt)
    wall = {"mhd": [], "mhd+cr": []}
    cpu = {"mhd": [], "mhd+cr": []}
    for _ in range(blocks):
        for name, sim in (("mhd", mhd), ("mhd+cr", crs)):
            c0 = time.thread_time()
            t0 = time.perf_counter()
            for _ in range(steps):
                sim.step(dt)
            wall[name].append((time.perf_counter() - t0) / steps)
            cpu[name].append((time.thread_time() - c0) / steps)

    def ratio(per):
        return statistics.median(c / m for c, m in zip(per["mhd+cr"], per["mhd"]))

    zones = n * n
    return {"grid": f"{n}x{n}", "zone_updates_per_s_mhd": zones / min(wall["mhd"]),
            "zone_updates_per_s_mhd_cr": zones / min(wall["mhd+cr"]),
            "step_ratio_median": ratio(wall),
            "step_ratio_best_blocks": min(wall["mhd+cr"]) / min(wall["mhd"]),
            "step_ratio_cpu_median": ratio(cpu),
            "step_ratio_cpu_best_blocks": min(cpu["mhd+cr"]) / min(cpu["mhd"])}


def kernels(n: int, repeats: int = 7, calls: int = 10) -> dict:
    """The module's kernels alone (ms per call, fastest of ``repeats``)."""
    sim, cr = _box(n, True)
    sim.step(1e-5)
    it, W = sim.integrator, sim.integrator.W
    U = sim.state.U.copy()
    calls_ = {
        "stage_first_order": lambda: cr.stage_source(sim, W, U, it.F1, it.F2, 1e-6, 0),
        "stage_second_order": lambda: cr.stage_source(sim, W, U, it.F1, it.F2, 1e-6, 1),
        "coefficients_for_output": lambda: cr._coefficients(sim, W, 0),
    }
    out = {}
    for name, f in calls_.items():
        f()
        best = np.inf
        for _ in range(repeats):
            t0 = time.perf_counter()
            for _ in range(calls):
                f()
            best = min(best, (time.perf_counter() - t0) / calls)
        out[name] = best * 1e3
    out["per_step_(two_stages)"] = out["stage_first_order"] + out["stage_second_order"]
    return out


def _wind(nR: int, with_cr: bool, vm_factor: float = 20.0):
    g, H = 1.0, 0.2                          # gravity, gas scale height (c_s^2 = g H)
    edges = {"R_low": "axis", "R_high": "outflow", "z_low": "reflecting", "z_high": "outflow"}
    mods = [Gravity(potential=Uniform(g))]
    probe = Simulation("cylindrical", (0, 1, nR), (0, 2, 2 * nR), edges, mhd=True,
                       riemann="hlld", modules=list(mods))
    B = 0.3
    probe.set_field(b1=0.0, b2=B)
    def rho(R, z):
        return np.exp(-z / H)

    probe.set_primitive(rho=rho, p=lambda R, z: g * H * rho(R, z))
    # largest gas signal speed of the initial state: |v| + c_fast (v = 0)
    W = probe.fields()
    cfast = np.sqrt((5.0 / 3.0 * W["p"] + B ** 2) / W["rho"]).max()
    vm = vm_factor * float(cfast)
    if with_cr:
        mods.append(CosmicRays.from_keys("cylindrical", max_speed=vm,
                                         diffusion={"parallel": 0.05, "perpendicular": 0.005},
                                         streaming={}))
    sim = Simulation("cylindrical", (0, 1, nR), (0, 2, 2 * nR), edges, mhd=True,
                     riemann="hlld", modules=mods)
    sim.set_field(b1=0.0, b2=B)
    fields = dict(rho=rho, p=lambda R, z: g * H * rho(R, z))
    if with_cr:
        # cosmic-ray pressure equal to the gas pressure at the base, falling more slowly
        fields["Ec"] = lambda R, z: 3.0 * g * H * np.exp(-z / (3 * H))
    sim.set_primitive(**fields)
    return sim, vm, float(cfast)


def wind(nR: int, t_end: float) -> dict:
    out = {"grid": f"{nR}x{2 * nR} (R, z)"}
    for label, with_cr in (("mhd", False), ("mhd+cr", True)):
        sim, vm, cfast = _wind(nR, with_cr)
        sim.step()                       # compile / load caches outside the timing
        t0, s0 = sim.t, sim.nstep
        w0 = time.perf_counter()
        sim.advance(t0 + t_end)
        wall = time.perf_counter() - w0
        out[label] = {"wall_s_per_unit_time": wall / (sim.t - t0),
                      "steps_per_unit_time": (sim.nstep - s0) / (sim.t - t0),
                      "zone_updates_per_s": sim.mesh.n1 * sim.mesh.n2 * (sim.nstep - s0) / wall}
        if with_cr:
            out[label]["V_m"] = vm
            out[label]["max_gas_signal_speed"] = cfast
    out["wall_time_ratio"] = (out["mhd+cr"]["wall_s_per_unit_time"]
                              / out["mhd"]["wall_s_per_unit_time"])
    return out


STEPS = {32: 20, 64: 40, 128: 10, 256: 3, 512: 1}


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--quick", action="store_true", help="small grids, few steps (smoke run)")
    p.add_argument("--sizes", default=None,
                   help="box cells per side, comma-separated (default 64,128,256)")
    p.add_argument("--size", type=int, default=None,
                   help="box cells per side of the kernel timing (default 128)")
    p.add_argument("--blocks", type=int, default=None, help="timed blocks per size (default 9)")
    a = p.parse_args(argv)
    if a.sizes:
        sizes = [int(x) for x in a.sizes.split(",")]
    else:
        sizes = [32] if a.quick else [64, 128, 256]
    blocks = a.blocks or (2 if a.quick else 9)
    steps = [2 if a.quick else STEPS.get(n, max(1, 2 * 128 ** 2 // n ** 2)) for n in sizes]
    res = {"throughput": [throughput(n, k, blocks) for n, k in zip(sizes, steps)],
           "kernels_ms": kernels(a.size or (32 if a.quick else 128), repeats=2 if a.quick else 7,
                                 calls=2 if a.quick else 10),
           "wind": wind(16 if a.quick else 48, 0.002 if a.quick else 0.05)}
    if a.json:
        print(json.dumps(res))
        return 0
    print("periodic box, MHD (HLLD, CT) with and without cosmic rays; step cost ratio "
          "MHD+CR / MHD (target <= 1.6), median over blocks by wall clock and by CPU time")
    for t in res["throughput"]:
        print(f"  {t['grid']:>9s}  zone updates/s MHD {t['zone_updates_per_s_mhd']:.3e}, "
              f"MHD+CR {t['zone_updates_per_s_mhd_cr']:.3e};  "
              f"ratio wall {t['step_ratio_median']:.2f} "
              f"(best blocks {t['step_ratio_best_blocks']:.2f}), "
              f"CPU {t['step_ratio_cpu_median']:.2f} "
              f"(best blocks {t['step_ratio_cpu_best_blocks']:.2f})")
    print("module kernels (ms per call):")
    for k, v in res["kernels_ms"].items():
        print(f"  {k:28s} {v:.3f}")
    w = res["wind"]
    print(f"wind-like problem {w['grid']}, V_m = {w['mhd+cr']['V_m']:.3g} "
          f"= 20 x max gas signal speed {w['mhd+cr']['max_gas_signal_speed']:.3g}")
    for k in ("mhd", "mhd+cr"):
        print(f"  {k:7s} wall s per unit time {w[k]['wall_s_per_unit_time']:.3g}, "
              f"steps per unit time {w[k]['steps_per_unit_time']:.3g}, "
              f"zone updates/s {w[k]['zone_updates_per_s']:.3e}")
    print(f"  wall-time ratio {w['wall_time_ratio']:.1f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
