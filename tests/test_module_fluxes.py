"""Module variables with their own fluxes: the ``add_fluxes`` hook and the core's
update of module variables, and a module that updates its variables itself
(``updates_own_variables``).

Reference: first-order upwind advection of a concentration ``c`` by a uniform
flow, ``dc/dt + v . grad c = 0``, advanced by the integrator's two stages
(predictor over dt/2, corrector over dt, both with upwind fluxes
``m c_upwind``):

    c* = c^n - (dt/2) L(c^n),   c^{n+1} = c^n - dt L(c*),
    L(c)_i = v_x (c_i - c_{i-1}) / dx + v_y (c_j - c_{j-1}) / dy   (v > 0),

written out here in numpy (the upwind scheme and its two-stage time
integration are textbook; e.g. LeVeque 2002, Finite Volume Methods for
Hyperbolic Problems, ch. 4 and 10).  A uniform gas state with uniform
velocity is an exact steady solution, so the gas mass fluxes are ``rho v``
to round-off.
"""
import numpy as np
import pytest

from wind2d import Simulation
from wind2d.physics import Module, Variable
from wind2d.state import IDN

PERIODIC = {"x_low": "periodic", "x_high": "periodic", "y_low": "periodic",
            "y_high": "periodic"}
VX, VY = 1.0, 0.5


class Dye(Module):
    """A density ``dye`` carried with the gas by first-order upwind fluxes."""
    variables = (Variable("dye", "dimensionless"),)
    order = 20

    def attach(self, sim):
        super().attach(sim)
        self.k = sim.varmap.index["dye"]

    def add_fluxes(self, sim, W, b1, b2, F1, F2, stage):
        m, k = sim.mesh, self.k
        js, je, is_, ie = m.js, m.je, m.is_, m.ie
        c = W[k] / W[IDN]
        m1 = F1[IDN, js:je, is_:ie + 1]
        F1[k, js:je, is_:ie + 1] = m1 * np.where(m1 >= 0.0, c[js:je, is_ - 1:ie],
                                                 c[js:je, is_:ie + 1])
        m2 = F2[IDN, js:je + 1, is_:ie]
        F2[k, js:je + 1, is_:ie] = m2 * np.where(m2 >= 0.0, c[js - 1:je, is_:ie],
                                                 c[js:je + 1, is_:ie])


class SelfUpdatingDye(Dye):
    """The same, but the module applies the flux divergence itself, written as
    the core writes its cell update (so the result must be bitwise the same)."""
    updates_own_variables = True

    def stage_source(self, sim, W, U_out, F1, F2, dt, stage):
        m, k = sim.mesh, self.k
        js, je, is_, ie = m.js, m.je, m.is_, m.ie
        U0 = sim.state.U
        a = m.area1
        r2 = (dt / m.dx2[js:je])[:, None]
        U_out[k, js:je, is_:ie] = (
            U0[k, js:je, is_:ie]
            - dt * (a[is_ + 1:ie + 1] * F1[k, js:je, is_ + 1:ie + 1]
                    - a[is_:ie] * F1[k, js:je, is_:ie]) / m.vol1[is_:ie]
            - r2 * (F2[k, js + 1:je + 1, is_:ie] - F2[k, js:je, is_:ie]))


def _run(module_cls, n, steps, dt):
    mod = module_cls(None, None)
    sim = Simulation("cartesian", (0, 1, n), (0, 1, n), PERIODIC, modules=[mod])
    x = (np.arange(n) + 0.5) / n
    X, Y = np.meshgrid(x, x)
    c0 = np.where((np.abs(X - 0.4) < 0.2) & (np.abs(Y - 0.5) < 0.25), 1.0, 0.0) + 0.1 * X
    sim.set_primitive(rho=1.0, p=1.0, vx=VX, vy=VY, dye=c0)
    for _ in range(steps):
        sim.step(dt)
    return sim, c0


def _upwind(c, dt, dx, steps):
    def L(c):
        return VX * (c - np.roll(c, 1, axis=1)) / dx + VY * (c - np.roll(c, 1, axis=0)) / dx
    for _ in range(steps):
        c = c - dt * L(c - 0.5 * dt * L(c))
    return c


@pytest.mark.parametrize("module_cls", [Dye, SelfUpdatingDye])
def test_module_fluxes_give_two_stage_upwind_advection(module_cls):
    n, steps = 32, 40
    dt = 0.3 / n
    sim, c0 = _run(module_cls, n, steps, dt)
    dye = sim.field("dye")
    ref = _upwind(c0, dt, 1.0 / n, steps)
    assert np.abs(dye - ref).max() < 1e-12
    # conservative: the total is kept to round-off (periodic box)
    assert abs(dye.sum() - c0.sum()) < 1e-12 * c0.sum()
    # and the gas stays the uniform state
    assert np.abs(sim.field("rho") - 1.0).max() < 1e-13


def test_a_module_that_updates_its_variables_itself_matches_the_core_update():
    n, steps = 24, 10
    a, _ = _run(Dye, n, steps, 0.3 / n)
    b, _ = _run(SelfUpdatingDye, n, steps, 0.3 / n)
    assert b.integrator.own.tolist().count(1) == 1 and not a.integrator.own.any()
    assert np.array_equal(a.state.U, b.state.U)
