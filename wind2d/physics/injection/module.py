"""The ``injection`` module: energy (thermal and cosmic-ray) and mass returned by
star formation in a region, injected conservatively.

Problem file::

    physics:
      injection:
        region: {shape: disk, radius: 1 kpc, half_height: 100 pc, edge: tanh,
                 edge_width: 50 pc}
        star_formation: {kind: constant, rate: 2 Msun/yr}
        energy_per_stellar_mass: 1e49 erg/Msun   # default: 1e51 erg per 100 Msun
        cr_fraction: 0.1                         # default
        thermal_fraction: 0.9                    # default: 1 - cr_fraction
        mass_return: 0.0                         # default: no mass returned

Over a step ``[t, t + dt]`` the stars formed are ``M_* = int SFR dt``
(exactly, :mod:`.rates`), the energy released ``E = epsilon M_*``, of which
``f_th E`` heats the gas, ``f_cr E`` goes into the cosmic-ray energy ``Ec``
(the variable of the ``cosmic_rays`` module, which must then be in the run)
and ``f_m M_*`` of gas is returned.  Each is shared over the cells by the
region's weight (:mod:`.regions`), normalised on the *global* grid, so that
the amounts injected equal the prescribed ones to round-off on any number of
ranks (and the state is bitwise identical on any rank count).  The returned
mass keeps the gas velocity of its cell (momentum consistent) and adds its
kinetic energy to the total energy (tallied apart).  The source is operator
split: once per step, after the stages.

Defaults (common practice): ``epsilon = 1e51 erg`` per ``100 Msun`` of stars
formed (one core-collapse supernova per ~100 Msun, ~1e51 erg each);
``cr_fraction = 0.1`` (about a tenth of the supernova energy goes into
cosmic rays); ``thermal_fraction`` the rest (0.9 by default); when both
fractions are given and add up to less than one, the remainder is not
injected (e.g. radiated).

The star-formation rate is that of the whole galaxy (the full ``2 pi``); a
grid that holds only part of the region (e.g. ``z >= 0`` above a reflecting
mid-plane) receives all of it, so give the rate of the part in the grid.  The
module needs cylindrical geometry.

History: ``star_formation_rate`` (the whole galaxy's rate at the time of the
row, as given); tallies, running totals per radian like the other integrals
of the history: ``injected_thermal_energy``, ``injected_cr_energy``,
``injected_mass``, ``injected_kinetic_energy`` (of the returned mass) and
``stars_formed`` (``M_* / 2 pi``).  Snapshot field ``injection_power``: the
energy injected per unit volume and time (thermal + cosmic-ray).
"""
from __future__ import annotations

import math
from typing import Annotated, Optional, Union

import numpy as np
from pydantic import Field, model_validator

from ...errors import ParameterError
from ...problem.schema import Q, Strict
from ..base import ORDER_INJECTION, Module
from ..registry import register
from .deposit import deposit
from .rates import BurstRate, ConstantRate, TableRate
from .regions import DiskRegion, SphereRegion

Region = Annotated[Union[DiskRegion, SphereRegion], Field(discriminator="shape")]
RateSpec = Annotated[Union[ConstantRate, TableRate, BurstRate], Field(discriminator="kind")]


class InjectionParams(Strict):
    """Energy and mass from star formation in a region."""
    region: Region = Field(description="where: {shape: disk, radius, half_height} or "
                           "{shape: sphere, radius}, with centre_z, edge (sharp, tanh, "
                           "gaussian) and edge_width")
    star_formation: RateSpec = Field(description="the star-formation rate of the whole "
                                     "galaxy: {kind: constant, rate}, {kind: table, times, "
                                     "rates} or {kind: burst, peak, start, decay_time, base}")
    energy_per_stellar_mass: Q("specific_energy", "energy released per unit mass of stars "
                               "formed (default 1e51 erg per 100 Msun)") = \
        Field("1e49 erg/Msun", validate_default=True, gt=0.0)
    cr_fraction: float = Field(0.1, ge=0.0, le=1.0, description="share of the energy that "
                               "goes into cosmic rays (needs the cosmic_rays module if > 0)")
    thermal_fraction: Optional[float] = Field(None, ge=0.0, le=1.0, description="share "
                                              "that heats the gas (default: 1 - cr_fraction)")
    mass_return: float = Field(0.0, ge=0.0, le=1.0, description="gas mass returned, as a "
                               "fraction of the mass of stars formed")

    @model_validator(mode="after")
    def _fractions(self):
        th = self.thermal_fraction
        if th is not None and th + self.cr_fraction > 1.0 + 1e-12:
            raise ValueError(f"thermal_fraction ({th:g}) + cr_fraction "
                             f"({self.cr_fraction:g}) exceeds 1")
        return self

    @property
    def f_thermal(self) -> float:
        return 1.0 - self.cr_fraction if self.thermal_fraction is None else \
            self.thermal_fraction


@register("injection")
class Injection(Module):
    """Thermal energy, cosmic-ray energy and mass from star formation in a region
    (keys of ``region`` and ``star_formation``: docs/diagnostics.md)."""

    # after attach: ``wgt[nt2, nt1]``, the weight per unit volume of each cell of
    # this tile, normalised so that sum(wgt V) over the global grid is 1

    Params = InjectionParams
    order = ORDER_INJECTION
    tally_kinds = {"injected_thermal_energy": "energy", "injected_cr_energy": "energy",
                   "injected_mass": "mass", "injected_kinetic_energy": "energy",
                   "stars_formed": "mass"}

    def __init__(self, params=None, context=None, **keys):
        if params is None:
            # Python API: the keys of the problem file; plain numbers are code units
            from ...problem.units import UnitSystem
            units = getattr(context, "units", None) or UnitSystem()
            params = self.Params.model_validate(keys, context={"units": units})
        elif keys:
            raise ValueError("Injection: give either params or keys, not both")
        super().__init__(params, context)
        self.tallies = {k: 0.0 for k in self.tally_kinds}
        self.where = f"physics.{self.name or 'injection'}"
        geometry = getattr(context, "geometry", None)
        if geometry is not None and geometry != "cylindrical":
            raise ParameterError(f"{self.where}: needs grid.geometry: cylindrical (the "
                                 "star-formation rate is that of a 3D, axisymmetric galaxy)")

    def attach(self, sim) -> None:
        super().attach(sim)
        p, m, gm, vm = self.params, sim.mesh, sim.global_mesh, sim.varmap
        w = self.where
        if not m.cylindrical:
            raise ParameterError(f"{w}: needs grid.geometry: cylindrical (the "
                                 "star-formation rate is that of a 3D, axisymmetric galaxy)")
        self.iso = sim.eos.isothermal
        if self.iso and p.f_thermal > 0.0:
            raise ParameterError(f"{w}.thermal_fraction = {p.f_thermal:g}: an isothermal gas "
                                 "has no thermal energy to receive it; set thermal_fraction: 0 "
                                 "or use the ideal-gas EOS")
        self.iE = vm.index.get("Ec", -1)
        if p.cr_fraction > 0.0 and self.iE < 0:
            raise ParameterError(f"{w}.cr_fraction = {p.cr_fraction:g}: this run has no "
                                 "cosmic-ray energy to put it in; add the cosmic_rays module "
                                 "(physics: {cosmic_rays: {...}}) or set cr_fraction: 0")
        # normalisation on the global grid: the same number on every rank
        gw = p.region.weight(*gm.centres())
        norm = float(np.sum(gw * gm.cell_volumes()))
        if not norm > 0.0:
            raise ParameterError(f"{w}.region: no cell centre of the grid lies in the region "
                                 "(is it smaller than a cell, or outside the grid?)")
        self.wgt = np.zeros((m.nt2, m.nt1))
        self.wgt[m.js:m.je, m.is_:m.ie] = p.region.weight(*m.centres()) / norm
        self.root = sim.comm is None or sim.comm.rank == 0

    # ------------------------------------------------------------ the step
    def step_amounts(self, t: float, dt: float) -> tuple[float, float, float, float]:
        """Stars formed in ``[t, t + dt]`` (whole galaxy) and the thermal energy,
        cosmic-ray energy and mass to inject, per radian."""
        p = self.params
        mstar = p.star_formation.integral(t, t + dt)
        per = 1.0 / (2.0 * math.pi)
        energy = p.energy_per_stellar_mass * mstar * per
        return mstar, p.f_thermal * energy, p.cr_fraction * energy, p.mass_return * mstar * per

    def split_source(self, sim, dt) -> None:
        m, vm = sim.mesh, sim.varmap
        mstar, e_th, e_cr, dm = self.step_amounts(sim.t, float(dt))
        if mstar <= 0.0:
            return
        th, cr, mass, kin = deposit(sim.state.U, self.wgt, e_th, e_cr, dm, self.iE,
                                    self.iso, vm.nhydro, vm.nadv, m.vol1, m.dx2,
                                    m.js, m.je, m.is_, m.ie)
        t = self.tallies
        t["injected_thermal_energy"] += th
        t["injected_cr_energy"] += cr
        t["injected_mass"] += mass
        t["injected_kinetic_energy"] += kin
        if self.root:
            t["stars_formed"] += mstar / (2.0 * math.pi)

    # ------------------------------------------------------------ output
    def history(self, sim):
        return {"star_formation_rate": (self.params.star_formation.at(sim.t), "mass_rate")}

    def derived_fields(self, sim):
        """``injection_power``: the energy injected per unit volume and time at the
        time of the snapshot (thermal + cosmic-ray)."""
        m, p = sim.mesh, self.params
        power = p.star_formation.at(sim.t) * p.energy_per_stellar_mass \
            * (p.f_thermal + p.cr_fraction) / (2.0 * math.pi)
        return {"injection_power": (power * self.wgt[m.js:m.je, m.is_:m.ie], "power_density")}
