"""The ``outflow_rates`` diagnostic: rates through named surfaces, and the exact
budget of what left the domain through its edges.

Problem file::

    physics:
      outflow_rates:
        surfaces:
          - {shape: plane, height: 1 kpc, name: z1kpc}        # z = +1 kpc and z = -1 kpc
          - {shape: sphere, radius: 5 kpc, name: r5kpc}
          - {shape: cylinder, radius: 3 kpc, half_height: 2 kpc, name: R3kpc}

History columns, for every surface ``<name>`` and component ``mass``,
``momentum``, ``kinetic``, ``thermal`` (ideal gas), ``magnetic`` (MHD),
``cr`` (with a cosmic-ray module) and ``energy`` (their sum):
``<name>_<component>_net`` and ``<name>_<component>_out``, the rates at the
time of the row (definitions, surface geometry and discretisation in
:mod:`wind2d.analysis.outflow`).  Running totals (tallies) since the start of
the run: ``mass_left_domain``, ``energy_left_domain`` and, with cosmic rays,
``cr_energy_left_domain``: the net amounts that left through the edges of the
grid, summed from the face fluxes of the second stage of every step (the
fluxes that update the cells, after the first-order fallback), so that

    mass(t) - mass(0) = -mass_left_domain(t)

to round-off in a run without sources or floors.  Everything is per radian
in cylindrical geometry (like ``mass`` and ``energy`` of the history).

The module never changes the state: a run with it is bitwise identical to a
run without it.
"""
from __future__ import annotations

import re
from typing import Annotated, Literal, Optional, Union

import numpy as np
from pydantic import Field, model_validator

from ...analysis.outflow import (COMPONENTS, KINDS, NCOMP, cylinder_points, edge_totals,
                                 plane_points, snap_to_face, sphere_points, surface_fluxes)
from ...errors import ParameterError
from ...problem.schema import Q, Strict
from ...problem.units import KINDS as UNIT_KINDS
from ...state import IDN, IEN
from ..base import Module
from ..registry import register

ORDER_DIAGNOSTICS = 100        # after every module that changes the state
# a momentum rate (g cm s-2) has the dimension of an energy per length; a kind
# of its own ("momentum_rate") is requested from the unit table
MOMENTUM_RATE = "momentum_rate" if "momentum_rate" in UNIT_KINDS else "energy_per_length"
_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")


class _Surface(Strict):
    name: Optional[str] = Field(None, description="name used in the history columns "
                                "(letters, digits, '_'; default: the shape and its position "
                                "in the list, e.g. 'plane0')")
    centre_z: Q("length", "height of the centre on the axis") = 0.0

    @model_validator(mode="after")
    def _name(self):
        if self.name is not None and not _NAME.match(self.name):
            raise ValueError(f"name {self.name!r}: use letters, digits and '_', starting "
                             "with a letter")
        return self


class PlaneSurface(_Surface):
    """The planes z = centre_z +- height (moved to the nearest cell faces)."""
    shape: Literal["plane"]
    height: Q("length", "distance of the planes from centre_z") = Field(ge=0.0)
    sides: Literal["both", "upper", "lower"] = Field("both", description="which of the two "
                                                     "planes: both, upper (+height) or lower")
    R_max: Optional[Q("length", "limit the planes to R < R_max (default: the whole grid; "
                      "moved to the nearest face)")] = Field(None, gt=0.0)

    @model_validator(mode="after")
    def _sides(self):
        if self.height == 0.0 and self.sides == "both":
            raise ValueError("height 0 with sides: both counts one plane twice; choose "
                             "sides: upper (normal +z) or lower (normal -z)")
        return self


class CylinderSurface(_Surface):
    """The cylinder R = radius (moved to the nearest R-face); on a Cartesian grid
    the lines x = +-radius inside the grid."""
    shape: Literal["cylinder"]
    radius: Q("length", "radius") = Field(gt=0.0)
    half_height: Optional[Q("length", "limit to the rows whose centres satisfy "
                            "|z - centre_z| <= half_height (default: all rows)")] = \
        Field(None, gt=0.0)


class SphereSurface(_Surface):
    """The sphere r = radius around (0, centre_z) (a circle on a Cartesian grid)."""
    shape: Literal["sphere"]
    radius: Q("length", "radius") = Field(gt=0.0)


Surface = Annotated[Union[PlaneSurface, CylinderSurface, SphereSurface],
                    Field(discriminator="shape")]


class OutflowRatesParams(Strict):
    """Rates through surfaces at the history cadence, and the exact budget of the
    domain edges."""
    surfaces: list[Surface] = Field(default_factory=list, description="surfaces, each "
                                    "{shape: plane, cylinder or sphere, its keys, name}")


@register("outflow_rates")
class OutflowRates(Module):
    """Outflow rates through named surfaces (plane, cylinder, sphere; their keys:
    docs/diagnostics.md) and the exact budget of the domain edges."""

    Params = OutflowRatesParams
    order = ORDER_DIAGNOSTICS

    def __init__(self, params=None, context=None, *, surfaces=None):
        if params is None:
            # Python API: surfaces as mappings, numbers in code units
            from ...problem.units import UnitSystem
            units = getattr(context, "units", None) or UnitSystem()
            params = self.Params.model_validate({"surfaces": list(surfaces or [])},
                                                context={"units": units})
        super().__init__(params, context)

    # ------------------------------------------------------------ set-up
    def attach(self, sim) -> None:
        super().attach(sim)
        m, gm, vm = sim.mesh, sim.global_mesh, sim.varmap
        where = f"physics.{self.name or 'outflow_rates'}.surfaces"
        self.iso = sim.eos.isothermal
        self.mhd = vm.mhd
        # the cosmic-ray energy and its flux components, if a module owns them
        self.iE = vm.index.get("Ec", -1)
        self.icr1 = self.icr2 = -1
        if self.iE >= 0:
            owner = next((mod for mod in sim.modules
                          if any(v.name == "Ec" for v in mod.variables)), None)
            if owner is not None:
                for v in owner.variables:
                    if v.component == 1:
                        self.icr1 = vm.index[v.name]
                    elif v.component == 2:
                        self.icr2 = vm.index[v.name]
            if self.icr1 < 0 or self.icr2 < 0:
                self.icr1 = self.icr2 = -1
        comps = ["mass", "momentum", "kinetic"]
        if not self.iso:
            comps.append("thermal")
        if self.mhd:
            comps.append("magnetic")
        if self.icr1 >= 0:
            comps.append("cr")
        comps.append("energy")
        self.components = comps
        self.cidx = [COMPONENTS.index(c) for c in comps]

        self.names, self.parts, self.positions = [], [], []
        zfaces = gm.x2f[gm.js:gm.je + 1]
        rfaces = gm.x1f[gm.is_:gm.ie + 1]
        for k, s in enumerate(self.params.surfaces):
            name = s.name or f"{s.shape}{k}"
            if name in self.names:
                raise ParameterError(f"{where}[{k}].name = {name!r}: used by another surface")
            w = f"{where}[{k}]"
            if s.shape == "plane":
                parts, pos = self._plane(s, m, gm, zfaces, rfaces, w)
            elif s.shape == "cylinder":
                parts, pos = self._cylinder(s, m, gm, rfaces, w)
            else:
                if not len(sphere_points(gm, s.radius, s.centre_z)):
                    raise ParameterError(f"{w}.radius: the sphere r = {s.radius:g} (code units) "
                                         "around the centre does not cross the grid")
                parts, pos = [sphere_points(m, s.radius, s.centre_z)], [s.radius]
            self.names.append(name)
            self.parts.append(parts)
            self.positions.append(pos)
        self.out = np.zeros((len(self.names), 2, NCOMP))

        # tallies: what left through the edges of the domain (running totals)
        i0, i1, j0, j1 = m.window
        p1 = sim.boundaries.periodic1
        p2 = sim.boundaries.periodic2
        self.edge_flags = (i0 == 0 and not p1, i1 == gm.n1 and not p1,
                           j0 == 0 and not p2, j1 == gm.n2 and not p2)
        self.tally_vars = {"mass_left_domain": IDN}
        kinds = {"mass_left_domain": "mass"}
        if not self.iso:
            self.tally_vars["energy_left_domain"] = IEN
            kinds["energy_left_domain"] = "energy"
        if self.iE >= 0:
            self.tally_vars["cr_energy_left_domain"] = self.iE
            kinds["cr_energy_left_domain"] = "energy"
        self.tally_kinds = kinds
        for key in self.tally_vars:
            self.tallies.setdefault(key, 0.0)

    def _plane(self, s, m, gm, zfaces, rfaces, w):
        sides = {"both": (1.0, -1.0), "upper": (1.0,), "lower": (-1.0,)}[s.sides]
        rmax = None
        if s.R_max is not None:
            rmax = snap_to_face(rfaces, s.R_max)
            if rmax == 0:
                raise ParameterError(f"{w}.R_max = {s.R_max:g} (code units) is nearer to "
                                     "the inner edge than to any other face: no column left")
        parts, pos = [], []
        for sg in sides:
            z = s.centre_z + sg * s.height
            if not zfaces[0] <= z <= zfaces[-1]:
                continue
            k = snap_to_face(zfaces, z)
            parts.append(plane_points(m, gm, k, sg, rmax))
            pos.append(float(zfaces[k]))
        if not parts:
            raise ParameterError(f"{w}.height: the plane(s) z = {s.centre_z:g} +- {s.height:g} "
                                 f"(code units) lie outside the grid ({zfaces[0]:g} .. "
                                 f"{zfaces[-1]:g})")
        return parts, pos

    def _cylinder(self, s, m, gm, rfaces, w):
        rows = None
        if s.half_height is not None:
            zc = gm.x2c[gm.js:gm.je]
            inside = np.nonzero(np.abs(zc - s.centre_z) <= s.half_height)[0]
            if not len(inside):
                raise ParameterError(f"{w}.half_height = {s.half_height:g} (code units): no "
                                     "cell centre of the grid lies within it")
            rows = (int(inside[0]), int(inside[-1]) + 1)
        signs = (1.0,) if m.cylindrical else (1.0, -1.0)
        parts, pos = [], []
        for sg in signs:
            x = sg * s.radius
            if not rfaces[0] <= x <= rfaces[-1]:
                continue
            k = snap_to_face(rfaces, x)
            parts.append(cylinder_points(m, gm, k, sg, rows))
            pos.append(float(rfaces[k]))
        if not parts:
            raise ParameterError(f"{w}.radius = {s.radius:g} (code units) lies outside the "
                                 f"grid ({rfaces[0]:g} .. {rfaces[-1]:g})")
        return parts, pos

    # ------------------------------------------------------------ the step
    def stage_source(self, sim, W, U_out, F1, F2, dt, stage) -> None:
        if stage != 1:
            return
        m = sim.mesh
        lo1, hi1, lo2, hi2 = self.edge_flags
        for key, var in self.tally_vars.items():
            self.tallies[key] += edge_totals(F1, F2, var, float(dt), m.area1, m.vol1, m.dx2,
                                             lo1, hi1, lo2, hi2, m.js, m.je, m.is_, m.ie)

    # ------------------------------------------------------------ output
    def rates(self, sim) -> np.ndarray:
        """Rates through every surface ``[surface, net/out, component]`` (all
        components of :data:`~wind2d.analysis.outflow.COMPONENTS`), summed over
        ranks (collective)."""
        W = sim.integrator.W
        g = sim.eos.gamma
        self.out[...] = 0.0
        for k, parts in enumerate(self.parts):
            for p in parts:
                if len(p):
                    surface_fluxes(W, p.jj, p.ii, p.wts, p.nrm, p.area, g, self.iso,
                                   self.mhd, self.icr1, self.icr2, self.out[k])
        if not len(self.names):
            return self.out.copy()
        tot = sim.global_sum(self.out.reshape(-1))
        return np.asarray(tot, dtype=np.float64).reshape(self.out.shape).copy()

    def history(self, sim):
        out = {}
        if not self.names:
            return out
        r = self.rates(sim)
        for k, name in enumerate(self.names):
            for c, ci in zip(self.components, self.cidx):
                kind = KINDS[c] or MOMENTUM_RATE
                out[f"{name}_{c}_net"] = (float(r[k, 0, ci]), kind)
                out[f"{name}_{c}_out"] = (float(r[k, 1, ci]), kind)
        return out
