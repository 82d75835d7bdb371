"""A uniform state everywhere (at rest or moving)."""
from typing import Any

from pydantic import Field

from ..problem.schema import Strict
from . import apply_state, register


@register("uniform")
class Uniform:
    class Params(Strict):
        state: dict[str, Any] = Field(description="the state (rho, p or T, velocity and "
                                      "field components)")

    def apply(self, sim, params, ctx):
        apply_state(sim, ctx.state(params.state, "setup.state"))
