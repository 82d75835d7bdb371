"""A uniform volumetric heating rate: the smallest useful wind2d physics module.

    dE/dt = q          (q in erg cm^-3 s^-1, the same in every cell)

applied as an operator-split source once per step.  The energy added is kept
as a tally, so the run's history closes the energy budget:
``energy(t) - energy(0) = heat_added(t)`` in a closed box.

This file works both ways a module can reach wind2d: installed as a package
(the entry point in pyproject.toml) or named in a problem file's
``load_modules`` list.
"""
from pydantic import Field

from wind2d.physics import ORDER_INJECTION, Module, register
from wind2d.problem.schema import Q, Strict
from wind2d.state import IEN


@register("uniform_heating")
class UniformHeating(Module):
    """Uniform heating: adds ``rate`` to the total energy density of every cell."""

    order = ORDER_INJECTION
    tally_kinds = {"heat_added": "energy"}

    class Params(Strict):
        rate: Q("power_density", "heating rate per volume") = Field(ge=0.0)

    def attach(self, sim):
        super().attach(sim)
        if sim.eos.isothermal:
            from wind2d.errors import ParameterError
            raise ParameterError("physics.uniform_heating: needs gas.eos: ideal (the "
                                 "isothermal gas has no energy equation)")
        self.tallies["heat_added"] = 0.0
        m = sim.mesh
        self.volume = float(m.cell_volumes().sum())      # this rank's cells, per radian

    def split_source(self, sim, dt):
        m = sim.mesh
        q = self.params.rate
        sim.state.U[IEN, m.js:m.je, m.is_:m.ie] += q * dt
        self.tallies["heat_added"] += q * dt * self.volume

    def history(self, sim):
        return {"heating_rate": (self.params.rate, "power_density")}
