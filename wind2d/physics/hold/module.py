"""The ``hold`` module: regions whose cells are reset to a given state every step.

Problem file::

    physics:
      hold:
        regions:
          - {shape: sphere, radius: 0.5 kpc, state: {rho: 1 cm**-3, T: 1e6 K}}
          - {shape: slab, z_min: -0.2 kpc, z_max: 0.2 kpc, R_max: 2 kpc, state: initial}

A cell belongs to a region when its centre (the volume centroid in R) lies
inside the shape; ``outside: true`` takes the complement (e.g. hold
everything beyond a sphere).  Shapes (R and z are x and y on a Cartesian grid):

* ``sphere``:   (R^2 + (z - centre_z)^2) <= radius^2, centred on the axis;
* ``slab``:     z_min <= z <= z_max and R_min <= R <= R_max (limits optional);
* ``cylinder``: R <= radius and z_min <= z <= z_max (around the axis).

``state`` is a state mapping as in the setups (``rho``, ``p`` or ``T``,
velocity components, ``Bphi``, scalars, module variables; velocity
components not given are zero, other variables not given keep their current
value), or ``initial``: the state the setup put there (captured by
:meth:`Hold.initialise`).  After every step (a split source, acting after
all other modules) the conserved variables of the held cells are rebuilt from
the held primitives; the face-centred poloidal field is left alone (its
magnetic energy is kept in the total energy).  Where regions overlap, the
later one wins.  The mass, momentum and energy put in or taken out are
tallied (``held_mass``, ``held_energy``: running totals, per radian in
cylindrical geometry).
"""
from __future__ import annotations

from typing import Annotated, Any, Literal, Optional, Union

import numpy as np
from numba import njit
from pydantic import Field, model_validator

from ...core.indexing import u
from ...errors import ParameterError
from ...problem.schema import Q, Strict
from ...state import IB1, IB2, IB3, IDN, IEN, IM1, IM2, IM3, IPR, IV1, IV2, IV3
from ..base import ORDER_HOLD, Module
from ..registry import register

StateSpec = Union[Literal["initial"], dict[str, Any]]


class _Region(Strict):
    state: StateSpec = Field(description="the held state: a mapping {rho, p or T, "
                             "velocities, ...} or 'initial' (the setup's state)")
    outside: bool = Field(False, description="hold the cells outside the shape instead")


class SphereRegion(_Region):
    """A sphere centred on the axis (a circle centred on x = 0 in Cartesian)."""
    shape: Literal["sphere"]
    radius: Q("length", "radius") = Field(gt=0.0)
    centre_z: Q("length", "height of the centre on the axis") = 0.0

    def contains(self, R, z):
        return R * R + (z - self.centre_z) ** 2 <= self.radius ** 2


class SlabRegion(_Region):
    """A band z_min <= z <= z_max, optionally limited in R."""
    shape: Literal["slab"]
    z_min: Optional[Q("length", "lower height (none: unbounded)")] = None
    z_max: Optional[Q("length", "upper height (none: unbounded)")] = None
    R_min: Optional[Q("length", "inner radius (none: unbounded)")] = None
    R_max: Optional[Q("length", "outer radius (none: unbounded)")] = None

    @model_validator(mode="after")
    def _order(self):
        for lo, hi in (("z_min", "z_max"), ("R_min", "R_max")):
            a, b = getattr(self, lo), getattr(self, hi)
            if a is not None and b is not None and not a < b:
                raise ValueError(f"{lo} ({a:g}) must be smaller than {hi} ({b:g}), "
                                 "both in code units")
        return self

    def contains(self, R, z):
        inside = np.ones(np.broadcast(R, z).shape, dtype=bool)
        if self.z_min is not None:
            inside &= z >= self.z_min
        if self.z_max is not None:
            inside &= z <= self.z_max
        if self.R_min is not None:
            inside &= R >= self.R_min
        if self.R_max is not None:
            inside &= R <= self.R_max
        return inside


class CylinderRegion(_Region):
    """A cylinder around the axis: R <= radius, z_min <= z <= z_max."""
    shape: Literal["cylinder"]
    radius: Q("length", "radius") = Field(gt=0.0)
    z_min: Q("length", "lower end")
    z_max: Q("length", "upper end")

    @model_validator(mode="after")
    def _order(self):
        if not self.z_min < self.z_max:
            raise ValueError(f"z_min ({self.z_min:g}) must be smaller than z_max "
                             f"({self.z_max:g}), both in code units")
        return self

    def contains(self, R, z):
        return (np.abs(R) <= self.radius) & (z >= self.z_min) & (z <= self.z_max)


Region = Annotated[Union[SphereRegion, SlabRegion, CylinderRegion],
                   Field(discriminator="shape")]


class HoldParams(Strict):
    """Held regions: cells reset to a fixed state after every step."""
    regions: list[Region] = Field(min_length=1, description="regions, each {shape: sphere, "
                                  "slab or cylinder, its keys, state: {...} or initial}")


@njit(cache=True, error_model="numpy")
def reset_cells(U, Wh, region_of, keep, vol1, dx2, gamma, iso, mhd, nhydro, nadv,
                js, je, is_, ie):
    """Rebuild ``U`` of the held interior cells (``region_of >= 0``) from the held
    primitives ``Wh`` (layout of ``U``; scalars as mass fractions, module
    variables as densities).  Variables with ``keep[region, v]`` keep their
    current value (scalars their mass fraction); the B1, B2 slots (set from the
    face fields) are never touched and their magnetic energy stays in ``E``.
    Returns the change of mass and of total energy (sum of V dU)."""
    nv = U.shape[0]
    dmass = 0.0
    den = 0.0
    for j in range(u(js), u(je)):
        for i in range(u(is_), u(ie)):
            k = region_of[j, i]
            if k < 0:
                continue
            vol = vol1[i] * dx2[j]
            d_old = U[IDN, j, i]
            e_old = U[IEN, j, i]
            d = Wh[IDN, j, i]
            v1 = Wh[IV1, j, i]
            v2 = Wh[IV2, j, i]
            v3 = Wh[IV3, j, i]
            for v in range(nhydro, nadv):
                s = U[v, j, i] / d_old if keep[k, v] else Wh[v, j, i]
                U[v, j, i] = d * s
            for v in range(nadv, nv):
                if not keep[k, v]:
                    U[v, j, i] = Wh[v, j, i]
            U[IDN, j, i] = d
            U[IM1, j, i] = d * v1
            U[IM2, j, i] = d * v2
            U[IM3, j, i] = d * v3
            emag = 0.0
            if mhd:
                if not keep[k, IB3]:
                    U[IB3, j, i] = Wh[IB3, j, i]
                emag = 0.5 * (U[IB1, j, i] ** 2 + U[IB2, j, i] ** 2 + U[IB3, j, i] ** 2)
            dmass += vol * (d - d_old)
            if not iso:
                U[IEN, j, i] = (Wh[IPR, j, i] / (gamma - 1.0)
                                + 0.5 * d * (v1 * v1 + v2 * v2 + v3 * v3) + emag)
                den += vol * (U[IEN, j, i] - e_old)
    return dmass, den


@register("hold")
class Hold(Module):
    """Held regions: the cells inside each region are reset to the region's state
    after every step (a wind base, a fixed reservoir); the face-centred field is
    left alone.  Tallies ``held_mass`` and ``held_energy`` count what the resets
    add."""

    # region_of[j, i]: the region of each cell (-1: not held); Wh: the primitives each
    # held cell is reset to, in the layout of U (scalars as mass fractions, module
    # variables as densities); keep[k, v]: variables region k leaves as they are

    Params = HoldParams
    order = ORDER_HOLD
    tally_kinds = {"held_mass": "mass", "held_energy": "energy"}

    def __init__(self, params=None, context=None, *, regions=None):
        if regions is not None:
            # Python API: regions as plain mappings, numbers in code units
            from ...problem.units import UnitSystem
            if params is not None:
                raise ValueError("Hold: give either params or regions")
            units = getattr(context, "units", None) or UnitSystem()
            params = self.Params.model_validate({"regions": list(regions)},
                                                context={"units": units})
        super().__init__(params, context)
        self._captured = False
        self.tallies = {"held_mass": 0.0, "held_energy": 0.0}

    def attach(self, sim) -> None:
        super().attach(sim)
        from ...problem.units import UnitSystem
        from ...setups import SetupContext
        m, vm = sim.mesh, sim.varmap
        units = self.units if self.units is not None else UnitSystem()
        ctx = SetupContext(units, m.geometry, vm.primitive_names, m.axis_names)
        x1, x2 = m.centres()
        self.region_of = np.full((m.nt2, m.nt1), -1, dtype=np.int64)
        inner = self.region_of[m.js:m.je, m.is_:m.ie]
        self.states = []
        where0 = f"physics.{self.name or 'hold'}.regions"
        g1, g2 = sim.global_mesh.centres()
        for k, reg in enumerate(self.params.regions):
            inside = np.asarray(reg.contains(x1, x2), dtype=bool)
            anywhere = np.asarray(reg.contains(g1, g2), dtype=bool)
            if reg.outside:
                inside, anywhere = ~inside, ~anywhere
            if not anywhere.any():
                raise ParameterError(f"{where0}[{k}]: no cell centre of the grid lies in "
                                     f"this {reg.shape}" + (" (outside: true)" if reg.outside
                                                            else ""))
            inner[inside] = k
            if reg.state == "initial":
                self.states.append(None)
                continue
            st = ctx.state(dict(reg.state), f"{where0}[{k}].state")
            if vm.mhd:
                for name in (vm.primitive_names[IB1], vm.primitive_names[IB2]):
                    if name in st:
                        raise ParameterError(f"{where0}[{k}].state.{name}: the poloidal field "
                                             "lives on the cell faces and is not held; leave "
                                             f"{name} out")
            w = np.full(vm.nvar, np.nan)
            w[IV1] = w[IV2] = w[IV3] = 0.0
            for name, val in st.items():
                w[vm.index[name]] = val
            if sim.eos.isothermal:
                w[IPR] = w[IDN] * sim.eos.cs2
            elif np.isnan(w[IPR]):
                raise ParameterError(f"{where0}[{k}].state: give 'p' or 'T' (ideal gas)")
            if vm.mhd:
                w[IB1] = w[IB2] = np.nan         # the face fields are left alone
            self.states.append(w)
        nreg = len(self.params.regions)
        self.keep = np.zeros((nreg, vm.nvar), dtype=np.bool_)
        self.Wh = np.zeros((vm.nvar, m.nt2, m.nt1))
        for k, w in enumerate(self.states):
            if w is None:
                continue
            sel = self.region_of == k
            for v in range(vm.nvar):
                if np.isnan(w[v]):
                    self.keep[k, v] = True
                else:
                    self.Wh[v][sel] = w[v]
        self._captured = all(w is not None for w in self.states)

    def initialise(self, sim) -> None:
        """Capture the set-up state (primitives) of the regions whose state is
        ``initial``.  A problem file run calls this after the setup; from Python,
        call it after setting the initial state."""
        W = sim.integrator.W
        for k, w in enumerate(self.states):
            if w is None:
                sel = self.region_of == k
                for v in range(W.shape[0]):
                    self.Wh[v][sel] = W[v][sel]
        self._captured = True

    def split_source(self, sim, dt) -> None:
        if not self._captured:
            raise ParameterError(f"physics.{self.name or 'hold'}: a region holds its "
                                 "'initial' state, but initialise(sim) was not called after "
                                 "the initial state was set")
        m, vm = sim.mesh, sim.varmap
        dmass, den = reset_cells(sim.state.U, self.Wh, self.region_of, self.keep, m.vol1,
                                 m.dx2, sim.eos.gamma, sim.eos.isothermal, vm.mhd, vm.nhydro,
                                 vm.nadv, m.js, m.je, m.is_, m.ie)
        self.tallies["held_mass"] += dmass
        if not sim.eos.isothermal:
            self.tallies["held_energy"] += den

    def held_cells(self, sim) -> np.ndarray:
        """Boolean mask of the held interior cells ``[n2, n1]`` (other modules may
        skip them, e.g. in their time-step limits)."""
        m = sim.mesh
        return self.region_of[m.js:m.je, m.is_:m.ie] >= 0

    def derived_fields(self, sim):
        return {"held": (self.held_cells(sim).astype(np.float64), "dimensionless")}

