"""Rerun the main verification problems and plot each against its reference.

Writes one PNG per problem into ``docs/verification/`` and the page
``docs/verification.md`` (each figure, the reference it is compared with, and
the measured error numbers, which are also printed on the figures).

    python tools/make_verification_plots.py                 # everything (~2-3 min, one core)
    python tools/make_verification_plots.py --only sedov toro
    python tools/make_verification_plots.py --list

The runs are the ones of the test suite, at the tests' (modest) resolutions:
set-ups, reference solutions and helpers are imported from ``tests/`` (the
exact Euler solver of ``tests/reference/exact_euler.py``, the composite
cosmic-ray Riemann solver, Parker's wind in Lambert-W form, ...), so this
page shows exactly what the tests check.  The measured numbers are kept in
``docs/verification/results.json``: with ``--only`` the page is rebuilt with
the new numbers of those problems and the stored ones of the others.
Nothing here asserts: the tests do.
"""
from __future__ import annotations

import argparse
import json
import math
import sys
import time
from contextlib import contextmanager
from dataclasses import asdict, dataclass, field
from pathlib import Path

import numpy as np
from matplotlib.figure import Figure  # no pyplot: the Agg canvas, no display needed
from matplotlib.ticker import NullLocator

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:          # the reference solutions live in tests/
    sys.path.insert(0, str(ROOT))

DPI = 90


# --------------------------------------------------------------------- plumbing
@dataclass
class Result:
    """What one verification problem produced."""
    key: str
    title: str
    reference: str                     # markdown: the published reference
    setup: str                         # markdown: what was run
    metrics: list = field(default_factory=list)    # (label, value text)
    summary: str = ""                  # one line for the overview table
    seconds: float = 0.0


CASES = []


def subplots(nrows=1, ncols=1, figsize=(8, 5), **kw):
    """``plt.subplots`` without pyplot (figures are never shown)."""
    fig = Figure(figsize=figsize)
    return fig, fig.subplots(nrows, ncols, **kw)


def case(key, title):
    def deco(fn):
        CASES.append((key, title, fn))
        return fn
    return deco


def metrics_text(metrics, per_line=3):
    parts = [f"{k}: {v}" for k, v in metrics]
    return "\n".join("   ".join(parts[i:i + per_line]) for i in range(0, len(parts), per_line))


def finish(fig, res, out_dir, per_line=3):
    """Put the title and the measured numbers on the figure and save it."""
    text = metrics_text(res.metrics, per_line)
    nlines = text.count("\n") + 1
    fig.suptitle(res.title, fontsize=11)
    h = fig.get_figheight()
    bottom = (0.15 + 0.15 * nlines) / h
    fig.text(0.01, 0.012, text, fontsize=7.5, family="monospace", va="bottom")
    fig.tight_layout(rect=(0, bottom, 1, 0.95))
    path = out_dir / f"{res.key}.png"
    fig.savefig(path, dpi=DPI)
    return path


@contextmanager
def recording(module, what):
    """Temporarily replace ``module.Simulation`` by a subclass that records
    ``sim.t`` after every call of ``what`` ("step" or "advance"), so that the
    time of every sample a test helper takes is known without copying the
    helper.  Yields the list of simulations created meanwhile (``.times``)."""
    base = module.Simulation
    made = []

    class Recording(base):
        def __init__(self, *a, **k):
            super().__init__(*a, **k)
            self.times = [self.t]
            made.append(self)

        def step(self, *a, **k):
            out = super().step(*a, **k)
            if what == "step":
                self.times.append(self.t)
            return out

        def advance(self, *a, **k):
            out = super().advance(*a, **k)
            if what == "advance":
                self.times.append(self.t)
            return out

    module.Simulation = Recording
    try:
        yield made
    finally:
        module.Simulation = base


def order(e_coarse, e_fine, ratio=2.0):
    return math.log(e_coarse / e_fine) / math.log(ratio)


def pct(x):
    return f"{100 * x:.2f} %"


# ------------------------------------------------------------------- core MHD
@case("toro", "Euler Riemann problems: Toro (2009) tests 1-5 against the exact solution")
def toro(out_dir):
    from tests.reference.exact_euler import solution
    from tests.test_euler_riemann import GAMMA, TORO, l1_density_error, run_tube

    fig, axes = subplots(2, 3, figsize=(11, 6.6))
    res = Result("toro", "", "", "")
    Ns = (100, 200, 400)
    errs = {}
    for k, ax in zip(sorted(TORO), axes.flat):
        left, right, t = TORO[k]
        x, f, _, _ = run_tube(k, 400)
        xf = np.linspace(0.0, 1.0, 4001)
        rho_ex = solution(left, right, xf, t, x0=0.5, gamma=GAMMA)[0]
        ax.plot(xf, rho_ex, "k-", lw=1.0, label="exact (Toro 2009)")
        ax.plot(x, f["rho"], "o", ms=1.8, color="C3", label="wind2d, 400 cells")
        errs[k] = [l1_density_error(k, n) for n in Ns]
        ax.set_title(f"test {k}, t = {t}: L1(rho) = {errs[k][-1]:.2e}", fontsize=9)
        ax.set_xlabel("x")
        ax.set_ylabel("density")
        res.metrics.append((f"test {k} L1(rho) 400", f"{errs[k][-1]:.3e}"))
    axes.flat[0].legend(fontsize=7, loc="lower left")
    ax = axes.flat[5]
    for k in sorted(TORO):
        ax.loglog(Ns, errs[k], "o-", ms=3, label=f"test {k}")
    ax.loglog(Ns, errs[1][0] * (Ns[0] / np.array(Ns)), "k--", lw=0.8, label="slope -1")
    ax.set_xlabel("cells")
    ax.set_ylabel("L1 density error")
    ax.set_title("convergence", fontsize=9)
    ax.legend(fontsize=7, ncol=2)
    for k in sorted(TORO):
        res.metrics.append((f"test {k} order 200-400", f"{order(errs[k][1], errs[k][2]):.2f}"))
    res.title = "Euler Riemann problems, Toro (2009) tests 1-5: density against the exact solution"
    res.reference = ("Exact Riemann solver written from Toro, *Riemann Solvers and Numerical "
                     "Methods for Fluid Dynamics*, 3rd ed., Springer 2009, ch. 4 "
                     "(`tests/reference/exact_euler.py`, checked against Toro's Table 4.3 in "
                     "`tests/test_exact_euler.py`); initial states of Table 4.1, gamma = 1.4.")
    res.setup = ("`tests/test_euler_riemann.py::run_tube`: Cartesian tube along x, 4 periodic "
                 "cells across, HLLC, MC limiter; L1 of the cell-centre density against the "
                 "exact solution at the cell centres.")
    res.summary = (f"L1(rho) at 400 cells {min(e[-1] for e in errs.values()):.1e} to "
                   f"{max(e[-1] for e in errs.values()):.1e}; order 200-400 "
                   f"{min(order(e[1], e[2]) for e in errs.values()):.2f}-"
                   f"{max(order(e[1], e[2]) for e in errs.values()):.2f}")
    finish(fig, res, out_dir, per_line=5)
    return res


@case("brio_wu", "Brio & Wu (1988) MHD shock tube")
def brio_wu(out_dir):
    from tests.test_brio_wu import (
        BX,
        FEATURES,
        LEFT,
        N_REF,
        PLATEAUS,
        RIGHT,
        T_END,
        fast_speed,
        restrict,
        run_bw,
    )
    n = 800
    along = run_bw(n)[0]
    ref = run_bw(N_REF)[0]
    x = along["x"]
    names = ("rho", "vx", "vy", "p", "By")
    fig, axes = subplots(2, 2, figsize=(10, 6.6))
    worst = 0.0
    for ax, q in zip(axes.flat, ("rho", "vy", "p", "By")):
        ax.plot(ref["x"], ref[q], "-", color="0.6", lw=1.0, label=f"HLLD {N_REF} cells")
        ax.plot(x, along[q], "o", ms=1.5, color="C3", label=f"HLLD {n} cells")
        k = names.index(q)
        for i, (label, ((lo, hi), want)) in enumerate(PLATEAUS.items()):
            ax.plot([lo, hi], [want[k], want[k]], "-", color="c", lw=4, alpha=0.6, zorder=4,
                    label="reference plateaus" if i == 0 else None)
        ax.set_xlabel("x")
        ax.set_ylabel(q)
    for (lo, hi), want in PLATEAUS.values():
        sel = (x > lo) & (x < hi)
        for q, w in zip(names, want):
            worst = max(worst, abs(float(along[q][sel].mean()) - w) / abs(w))
    cl = fast_speed(LEFT["rho"], LEFT["p"], BX, LEFT["By"])
    cr = fast_speed(RIGHT["rho"], RIGHT["p"], BX, RIGHT["By"])
    for ax in axes.flat:
        for xh in (0.5 - cl * T_END, 0.5 + cr * T_END):
            ax.axvline(xh, color="g", ls=":", lw=0.9)
    axes.flat[0].legend(fontsize=7, loc="lower left")
    # feature positions as in the test: largest |d rho/dx| in a window
    dx = 1.0 / n
    xf = 0.5 * (x[1:] + x[:-1])
    grad = np.abs(np.diff(along["rho"])) / dx
    offs = []
    for want, (lo, hi) in FEATURES.values():
        inside = (xf > lo) & (xf < hi)
        offs.append((xf[inside][np.argmax(grad[inside])] - want) / dx)
        axes.flat[0].axvline(want, color="b", ls="--", lw=0.7)
    Ns = (200, 400, 800)
    l1 = [float(np.mean(np.abs(run_bw(m)[0]["rho"] - restrict(ref["rho"], m)))) for m in Ns]
    res = Result("brio_wu", "Brio & Wu (1988) MHD shock tube, t = 0.1: reference plateaus "
                 "(bars), fast-rarefaction heads (green), discontinuities (blue)", "", "")
    res.metrics = [("worst plateau deviation (5 variables x 4 plateaus)", pct(worst)),
                   ("compound/contact/slow-shock offsets [cells]",
                    ", ".join(f"{o:+.1f}" for o in offs)),
                   (f"L1(rho) vs {N_REF}-cell run, 200/400/800",
                    " / ".join(f"{e:.2e}" for e in l1)),
                   ("order 400-800", f"{order(l1[1], l1[2]):.2f}")]
    res.reference = ("Brio & Wu (1988, J. Comput. Phys. 75, 400): gamma = 2, B_x = 0.75, "
                     "(rho, p, B_y) = (1, 1, 1) | (0.125, 0.1, -1) (initial data from memory). "
                     "The paper tabulates no plateaus: the plateau values and discontinuity "
                     "positions are from an independent second-order calculation at 12000 cells "
                     "(methods notes item 2, tag [C]); the fast-rarefaction heads are exact "
                     "(fast speeds of the initial states).")
    res.setup = ("`tests/test_brio_wu.py::run_bw`: 800 cells, HLLD, MC limiter; grey: the same "
                 f"scheme at {N_REF} cells, used as the self-convergence reference for L1.")
    res.summary = (f"plateaus within {pct(worst)}; features within "
                   f"{max(abs(o) for o in offs):.1f} cells; L1 order {order(l1[1], l1[2]):.2f}")
    finish(fig, res, out_dir, per_line=2)
    return res


@case("sedov", "Sedov-Taylor point blast on the axis")
def sedov(out_dir):
    from tests.test_sedov_axis import XI0, _front
    from wind2d import Simulation

    # the set-up of tests/test_sedov_axis.py (blast at (R, z) = (0, 0), gamma = 5/3)
    n, L, E, rho0, p0, g = 64, 0.5, 1.0, 1.0, 1e-5, 5.0 / 3.0
    sim = Simulation("cylindrical", (0.0, L, n), (-L, L, 2 * n),
                     {"R_low": "axis", "R_high": "outflow", "z_low": "outflow",
                      "z_high": "outflow"}, gamma=g, riemann="hllc")
    R, z = sim.mesh.centres()
    r = np.hypot(R, z)
    hot = r < 3.5 * L / n
    V = sim.mesh.cell_volumes()
    sim.set_primitive(rho=rho0, p=np.where(hot, (g - 1.0) * (E / (2 * np.pi)) / V[hot].sum(), p0))
    e0 = sim.totals()["energy"]
    Rc = sim.mesh.x1c[sim.mesh.is_:sim.mesh.ie]
    zc = sim.mesh.x2c[sim.mesh.js:sim.mesh.je]
    times = np.linspace(0.01, 0.05, 9)
    fronts = []
    for t in times:
        sim.advance(t)
        rho = sim.field("rho")
        fronts.append((_front(Rc, 0.5 * (rho[n - 1] + rho[n]), rho0),
                       _front(zc[n:], rho[n:, 0], rho0),
                       _front(-zc[:n][::-1], rho[:n, 0][::-1], rho0)))
    fronts = np.array(fronts)
    exact = XI0 * (E * times ** 2 / rho0) ** 0.2
    de = abs(sim.totals()["energy"] / e0 - 1.0)

    fig, (a1, a2) = subplots(1, 2, figsize=(10, 4.4))
    a1.plot(r.ravel(), sim.field("rho").ravel(), ".", ms=1.0, color="C0", alpha=0.4,
            label="all cells")
    a1.axvline(exact[-1], color="k", ls="--", lw=1, label="R_s, Sedov-Taylor")
    a1.axhline((g + 1) / (g - 1), color="g", ls=":", lw=1, label="strong-shock jump 4")
    a1.set_xlabel("r = sqrt(R^2 + z^2)")
    a1.set_ylabel("density")
    a1.set_title(f"t = {times[-1]}: density against spherical radius", fontsize=9)
    a1.legend(fontsize=7)
    a2.plot(times, exact, "k-", lw=1, label="xi0 (E t^2/rho0)^(1/5)")
    for k, (lab, m) in enumerate((("along R", "o"), ("along +z", "s"), ("along -z", "x"))):
        a2.plot(times, fronts[:, k], m, ms=4, mfc="none", label=lab)
    a2.set_xlabel("t")
    a2.set_ylabel("shock radius")
    a2.legend(fontsize=7)
    err = fronts[-1] / exact[-1] - 1.0
    res = Result("sedov", "Sedov-Taylor point blast at (R, z) = (0, 0), gamma = 5/3, "
                 "64 x 128 cells", "", "")
    res.metrics = [("R_s error at t=0.05 along R/+z/-z",
                    " / ".join(f"{100 * e:+.2f} %" for e in err)),
                   ("R vs z", f"{100 * (fronts[-1, 0] / fronts[-1, 1] - 1):+.3f} %"),
                   ("peak rho", f"{sim.field('rho').max():.2f}"),
                   ("energy change", f"{de:.1e}")]
    res.reference = ("Sedov-Taylor similarity solution, R_s = xi0 (E t^2/rho0)^(1/5) (Sedov "
                     "1959, *Similarity and Dimensional Methods in Mechanics*) with xi0 = 1.15167 "
                     "for gamma = 5/3 (independent integration of the self-similar equations, "
                     "methods notes item 3 [C]; agrees with Kamm & Timmes 2007 as remembered); "
                     "strong-shock density jump (gamma+1)/(gamma-1) = 4.")
    res.setup = ("The set-up of `tests/test_sedov_axis.py`: cylindrical grid R in [0, 0.5], "
                 "z in [-0.5, 0.5], 64 x 128 cells, HLLC, E = 1 deposited as pressure within "
                 "3.5 cells; front = outermost crossing of rho = 2 rho0 (`_front`).")
    res.summary = (f"R_s within {100 * np.abs(err).max():.1f} % at t = 0.05 (finite deposit), "
                   f"R vs z {100 * abs(fronts[-1, 0] / fronts[-1, 1] - 1):.2f} %, energy "
                   f"{de:.0e}")
    finish(fig, res, out_dir, per_line=2)
    return res


@case("linear_waves", "Linear MHD waves: convergence")
def linear_waves(out_dir):
    from tests.test_linear_waves import CASES as WAVES
    from tests.test_linear_waves import wave_run
    Ns = np.array([32, 64, 128])
    fig, ax = subplots(figsize=(7.5, 5.5))
    res = Result("linear_waves", "Linear MHD waves at 45 degrees to the grid: L1 error "
                 "after one period", "", "")
    orders, divb = [], 0.0
    for wave, riemann in WAVES:
        out = [wave_run(wave, int(n), riemann) for n in Ns]
        e = np.array([o[0] for o in out])
        p = order(e[0], e[-1], Ns[-1] / Ns[0])
        orders.append(p)
        ax.loglog(Ns, e, "o-", ms=4, label=f"{wave} ({riemann.upper()}): order {p:.2f}")
        res.metrics.append((f"{wave} {riemann}", " / ".join(f"{x:.2e}" for x in e)
                            + f", order {p:.2f}"))
        divb = max(divb, max(o[1] / (1.8 * n) for o, n in zip(out, Ns)))
    res.metrics.append(("max |div B| dx/|B|, all runs", f"{divb:.0e}"))
    ax.loglog(Ns, 2e-8 * (32 / Ns) ** 2, "k--", lw=0.8, label="slope -2")
    ax.set_xticks(Ns, [str(n) for n in Ns])
    ax.xaxis.set_minor_locator(NullLocator())
    ax.set_xlabel("cells per side")
    ax.set_ylabel("L1 error (8 primitives, root sum of squares)")
    ax.legend(fontsize=8)
    res.reference = ("Linear-wave convergence test of Gardiner & Stone (2005, J. Comput. Phys. "
                     "205, 509; 2008, 227, 4123) and Stone et al. (2008, ApJS 178, 137, sect. "
                     "8.1), from memory: the exact solution after one period is the initial "
                     "state; eigenvectors from the linearised ideal-MHD equations "
                     "(numpy.linalg.eig). Second order expected.")
    res.setup = ("`tests/test_linear_waves.py::wave_run`: periodic unit square, k along the "
                 "diagonal, amplitude 1e-6, fast/Alfven/slow speeds 2/1/0.5, MC limiter, "
                 "32/64/128 cells per side.")
    res.summary = f"order (32-128) {min(orders):.2f}-{max(orders):.2f}"
    finish(fig, res, out_dir, per_line=2)
    return res


@case("field_loop", "Gardiner & Stone field-loop advection")
def field_loop(out_dir):
    import tests.test_field_loop as tfl
    with recording(tfl, "advance") as made:
        fine = tfl.run(128, 64, 0.0, "hlld")
        t_fine = np.array(made[-1].times)
        coarse = tfl.run(64, 32, 0.0, "hlld")
        t_coarse = np.array(made[-1].times)
    fig, (a1, a2) = subplots(1, 2, figsize=(11, 4.2), gridspec_kw={"width_ratios": [1.5, 1]})
    b = np.hypot(fine["bx"], fine["by"]) / tfl.A0
    im = a1.imshow(b, origin="lower", extent=(-1, 1, -0.5, 0.5), cmap="viridis", vmin=0,
                   vmax=1.1)
    th = np.linspace(0, 2 * np.pi, 200)
    a1.plot(tfl.R0 * np.cos(th), tfl.R0 * np.sin(th), "w--", lw=0.8)
    a1.set_title("|B|/A0 after one crossing (t = 1), 128 x 64; dashed: exact loop edge",
                 fontsize=9)
    a1.set_xlabel("x")
    a1.set_ylabel("y")
    fig.colorbar(im, ax=a1, shrink=0.8)
    a2.plot(t_coarse, coarse["energy"], "C1-", label="64 x 32")
    a2.plot(t_fine, fine["energy"], "C0-", label="128 x 64")
    a2.axhline(1.0, color="k", lw=0.8, ls=":", label="exact (pure translation)")
    a2.set_xlabel("t (crossings)")
    a2.set_ylabel("magnetic energy / initial")
    a2.legend(fontsize=8)
    res = Result("field_loop", "Field-loop advection (Gardiner & Stone 2005), v = (2, 1), "
                 "HLLD + CT", "", "")
    res.metrics = [("E_B/E_B0 at t=1, 64x32 / 128x64",
                    f"{coarse['energy'][-1]:.4f} / {fine['energy'][-1]:.4f}"),
                   ("correlation with initial |B|", f"{fine['corr']:.4f}"),
                   ("max |div B| dx/|B|", f"{fine['div'].max():.1e}"),
                   ("B^2 centroid (dx = 0.016)",
                    f"({fine['centroid'][0]:.1e}, {fine['centroid'][1]:.1e})")]
    res.reference = ("Field-loop advection of Gardiner & Stone (2005, J. Comput. Phys. 205, "
                     "509, sect. 5.1): A_z = 1e-3 (0.3 - r) in a periodic 2 x 1 box with v = "
                     "(2, 1); the exact solution is pure translation (the loop returns at t = 1).")
    res.setup = ("`tests/test_field_loop.py::run`: HLLD, MC limiter, CT-contact corner "
                 "electric fields; magnetic energy of the cell-centred field.")
    res.summary = (f"E_B/E_B0 = {fine['energy'][-1]:.3f} (128 x 64), "
                   f"{coarse['energy'][-1]:.3f} (64 x 32); div B {fine['div'].max():.0e}")
    finish(fig, res, out_dir, per_line=2)
    return res


# ------------------------------------------------------------------- gravity
@case("parker_wind", "Parker (1958) isothermal wind")
def parker_wind(out_dir):
    from tests.test_parker_wind import PROBLEM, _mass_flux, parker_mach
    from wind2d.problem import build_simulation, load

    sim = build_simulation(load(PROBLEM), comm=None)
    point = sim.modules[0].potential
    cs = math.sqrt(sim.eos.cs2)
    rc = point.G * point.M / (2 * sim.eos.cs2)
    sim.advance(27 * rc / cs)                    # as the test: 27 flow times r_c / c_s
    R, z = sim.mesh.centres()
    r = np.hypot(R, z)
    v = (sim.field("vR") * R + sim.field("vz") * z) / r / cs
    k = np.arange(min(r.shape))
    rows = {"along R (midplane)": (0, slice(None)), "along z (axis)": (slice(None), 0),
            "diagonal": (k, k)}
    fig, (a1, a2) = subplots(1, 2, figsize=(10.5, 4.4))
    xs = np.linspace(0.3, 7.0, 400)
    a1.plot(xs, parker_mach(xs), "k-", lw=1, label="Parker, Lambert W (Cranmer 2004)")
    a1.axvspan(0, 0.52, color="0.85", label="held base")
    errs = {}
    for (name, sel), m in zip(rows.items(), ("o", "s", "^")):
        x, vv = r[sel] / rc, v[sel]
        a1.plot(x, vv, m, ms=3, mfc="none", label=name)
        keep = (x >= 1.5) & (x <= 5.0)
        errs[name] = float(np.abs(vv[keep] / parker_mach(x[keep]) - 1).max())
    a1.axvspan(1.5, 5.0, color="C2", alpha=0.08, label="checked range")
    a1.set_xlim(0, 7)
    a1.set_xlabel("r / r_c")
    a1.set_ylabel("v_r / c_s")
    a1.legend(fontsize=7, loc="lower right")
    radii = np.linspace(1.0, 5.0, 17)
    mdot = _mass_flux(sim, v * cs, rc * radii)
    a2.plot(radii, mdot / mdot.mean(), "o-", ms=3)
    a2.axhline(1.0, color="k", lw=0.8, ls=":")
    a2.set_ylim(0.98, 1.02)
    a2.set_xlabel("r / r_c")
    a2.set_ylabel("4 pi r^2 <rho v_r> / mean")
    a2.set_title("mass flux through spheres (steady: constant)", fontsize=9)
    spread = float(np.ptp(mdot) / mdot.mean())
    res = Result("parker_wind", "Parker (1958) isothermal wind from a held base, 80 x 80 "
                 "stretched cells, t = 27 r_c/c_s", "", "")
    res.metrics = [(f"max |v/v_Parker - 1| (1.5-5 r_c) {n}", pct(e)) for n, e in errs.items()]
    res.metrics.append(("mass-flux spread 1-5 r_c", pct(spread)))
    res.reference = ("Parker (1958, ApJ 128, 664) transonic isothermal wind, "
                     "M^2 = -W_k[-x^-4 exp(4(1 - 1/x) - 1)] (Lambert-W form of Cranmer 2004, "
                     "Am. J. Phys. 72, 1397; `tests/test_parker_wind.py::parker_mach`, checked "
                     "against Parker's implicit equation); steady mass flux 4 pi r^2 rho v.")
    res.setup = ("`problems/gravity/parker_wind.yaml`: point mass, isothermal gas "
                 "(120 km/s), base sphere of 0.52 r_c held at 1e8 cm^-3 (hold module), run "
                 "for 27 flow times as in the test.")
    res.summary = f"v within {pct(max(errs.values()))} (1.5-5 r_c); Mdot flat to {pct(spread)}"
    finish(fig, res, out_dir, per_line=2)
    return res


@case("hydrostatic_nfw", "Isothermal atmosphere at rest in an NFW halo")
def hydrostatic_nfw(out_dir):
    from tests.test_hydrostatic import _nfw_run
    from wind2d.physics.gravity import gravity_modules
    s32, v32 = _nfw_run(32)
    s64, v64 = _nfw_run(64)
    _, p32 = _nfw_run(32, "physics.gravity.well_balanced=false")
    _, p64 = _nfw_run(64, "physics.gravity.well_balanced=false")
    sim = s64
    R, z = sim.mesh.centres()
    r = np.hypot(R, z)
    pot = gravity_modules(sim)[0].potential
    # temperature of the set-up: cells next to the origin are held at the initial state
    theta = float(sim.field("p")[0, 0] / sim.field("rho")[0, 0])
    phi0 = float(pot.phi(np.array(0.0), np.array(0.0)))
    # normalisation: the setup's reference density (rho0 at r = 0)
    rho0 = float(np.median(sim.rho_start * np.exp((pot.phi(R, z) - phi0) / theta)))
    rs = np.linspace(0.0, 40.0, 400)
    exact = rho0 * np.exp(-(pot.phi(rs, 0.0 * rs) - phi0) / theta)
    fig, ((a1, a4), (a2, a3)) = subplots(2, 2, figsize=(10.5, 7.6))
    a1.semilogy(rs, exact / rho0, "k-", lw=1, label="exp(-(Phi - Phi0)/theta)")
    a1.semilogy(r.ravel(), sim.field("rho").ravel() / rho0, ".", ms=1.5, color="C3",
                label="all cells after 10 t_cross (64^2)")
    for ax in (a1, a4):
        ax.axvspan(0, 4, color="0.85", label="held (cusp)")
        ax.axvspan(36, 57, color="0.92", label="held (corners)")
        ax.set_xlim(0, 57)
        ax.set_xlabel("r [kpc]")
    a1.set_ylabel("density / rho0")
    a1.legend(fontsize=7)
    for s_, m in ((s32, "C1"), (s64, "C3")):
        Rn, zn = s_.mesh.centres()
        ex = rho0 * np.exp(-(pot.phi(Rn, zn) - phi0) / theta)
        a4.semilogy(np.hypot(Rn, zn).ravel(), np.abs(s_.field("rho") / ex - 1).ravel(), ".",
                    ms=1.5, color=m, label=f"{Rn.shape[0]}^2")
    a4.set_ylabel("|rho / exact - 1|")
    a4.set_ylim(1e-9, 1e-1)
    a4.legend(fontsize=7, loc="upper right")
    cs = math.sqrt(theta)
    vmag = np.hypot(sim.field("vR"), sim.field("vz")) / cs
    Rf = sim.mesh.x1f[sim.mesh.is_:sim.mesh.ie + 1]
    zf = sim.mesh.x2f[sim.mesh.js:sim.mesh.je + 1]
    im = a2.pcolormesh(Rf, zf, np.log10(np.maximum(vmag, 1e-12)), cmap="magma", vmin=-8,
                       vmax=-3)
    a2.set_aspect("equal")
    a2.set_xlabel("R [kpc]")
    a2.set_ylabel("z [kpc]")
    a2.set_title("log10 |v|/c_s, 64^2, well balanced", fontsize=9)
    fig.colorbar(im, ax=a2, shrink=0.8)
    Ns = np.array([32, 64])
    a3.loglog(Ns, [v32, v64], "o-", label="well-balanced source")
    a3.loglog(Ns, [p32, p64], "s-", label="plain source")
    a3.loglog(Ns, v32 * (32 / Ns) ** 2, "k--", lw=0.8, label="slope -2")
    a3.axhline(1e-3, color="r", ls=":", lw=0.8, label="target 1e-3")
    a3.set_xticks(Ns, [str(n) for n in Ns])
    a3.xaxis.set_minor_locator(NullLocator())
    a3.set_xlabel("cells per axis")
    a3.set_ylabel("max |v| / c_s after 10 crossings")
    a3.legend(fontsize=7)
    dev = np.abs(sim.field("rho") / sim.rho_start - 1)
    V = sim.mesh.cell_volumes()
    res = Result("hydrostatic_nfw", "Isothermal atmosphere (2.5e6 K) in an NFW halo of 1e12 "
                 "Msun: at rest after ten sound-crossing times", "", "")
    res.metrics = [("max|v|/c_s 32 / 64 (well balanced)", f"{v32:.2e} / {v64:.2e}"),
                   ("order", f"{order(v32, v64):.2f}"),
                   ("max|v|/c_s 32 / 64 (plain source)", f"{p32:.2e} / {p64:.2e}"),
                   ("rho change (64^2): volume mean / max",
                    f"{np.sum(V * dev) / np.sum(V):.1e} / {dev.max():.1e}")]
    res.reference = ("Exact isothermal hydrostatic atmosphere rho = rho0 exp(-(Phi - Phi0)/theta) "
                     "(common practice) in the NFW potential (Navarro, Frenk & White 1996, ApJ "
                     "462, 563; c = 10); target max|v| < 1e-3 c_s after ten crossings "
                     "(self-set, methods notes item 10).")
    res.setup = ("`problems/gravity/hydrostatic_nfw.yaml` through `tests/test_hydrostatic.py::"
                 "_nfw_run`: stretched quarter plane of 40 kpc, 32^2 and 64^2 cells; centre "
                 "(r < 4 kpc) and corners (r > 36 kpc) held.")
    res.summary = (f"max|v|/c_s {v32:.1e} -> {v64:.1e} (order {order(v32, v64):.2f}); plain "
                   f"source {p32:.1e}")
    finish(fig, res, out_dir, per_line=2)
    return res


# --------------------------------------------------------------- cosmic rays
@case("cr_diffusion", "Cosmic-ray diffusion: Gaussian pulse")
def cr_diffusion(out_dir):
    from tests.test_cr_diffusion import KAPPA, S0, _axis_pulse, _field_aligned
    e44, _, _ = _field_aligned(44, 40.0)
    e88, E, sim = _field_aligned(88, 40.0)
    a22, _, _ = _axis_pulse(22, 40.0)
    a44, Ea, sa = _axis_pulse(44, 40.0)
    t, th = 0.125, np.pi / 6
    s2 = S0 ** 2 + 2 * KAPPA * t
    x, y = sim.mesh.centres()
    par = x * np.cos(th) + y * np.sin(th)
    perp = -x * np.sin(th) + y * np.cos(th)
    exact = np.sqrt(S0 ** 2 / s2) * np.exp(-par ** 2 / (2 * s2) - perp ** 2 / (2 * S0 ** 2))
    fig, axes = subplots(1, 3, figsize=(12.5, 4.2))
    a1, a2, a3 = axes
    h = 0.35
    im = a1.imshow(E, origin="lower", extent=(-h, h, -h, h), cmap="viridis")
    a1.contour(x, y, exact, levels=[0.05, 0.2, 0.4, 0.6], colors="w", linewidths=0.8)
    a1.contour(x, y, E, levels=[0.05, 0.2, 0.4, 0.6], colors="r", linewidths=0.8,
               linestyles="--")
    a1.plot([-0.3 * np.cos(th), 0.3 * np.cos(th)], [-0.3 * np.sin(th), 0.3 * np.sin(th)], "r:",
            lw=0.8)
    a1.set_title("E_c, 88^2, field at 30 deg (dotted);\ncontours: exact (white), wind2d (red dashed)", fontsize=9)
    fig.colorbar(im, ax=a1, shrink=0.8)
    dx = 0.7 / 88
    on = np.abs(perp) < 0.5 * dx
    across = np.abs(par) < 0.5 * dx
    ps = np.linspace(-h, h, 400)
    a2.plot(ps, np.sqrt(S0 ** 2 / s2) * np.exp(-ps ** 2 / (2 * s2)), "k-", lw=1,
            label="exact along b")
    a2.plot(ps, np.sqrt(S0 ** 2 / s2) * np.exp(-ps ** 2 / (2 * S0 ** 2)), "k--", lw=1,
            label="exact across b")
    a2.plot(par[on], E[on], "o", ms=3, mfc="none", label="cells on the line along b")
    a2.plot(perp[across], E[across], "s", ms=3, mfc="none", label="cells across b")
    a2.set_xlabel("distance from the centre")
    a2.set_ylabel("E_c")
    a2.legend(fontsize=7)
    R, z = sa.mesh.centres()
    n = R.shape[1]
    a3.plot(ps[ps >= 0], (S0 ** 2 / s2) ** 1.5 * np.exp(-ps[ps >= 0] ** 2 / (2 * s2)), "k-",
            lw=1, label="exact 3D Gaussian")
    a3.plot(np.hypot(R[n - 1], z[n - 1]), Ea[n - 1], "o", ms=3, mfc="none",
            label="row next to z = 0 (along R)")
    a3.plot(np.hypot(R[n:, 0], z[n:, 0]), Ea[n:, 0], "s", ms=3, mfc="none",
            label="column next to the axis (along z)")
    a3.set_xlabel("r = sqrt(R^2 + z^2)")
    a3.set_ylabel("E_c")
    a3.set_title("isotropic pulse on the axis of the (R, z) grid, 44 x 88", fontsize=9)
    a3.legend(fontsize=7)
    res = Result("cr_diffusion", "Cosmic-ray diffusion by the two-moment method: Gaussian "
                 "pulse, kappa = 0.01, t = 0.125, V_m = 40", "", "")
    res.metrics = [("along 30-deg field L1 44 / 88", f"{pct(e44)} / {pct(e88)}"),
                   ("order", f"{order(e44, e88):.2f}"),
                   ("on the axis L1 22 / 44", f"{pct(a22)} / {pct(a44)}"),
                   ("order", f"{order(a22, a44):.2f}")]
    res.reference = ("Analytic spreading Gaussian, variance s0^2 + 2 kappa t along every "
                     "diffusing direction (common practice; methods notes item 5), unchanged "
                     "across a field with kappa_perp = 0; the 3D spherical solution for the "
                     "pulse on the axis. Method: two-moment transport of Jiang & Oh (2018, ApJ "
                     "854, 5), which tends to diffusion for V_m >> kappa/L.")
    res.setup = ("`tests/test_cr_diffusion.py::_field_aligned` (periodic Cartesian box 0.7, "
                 "field-aligned diffusion only, gas frozen) and `::_axis_pulse` (cylindrical, "
                 "isotropic); L1 relative to the exact total.")
    res.summary = (f"L1 {pct(e88)} (88^2, oblique field), {pct(a44)} (axis); orders "
                   f"{order(e44, e88):.2f}, {order(a22, a44):.2f}")
    finish(fig, res, out_dir, per_line=4)
    return res


@case("cr_streaming", "Cosmic-ray streaming: rho^(2/3) law and bottleneck")
def cr_streaming(out_dir):
    from tests.test_cr_streaming import GC, _run
    x, rho, E, _, cr = _run()
    _, _, E40, _, _ = _run(vm=40.0)
    fig, (a1, a2) = subplots(2, 1, figsize=(8, 6.2), sharex=True,
                                 gridspec_kw={"height_ratios": [1, 1.6]})
    a1.plot(x, rho, "k-")
    a1.set_ylabel("gas density (frozen)")
    a1.axvline(0.6, color="0.5", ls=":", lw=0.8)
    law = np.where(x >= 0.6, rho ** (GC / 2), 1.0)
    a2.semilogy(x, E, "o", ms=3, mfc="none", color="C3", label="wind2d, V_m = 20")
    a2.semilogy(x, E40, "-", lw=0.8, color="C0", label="wind2d, V_m = 40")
    a2.semilogy(x, law, "k-", lw=1,
                label="plateau at the source level, then P_c ∝ rho^(2/3) from the maximum")
    a2.semilogy(x[x < 0.6], rho[x < 0.6] ** (GC / 2), "k--", lw=0.8,
                label="rho^(2/3) from the source (what it would be without the bottleneck)")
    a2.axvline(0.6, color="0.5", ls=":", lw=0.8)
    a2.set_xlabel("x")
    a2.set_ylabel("E_c")
    a2.legend(fontsize=7, loc="lower left")
    k = (x > 0.7) & (x < 1.2)
    slope = np.polyfit(np.log(rho[k]), np.log(E[k]), 1)[0]
    plateau = E[x < 0.55]
    dev = float(np.abs(E[k] / law[k] - 1).max())
    vmdiff = float(np.max(np.abs(E[x < 1.2] / E40[x < 1.2] - 1.0)))
    res = Result("cr_streaming", "Cosmic-ray streaming at the Alfven speed through a fixed "
                 "density profile, t = 2 (steady)", "", "")
    res.metrics = [("d ln P_c / d ln rho on [0.7, 1.2]", f"{slope:.4f} (2/3 = 0.6667)"),
                   ("plateau max/min - 1 (x < 0.55)", pct(plateau.max() / plateau.min() - 1)),
                   ("max |E/law - 1| on [0.7, 1.2]", pct(dev)),
                   ("V_m 20 vs 40, x < 1.2", pct(vmdiff)),
                   ("streaming heating (tally)", f"{cr.tallies['cr_streaming_heating']:.3e}")]
    res.reference = ("Steady streaming with v_s = v_A: P_c ∝ v_A^(-gamma_c) = rho^(2/3) where "
                     "cosmic rays stream down the density gradient (a common result, derived in "
                     "methods notes item 5 [C]), and the streaming bottleneck (Jiang & Oh 2018, "
                     "ApJ 854, 5, from memory): flat P_c from the source across a density "
                     "minimum to the next maximum. The solid black line has no free parameter.")
    res.setup = ("`tests/test_cr_streaming.py::_run`: 96 cells on [0, 1.5], E_c = 1 held at "
                 "x = 0, B_x = 1, gas frozen at rest, streaming only.")
    res.summary = (f"slope {slope:.3f} (2/3); plateau flat to "
                   f"{pct(plateau.max() / plateau.min() - 1)}; V_m-independent to {pct(vmdiff)}")
    finish(fig, res, out_dir, per_line=2)
    return res


@case("cr_shock_tube", "Cosmic-ray modified shock tube")
def cr_shock_tube(out_dir):
    from tests.test_cr_shock_tube import GC, LEFT, RIGHT, Composite, _run
    ex = Composite(LEFT, RIGHT)
    t = 0.2
    l1 = {}
    for n in (100, 200, 400):
        sim, cr, e0 = _run(n, t)
        x = sim.mesh.centres()[0][0]
        l1[n] = float(np.mean(np.abs(sim.field("rho")[0] - ex.sample((x - 0.5) / t)[0])))
    V = sim.mesh.cell_volumes()
    e1 = np.sum(V * (sim.conserved()[4] + sim.conserved()[cr.iE]))
    xf = np.linspace(0.0, 1.0, 1201)
    ref = ex.sample((xf - 0.5) / t)
    num = (sim.field("rho")[0], sim.field("vx")[0], sim.field("p")[0],
           (GC - 1) * sim.field("Ec")[0])
    fig, axes = subplots(2, 2, figsize=(10, 6.4))
    for k, (ax, lab) in enumerate(zip(axes.flat, ("density", "velocity", "gas pressure",
                                                  "cosmic-ray pressure"))):
        ax.plot(xf, ref[k], "k-", lw=1, label="exact two-fluid solution")
        ax.plot(x, num[k], "o", ms=1.6, color="C3", label="wind2d, 400 cells")
        ax.set_xlabel("x")
        ax.set_ylabel(lab)
    axes.flat[0].legend(fontsize=7)
    shock = 0.5 + ex.shock_speed(RIGHT, ex.rhoR, 1) * t
    contact = 0.5 + ex.u * t
    plateau = (x > contact + 0.03) & (x < shock - 0.03)
    pc_err = num[3][plateau].mean() / ex.pc(ex.rhoR, RIGHT) - 1.0
    res = Result("cr_shock_tube", "Cosmic-ray modified shock tube (gas gamma = 5/3, cosmic "
                 "rays 4/3, no transport), t = 0.2", "", "")
    res.metrics = [("L1(rho) 100/200/400", " / ".join(f"{l1[n]:.2e}" for n in (100, 200, 400))),
                   ("order 200-400", f"{order(l1[200], l1[400]):.2f}"),
                   ("post-shock P_c plateau", f"{100 * pc_err:+.3f} %"),
                   ("gas + CR energy change", f"{abs(e1 / e0 - 1):.1e}")]
    res.reference = ("Riemann problem of a composite of thermal gas and adiabatic cosmic rays "
                     "(Pfrommer, Springel, Ensslin & Jubelgas 2006, MNRAS 367, 113): exact "
                     "solution of `tests/test_cr_shock_tube.py::Composite` (cosmic rays "
                     "adiabatic across the shock), checked against independent values "
                     "(methods notes item 6 [C]: P* = 0.301669, u* = 0.891025). States of our "
                     "own choice: (rho, u, P, P_c) = (1, 0, 0.5, 0.5) | (0.125, 0, 0.05, 0.05).")
    res.setup = ("`tests/test_cr_shock_tube.py::_run`: 100/200/400 cells, HLLC, cosmic rays "
                 "tightly coupled (no diffusion, no streaming), entropy-conserving adiabatic "
                 "update.")
    res.summary = (f"L1(rho) {l1[400]:.1e} at 400 cells (order {order(l1[200], l1[400]):.2f}); "
                   f"P_c plateau {100 * pc_err:+.2f} %")
    finish(fig, res, out_dir, per_line=2)
    return res


# ------------------------------------------------------------------ cooling
@case("townsend_cooling", "Townsend (2009) exact cooling")
def townsend_cooling(out_dir):
    from tests.test_cooling_exact import (
        UNITS,
        _ode,
        _split_once,
        box,
        ode_rate_coefficient,
        rb95,
        rho_code,
        temperatures,
    )
    from wind2d.physics.cooling import Cooling

    n_H, T0, lam0 = 0.01, 1.0e6, 1.0e-22
    C = ode_rate_coefficient(n_H)
    tc = T0 / (C * lam0) / UNITS.to_cgs("time")
    fig, (a1, a2) = subplots(1, 2, figsize=(11, 4.4))
    worst = 0.0
    ts = np.linspace(0.0, 3.0, 301)
    for a, col in zip((0.5, -0.65, 0.0, 1.0, 2.0), ("C0", "C1", "C2", "C3", "C4")):
        keys = {"curve": {"kind": "power_law", "Lambda0": f"{lam0} erg cm3 s-1", "T0": "1e6 K",
                          "alpha": a, "T_min": "100 K"}}

        def exact(t, a=a):
            if a == 1.0:
                return np.exp(-t)
            base = 1.0 - (1.0 - a) * t
            return np.where(base > 0, np.abs(base) ** (1.0 / (1.0 - a)), 0.0)
        a1.plot(ts, np.maximum(exact(ts), 1e-4), "-", color=col, lw=1,
                label=f"alpha = {a}")
        for nsteps, m in ((1, "o"), (37, "x")):
            got = []
            tk = np.array([0.05, 0.3, 0.9, 1.7, 2.5])
            for t in tk:
                sim, mod = box(keys)
                rho = rho_code(n_H)
                sim.set_primitive(rho=rho, p=rho * T0 / mod.T_u)
                w = np.linspace(1.0, 3.0, nsteps)
                for dt in w / w.sum() * t * tc:
                    sim.step(dt)
                got.append(temperatures(sim, mod)[0, 0] / T0)
            got = np.array(got)
            want = np.maximum(exact(tk), 100.0 / T0)
            worst = max(worst, float(np.abs(got / want - 1).max()))
            a1.plot(tk, got, m, color=col, ms=5 if m == "o" else 6, mfc="none")
    a1.set_yscale("log")
    a1.set_ylim(5e-5, 1.5)
    a1.set_xlabel("t / t_cool(T0)")
    a1.set_ylabel("T / T0")
    a1.set_title("one power law: closed form (lines); one step (o), 37 unequal steps (x)",
                 fontsize=9)
    a1.legend(fontsize=7, loc="lower left")
    # piecewise curve (Rosen & Bregman 1995 part of solar_cie): one step against solve_ivp
    keys = {"curve": {"kind": "solar_cie", "low_temperature": "rosen_bregman"}}
    cur = Cooling.from_keys(keys, UNITS).curve
    fs = np.geomspace(0.01, 30.0, 12)
    worst_pw = 0.0
    Cn = ode_rate_coefficient(1.0)
    for T0p, col in zip((3.0e7, 2.0e5, 1.2e4, 800.0), ("C0", "C1", "C2", "C3")):
        got, ref = [], []
        for f in fs:
            dt_s = f * T0p / (Cn * rb95(T0p))
            got.append(_split_once(keys, 1.0, [T0p], dt_s / UNITS.to_cgs("time"))[0][0])
            ref.append(_ode(rb95, 1.0, T0p, dt_s, T_floor=cur.T[0], method="LSODA"))
        got, ref = np.array(got), np.array(ref)
        worst_pw = max(worst_pw, float(np.abs(got / ref - 1).max()))
        a2.loglog(fs, ref, "-", color=col, lw=1, label=f"T0 = {T0p:.2g} K: solve_ivp")
        a2.loglog(fs, got, "o", color=col, ms=4, mfc="none")
    a2.set_xlabel("step / t_cool(T0)")
    a2.set_ylabel("T after one step [K]")
    a2.set_title("piecewise Rosen & Bregman curve, n_H = 1: one step (o) vs ODE", fontsize=9)
    a2.legend(fontsize=7)
    res = Result("townsend_cooling", "Exact integration of radiative cooling (Townsend 2009) "
                 "in the cooling module", "", "")
    res.metrics = [("power laws: max |T/T_exact - 1|, 1 and 37 steps", f"{worst:.1e}"),
                   ("piecewise curve, one step vs solve_ivp", f"{worst_pw:.1e}")]
    res.reference = ("Closed form T(t) = T0 [1 - (1 - alpha) t/t_cool]^(1/(1-alpha)) for one "
                     "power law (Townsend 2009, ApJS 181, 391; methods notes item 7), cooling "
                     "stopping at T_min = 100 K; for the piecewise curve of Rosen & Bregman (1995, "
                     "ApJ 440, 634; coefficients from memory, re-typed in the test) scipy's "
                     "solve_ivp (LSODA, rtol 1e-12).")
    res.setup = ("`tests/test_cooling_exact.py` helpers: isochoric boxes at n_H = 0.01 "
                 "(power laws) and 1 cm^-3 (piecewise), mu = 0.6, X = 0.7, steps of any length.")
    res.summary = (f"closed form to {worst:.0e} whatever the steps; piecewise curve to "
                   f"{worst_pw:.0e} of the ODE")
    finish(fig, res, out_dir, per_line=2)
    return res


@case("thermal_instability", "Field (1965) thermal instability")
def thermal_instability(out_dir):
    import tests.test_thermal_instability as tti
    fig, ax = subplots(figsize=(7.5, 4.8))
    res = Result("thermal_instability", "Field (1965) thermal instability: isobaric "
                 "condensation mode, 128 cells per wavelength", "", "")
    rates = {}
    for a, col in ((-0.65, "C3"), (2.0, "C0")):
        with recording(tti, "step") as made:
            rate, _, mode, amps = tti.run(a)
        ts = np.array(made[-1].times) / (made[-1].times[-1] / 3.0)   # in t_cool (run to 3)
        ax.plot(ts, np.log(amps / amps[0]), "-", color=col, lw=1.5,
                label=f"wind2d, alpha = {a}: fitted rate {rate:.4f}")
        ax.plot(ts, mode * ts, "k--", lw=0.8)
        rates[a] = (rate, mode)
        res.metrics.append((f"alpha = {a}: growth rate [1/t_cool] measured / Field",
                            f"{rate:.5f} / {mode:.5f} ({100 * (rate / mode - 1):+.3f} %)"))
    ax.plot([], [], "k--", lw=0.8, label="Field's condensation root")
    ax.set_xlabel("t / t_cool")
    ax.set_ylabel("ln(density amplitude / initial)")
    ax.legend(fontsize=8)
    res.reference = ("Linear theory of Field (1965, ApJ 142, 531) without conduction: the real "
                     "root of Field's cubic (`tests/test_thermal_instability.py::field_rates`, "
                     "numpy.roots), close to the isobaric rate (1 - alpha)/(gamma t_cool) for "
                     "cooling ∝ T^alpha balanced by heating per atom; stable for alpha > 1.")
    res.setup = ("`tests/test_thermal_instability.py::run`: periodic box of one wavelength "
                 "c_s t_cool, 128 cells, n_H = 0.01, T = 1e6 K, eigenmode amplitude 1e-4; "
                 "rate fitted to ln|delta rho_k| for t > 0.3 t_cool.")
    res.summary = "; ".join(f"alpha = {a}: rate {r:.5f} per t_cool, Field {m:.5f}"
                            for a, (r, m) in rates.items())
    finish(fig, res, out_dir, per_line=1)
    return res


# ---------------------------------------------------------------- the page
def write_page(results, path: Path, seconds: float):
    lines = ["# Verification results", "",
             ("Each figure below reruns one verification problem of the test suite (same "
             "set-up, same resolution, helpers imported from `tests/`) and compares it with "
             "its published reference; the measured errors are printed on the figure and "
             "listed here.  The tests in `tests/` assert bounds on the same numbers.  "
             "Regenerate with"), "", "```bash", "python tools/make_verification_plots.py",
             "```", "",
             (f"(about {max(1, round(seconds / 60))} min on one core; needs the test extra, "
             "`pip install -e \".[test]\"`, for scipy and the test helpers; `--only NAME` "
             "reruns some problems, `--list` names them)."), "",
             "| problem | reference | measured |", "|---|---|---|"]
    refs = {"toro": "Toro 2009, exact Riemann solutions",
            "brio_wu": "Brio & Wu 1988",
            "sedov": "Sedov-Taylor",
            "linear_waves": "linear MHD waves (Gardiner & Stone 2005/2008, Stone et al. 2008)",
            "field_loop": "Gardiner & Stone 2005 field loop",
            "parker_wind": "Parker 1958 / Cranmer 2004 wind",
            "hydrostatic_nfw": "isothermal hydrostatic atmosphere, NFW 1996 potential",
            "cr_diffusion": "Gaussian diffusion; Jiang & Oh 2018 method",
            "cr_streaming": "rho^(2/3) law and bottleneck plateau",
            "cr_shock_tube": "Pfrommer et al. 2006 two-fluid shock tube",
            "townsend_cooling": "Townsend 2009 exact cooling",
            "thermal_instability": "Field 1965 growth rate"}
    heads = {key: title for key, title, _ in CASES}

    def cell(text):                     # a pipe inside a table cell must be escaped
        return str(text).replace("|", "\\|")

    def anchor(title):                  # GitHub's heading anchors
        keep = "".join(c for c in title.lower() if c.isalnum() or c in " -_")
        return keep.replace(" ", "-")
    for r in results:
        lines.append(f"| [{heads[r.key]}](#{anchor(heads[r.key])}) | {cell(refs[r.key])} | "
                     f"{cell(r.summary)} |")
    lines.append("")
    for r in results:
        lines += [f"## {heads[r.key]}", "", f"![{r.title}](verification/{r.key}.png)", "",
                  f"*Reference.* {r.reference}", "", f"*Run.* {r.setup}", "",
                  "| measured | value |", "|---|---|"]
        lines += [f"| {cell(k)} | {cell(v)} |" for k, v in r.metrics]
        lines.append("")
    path.write_text("\n".join(lines))


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--only", nargs="+", metavar="NAME", help="run only these problems")
    ap.add_argument("--list", action="store_true", help="list the problems and exit")
    ap.add_argument("--docs", type=Path, default=ROOT / "docs",
                    help="docs folder (writes verification/*.png and verification.md)")
    args = ap.parse_args(argv)
    if args.list:
        for key, title, _ in CASES:
            print(f"{key:22s} {title}")
        return 0
    keys = [k for k, _, _ in CASES]
    if args.only:
        bad = [k for k in args.only if k not in keys]
        if bad:
            ap.error(f"unknown problem(s) {bad}; known: {keys}")
    out_dir = args.docs / "verification"
    out_dir.mkdir(parents=True, exist_ok=True)
    results = []
    t_all = time.perf_counter()
    for key, title, fn in CASES:
        if args.only and key not in args.only:
            continue
        t0 = time.perf_counter()
        try:
            res = fn(out_dir)
        except ImportError as exc:           # e.g. a module not present in this checkout
            print(f"{key}: skipped ({exc})", flush=True)
            continue
        res.seconds = time.perf_counter() - t0
        results.append(res)
        size = (out_dir / f"{key}.png").stat().st_size / 1024
        print(f"{key}: {res.seconds:.1f} s, {size:.0f} kB -- {res.summary}", flush=True)
    seconds = time.perf_counter() - t_all
    # the numbers of every problem ever run live in results.json, so that a run
    # with --only updates its problems and keeps the others on the page
    store = out_dir / "results.json"
    old = json.loads(store.read_text()) if store.exists() else {}
    old.update({r.key: asdict(r) for r in results})
    store.write_text(json.dumps(old, indent=1) + "\n")
    page = [Result(**{**old[k], "metrics": [tuple(m) for m in old[k]["metrics"]]})
            for k in keys if k in old]
    total = sum(r.seconds for r in page)
    write_page(page, args.docs / "verification.md", total)
    print(f"wrote {args.docs / 'verification.md'} ({len(page)} problems; this run "
          f"{len(results)} figures in {seconds:.0f} s)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
