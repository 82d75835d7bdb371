"""Cosmic-ray modified shock tube with transport switched off.

Reference: the Riemann problem of a composite of thermal gas (gamma = 5/3) and
cosmic rays (gamma_c = 4/3) (Pfrommer, Springel, Ensslin & Jubelgas 2006,
MNRAS 367, 113).  Without acceleration the cosmic rays are adiabatic
everywhere, across the shock too (P_c2 = P_c1 (rho2/rho1)^gamma_c), and the jump
conserves mass, momentum (total pressure) and total energy with
eps = P/(gamma - 1) + P_c/(gamma_c - 1); in rarefactions both components are
isentropic, c^2 = (gamma P + gamma_c P_c)/rho.  The exact solution is computed
here (below); check values from methods.md item 6 [C]: L (1, 0, 0.5, 0.5) |
R (0.125, 0, 0.05, 0.05) gives P* = 0.301669, u* = 0.891025, rho*_L = 0.447119,
rho*_R = 0.246110, shock speed 1.810673.

With neither diffusion nor streaming the two-moment system is tightly coupled
(F_c = (4/3) E_c v); the module then advects the cosmic-ray entropy
E_c^(3/4) conservatively (methods.md item 6: a non-conservative P_c equation
does not converge at shocks).

Measured at t = 0.2 (x0 = 0.5, HLLC, MC limiter): L1(rho) = 4.1e-3, 2.3e-3,
1.24e-3, 7.3e-4 at 100, 200, 400, 800 cells; post-shock P_c plateau 0.12337
at 400 and 800 cells (exact 0.123385); shock and contact within 0.2 cells.
"""
import numpy as np
import pytest
from scipy.integrate import quad
from scipy.optimize import brentq

from wind2d import Simulation
from wind2d.physics.cosmic_rays import CosmicRays

GAMMA, GC = 5.0 / 3.0, 4.0 / 3.0
LEFT = (1.0, 0.0, 0.5, 0.5)          # rho, u, P_gas, P_c
RIGHT = (0.125, 0.0, 0.05, 0.05)


class Composite:
    """Exact Riemann solver of gas + adiabatic cosmic rays (see the module docstring)."""

    def __init__(self, left, right, gamma=GAMMA, gamma_c=GC):
        self.L, self.R, self.g, self.gc = left, right, gamma, gamma_c
        self.P, self.u, self.rhoL, self.rhoR = self._solve()

    def pg(self, rho, s):
        return s[2] * (rho / s[0]) ** self.g

    def pc(self, rho, s):
        return s[3] * (rho / s[0]) ** self.gc

    def c(self, rho, s):
        return np.sqrt((self.g * self.pg(rho, s) + self.gc * self.pc(rho, s)) / rho)

    def _shock_density(self, P, s):
        r1, P1 = s[0], s[2] + s[3]
        e1 = (s[2] / (self.g - 1) + s[3] / (self.gc - 1)) / r1

        def hugoniot(r2):
            pc2 = self.pc(r2, s)
            e2 = ((P - pc2) / (self.g - 1) + pc2 / (self.gc - 1)) / r2
            return e2 - e1 - 0.5 * (P1 + P) * (1 / r1 - 1 / r2)
        top = r1 * (self.g + 1) / (self.g - 1)           # strongest compression
        return brentq(hugoniot, r1 * (1 + 1e-14), top * (1 - 1e-12), xtol=1e-15, rtol=1e-15)

    def _isentrope_density(self, P, s):
        return brentq(lambda r: self.pg(r, s) + self.pc(r, s) - P, 1e-12, 1e6 * s[0],
                      xtol=1e-15, rtol=1e-15)

    def _riemann_integral(self, r, s):
        return quad(lambda x: self.c(x, s) / x, r, s[0], epsabs=1e-14, epsrel=1e-13)[0]

    def _wave(self, P, s):
        """f with u* = u_L - f_L (left) and u* = u_R + f_R (right), and rho*."""
        P0 = s[2] + s[3]
        if P > P0:
            r = self._shock_density(P, s)
            return np.sqrt((P - P0) * (1 / s[0] - 1 / r)), r
        r = self._isentrope_density(P, s)
        return -self._riemann_integral(r, s), r

    def _solve(self):
        L, R = self.L, self.R
        P = brentq(lambda p: self._wave(p, L)[0] + self._wave(p, R)[0] + R[1] - L[1],
                   1e-10, 10 * max(L[2] + L[3], R[2] + R[3]), xtol=1e-15, rtol=1e-15)
        fL, rL = self._wave(P, L)
        fR, rR = self._wave(P, R)
        return P, 0.5 * (L[1] - fL + R[1] + fR), rL, rR

    def shock_speed(self, s, rs, sign):
        m = np.sqrt((self.P - s[2] - s[3]) / (1 / s[0] - 1 / rs))
        return s[1] + sign * m / s[0]

    def sample(self, xi):
        """(rho, u, P_gas, P_c) at x/t = xi."""
        out = np.zeros((4, xi.size))
        for k, x in enumerate(xi):
            left = x < self.u
            s, rs, sg = (self.L, self.rhoL, -1) if left else (self.R, self.rhoR, 1)
            star = (rs, self.u, self.P - self.pc(rs, s), self.pc(rs, s))
            if self.P > s[2] + s[3]:
                S = self.shock_speed(s, rs, sg)
                out[:, k] = star if (x > S) == left else s
                continue
            head = s[1] + sg * self.c(s[0], s)
            tail = self.u + sg * self.c(rs, s)
            if (x < head) == left:
                out[:, k] = s
            elif (x > tail) == left:
                out[:, k] = star
            else:       # inside the fan: x = u + sg c, with u from the Riemann invariant
                def fan(r, s=s, sg=sg, x=x):
                    return s[1] - sg * self._riemann_integral(r, s) + sg * self.c(r, s) - x
                r = brentq(fan, rs, s[0], xtol=1e-14)
                out[:, k] = (r, s[1] - sg * self._riemann_integral(r, s), self.pg(r, s),
                             self.pc(r, s))
        return out


def test_exact_composite_solver_reproduces_the_check_values():
    ex = Composite(LEFT, RIGHT)
    # methods.md item 6 [C] (independent calculation)
    assert ex.P == pytest.approx(0.301669, abs=1e-6)
    assert ex.u == pytest.approx(0.891025, abs=1e-6)
    assert ex.rhoL == pytest.approx(0.447119, abs=1e-6)
    assert ex.rhoR == pytest.approx(0.246110, abs=1e-6)
    assert ex.shock_speed(RIGHT, ex.rhoR, 1) == pytest.approx(1.810673, abs=1e-6)
    assert ex.pc(ex.rhoR, RIGHT) == pytest.approx(0.123385, abs=1e-6)
    # limits: P_c -> 0 is gamma = 5/3 Sod (methods.md item 1 [C]) ...
    sod = Composite((1.0, 0.0, 1.0, 1e-12), (0.125, 0.0, 0.1, 1e-13))
    assert sod.P == pytest.approx(0.293945, abs=2e-6)
    assert sod.u == pytest.approx(0.841195, abs=2e-6)
    # ... and equal indices make it a single gas: Toro test 1 (gamma = 1.4, Table 4.3)
    one = Composite((1.0, 0.0, 0.3, 0.7), (0.125, 0.0, 0.04, 0.06), gamma=1.4, gamma_c=1.4)
    assert one.P == pytest.approx(0.30313, abs=1e-5)
    assert one.u == pytest.approx(0.92745, abs=1e-5)


def _run(n, t=0.2):
    cr = CosmicRays.from_keys("cartesian", max_speed=50.0)        # no diffusion, no streaming
    edges = {"x_low": "outflow", "x_high": "outflow", "y_low": "periodic",
             "y_high": "periodic"}
    sim = Simulation("cartesian", (0.0, 1.0, n), (0.0, 4.0 / n, 4), edges, riemann="hllc",
                     modules=[cr])
    def left(x, y):
        return x < 0.5

    sim.set_primitive(rho=lambda x, y: np.where(left(x, y), LEFT[0], RIGHT[0]),
                      p=lambda x, y: np.where(left(x, y), LEFT[2], RIGHT[2]),
                      Ec=lambda x, y: np.where(left(x, y), LEFT[3], RIGHT[3]) / (GC - 1))
    V = sim.mesh.cell_volumes()
    e0 = np.sum(V * (sim.conserved()[4] + sim.conserved()[cr.iE]))
    sim.advance(t)
    return sim, cr, e0


def _crossing(x, f, level):
    """Position where f crosses level (linear interpolation between the cells)."""
    k = np.nonzero(np.diff(np.sign(f - level)))[0]
    assert k.size >= 1
    k = k[-1]
    return x[k] + (level - f[k]) * (x[k + 1] - x[k]) / (f[k + 1] - f[k])


def test_cr_modified_shock_tube_matches_the_exact_two_fluid_solution():
    n, t = 400, 0.2
    sim, cr, e0 = _run(n, t)
    ex = Composite(LEFT, RIGHT)
    x = sim.mesh.centres()[0][0]
    dx = 1.0 / n
    ref = ex.sample((x - 0.5) / t)
    rho = sim.field("rho")[0]
    pc = (GC - 1) * sim.field("Ec")[0]
    # L1 density error: measured 1.24e-3 (first order in dx at discontinuities)
    assert np.mean(np.abs(rho - ref[0])) < 2.0e-3
    # shock and contact within 2 cells of the exact positions
    shock = 0.5 + ex.shock_speed(RIGHT, ex.rhoR, 1) * t
    contact = 0.5 + ex.u * t
    xs = _crossing(x, rho, 0.5 * (ex.rhoR + RIGHT[0]))
    k = (x > contact - 0.1) & (x < shock - 0.02)
    xc = _crossing(x[k], rho[k], 0.5 * (ex.rhoL + ex.rhoR))
    assert abs(xs - shock) < 2 * dx, (xs, shock)
    assert abs(xc - contact) < 2 * dx, (xc, contact)
    # adiabatic cosmic rays behind the shock: plateau P_c within 0.1 % (measured 0.012 %;
    # a non-conservative P_c update gave 0.8 % too high here, not converging)
    plateau = (x > contact + 0.03) & (x < shock - 0.03)
    assert abs(pc[plateau].mean() / ex.pc(ex.rhoR, RIGHT) - 1.0) < 1e-3
    # total (gas + cosmic-ray) energy: only the outflow edges could change it, and
    # no wave has reached them
    V = sim.mesh.cell_volumes()
    e1 = np.sum(V * (sim.conserved()[4] + sim.conserved()[cr.iE]))
    assert abs(e1 / e0 - 1.0) < 1e-13
    # tight coupling: the flux is the advective one, F_c = (4/3) E_c v
    assert np.allclose(sim.field("Fcx"), GC * sim.field("Ec") * sim.field("vx"),
                       rtol=1e-12, atol=1e-14)
