"""Field-loop advection (Gardiner & Stone 2005, J. Comput. Phys. 205, 509):
A_z = A0 (R0 - r) inside r < R0 in a uniform moving gas."""
from typing import Any

import numpy as np
from pydantic import Field

from ..errors import ParameterError
from ..problem.schema import Q, Strict
from . import register


@register("field_loop")
class FieldLoop:
    class Params(Strict):
        amplitude: Q("magnetic_field", "A0, field strength inside the loop")
        radius: Q("length", "R0, loop radius") = Field(gt=0.0)
        centre: list[Q("length", "coordinate")] = Field(default_factory=lambda: [0.0, 0.0])
        state: dict[str, Any] = Field(description="uniform gas state and velocity")

    def apply(self, sim, q, ctx):
        if ctx.geometry != "cartesian" or not sim.varmap.mhd:
            raise ParameterError("setup.kind = 'field_loop' needs a cartesian grid and "
                                 "gas.magnetised: true")
        st = ctx.state(q.state, "setup.state")
        if set(st) & set(sim.field_names[5:7]):
            raise ParameterError("setup.state: the in-plane field is the loop's; give no "
                                 + " or ".join(sim.field_names[5:7]))
        c = q.centre

        def A(x, y):
            r = np.hypot(x - c[0], y - c[1])
            return np.where(r < q.radius, q.amplitude * (q.radius - r), 0.0)

        sim.set_field(A)
        sim.set_primitive(**st)
