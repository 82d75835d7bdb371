"""A uniform state everywhere (at rest or moving)."""
from typing import Any

from pydantic import Field

from ..problem.schema import Strict
from . import register


@register("uniform")
class Uniform:
    class Params(Strict):
        state: dict[str, Any] = Field(description="the state (rho, p or T, velocity and "
                                      "field components)")

    def apply(self, sim, params, ctx):
        st = ctx.state(params.state, "setup.state")
        poloidal = {k: st.pop(k) for k in list(st) if k in sim.field_names[5:7]
                    and sim.varmap.mhd}
        if poloidal:
            n1, n2 = sim.field_names[5], sim.field_names[6]
            sim.set_field(b1=poloidal.get(n1, 0.0), b2=poloidal.get(n2, 0.0))
        sim.set_primitive(**st)
