"""The ``gravity`` module: a static external potential, a sum of analytic ones.

Problem file::

    physics:
      gravity:
        potentials:
          - {kind: nfw, virial_mass: 1e12 Msun, concentration: 10}
          - {kind: miyamoto_nagai, mass: 5e10 Msun, a: 3 kpc, b: 0.3 kpc}
          - {kind: hernquist, mass: 1e10 Msun, a: 0.5 kpc}

Kinds: ``point_mass`` (Plummer-softened), ``nfw``, ``miyamoto_nagai``,
``hernquist``, ``logarithmic`` and ``uniform`` (g along axis 2, the only
built-in kind for Cartesian grids).  The sources are in :mod:`.source`:

* momentum: by default (``well_balanced: true``) the pressure force of each
  cell's local isothermal hydrostatic state, reconstructed as the core
  reconstructs the pressure, so that a resolved hydrostatic atmosphere is at
  rest to the accuracy of the Riemann solver; else the plain source -rho grad
  Phi from the potential on the cell faces;
* energy: from the stage mass fluxes, so that gas plus potential energy is
  conserved to round-off (the history column ``potential_energy`` is
  sum V rho Phi; the snapshot field ``potential`` is Phi at the cell centres).

Time step: a body falling from rest moves at most a Courant fraction of a
cell per step (g dt^2/2 <= C dx, from the static potential, once); cells held
by a module that exposes ``held_cells(sim)`` (the ``hold`` module) do not
count.

User potential
--------------
A local module file (``load_modules: [my_potential.py]``) subclasses
:class:`Gravity` and defines ``user_potential(self, R, z)`` (vectorised numpy,
code units; ``self.params`` holds the validated keys, ``self.units.G`` is G);
it acts together with any ``potentials`` listed::

    import numpy as np
    from wind2d.physics import register
    from wind2d.physics.gravity import Gravity
    from wind2d.problem.schema import Q

    @register("bar_gravity")
    class BarGravity(Gravity):
        class Params(Gravity.Params):
            strength: Q("velocity", "depth scale")

        def user_potential(self, R, z):
            return self.params.strength ** 2 * np.log(1.0 + R**2 + 4.0 * z**2)

and the problem file has ``physics: {bar_gravity: {strength: 200 km/s}}``.
On a Cartesian grid ``R, z`` are ``x, y``.  From Python,
``Gravity(potential=NFW(...))`` takes any
:class:`~.potentials.Potential` object (code units) directly.  Setups that
need the potential (``hydrostatic_atmosphere``, ``disk_in_halo``) use the sum
of every gravity module of the run (:func:`total_potential`).
"""
from __future__ import annotations

import math
from typing import Annotated, Literal, Optional, Union

import numpy as np
from pydantic import Field, model_validator

from ...errors import ParameterError
from ...problem.schema import Q, Strict
from ..base import ORDER_FORCES, Module
from ..registry import register
from .potentials import (NFW, FromFunction, Hernquist, Logarithmic, MiyamotoNagai, PointMass,
                         Potential, Sum, Uniform)
from ...state import IDN, IPR
from .source import add_gravity, add_gravity_balanced, face_potentials, potential_energy


class PointMassSpec(Strict):
    """Point mass with Plummer softening: Phi = -G M / sqrt(r^2 + eps^2)."""
    kind: Literal["point_mass"]
    mass: Q("mass", "mass M") = Field(gt=0.0)
    softening: Q("length", "Plummer softening length eps (0: bare point mass)") = \
        Field(0.0, ge=0.0)
    centre_z: Q("length", "height of the centre on the axis") = 0.0

    def build(self, G):
        return PointMass(self.mass, G, self.softening, self.centre_z)


class NFWSpec(Strict):
    """Navarro-Frenk-White halo: by virial mass and concentration, or by scale
    radius and characteristic density."""
    kind: Literal["nfw"]
    virial_mass: Optional[Q("mass", "virial mass M_vir (with concentration)")] = \
        Field(None, gt=0.0)
    concentration: Optional[float] = Field(None, gt=0.0, description="c = r_vir / r_s")
    overdensity: float = Field(200.0, gt=0.0, description="mean density inside r_vir in "
                               "units of the critical density")
    hubble_constant: Q("rate", "Hubble constant of the critical density 3 H^2/(8 pi G)") = \
        Field("70 km s-1 Mpc-1", validate_default=True, gt=0.0)
    scale_radius: Optional[Q("length", "r_s (with scale_density)")] = Field(None, gt=0.0)
    scale_density: Optional[Q("density", "rho_s (with scale_radius)")] = Field(None, gt=0.0)
    centre_z: Q("length", "height of the centre on the axis") = 0.0

    @model_validator(mode="after")
    def _pair(self):
        vir = (self.virial_mass is not None, self.concentration is not None)
        sc = (self.scale_radius is not None, self.scale_density is not None)
        if any(vir) and any(sc):
            raise ValueError("give either virial_mass + concentration or scale_radius + "
                             "scale_density, not both")
        if all(vir) or all(sc):
            return self
        raise ValueError("an NFW halo needs virial_mass and concentration, or "
                         "scale_radius and scale_density")

    def build(self, G):
        if self.virial_mass is not None:
            return NFW.from_virial(self.virial_mass, self.concentration, G,
                                   self.hubble_constant, self.overdensity, self.centre_z)
        return NFW(self.scale_radius, self.scale_density, G, self.centre_z)


class MiyamotoNagaiSpec(Strict):
    """Miyamoto-Nagai disk: Phi = -G M / sqrt(R^2 + (a + sqrt(z^2 + b^2))^2)."""
    kind: Literal["miyamoto_nagai"]
    mass: Q("mass", "disk mass M") = Field(gt=0.0)
    a: Q("length", "scale length a") = Field(ge=0.0)
    b: Q("length", "scale height b") = Field(gt=0.0)
    centre_z: Q("length", "height of the disk plane") = 0.0

    def build(self, G):
        return MiyamotoNagai(self.mass, self.a, self.b, G, self.centre_z)


class HernquistSpec(Strict):
    """Hernquist bulge: Phi = -G M / (r + a)."""
    kind: Literal["hernquist"]
    mass: Q("mass", "total mass M") = Field(gt=0.0)
    a: Q("length", "scale radius a") = Field(gt=0.0)
    centre_z: Q("length", "height of the centre on the axis") = 0.0

    def build(self, G):
        return Hernquist(self.mass, self.a, G, self.centre_z)


class LogarithmicSpec(Strict):
    """Logarithmic halo: Phi = (v0^2/2) ln(R_c^2 + R^2 + z^2/q^2)."""
    kind: Literal["logarithmic"]
    v0: Q("velocity", "asymptotic circular velocity v0") = Field(gt=0.0)
    core_radius: Q("length", "core radius R_c") = Field(ge=0.0)
    q: float = Field(1.0, gt=0.0, description="flattening of the potential (1: spherical)")
    centre_z: Q("length", "height of the centre on the axis") = 0.0

    def build(self, G):
        return Logarithmic(self.v0, self.core_radius, self.q, self.centre_z)


class UniformSpec(Strict):
    """Uniform field along axis 2 (z or y): Phi = g z, acceleration -g."""
    kind: Literal["uniform"]
    g: Q("acceleration", "acceleration towards decreasing z (or y); negative pulls up")

    def build(self, G):
        return Uniform(self.g)


PotentialSpec = Annotated[Union[PointMassSpec, NFWSpec, MiyamotoNagaiSpec, HernquistSpec,
                                LogarithmicSpec, UniformSpec], Field(discriminator="kind")]


class GravityParams(Strict):
    """Static external gravity: the sum of the listed potentials."""
    potentials: list[PotentialSpec] = Field(
        default_factory=list, description="potentials to add, each {kind: ..., its keys}; "
        "kinds: point_mass, nfw, miyamoto_nagai, hernquist, logarithmic, uniform")
    well_balanced: bool = Field(
        True, description="momentum source that keeps a resolved isothermal hydrostatic "
        "atmosphere at rest to the accuracy of the Riemann solver (false: the plain "
        "face-difference source -rho grad Phi)")


@register("gravity")
class Gravity(Module):
    """Static external gravity: the sum of the listed analytic potentials (and of a
    user potential, see the module docstring), acting on momentum and energy."""

    Params = GravityParams
    order = ORDER_FORCES
    user_potential = None       # a subclass may define user_potential(self, R, z)

    def __init__(self, params=None, context=None, *, potential: Potential | None = None,
                 well_balanced: bool = True):
        """
        Parameters
        ----------
        params : GravityParams, optional
            The validated ``physics.gravity`` section (code units).
        context : optional
            ``units`` (for G) and ``geometry`` (see :class:`~wind2d.physics.Module`).
        potential : Potential, optional
            A potential object in code units, added to the listed ones (Python API).
        well_balanced : bool
            Python API without ``params``: the source form (see ``GravityParams``).

        Attributes: ``potential`` (the total potential of this module); after
        :meth:`attach`, ``phic`` (Phi at the cell centres ``[nt2, nt1]``) and
        ``faces`` (per stage, the R-face ``[nt2, nt1+1]`` and z-face
        ``[nt2+1, nt1]`` potentials the source uses).
        """
        if params is None:
            params = self.Params.model_construct(potentials=[], well_balanced=well_balanced)
        super().__init__(params, context)
        where = f"physics.{self.name or 'gravity'}.potentials"
        geometry = getattr(context, "geometry", None)
        parts = []
        for k, spec in enumerate(getattr(params, "potentials", [])):
            if geometry == "cartesian" and spec.kind != "uniform":
                raise ParameterError(f"{where}[{k}].kind = {spec.kind!r} is an axisymmetric "
                                     "potential and needs grid.geometry: cylindrical; on a "
                                     "Cartesian grid use kind 'uniform'")
            G = getattr(self.units, "G", None)
            if G is None and spec.kind != "uniform":
                raise ParameterError(f"{where}[{k}]: no unit system to take G from "
                                     "(give the module a context with 'units')")
            parts.append(spec.build(G))
        if type(self).user_potential is not None:
            parts.append(FromFunction(self.user_potential, type(self).__name__))
        if potential is not None:
            parts.append(potential)
        if not parts:
            raise ParameterError(f"{where}: give at least one potential "
                                 "(kinds: point_mass, nfw, miyamoto_nagai, hernquist, "
                                 "logarithmic, uniform)")
        self.potential = parts[0] if len(parts) == 1 else Sum(parts)
        self._dt = None

    # ------------------------------------------------------------ set-up
    def attach(self, sim) -> None:
        super().attach(sim)
        m = sim.mesh
        where = f"physics.{self.name or 'gravity'}"
        if not m.cylindrical and not self.potential.cartesian:
            raise ParameterError(f"{where}: {self.potential!r} is axisymmetric and needs a "
                                 "cylindrical grid; on a Cartesian grid use kind 'uniform'")
        x1c = np.abs(m.x1c) if m.cylindrical else m.x1c
        x1f = np.abs(m.x1f) if m.cylindrical else m.x1f
        phi = self.potential.phi
        self.phic = np.ascontiguousarray(phi(x1c[None, :], m.x2c[:, None]), dtype=np.float64)
        phi1 = np.ascontiguousarray(phi(x1f[None, :], m.x2c[:, None]), dtype=np.float64)
        phi2 = np.ascontiguousarray(phi(x1c[None, :], m.x2f[:, None]), dtype=np.float64)
        js, je, is_, ie = m.js, m.je, m.is_, m.ie
        # faces of zero area (the axis) never contribute: keep them finite
        zero = m.area1 == 0.0
        phi1[:, zero] = np.where(np.isfinite(phi1[:, zero]), phi1[:, zero], 0.0)
        need = (self.phic[js:je, is_:ie], phi1[js:je, is_:ie + 1], phi2[js:je + 1, is_:ie])
        if not all(np.isfinite(a).all() for a in need):
            raise ParameterError(f"{where}: the potential is not finite on a cell centre or "
                                 "face of the grid (a bare point mass on a face? give a "
                                 "softening or shift the grid)")
        # time-step limit: a body falling from rest moves at most a Courant fraction
        # of a cell per step, g dt^2 / 2 <= C dx (common practice); cells that another
        # module resets every step (held cells) are left out, see max_dt
        a1, v1 = m.area1, m.vol1
        pc = self.phic[js:je, is_:ie]
        gR = (a1[None, is_ + 1:ie + 1] * (phi1[js:je, is_ + 1:ie + 1] - pc)
              - a1[None, is_:ie] * (phi1[js:je, is_:ie] - pc)) / v1[None, is_:ie]
        gz = (phi2[js + 1:je + 1, is_:ie] - phi2[js:je, is_:ie]) / m.dx2[js:je, None]
        g = np.hypot(gR, gz)
        dx = np.minimum(m.dx1[None, is_:ie], m.dx2[js:je, None])
        with np.errstate(divide="ignore"):
            self._dt_cells = np.sqrt(2.0 * sim.integrator.courant * dx / g)
        self._dt = None
        # the face potentials the source uses, per stage (see source.py): the
        # exact ones, or as the core's reconstruction of each stage sees Phi
        self.balanced = bool(getattr(self.params, "well_balanced", True))
        if not self.balanced:
            self.faces = [(phi1, phi2), (phi1, phi2)]
            return
        self.phig = self._ghost_filled(sim)
        it = sim.integrator
        self.limiters = (0, it.limiter)        # first-order predictor, then the run's
        self.faces = []
        for lim_id in self.limiters:
            f1 = np.zeros((m.nt2, m.nt1 + 1))
            f2 = np.zeros((m.nt2 + 1, m.nt1))
            face_potentials(self.phig, it.g1, it.g2, lim_id, f1, f2, js, je, is_, ie)
            self.faces.append((f1, f2))

    def _ghost_filled(self, sim):
        """Phi at cell centres with the ghost cells filled as the boundaries fill
        the pressure (mirrored at walls and on the axis, copied at outflow edges,
        exchanged between tiles); physical values behind fixed edges."""
        m = sim.mesh
        W = np.zeros_like(sim.integrator.W)
        W[IDN] = self.phic
        W[IPR] = self.phic
        sim.boundaries.apply(W, np.array(sim.state.b1), np.array(sim.state.b2))
        cells = np.ascontiguousarray(W[IDN])
        for e, (kind, _) in sim.boundaries.edges.items():
            if kind != "fixed":
                continue
            sl = {"x1_lo": (slice(None), slice(0, m.is_)),
                  "x1_hi": (slice(None), slice(m.ie, None)),
                  "x2_lo": (slice(0, m.js), slice(None)),
                  "x2_hi": (slice(m.je, None), slice(None))}[e]
            cells[sl] = self.phic[sl]
        return cells

    # ------------------------------------------------------------ the step
    def max_dt(self, sim) -> float:
        if self._dt is None:
            lim = self._dt_cells
            for mod in sim.modules:
                held = getattr(mod, "held_cells", None)
                if held is not None:
                    lim = np.where(held(sim), np.inf, lim)
            self._dt = float(lim.min()) if lim.size else math.inf
        return self._dt

    def stage_source(self, sim, W, U_out, F1, F2, dt, stage) -> None:
        m = sim.mesh
        f1, f2 = self.faces[stage]
        if self.balanced:
            it = sim.integrator
            add_gravity_balanced(U_out, W, F1, F2, self.phic, self.phig, f1, f2, it.g1, it.g2,
                                 self.limiters[stage], float(dt), m.area1, m.vol1, m.dx2,
                                 sim.eos.isothermal, m.js, m.je, m.is_, m.ie)
        else:
            add_gravity(U_out, W, F1, F2, self.phic, f1, f2, float(dt), m.area1, m.vol1,
                        m.dx2, sim.eos.isothermal, m.js, m.je, m.is_, m.ie)

    # ------------------------------------------------------------ output
    def derived_fields(self, sim):
        m = sim.mesh
        return {"potential": (self.phic[m.js:m.je, m.is_:m.ie].copy(), "specific_energy")}

    def history(self, sim):
        m = sim.mesh
        e = potential_energy(sim.state.U, self.phic, m.vol1, m.dx2, m.js, m.je, m.is_, m.ie)
        return {"potential_energy": (float(sim.global_sum(e)), "energy")}


def gravity_modules(sim) -> list[Gravity]:
    """The gravity modules of a simulation (instances of :class:`Gravity`)."""
    return [mod for mod in getattr(sim, "modules", []) if isinstance(mod, Gravity)]


def total_potential(sim, where: str) -> Potential:
    """The sum of the potentials of every gravity module of ``sim``; a clear
    :class:`ParameterError` (naming ``where``) if the run has none."""
    mods = gravity_modules(sim)
    if not mods:
        raise ParameterError(f"{where} needs a gravitational potential: add a "
                             "'physics: {gravity: {potentials: [...]}}' section")
    return mods[0].potential if len(mods) == 1 else Sum([m.potential for m in mods])
