"""Riemann problem: two states separated by a plane normal to one axis."""
from typing import Any

import numpy as np
from pydantic import Field

from ..errors import ParameterError
from ..problem.schema import Q, Strict
from . import register


@register("shock_tube")
class ShockTube:
    class Params(Strict):
        along: str = Field(description="axis normal to the initial discontinuity "
                           "(x, y, R or z)")
        at: Q("length", "position of the discontinuity")
        left: dict[str, Any] = Field(description="state on the low side")
        right: dict[str, Any] = Field(description="state on the high side")

    def apply(self, sim, params, ctx):
        if params.along not in ctx.axis_names:
            raise ParameterError(f"setup.along = {params.along!r}: allowed axes are "
                                 + ", ".join(ctx.axis_names))
        lo = ctx.state(params.left, "setup.left")
        hi = ctx.state(params.right, "setup.right")
        axis = ctx.axis_names.index(params.along)
        names = sim.field_names

        def pick(k):
            a, b = lo.get(k, 0.0), hi.get(k, 0.0)
            return lambda x1, x2: np.where((x1, x2)[axis] < params.at, a, b)

        poloidal = names[5:7] if sim.varmap.mhd else ()
        if poloidal and ctx.geometry == "cylindrical" and \
                (lo.get(poloidal[0], 0.0) != 0.0 or hi.get(poloidal[0], 0.0) != 0.0):
            raise ParameterError(f"setup: a uniform {poloidal[0]} has div B = {poloidal[0]}/R "
                                 "!= 0 in cylindrical geometry; use Bphi (and Bz) for the "
                                 "tangential field of a shock tube")
        if poloidal:
            normal = poloidal[axis]
            if lo.get(normal, 0.0) != hi.get(normal, 0.0):
                raise ParameterError(f"setup: {normal} is normal to the discontinuity and "
                                     "must be equal on both sides (div B = 0)")
            b = {normal: lo.get(normal, 0.0), poloidal[1 - axis]: pick(poloidal[1 - axis])}
            sim.set_field(b1=b[poloidal[0]], b2=b[poloidal[1]])
        sim.set_primitive(**{k: pick(k) for k in set(lo) | set(hi) if k not in poloidal})
