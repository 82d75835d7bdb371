"""Linear MHD (or sound) wave travelling along the diagonal of a periodic box.

The wave vector is k = 2 pi (1/L_x, 1/L_y), one wavelength across the box.
The perturbation is a right eigenvector of the 1D ideal-MHD equations
linearised along k (primitive variables rho, u_n, u_t, u_z, p, B_t, B_z with
B_n fixed), computed numerically; the in-plane field comes from a vector
potential so div B = 0 to round-off.  After one period L/c the exact
solution is the initial state (the classic convergence test of Gardiner &
Stone 2005, from memory).
"""
from typing import Literal

import numpy as np
from pydantic import Field

from ..errors import ParameterError
from ..problem.schema import Q, Strict
from . import register

TARGET = {"fast": 0, "alfven": 1, "slow": 2, "entropy": 3, "sound": 0}


def jacobian(rho, u, p, bn, bt1, bt2, gamma):
    """A of dq/dt + A dq/dn = 0 for q = (rho, u_n, u_t1, u_t2, p, B_t1, B_t2)."""
    A = np.zeros((7, 7))
    A[0, 0], A[0, 1] = u, rho
    A[1, 1], A[1, 4], A[1, 5], A[1, 6] = u, 1 / rho, bt1 / rho, bt2 / rho
    A[2, 2], A[2, 5] = u, -bn / rho
    A[3, 3], A[3, 6] = u, -bn / rho
    A[4, 1], A[4, 4] = gamma * p, u
    A[5, 1], A[5, 2], A[5, 5] = bt1, -bn, u
    A[6, 1], A[6, 3], A[6, 6] = bt2, -bn, u
    return A


def eigenmode(wave, rho, u, p, bn, bt1, bt2, gamma):
    """Eigenvalue and right eigenvector of the chosen right-going wave."""
    lam, vec = np.linalg.eig(jacobian(rho, u, p, bn, bt1, bt2, gamma))
    lam, vec = lam.real, vec.real
    order = np.argsort(lam - u)[::-1]              # fast, alfven, slow, entropy, ...
    k = order[TARGET[wave]]
    r = vec[:, k] / np.max(np.abs(vec[:, k]))
    lead = 0 if wave in ("fast", "slow", "entropy", "sound") else 2
    if r[lead] < 0:
        r = -r
    return lam[k], r


@register("linear_wave")
class LinearWave:
    class Params(Strict):
        wave: Literal["fast", "alfven", "slow", "entropy", "sound"] = Field(
            description="which right-going wave (sound without field)")
        amplitude: float = Field(1e-6, gt=0.0, description="relative amplitude")
        rho: Q("density", "background density") = Field(1.0, gt=0.0)
        p: Q("pressure", "background pressure") = Field(0.6, gt=0.0)
        B_parallel: Q("magnetic_field", "background field along k") = 1.0
        B_across: Q("magnetic_field", "background field across k in the plane") = 1.4142135623730951
        B_out: Q("magnetic_field", "background field out of the plane") = 0.5
        flow: Q("velocity", "background velocity along k") = 0.0

    def apply(self, sim, q, ctx):
        m = sim.mesh
        if ctx.geometry != "cartesian" or not (sim.boundaries.periodic1 and sim.boundaries.periodic2):
            raise ParameterError("setup.kind = 'linear_wave' needs a cartesian grid with "
                                 "periodic edges")
        mhd = sim.varmap.mhd
        if mhd != (q.wave != "sound"):
            raise ParameterError(f"setup.wave = {q.wave!r}: " + (
                "use 'sound' without field" if not mhd else "'sound' is for runs without field"))
        (x0, y0), (x1, y1) = (m.spec[0].lo, m.spec[1].lo), (m.spec[0].hi, m.spec[1].hi)
        kvec = 2 * np.pi * np.array([1 / (x1 - x0), 1 / (y1 - y0)])
        kmag = float(np.hypot(*kvec))
        kh = kvec / kmag
        th = np.array([-kh[1], kh[0]])
        bn, bt1, bt2 = (q.B_parallel, q.B_across, q.B_out) if mhd else (0.0, 0.0, 0.0)
        c, r = eigenmode(q.wave, q.rho, q.flow, q.p, bn, bt1, bt2, sim.eos.gamma)
        d = q.amplitude * r
        ph = lambda x, y: np.sin(kvec[0] * (x - x0) + kvec[1] * (y - y0))
        self.speed, self.period = c, 2 * np.pi / kmag / abs(c) if c else np.inf
        v0 = q.flow * kh
        fields = dict(
            rho=lambda x, y: q.rho + d[0] * ph(x, y),
            vx=lambda x, y: v0[0] + (d[1] * kh[0] + d[2] * th[0]) * ph(x, y),
            vy=lambda x, y: v0[1] + (d[1] * kh[1] + d[2] * th[1]) * ph(x, y),
            vz=lambda x, y: d[3] * ph(x, y),
            p=lambda x, y: q.p + d[4] * ph(x, y))
        if mhd:
            b0 = bn * kh + bt1 * th

            def A(x, y):
                # B = (dA/dy, -dA/dx): uniform part plus the transverse perturbation
                return (b0[0] * y - b0[1] * x
                        + d[5] * np.cos(kvec[0] * (x - x0) + kvec[1] * (y - y0)) / kmag)

            sim.set_field(A)
            fields["Bz"] = lambda x, y: bt2 + d[6] * ph(x, y)
        sim.set_primitive(**fields)
