"""Radial equilibria of a cylinder (radial force balance, common practice):

* ``rotating_equilibrium``: v_phi = v0 (R/a) exp(-R^2/2a^2) with
  p = p0 - (rho v0^2/2) exp(-R^2/a^2), so that dp/dR = rho v_phi^2/R;
* ``toroidal_equilibrium``: B_phi = B0 (R/a) exp(-R^2/2a^2) with
  p = p0 - (B0^2/2)(R^2/a^2 - 1) exp(-R^2/a^2), so that
  d(p + B_phi^2/2)/dR = -B_phi^2/R (hoop stress).
"""
import numpy as np
from pydantic import Field

from ..errors import ParameterError
from ..problem.schema import Q, Strict
from . import register


def _cyl(ctx, name):
    if ctx.geometry != "cylindrical":
        raise ParameterError(f"setup.kind = {name!r} needs grid.geometry: cylindrical")


@register("rotating_equilibrium")
class RotatingEquilibrium:
    """Rotating cylinder: v_phi = v0 (R/a) exp(-R^2/2a^2) balanced by the pressure
    p = p0 - (rho v0^2/2) exp(-R^2/a^2) (dp/dR = rho v_phi^2/R)."""

    class Params(Strict):
        rho: Q("density", "uniform density") = Field(gt=0.0)
        p0: Q("pressure", "pressure far from the axis") = Field(gt=0.0)
        v0: Q("velocity", "velocity scale")
        a: Q("length", "radius scale") = Field(gt=0.0)

    def apply(self, sim, q, ctx):
        _cyl(ctx, "rotating_equilibrium")
        if q.p0 - 0.5 * q.rho * q.v0 ** 2 <= 0:
            raise ParameterError("setup.p0: too small, the pressure on the axis would be <= 0")
        sim.set_primitive(rho=q.rho,
                          vphi=lambda R, z: q.v0 * R / q.a * np.exp(-R**2 / (2 * q.a**2)),
                          p=lambda R, z: q.p0 - 0.5 * q.rho * q.v0**2 * np.exp(-R**2 / q.a**2))


@register("toroidal_equilibrium")
class ToroidalEquilibrium:
    """Toroidal field B_phi = B0 (R/a) exp(-R^2/2a^2) balanced by the pressure
    p = p0 - (B0^2/2)(R^2/a^2 - 1) exp(-R^2/a^2) (d(p + B_phi^2/2)/dR = -B_phi^2/R)."""

    class Params(Strict):
        rho: Q("density", "uniform density") = Field(gt=0.0)
        p0: Q("pressure", "pressure far from the axis") = Field(gt=0.0)
        B0: Q("magnetic_field", "field scale")
        a: Q("length", "radius scale") = Field(gt=0.0)

    def apply(self, sim, q, ctx):
        _cyl(ctx, "toroidal_equilibrium")
        if not sim.varmap.mhd:
            raise ParameterError("setup.kind = 'toroidal_equilibrium' needs gas.magnetised: true")
        if q.p0 - 0.5 * q.B0 ** 2 * 2 * np.exp(-2.0) <= 0 or q.p0 <= 0:
            raise ParameterError("setup.p0: too small, the pressure would be <= 0")
        sim.set_primitive(
            rho=q.rho, Bphi=lambda R, z: q.B0 * R / q.a * np.exp(-R**2 / (2 * q.a**2)),
            p=lambda R, z: q.p0 - 0.5 * q.B0**2 * (R**2 / q.a**2 - 1) * np.exp(-R**2 / q.a**2))
