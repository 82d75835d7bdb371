"""The physics-module contract.

A module is one class, registered by name (``@register("gravity")``), that
the core drives through the hooks below.  The core never imports a module:
it only calls these methods on the instances the problem file asks for.
Every hook has a do-nothing default, so a module overrides only what it
uses.

Order within a step (see docs/plugins.md)
-----------------------------------------
1. ``max_dt``: every module's limit joins the CFL step (minimum over all).
2. Two stages of the predictor-corrector integrator.  In each stage, after
   the core has computed its face fluxes ``F1``, ``F2``:

   a. ``add_fluxes`` of each module (fluxes of its own variables; it may
      also add to gas fluxes);
   b. the core updates cells and faces (``U_out = U_in - dt div F`` plus
      the geometric sources, for every variable, module variables included
      unless their module sets ``updates_own_variables``);
   c. ``stage_source`` of each module adds ``dt * S(W)`` to ``U_out`` with
      the stage's primitives ``W`` and mass fluxes (gravity, the pressure
      source of a module's own vector variables).

3. ``split_source`` of each module, once per step after the stages, on the
   new state (cooling, stiff implicit couplings, injection, held regions);
   the primitives are then recomputed once.

Within each hook, modules act in increasing ``order`` (a class attribute;
ties keep the order of the ``physics`` section of the problem file).

Units: everything a hook sees is in code units; ``self.units`` converts.
Magnetic field is in Heaviside-Lorentz code units (pressure B^2/2).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np
from pydantic import BaseModel, ConfigDict

# default ``order`` of the built-in kinds of module (smaller acts first)
ORDER_FORCES = 10          # gravity and other in-stage forces
ORDER_TRANSPORT = 20       # modules with their own transported variables
ORDER_COUPLING = 30        # stiff couplings, cooling and heating
ORDER_INJECTION = 40       # sources of mass and energy
ORDER_HOLD = 90            # held regions: reset after everything else


class NoParams(BaseModel):
    """A module without parameters (an empty mapping in the problem file)."""
    model_config = ConfigDict(extra="forbid")


@dataclass(frozen=True)
class Variable:
    """A cell variable a module owns.

    Parameters
    ----------
    name : str
        Field name in snapshots and in ``Simulation.field`` (must not clash with
        the gas variables or scalars).
    kind : str
        Physical kind (a key of ``wind2d.problem.units.KINDS``), for units on output.
    component : int
        0 for a scalar; 1, 2, 3 when the variable is the (R, z, phi) or (x, y, z)
        component of a vector: it then changes sign in mirrored ghost cells
        (component 1 at R/x walls and on the axis, 2 at z/y walls, 3 on the axis).

    Module variables are stored as conserved densities (not per unit mass):
    the primitive slot ``W[v]`` equals ``U[v]``.  The core does not advect them;
    their fluxes come from the module's ``add_fluxes`` (zero otherwise), or the
    module updates them itself (``Module.updates_own_variables``).
    """
    name: str
    kind: str = "dimensionless"
    component: int = 0


class Module:
    """Base class of a physics module.

    Class attributes
    ----------------
    name : str
        Set by :func:`~wind2d.physics.registry.register`.
    Params : pydantic model
        The module's problem-file keys (use ``wind2d.problem.schema.Q`` for
        quantities with units).  Validated with the run's code units.
    order : int
        Position in each hook (see the module docstring).
    variables : tuple of Variable
        Cell variables the module owns (often empty).
    updates_own_variables : bool
        False (default): the core's cell update applies the divergence of the
        fluxes the module gave in ``add_fluxes`` to its variables.  True: the
        core leaves them alone and ``stage_source`` must set them in
        ``U_out`` itself, from the state at the start of the step
        (``sim.state.U``: both stages start from it) and its own fluxes; for a
        module that needs the updated values only as inputs of its own
        update, this saves a pass over its variables.

    The instance is built by ``Module(params, context)`` before the
    simulation exists; :meth:`attach` then hands it the simulation.
    ``context`` has ``units`` (:class:`~wind2d.problem.units.UnitSystem`),
    ``geometry``, ``axis_names``, ``gas`` (the gas section of the problem)
    and ``source`` (the problem file's path, for messages and relative paths).
    """

    name: ClassVar[str] = ""
    Params: ClassVar[type[BaseModel]] = NoParams
    order: ClassVar[int] = ORDER_INJECTION
    variables: ClassVar[tuple[Variable, ...]] = ()
    updates_own_variables: ClassVar[bool] = False

    def __init__(self, params: BaseModel, context: Any):
        self.params = params
        self.context = context
        self.units = getattr(context, "units", None)
        self.tallies: dict[str, float] = {}
        self.sim = None

    # ---------------------------------------------------------------- set-up
    def attach(self, sim) -> None:
        """Called once, after the simulation (mesh, state, integrator) exists.
        Allocate work arrays and precompute geometry-dependent data here;
        ``sim.varmap.index[name]`` gives the index of an owned variable."""
        self.sim = sim

    def initialise(self, sim) -> None:
        """Called after the setup filled the gas, on a fresh run and before a
        restart restores the saved state.  Set owned variables here, e.g.
        ``sim.set_primitive(Ec=...)``."""

    # ---------------------------------------------------------------- the step
    def max_dt(self, sim) -> float:
        """This module's time-step limit (code time), ``inf`` for none."""
        return np.inf

    def add_fluxes(self, sim, W, b1, b2, F1, F2, stage: int) -> None:
        """Fill/add face fluxes ``F1[v, j, i]`` (axis-1 faces) and ``F2[v, j, i]``
        (axis-2 faces) for the interior faces, from the stage primitives ``W``
        (ghosts filled) and face fields.  ``stage`` is 0 (predictor, first
        order) or 1 (corrector)."""

    def stage_source(self, sim, W, U_out, F1, F2, dt: float, stage: int) -> None:
        """Add ``dt * S`` to the interior of ``U_out``; ``W`` holds the stage
        primitives, ``F1[0]``/``F2[0]`` the mass fluxes of the stage."""

    def split_source(self, sim, dt: float) -> None:
        """Apply an operator-split source over ``dt`` to ``sim.state.U`` (interior);
        ``sim.integrator.W`` holds the primitives of the state at entry."""

    def advice(self, sim) -> list[str]:
        """Warnings about the module's parameters for the current (initial) state,
        one line each, naming the key and what would be safer (e.g. a reduced
        speed too small for the flow).  Printed by ``wind2d check`` and logged
        when a fresh run starts (``Simulation.advice``).  Collective under MPI
        (use ``sim.global_max``)."""
        return []

    # ---------------------------------------------------------------- output
    def derived_fields(self, sim) -> dict[str, tuple[np.ndarray, str]]:
        """Extra snapshot fields: name -> (interior array [n2, n1], kind)."""
        return {}

    def history(self, sim) -> dict[str, tuple[float, str]]:
        """Extra history columns: name -> (global value, kind).  Collective under
        MPI: reduce local sums with ``sim.global_sum``.  Tallies are added by
        the core (see :attr:`tallies`)."""
        return {}

    tally_kinds: ClassVar[dict[str, str]] = {}
    """Kinds of the entries of :attr:`tallies` (running totals since the start of
    the run, e.g. energy radiated, per radian in cylindrical geometry).  The
    core sums them over ranks for the history, saves them in checkpoints and
    restores them on rank 0."""

    # ---------------------------------------------------------------- restart
    def checkpoint_state(self) -> dict:
        """Extra JSON-serialisable state needed to continue bitwise identically
        (beyond the owned variables and tallies, which the core saves)."""
        return {}

    def restore_checkpoint(self, data: dict) -> None:
        """Inverse of :meth:`checkpoint_state`."""
