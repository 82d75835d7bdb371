"""Closed and periodic boxes conserve mass, z-momentum, angular momentum and
total energy to round-off: the finite-volume update is in divergence form for
each of them (common practice; for angular momentum the R^2-weighted flux of
the phi-momentum equation, see docs/numerics.md)."""
import numpy as np
import pytest

from wind2d import Simulation

TOL = 1e-12


def _smooth(R, z):
    return np.exp(-((R - 0.45) ** 2 + (z - 0.1) ** 2) / 0.02)


@pytest.mark.parametrize("mhd,solver", [(False, "hllc"), (False, "hlle"), (True, "hlld"),
                                        (True, "hlle")])
def test_cylindrical_closed_box_conserves(mhd, solver):
    # axis + reflecting wall in R, periodic in z: nothing can leave, and z is
    # translation invariant, so mass, z-momentum, angular momentum, energy are constant
    sim = Simulation("cylindrical", (0.0, 1.0, 40, 1.03), (-0.5, 0.5, 48),
                     {"R_low": "axis", "R_high": "reflecting", "z_low": "periodic",
                      "z_high": "periodic"}, mhd=mhd, riemann=solver)
    if mhd:
        # B_R = -dA/dz vanishes at the wall R = 1: the field lies along it (mirror symmetric)
        sim.set_field(lambda R, z: 0.4 * R * (1.0 - R) ** 2 * np.exp(-z ** 2 / 0.05))
    kw = dict(rho=lambda R, z: 1.0 + 2.0 * _smooth(R, z), p=lambda R, z: 0.5 + 5.0 * _smooth(R, z),
              vR=lambda R, z: 0.3 * R * _smooth(R, z), vz=0.2,
              vphi=lambda R, z: 0.4 * R * np.exp(-R * R))
    if mhd:
        kw["Bphi"] = lambda R, z: 0.3 * R * np.exp(-R * R / 0.3)
    sim.set_primitive(**kw)
    t0 = sim.totals()
    sim.advance(0.3)
    t1 = sim.totals()
    assert sim.nstep > 30
    for k in ("mass", "momentum_z", "angular_momentum", "energy"):
        assert abs(t1[k] - t0[k]) <= TOL * abs(t0[k]), (k, t0[k], t1[k])
    assert sim.counters["fallback_cells"] == 0


@pytest.mark.parametrize("mhd", [False, True])
def test_cartesian_periodic_box_conserves(mhd):
    sim = Simulation("cartesian", (0.0, 1.0, 48), (0.0, 1.0, 40),
                     {"x_low": "periodic", "x_high": "periodic", "y_low": "periodic",
                      "y_high": "periodic"}, mhd=mhd, riemann="hlld" if mhd else "hllc")
    if mhd:
        sim.set_field(lambda x, y: 0.05 * np.sin(2 * np.pi * x) * np.cos(2 * np.pi * y) + 0.3 * y)
    sim.set_primitive(rho=lambda x, y: 1.0 + 0.5 * np.sin(2 * np.pi * (x + y)),
                      p=lambda x, y: 1.0 + 0.5 * (np.hypot(x - 0.5, y - 0.5) < 0.2),
                      vx=0.5, vy=-0.3, vz=lambda x, y: 0.2 * np.cos(2 * np.pi * x))
    t0 = sim.totals()
    sim.advance(0.3)
    t1 = sim.totals()
    for k in t0:
        scale = max(abs(t0[k]), t0["mass"])
        assert abs(t1[k] - t0[k]) <= TOL * scale, (k, t0[k], t1[k])
