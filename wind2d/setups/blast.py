"""Point blast: energy deposited as pressure in a small sphere (on the axis in (R, z)).

In cylindrical geometry ``energy`` is the total energy of the 3D blast; in
Cartesian geometry it is the energy per unit length of a line blast.
"""
from typing import Any

import numpy as np
from pydantic import Field

from ..errors import ParameterError
from ..problem.schema import Q, Strict
from . import apply_state, register


@register("blast")
class Blast:
    class Params(Strict):
        energy: Any = Field(description="blast energy (cylindrical: total; cartesian: per "
                            "unit length) [energy]")
        radius: Q("length", "radius of the deposit") = Field(gt=0.0)
        centre: list[Q("length", "coordinate")] = Field(default_factory=lambda: [0.0, 0.0],
                                                         description="centre (R, z) or (x, y)")
        ambient: dict[str, Any] = Field(description="surrounding state")

    def apply(self, sim, params, ctx):
        cyl = ctx.geometry == "cylindrical"
        kind = "energy" if cyl else "energy_per_length"
        E = ctx.units.code_value(params.energy, kind, "setup.energy")
        if E <= 0:
            raise ParameterError("setup.energy: must be positive")
        if len(params.centre) != 2:
            raise ParameterError("setup.centre: two coordinates")
        if cyl and params.centre[0] != 0.0:
            raise ParameterError("setup.centre: in cylindrical geometry the blast sits on "
                                 "the axis (R = 0)")
        amb = ctx.state(params.ambient, "setup.ambient")

        def hot_cells(mesh):
            x1, x2 = mesh.centres()
            return np.hypot(x1 - params.centre[0], x2 - params.centre[1]) < params.radius

        # the deposit volume from the global mesh: the same number on every rank
        gm = sim.global_mesh
        ghot = hot_cells(gm)
        if not ghot.any():
            raise ParameterError("setup.radius: smaller than a cell; no cell holds the energy")
        per = 2.0 * np.pi if cyl else 1.0        # volumes are per radian in (R, z)
        gm1 = sim.eos.gamma - 1.0
        p = np.where(hot_cells(sim.mesh), gm1 * E / (per * gm.cell_volumes()[ghot].sum()),
                     amb.get("p", 0.0))
        apply_state(sim, {**amb, "p": p})
