"""The poloidal flux function (wind2d.analysis.fieldlines): its contours are the
field lines.

Reference field: a uniform field B0 along z plus a softened dipole-like loop,
set through ``Simulation.set_field`` from the vector potential

    A_phi(R, z) = B0 R / 2 + m R / (R^2 + z^2 + eps^2)^(3/2).

``B0 R / 2`` is the potential of a uniform axial field and ``m R / r^3`` that
of a point dipole (Jackson, Classical Electrodynamics, 3rd ed., sect. 5.6,
eq. 5.55 -- from memory); eps softens the dipole's singularity.  The
analytic field is B_R = -dA/dz = 3 m R z / s^(5/2),
B_z = (1/R) d(R A)/dR = B0 + m (2 s - 3 R^2) / s^(5/2), s = R^2 + z^2 + eps^2
(checked below by finite differences).  In axisymmetry the flux function is
psi = R A_phi and B . grad(psi) = 0 (common practice; e.g. Goedbloed & Poedts
2004, Principles of Magnetohydrodynamics, ch. 16 -- from memory).  With the
dipole opposing the uniform field (m = -0.02, eps = 0.25, B0 = 1) the field
reverses in the core: closed loops around an O-point on the midplane
(R = 0.148) inside a separatrix through two nulls on the axis (z = +-0.234),
open lines outside, so the check covers both.

Checks and measured values (64 x 128 cells on [0, 1] x [-1, 1] unless said):

* psi built from the face fields equals R A_phi at every corner to round-off
  (measured max |diff| / max|psi| ~ 1e-16), also on a stretched grid, off
  the axis (R from 0.2) and for the Cartesian analogue A_z; psi is the same
  whether built along rows or along columns (div B = 0; ~1e-16), also after
  the field has been evolved by constrained transport.
* the code's cell-centred field is tangent to the psi contours in every
  cell: |B_R d_R psi + B_z d_z psi| / (|B| |grad psi|) at round-off (~1e-15),
  and the psi of the initial field is NOT tangent to the evolved field
  (a control showing the check can fail: 1.0 after 18 steps).
* field lines traced by integrating the analytic field (scipy solve_ivp,
  rtol 1e-10) from seed points on both halves of the mirrored plane stay on
  the contours of the mirrored discrete psi drawn by the plotting code's
  contouring (contourpy, linear interpolation): largest distance 5.7e-3
  (0.18 cell) at 32 x 64 and 1.5e-3 at 64 x 128 (second order in the cell
  size; the largest errors are on the small loops near the O-point, where
  grad psi is weak), and the bicubic-interpolated discrete psi is constant
  along them (2.6e-6 of its range at 32 x 64; 1.2e-7 at 64 x 128).
* a snapshot of a uniform vertical field: 2 pi psi(R) = pi R^2 B (the flux of
  a uniform field through a disc, common practice), in G cm^2.
* the face field rebuilt from the cell-centred snapshot fields is exact with
  an axis (~1e-15) and second-order accurate without one (psi error 2.6e-4
  at 24 x 48, 7.8e-5 at 48 x 96).
"""
from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.interpolate import RectBivariateSpline

from wind2d import Simulation
from wind2d.analysis.fieldlines import (
    cell_gradient,
    faces_from_cells,
    flux_function,
    flux_function_from_simulation,
    flux_function_from_snapshot,
)
from wind2d.errors import ParameterError

B0, M, EPS = 1.0, -0.02, 0.25
PROBLEMS = Path(__file__).resolve().parents[1] / "problems" / "verification"
EDGES = {"R_low": "axis", "R_high": "outflow", "z_low": "outflow", "z_high": "outflow"}


def a_phi(R, z):
    return 0.5 * B0 * R + M * R / (R ** 2 + z ** 2 + EPS ** 2) ** 1.5


def b_analytic(R, z):
    s = R ** 2 + z ** 2 + EPS ** 2
    return 3 * M * R * z / s ** 2.5, B0 + M * (2 * s - 3 * R ** 2) / s ** 2.5


def _sim(n, r_lo=0.0, stretch=1.0, edges=EDGES):
    sim = Simulation("cylindrical", (r_lo, 1.0, n, stretch), (-1.0, 1.0, 2 * n), edges,
                     mhd=True, riemann="hlld")
    sim.set_primitive(rho=1.0, p=1.0)
    sim.set_field(a_phi)
    return sim


def test_analytic_field_matches_potential():
    # the closed forms used below are the derivatives of A_phi (central differences)
    h = 1e-6
    for R, z in ((0.3, 0.2), (0.7, -0.4), (0.05, 0.9)):
        bR, bz = b_analytic(R, z)
        assert bR == pytest.approx(-(a_phi(R, z + h) - a_phi(R, z - h)) / (2 * h), rel=1e-7)
        assert bz == pytest.approx(((R + h) * a_phi(R + h, z) - (R - h) * a_phi(R - h, z))
                                   / (2 * h * R), rel=1e-7)


@pytest.mark.parametrize("r_lo,stretch", [(0.0, 1.0), (0.0, 1.04), (0.2, 1.0)])
def test_psi_is_R_A_phi_at_corners(r_lo, stretch):
    sim = _sim(48, r_lo, stretch, EDGES if r_lo == 0 else
               {"R_low": "outflow", "R_high": "outflow", "z_low": "outflow",
                "z_high": "outflow"})
    ff = flux_function_from_simulation(sim)
    R, Z = np.meshgrid(ff.x1, ff.x2)
    exact = R * a_phi(R, Z)
    exact -= exact[0, 0]              # psi = 0 at the first corner (the axis if present)
    scale = np.abs(exact).max()
    assert np.abs(ff.psi - exact).max() <= 1e-14 * scale
    assert ff.mismatch <= 1e-14
    if r_lo == 0:
        assert np.all(ff.psi[:, 0] == 0.0)       # psi vanishes on the axis


def test_cartesian_psi_is_A_z():
    def az(x, y):
        return 0.3 * y + 0.1 * np.exp(-(x ** 2 + y ** 2) / 0.1)
    per = {"x_low": "periodic", "x_high": "periodic", "y_low": "outflow", "y_high": "outflow"}
    sim = Simulation("cartesian", (-1, 1, 40), (-1, 1, 40), per, mhd=True, riemann="hlld")
    sim.set_primitive(rho=1.0, p=1.0)
    sim.set_field(az)
    ff = flux_function_from_simulation(sim)
    X, Y = np.meshgrid(ff.x1, ff.x2)
    exact = az(X, Y) - az(X[0, 0], Y[0, 0])
    assert np.abs(ff.psi - exact).max() <= 1e-14 * np.abs(exact).max()
    # the cell-centred field is tangent to the contours (B_x = dA/dy, B_y = -dA/dx)
    g1, g2 = cell_gradient(ff.psi, ff.x1, ff.x2)
    bx, by = sim.field("Bx"), sim.field("By")
    dot = np.abs(bx * g1 + by * g2) / (np.hypot(bx, by) * np.hypot(g1, g2))
    assert dot.max() <= 1e-12


def _tangency(sim, psi, x1, x2):
    g1, g2 = cell_gradient(psi, x1, x2)
    bR, bz = sim.field("BR"), sim.field("Bz")
    norm = np.hypot(bR, bz) * np.hypot(g1, g2)
    return float(np.max(np.abs(bR * g1 + bz * g2) / np.where(norm > 0, norm, 1.0)))


def test_cell_field_is_tangent_to_psi_contours_before_and_after_evolution():
    sim = _sim(24)
    ff0 = flux_function_from_simulation(sim)
    assert _tangency(sim, ff0.psi, ff0.x1, ff0.x2) <= 1e-12
    # a rotating, shearing flow moves the field by constrained transport
    sim.set_primitive(rho=1.0, p=1.0, vR=lambda R, z: 0.3 * np.sin(np.pi * z) * R,
                      vz=lambda R, z: 0.4 * np.cos(np.pi * R) * np.exp(-z ** 2))
    sim.advance(0.15)
    assert sim.nstep > 5
    ff = flux_function_from_simulation(sim)
    assert ff.mismatch <= 1e-13                       # single valued: div B = 0
    assert _tangency(sim, ff.psi, ff.x1, ff.x2) <= 1e-12
    # control: the initial psi is no longer tangent to the moved field
    assert _tangency(sim, ff0.psi, ff0.x1, ff0.x2) > 1e-3


def _rhs(_s, y):
    # the analytic field on the mirrored plane: the in-plane R-direction flips for x < 0
    bR, bz = b_analytic(abs(y[0]), y[1])
    bR = bR * np.sign(y[0])
    b = np.hypot(bR, bz)
    return [bR / b, bz / b]


def _leaves(_s, y):
    return min(1.0 - abs(y[0]), 1.0 - abs(y[1]))


_leaves.terminal = True


def _distance_to_lines(points, lines):
    best = np.full(len(points), np.inf)
    for line in lines:
        a, ab = line[:-1], line[1:] - line[:-1]
        L2 = np.maximum((ab ** 2).sum(1), 1e-300)
        for k, pt in enumerate(points):
            t = np.clip(((pt - a) * ab).sum(1) / L2, 0.0, 1.0)
            best[k] = min(best[k], np.sqrt((((a + t[:, None] * ab) - pt) ** 2).sum(1)).min())
    return best


# open lines on both halves, and closed loops around the O-point (last two)
SEEDS = [(0.5, -0.9), (0.2, 0.0), (0.8, 0.3), (0.35, 0.5), (-0.3, -0.2), (-0.7, 0.6),
         (0.1, 0.0), (-0.07, 0.05)]


def _trace_error(n):
    import contourpy

    from wind2d.viz.slice import _mirror_corners
    ff = flux_function_from_simulation(_sim(n))
    psi, x1 = _mirror_corners(ff.psi, ff.x1)          # the arrays the slice plot contours
    gen = contourpy.contour_generator(x1, ff.x2, psi)
    spline = RectBivariateSpline(ff.x2, ff.x1, ff.psi, kx=3, ky=3)
    span = ff.psi.max() - ff.psi.min()
    dist = drift = 0.0
    for seed in SEEDS:
        level = abs(seed[0]) * a_phi(abs(seed[0]), seed[1])
        sol = solve_ivp(_rhs, (0.0, 2.0), seed, rtol=1e-10, atol=1e-12, max_step=0.02,
                        events=_leaves)
        assert sol.success and sol.y.shape[1] > 20
        lines = gen.lines(level)
        assert lines, f"no contour through {seed}"
        dist = max(dist, _distance_to_lines(sol.y.T, lines).max())
        along = spline.ev(sol.y[1], np.abs(sol.y[0]))
        drift = max(drift, np.abs(along - level).max() / span)
    return dist, drift


def test_traced_field_lines_stay_on_psi_contours():
    d32, drift32 = _trace_error(32)
    d64, _ = _trace_error(64)
    h32 = 1.0 / 32
    assert d32 < 0.3 * h32               # measured 5.7e-3 = 0.18 h
    assert d64 < 0.3 * h32 / 2           # measured 1.5e-3 = 0.094 h
    assert d32 / d64 > 3.0               # second order: measured 3.86
    assert drift32 < 1e-5                # measured 2.6e-6


def test_faces_rebuilt_from_cell_fields():
    sim = _sim(32)
    sim.advance(0.02)
    m = sim.mesh
    x1f, x2f = m.edges()
    b1 = sim.state.b1[m.js:m.je, m.is_:m.ie + 1]
    b2 = sim.state.b2[m.js:m.je + 1, m.is_:m.ie]
    r1, r2, exact = faces_from_cells(sim.field("BR"), sim.field("Bz"), x1f, x2f)
    scale = np.abs(b2).max()
    assert exact
    assert np.abs(r1 - b1).max() <= 1e-12 * scale
    assert np.abs(r2 - b2).max() <= 1e-12 * scale
    # without an axis the inner face is estimated: second-order accurate
    errs = []
    for n in (24, 48):
        s = _sim(n, r_lo=0.2, edges={"R_low": "outflow", "R_high": "outflow",
                                     "z_low": "outflow", "z_high": "outflow"})
        mm = s.mesh
        e1, e2 = mm.edges()
        _r1, _r2, ex = faces_from_cells(s.field("BR"), s.field("Bz"), e1, e2)
        assert not ex
        psi = flux_function(_r1, _r2, e1, e2)
        R, Z = np.meshgrid(e1, e2)
        ref = R * a_phi(R, Z)
        ref -= ref[0, 0]
        errs.append(np.abs(psi - ref).max() / np.abs(ref).max())
    assert errs[0] < 2e-3 and errs[0] / errs[1] > 2.5     # measured 2.6e-4, ratio 3.3


def test_snapshot_uniform_field_flux(tmp_path):
    # 2 pi psi(R) = pi R^2 B for a uniform vertical field (flux through a disc)
    from wind2d.cli import main
    from wind2d.io import read_snapshot
    run = tmp_path / "u"
    rc = main(["run", str(PROBLEMS / "uniform_at_rest.yaml"), "--out", str(run),
               "--set", "grid.R.cells=12", "--set", "grid.z.cells=16",
               "--set", "stop.max_steps=2", "--quiet"])
    assert rc == 0
    snap = read_snapshot(max((run / "snapshots").glob("snapshot_*.h5")))
    ff = flux_function_from_snapshot(snap)
    assert ff.exact and ff.unit == "G cm2" and ff.mismatch <= 1e-14
    R_cm = ff.x1 * snap.length_to_cgs
    B_gauss = 1e-6                                   # the problem's 1 uG
    expect = np.pi * R_cm ** 2 * B_gauss
    got = 2 * np.pi * ff.psi * ff.to_cgs
    assert np.allclose(got, expect[None, :], rtol=1e-12, atol=1e-12 * expect.max())
    # the same from the cell-centred fields alone (older snapshots have no faces)
    snap.faces = {}
    ff2 = flux_function_from_snapshot(snap)
    assert ff2.exact
    assert np.allclose(ff2.psi, ff.psi, rtol=0, atol=1e-13 * np.abs(ff.psi).max())


def test_errors():
    sim = Simulation("cylindrical", (0, 1, 8), (0, 1, 8), EDGES)
    with pytest.raises(ParameterError, match="no magnetic field"):
        flux_function_from_simulation(sim)
    with pytest.raises(ParameterError, match="do not fit"):
        flux_function(np.zeros((4, 4)), np.zeros((5, 4)), np.arange(5.0), np.arange(5.0))
