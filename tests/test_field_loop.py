"""Field-loop advection (Gardiner & Stone 2005, J. Comput. Phys. 205, 509, sect. 5.1).

A weak loop of field, A_z = A0 (R0 - r) for r < R0 (zero outside), A0 = 1e-3,
R0 = 0.3, in rho = 1, p = 1, gamma = 5/3, is carried by the uniform flow
v = (2, 1) across the periodic box [-1, 1] x [-0.5, 0.5] (Gardiner & Stone
2005 use this box, flow and loop; the loop returns to its start at t = 1).
The field is dynamically negligible (beta ~ 2e6), so the exact solution is
pure translation.  What is tested:

* div B: max |div B| dx / max |B| <= 1e-12 every 10 steps (common practice
  for CT schemes; the scheme keeps it at round-off);
* no spurious B_z: the planar run keeps B_z = 0 to round-off.  With vz = 1
  (the out-of-plane flow of Gardiner & Stone's 3D variant, 2008, J. Comput.
  Phys. 227, 4123 -- from memory), dB_z/dt = vz div B, so B_z stays at
  round-off only if the cell-centred induction flux and the face CT fields
  agree; the in-plane evolution must not feel vz at all (Galilean invariance
  along z);
* loss of magnetic energy (cell-centred field, sum (Bx^2 + By^2)/2 dA) after
  one crossing, with a bound above the measured value.  Gardiner & Stone
  show that their CT-contact corner average damps the loop at a rate close
  to that of the underlying 1D scheme (from memory: a loss of a few to ten
  percent over two crossings at 128 x 64 with their CTU scheme).  The loop
  edge is a discontinuity of B, so the loss is first order in dx; the test
  also asks the loss to roughly halve on doubling the resolution;
* the loop shape: correlation of the final |B| map with the initial one
  > 0.9, and the centroid of B^2 back at the origin within a cell.

Measured with this code (HLLD, MC limiter, courant 0.4), at t = 1:

    128 x 64, vz = 0:  E_B/E_B0 = 0.8832, correlation 0.9734, 527 steps,
                       max |div B| dx/|B| = 2.9e-15, B_z = 0 exactly,
                       B^2 centroid at (7e-4, 8e-4) (dx = 1.6e-2)
    128 x 64, vz = 1:  the same energy and correlation; max|B_z|/max|B|
                       = 1.6e-15, |vz - 1| <= 9e-16, in-plane field equal to
                       the vz = 0 run to 2e-14 of max |B|
    64 x 32, vz = 0:   E_B/E_B0 = 0.7529 (loss 24.7 % vs 11.7 % at 128 x 64)
    128 x 64, vz = 1, HLLE: E_B/E_B0 = 0.8792, correlation 0.9723,
                       max|B_z|/max|B| = 1.7e-15
(At t = 2, 128 x 64, HLLD: E_B/E_B0 = 0.8504, correlation 0.9646; 256 x 128
at t = 1: 0.9357.)
"""
import functools

import numpy as np
import pytest

from wind2d import Simulation

A0, R0 = 1.0e-3, 0.3
PERIODIC = {"x_low": "periodic", "x_high": "periodic",
            "y_low": "periodic", "y_high": "periodic"}
T_CROSS = 1.0            # v = (2, 1) through a 2 x 1 box


def loop_potential(x, y):
    r = np.hypot(x, y)
    return np.where(r < R0, A0 * (R0 - r), 0.0)


@functools.lru_cache(maxsize=None)
def run(nx, ny, vz, riemann):
    sim = Simulation("cartesian", x1=(-1.0, 1.0, nx), x2=(-0.5, 0.5, ny),
                     boundaries=PERIODIC, gamma=5.0 / 3.0, mhd=True, riemann=riemann,
                     limiter="mc")
    sim.set_primitive(rho=1.0, p=1.0, vx=2.0, vy=1.0, vz=vz)
    sim.set_field(potential=loop_potential)
    dx, dy = 2.0 / nx, 1.0 / ny
    x, y = sim.mesh.centres()

    def bmag():
        return np.hypot(sim.field("Bx"), sim.field("By"))

    b_init = bmag()
    bscale = float(np.max(b_init))
    e_hist = [0.5 * np.sum(b_init ** 2) * dx * dy]
    div_hist = [float(np.max(np.abs(sim.divergence()))) * dx / bscale]
    bz_hist = [float(np.max(np.abs(sim.field("Bz")))) / bscale]
    while sim.t < T_CROSS:
        sim.advance(T_CROSS, max_steps=10)
        b = bmag()
        e_hist.append(0.5 * np.sum(b ** 2) * dx * dy)
        div_hist.append(float(np.max(np.abs(sim.divergence()))) * dx / bscale)
        bz_hist.append(float(np.max(np.abs(sim.field("Bz")))) / bscale)
    b_end = bmag()
    w = b_end ** 2
    return dict(
        steps=sim.nstep, bscale=bscale, energy=np.array(e_hist) / e_hist[0],
        div=np.array(div_hist), bz=np.array(bz_hist),
        corr=float(np.corrcoef(b_init.ravel(), b_end.ravel())[0, 1]),
        centroid=(float(np.sum(w * x) / np.sum(w)), float(np.sum(w * y) / np.sum(w))),
        dx=dx, bx=sim.field("Bx"), by=sim.field("By"),
        vz_dev=float(np.max(np.abs(sim.field("vz") - vz))))


@pytest.mark.parametrize("vz", [0.0, 1.0])
def test_field_loop_one_crossing(vz):
    r = run(128, 64, vz, "hlld")
    print(f"vz={vz}: E/E0={r['energy'][-1]:.4f} corr={r['corr']:.4f} "
          f"div={r['div'].max():.2e} bz={r['bz'].max():.2e} steps={r['steps']}")
    assert len(r["div"]) >= r["steps"] // 10
    # div B at round-off at t = 0 and every 10 steps (common practice bound)
    assert np.all(r["div"] <= 1e-12)
    # no spurious out-of-plane field; exactly zero without vz (all B_z fluxes
    # vanish identically), round-off with vz = 1 (dB_z/dt = vz div B)
    if vz == 0.0:
        assert np.all(r["bz"] == 0.0)
    else:
        assert np.all(r["bz"] <= 1e-12)
        assert r["vz_dev"] <= 1e-12
    # magnetic energy: decays (the scheme is dissipative, never amplifies),
    # measured 0.8832 of the start after one crossing
    e = r["energy"]
    assert np.all(np.diff(e) <= 1e-12)
    assert 0.85 <= e[-1] < 1.0
    # shape and position
    assert r["corr"] > 0.9
    cx, cy = r["centroid"]
    assert abs(cx) < r["dx"] and abs(cy) < r["dx"]


def test_field_loop_out_of_plane_flow_is_invisible():
    """Uniform vz with no z dependence must not change the in-plane field."""
    a = run(128, 64, 0.0, "hlld")
    b = run(128, 64, 1.0, "hlld")
    assert a["steps"] == b["steps"]
    scale = a["bscale"]
    # measured 2e-14 of max |B|
    assert np.max(np.abs(a["bx"] - b["bx"])) <= 1e-12 * scale
    assert np.max(np.abs(a["by"] - b["by"])) <= 1e-12 * scale


def test_field_loop_energy_loss_converges():
    """The loss is first order in dx (discontinuous loop edge): measured
    24.7 % at 64 x 32 and 11.7 % at 128 x 64 (ratio 0.47)."""
    coarse = 1.0 - run(64, 32, 0.0, "hlld")["energy"][-1]
    fine = 1.0 - run(128, 64, 0.0, "hlld")["energy"][-1]
    assert 0.0 < fine < 0.6 * coarse
    assert coarse < 0.3


def test_field_loop_hlle():
    """The same loop with HLLE: div B, B_z and shape as with HLLD (measured
    E_B/E_B0 = 0.8792: the CT corner average, not the solver, sets the loss)."""
    r = run(128, 64, 1.0, "hlle")
    assert np.all(r["div"] <= 1e-12)
    assert np.all(r["bz"] <= 1e-12)
    assert 0.85 <= r["energy"][-1] < 1.0
    assert r["corr"] > 0.9
