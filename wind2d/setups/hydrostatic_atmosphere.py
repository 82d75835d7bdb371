"""Isothermal hydrostatic atmosphere in the run's gravitational potential:

    rho = rho0 exp(-(Phi(R, z) - Phi(R0, z0)) / theta),   p = rho theta,

with theta = p/rho = k_B T/(mu m_H) (the isothermal sound speed squared), the
exact solution of grad p = -rho grad Phi at constant temperature (common
practice).  Phi is the sum of the potentials of the run's gravity modules
(``physics: {gravity: ...}``), taken at the same cell centres the gravity
source uses.
"""
from __future__ import annotations

from typing import Optional

import numpy as np
from pydantic import Field

from ..errors import ParameterError
from ..problem.schema import Q, Strict
from . import register


def centre_potential(sim, where: str) -> np.ndarray:
    """Phi on the interior cell centres ``[n2, n1]``: the sum of the arrays the
    run's gravity modules act with (a clear error if there is none)."""
    from ..physics.gravity import gravity_modules, total_potential
    total_potential(sim, where)                  # raises if there is no gravity module
    m = sim.mesh
    return sum(mod.phic[m.js:m.je, m.is_:m.ie] for mod in gravity_modules(sim))


@register("hydrostatic_atmosphere")
class HydrostaticAtmosphere:
    """Isothermal atmosphere at rest in the gravity modules' potential."""

    class Params(Strict):
        rho0: Q("density", "density at the reference point") = Field(gt=0.0)
        T: Optional[Q("temperature", "temperature (ideal gas; an isothermal gas takes "
                                     "gas.sound_speed)")] = Field(None, gt=0.0)
        R0: Q("length", "reference point, radius (x on a Cartesian grid)") = 0.0
        z0: Q("length", "reference point, height (y on a Cartesian grid)") = 0.0

    def apply(self, sim, q, ctx):
        where = "setup.kind = 'hydrostatic_atmosphere'"
        if sim.eos.isothermal:
            if q.T is not None:
                raise ParameterError("setup.T: the isothermal gas has its temperature from "
                                     "gas.sound_speed; leave T out")
            theta = sim.eos.cs2
        else:
            if q.T is None:
                raise ParameterError("setup.T: the ideal gas needs the temperature of the "
                                     "atmosphere")
            theta = q.T
        from ..physics.gravity import total_potential
        pot = total_potential(sim, where)
        phi = centre_potential(sim, where)
        R0 = abs(q.R0) if sim.mesh.cylindrical else q.R0
        phi0 = float(pot.phi(np.array(R0), np.array(q.z0)))
        if not np.isfinite(phi0):
            raise ParameterError("setup.R0, setup.z0: the potential is not finite at the "
                                 "reference point; choose another one")
        expo = -(phi - phi0) / theta
        if expo.max() > 700.0:
            raise ParameterError("setup.T: the atmosphere is too cold for this potential "
                                 "(the density would overflow); raise T or move the "
                                 "reference point deeper into the potential")
        rho = q.rho0 * np.exp(expo)
        sim.set_primitive(rho=rho, p=rho * theta)
