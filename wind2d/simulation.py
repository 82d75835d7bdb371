"""The Python API: build and advance a simulation with no files.

Example
-------
>>> from wind2d import Simulation
>>> sim = Simulation(geometry="cartesian", x1=(0, 1, 64), x2=(0, 1, 64),
...                  boundaries={"x_low": "periodic", "x_high": "periodic",
...                              "y_low": "periodic", "y_high": "periodic"})
>>> sim.set_primitive(rho=1.0, p=lambda x, y: 1.0 + 0.1 * (x < 0.5))
>>> sim.advance(0.1)
>>> rho = sim.field("rho")          # interior array [j, i]

Everything is in code units; field in Heaviside-Lorentz units (B^2/2 is the
magnetic pressure).
"""
from __future__ import annotations

import math
from typing import Callable

import numpy as np

from .boundaries import Boundaries
from .core import ct
from .core.eos import IdealGas, Isothermal
from .core.floors import COUNTER_NAMES, prim_to_cons
from .core.integrator import Integrator
from .core.reconstruct import LIMITERS, METHODS
from .core.riemann import GAS_ONLY, IDEAL_ONLY, MHD_ONLY, SOLVERS
from .errors import NonFiniteStateError, ParameterError
from .grid.mesh import Mesh
from .state import IDN, IPR, IB1, IB2, IB3, VariableMap, State


def _overrides(module, hook: str) -> bool:
    """True if ``module`` defines ``hook`` itself rather than inheriting the no-op."""
    from .physics.base import Module
    return getattr(type(module), hook) is not getattr(Module, hook)


def _choice(name, value, allowed):
    if value not in allowed:
        raise ParameterError(f"{name} = {value!r}: allowed values are {', '.join(allowed)}")


class Simulation:
    """One run: mesh, state, boundaries and the Godunov integrator.

    Parameters
    ----------
    geometry : {"cylindrical", "cartesian"}
    x1, x2 : tuple (lo, hi, cells[, stretch])
        Axis 1 is R (or x), axis 2 is z (or y).  ``stretch`` is the constant
        ratio of neighbouring cell widths (1 = uniform).
    boundaries : dict
        Kind per edge, e.g. ``{"R_low": "axis", "R_high": "outflow", "z_low":
        "periodic", "z_high": "periodic"}``; a fixed edge is
        ``{"kind": "fixed", "state": {"rho": 1, "p": 1, ...}}``.
    eos : IdealGas or Isothermal, optional
        Default ``IdealGas(gamma)``.
    gamma : float
        Adiabatic index of the default ideal-gas EOS.
    mhd : bool
        Evolve the magnetic field.  A run without field pays nothing for MHD.
    riemann : {"hlle", "hllc", "hlld"}
    reconstruction : {"plm"}
    limiter : {"mc", "vanleer", "minmod", "first_order"}
    courant : float in (0, 1]
    density_floor, pressure_floor : float
        Positivity floors in code units.
    scalars : sequence of str
        Names of passive scalars advected with the mass flux.
    modules : sequence of wind2d.physics.Module
        Physics modules (gravity, cooling, ...); they act in increasing
        ``order`` (ties keep the given order) through the hooks of
        :mod:`wind2d.physics.base`.  Without modules the run is exactly the
        bare Godunov core.
    comm : mpi4py communicator, optional
        Split the grid into tiles over the ranks of ``comm``.
    """

    def __init__(self, geometry: str, x1, x2, boundaries: dict, *, eos=None,
                 gamma: float = 5.0 / 3.0, mhd: bool = False, riemann: str = "hllc",
                 reconstruction: str = "plm", limiter: str = "mc", courant: float = 0.4,
                 density_floor: float = 1e-12, pressure_floor: float = 1e-15,
                 scalars=(), modules=(), comm=None):
        eos = IdealGas(gamma) if eos is None else eos
        if not isinstance(eos, (IdealGas, Isothermal)):
            raise ParameterError("eos: allowed values are IdealGas(gamma) or "
                                 "Isothermal(sound_speed)")
        _choice("riemann", riemann, tuple(SOLVERS))
        _choice("reconstruction", reconstruction, METHODS)
        _choice("limiter", limiter, tuple(LIMITERS))
        if riemann in GAS_ONLY and mhd:
            raise ParameterError(f"riemann = {riemann!r} is for gas without field; with "
                                 "mhd use one of " + ", ".join(s for s in SOLVERS
                                                                if s not in GAS_ONLY))
        if riemann in MHD_ONLY and not mhd:
            raise ParameterError(f"riemann = {riemann!r} needs a magnetic field; without "
                                 "mhd use one of " + ", ".join(s for s in SOLVERS
                                                                if s not in MHD_ONLY))
        if riemann in IDEAL_ONLY and eos.isothermal:
            raise ParameterError(f"riemann = {riemann!r} needs the ideal-gas EOS; with the "
                                 "isothermal EOS use one of " + ", ".join(
                                     s for s in SOLVERS if s not in IDEAL_ONLY))
        if not (isinstance(courant, (int, float)) and 0.0 < courant <= 1.0):
            raise ParameterError(f"courant = {courant!r}: allowed values are 0 < courant <= 1")
        for name, val in (("density_floor", density_floor), ("pressure_floor", pressure_floor)):
            if not (isinstance(val, (int, float)) and math.isfinite(val) and val >= 0):
                raise ParameterError(f"{name} = {val!r}: must be a finite number >= 0")
        names0 = ("R", "z") if geometry == "cylindrical" else ("x", "y")
        from .boundaries import edge_names
        en = edge_names(names0)
        kinds = {en.get(k, k): (v if isinstance(v, str) else v.get("kind"))
                 for k, v in boundaries.items()}
        per1, per2 = kinds.get("x1_lo") == "periodic", kinds.get("x2_lo") == "periodic"
        self._edge_kinds = kinds                  # internal edge name -> kind (whole grid)
        self._edge_names = {v: k for k, v in en.items()}
        self.global_mesh = Mesh(geometry, x1, x2, ng=2, periodic1=per1, periodic2=per2)
        self.comm = comm if comm is not None and comm.size > 1 else None
        self.eos = eos
        modules = sorted(modules, key=lambda mod: mod.order)      # stable: ties keep order
        self.varmap = VariableMap(geometry, mhd, tuple(scalars),
                                  tuple(v for mod in modules for v in mod.variables))
        halo = None
        if self.comm is None:
            self.mesh = self.global_mesh
            self.tiling = None
        else:
            from .grid.tiles import decompose
            from .parallel.halo import Halo
            gm = self.global_mesh
            self.tiling = decompose(gm.n1, gm.n2, self.comm.size, per1, per2)
            self.mesh = Mesh(geometry, x1, x2, ng=2, periodic1=per1, periodic2=per2,
                             window=self.tiling.window(self.comm.rank))
            nb = self.tiling.neighbours(self.comm.rank)
            # a periodic axis held by one tile wraps onto itself: the local kernel does it
            nb = {e: (None if r == self.comm.rank else r) for e, r in nb.items()}
            halo = Halo(self.comm, self.mesh, nb, self.varmap.nvar, mhd)
        self.state = State(self.varmap.nvar, self.mesh.nt2, self.mesh.nt1, mhd)
        self.boundaries = Boundaries(self.mesh, boundaries, self.varmap, self._state_vector,
                                     global_mesh=self.global_mesh, halo=halo)
        self.integrator = Integrator(self.mesh, self.varmap, eos, self.boundaries,
                                     SOLVERS[riemann], LIMITERS[limiter], float(courant),
                                     density_floor, pressure_floor)
        self.options = dict(geometry=geometry, riemann=riemann, reconstruction=reconstruction,
                            limiter=limiter, courant=courant, mhd=mhd)
        self.t = 0.0
        self.nstep = 0
        self.dt_last = 0.0
        self._W0 = np.zeros((self.varmap.nvar, self.mesh.n2, self.mesh.n1))
        self._W0[IDN] = 1.0
        self._W0[IPR] = 1.0 if not eos.isothermal else eos.cs2
        self.modules = list(modules)
        self._split = [mod for mod in self.modules if _overrides(mod, "split_source")]
        self.integrator.modules = self.modules
        self.integrator.owner = self
        for mod in self.modules:
            if mod.updates_own_variables:
                for v in mod.variables:
                    self.integrator.own[self.varmap.index[v.name]] = 1
        for mod in self.modules:
            mod.attach(self)

    # --------------------------------------------------------------- setup
    def _state_vector(self, values: dict) -> np.ndarray:
        w = np.zeros(self.varmap.nvar)
        for k, v in values.items():
            if k not in self.varmap:
                raise ParameterError(f"state: unknown variable {k!r}; allowed: "
                                     + ", ".join(self.varmap.primitive_names))
            w[self.varmap.index[k]] = float(v)
        if w[IDN] <= 0:
            raise ParameterError("state: 'rho' must be given and positive")
        if self.eos.isothermal:
            w[IPR] = w[IDN] * self.eos.cs2
        return w

    def _evaluate(self, value, x1, x2) -> np.ndarray:
        if callable(value):
            value = value(x1, x2)
        return np.broadcast_to(np.asarray(value, dtype=np.float64), x1.shape)

    def set_primitive(self, **fields) -> None:
        """Set primitive fields on the interior cells.

        Each value is a number, an array ``[n2, n1]`` or a callable ``f(x1, x2)``
        of the cell-centre coordinates (volume centroid in R).  Names are those
        of :attr:`field_names` except the poloidal field components, which come
        from :meth:`set_field` (face-centred, divergence-free).
        """
        x1, x2 = self.mesh.centres()
        self._set_up_primitives()
        for k, v in fields.items():
            if k not in self.varmap:
                raise ParameterError(f"set_primitive: unknown field {k!r}; allowed: "
                                     + ", ".join(self.varmap.primitive_names))
            idx = self.varmap.index[k]
            if self.varmap.mhd and idx in (IB1, IB2):
                raise ParameterError(f"set_primitive: {k!r} is face-centred; use set_field")
            self._W0[idx] = self._evaluate(v, x1, x2)
        self._sync()

    def set_field(self, potential: Callable | None = None, *, b1=None, b2=None) -> None:
        """Set the face-centred poloidal field.

        ``potential(x1, x2)`` is the out-of-plane vector potential on cell
        corners: A_phi in cylindrical geometry (B_R = -dA/dz,
        B_z = (1/R) d(R A)/dR), A_z in Cartesian (B_x = dA/dy, B_y = -dA/dx).
        The discrete field is then divergence-free to round-off.  Alternatively
        ``b1(x1_face, x2_centre)`` and ``b2(x1_centre, x2_face)`` give the face
        values directly (for uniform fields).
        """
        m, st = self.mesh, self.state
        if not self.varmap.mhd:
            raise ParameterError("set_field: this simulation was built with mhd=False")
        js, je, is_, ie = m.js, m.je, m.is_, m.ie
        if potential is not None:
            X1, X2 = np.meshgrid(m.x1f[is_:ie + 1], m.x2f[js:je + 1])
            A = np.asarray(potential(X1, X2), dtype=np.float64) * np.ones_like(X1)
            if not m.cylindrical:
                A = -A      # internal third axis: E3 = v1 B2 - v2 B1 = -E_z
            dz = m.dx2[js:je][:, None]
            st.b1[js:je, is_:ie + 1] = -(A[1:, :] - A[:-1, :]) / dz
            a = m.area1[is_:ie + 1][None, :]
            st.b2[js:je + 1, is_:ie] = (a[:, 1:] * A[:, 1:] - a[:, :-1] * A[:, :-1]) \
                / m.vol1[is_:ie][None, :]
        if b1 is not None:
            X1, X2 = np.meshgrid(m.x1f[is_:ie + 1], m.x2c[js:je])
            st.b1[js:je, is_:ie + 1] = self._evaluate(b1, X1, X2)
        if b2 is not None:
            X1, X2 = np.meshgrid(m.x1c[is_:ie], m.x2f[js:je + 1])
            st.b2[js:je + 1, is_:ie] = self._evaluate(b2, X1, X2)
        if m.has_axis:
            st.b1[:, is_] = 0.0
        self._sync()

    def initialise_modules(self) -> None:
        """Let every physics module set up from the initial state (its own variables,
        a held region's captured state ...).  Call once after the initial state is
        set; :func:`wind2d.problem.build_simulation` does it after the setup."""
        for mod in self.modules:
            mod.initialise(self)

    def _set_up_primitives(self) -> None:
        # the set-up copy of the primitives lives only until the first step
        if self._W0 is None:
            m = self.mesh
            self._W0 = self.integrator.W[:, m.js:m.je, m.is_:m.ie].copy()

    def _sync(self) -> None:
        m, vm, st = self.mesh, self.varmap, self.state
        W = self.integrator.W
        self._set_up_primitives()
        W[:, m.js:m.je, m.is_:m.ie] = self._W0
        if vm.mhd:
            ct.cell_centred_field(st.b1, st.b2, W, m.area1, m.js, m.je, m.is_, m.ie)
        prim_to_cons(W, st.U, self.eos.gamma, self.eos.isothermal, vm.mhd, vm.nhydro, vm.nadv,
                     m.js, m.je, m.is_, m.ie)
        # setting up a state is not a floor activation (a half-set state may be empty)
        saved = self.integrator.counters.copy()
        self.integrator.primitives(st)
        self.integrator.counters[:] = saved

    # --------------------------------------------------------------- running
    def max_dt(self) -> float:
        """CFL time step of the current state (the minimum over all ranks).

        Raises :class:`~wind2d.errors.NonFiniteStateError` on every rank if any
        rank holds a non-finite or non-positive state.
        """
        try:
            dt, err = self.integrator.max_dt(), None
            for mod in self.modules:
                dt = min(dt, float(mod.max_dt(self)))
        except NonFiniteStateError as exc:
            dt, err = -1.0, exc
        if self.comm is None:
            if err is not None:
                raise err
            return dt
        from mpi4py import MPI
        bad = self.comm.allreduce(1 if err is not None else 0, op=MPI.MAX)
        if bad:
            raise err if err is not None else NonFiniteStateError(
                "the state is not finite or lost positivity on another rank")
        return self.comm.allreduce(dt, op=MPI.MIN)

    def step(self, dt: float | None = None) -> float:
        """Advance one step (CFL step unless ``dt`` is given); returns the step used."""
        if dt is None:
            dt = self.max_dt()
        self._W0 = None
        self.integrator.step(self.state, dt)
        if self._split:
            for mod in self._split:
                mod.split_source(self, dt)
            self.integrator.primitives(self.state)
        self.t += dt
        self.nstep += 1
        self.dt_last = dt
        return dt

    def advance(self, t_end: float, max_steps: int | None = None) -> int:
        """Advance to time ``t_end`` (the last step is shortened to land on it).

        Returns the number of steps taken.  Raises
        :class:`~wind2d.errors.NonFiniteStateError` if the state goes bad.
        """
        n = 0
        while self.t < t_end * (1 - 1e-14) and (max_steps is None or n < max_steps):
            dt = self.max_dt()
            if self.t + dt > t_end:
                dt = t_end - self.t
            self.step(dt)
            if self.t >= t_end * (1 - 1e-14):
                self.t = t_end
            n += 1
        self.max_dt()     # checks the final state is finite
        return n

    # --------------------------------------------------------------- restart
    def export_state(self) -> dict:
        """Everything needed to continue bitwise identically (copies).

        Interior conserved cells ``U`` (with the cell-centred B1, B2 slots), the
        interior face fields (boundary faces included), time, step count, last
        step, and the positivity counters.
        """
        m, st = self.mesh, self.state
        out = {"U": st.U[:, m.js:m.je, m.is_:m.ie].copy(), "t": self.t, "nstep": self.nstep,
               "dt_last": self.dt_last, "counters": self.integrator.counters.copy()}
        if self.varmap.mhd:
            out["b1"] = st.b1[m.js:m.je, m.is_:m.ie + 1].copy()
            out["b2"] = st.b2[m.js:m.je + 1, m.is_:m.ie].copy()
        if self.modules:
            # tallies of this rank; a parallel checkpoint sums them (GlobalView)
            out["modules"] = {mod.name: {"tallies": {k: float(v)
                                                     for k, v in mod.tallies.items()},
                                         "state": mod.checkpoint_state()}
                              for mod in self.modules}
        return out

    def restore_state(self, data: dict) -> None:
        """Inverse of :meth:`export_state`; shapes must match this simulation."""
        m, st = self.mesh, self.state
        want = (self.varmap.nvar, m.n2, m.n1)
        if tuple(data["U"].shape) != want:
            raise ParameterError(f"restart: saved cells have shape {tuple(data['U'].shape)}, "
                                 f"this run needs {want}")
        st.U[:, m.js:m.je, m.is_:m.ie] = data["U"]
        if self.varmap.mhd:
            st.b1[m.js:m.je, m.is_:m.ie + 1] = data["b1"]
            st.b2[m.js:m.je + 1, m.is_:m.ie] = data["b2"]
        self.t = float(data["t"])
        self.nstep = int(data["nstep"])
        self.dt_last = float(data["dt_last"])
        self.integrator.counters[:] = data["counters"]
        saved_modules = data.get("modules", {})
        for mod in self.modules:
            entry = saved_modules.get(mod.name, {})
            for k, v in entry.get("tallies", {}).items():
                mod.tallies[k] = float(v)
            mod.restore_checkpoint(entry.get("state", {}))
        saved = self.integrator.counters.copy()
        self.integrator.primitives(st)
        # recomputing the primitives of a saved state is not a new floor activation
        self.integrator.counters[:] = saved

    # --------------------------------------------------------------- output
    @property
    def field_names(self) -> tuple[str, ...]:
        return self.varmap.primitive_names

    def field(self, name: str) -> np.ndarray:
        """Interior primitive field ``[n2, n1]`` (a copy), by name."""
        if name not in self.varmap:
            raise ParameterError(f"field: unknown name {name!r}; allowed: "
                                 + ", ".join(self.varmap.primitive_names))
        m = self.mesh
        return self.integrator.W[self.varmap.index[name], m.js:m.je, m.is_:m.ie].copy()

    def fields(self) -> dict[str, np.ndarray]:
        """All primitive fields plus the coordinates ``x1``, ``x2`` (cell centres)."""
        out = {n: self.field(n) for n in self.varmap.primitive_names}
        a, b = self.mesh.axis_names
        out[a], out[b] = self.mesh.centres()
        return out

    def derived_fields(self) -> dict[str, tuple[np.ndarray, str]]:
        """Snapshot fields the physics modules derive: name -> (array [n2, n1], kind)."""
        out: dict[str, tuple[np.ndarray, str]] = {}
        for mod in self.modules:
            for name, item in mod.derived_fields(self).items():
                if name in out or name in self.varmap:
                    raise ParameterError(f"physics.{mod.name}: derived field {name!r} "
                                         "clashes with another field")
                out[name] = item
        return out

    def module_history(self) -> dict[str, tuple[float, str]]:
        """History columns of the physics modules (collective under MPI): their own
        columns plus their tallies summed over ranks, as name -> (value, kind)."""
        out: dict[str, tuple[float, str]] = {}
        for mod in self.modules:
            out.update(mod.history(self))
            if mod.tallies:
                keys = list(mod.tallies)
                tot = self.global_sum(np.array([mod.tallies[k] for k in keys], dtype=np.float64))
                for k, v in zip(keys, tot):
                    out[k] = (float(v), mod.tally_kinds.get(k, "dimensionless"))
        return out

    def global_max(self, value: float) -> float:
        """Largest value of a float over the ranks (collective under MPI)."""
        if self.comm is None:
            return float(value)
        from mpi4py import MPI
        return float(self.comm.allreduce(float(value), op=MPI.MAX))

    def advice(self) -> list[str]:
        """Warnings about the set-up for the current state, one line each
        (collective under MPI): a magnetic field through a reflecting wall, then
        every module's (``Module.advice``)."""
        return self._wall_field_advice() + [line for mod in self.modules
                                            for line in mod.advice(self)]

    def _wall_field_advice(self) -> list[str]:
        # a reflecting wall mirrors the normal field odd: it must be a wall the field
        # runs along; a normal field through it breaks energy conservation
        if not self.varmap.mhd:
            return []
        m, st, W = self.mesh, self.state, self.integrator.W
        sl = (slice(m.js, m.je), slice(m.is_, m.ie))
        bmax = self.global_max(float(np.sqrt(W[IB1][sl] ** 2 + W[IB2][sl] ** 2
                                             + W[IB3][sl] ** 2).max()))
        walls = {"x1_lo": st.b1[m.js:m.je, m.is_], "x1_hi": st.b1[m.js:m.je, m.ie],
                 "x2_lo": st.b2[m.js, m.is_:m.ie], "x2_hi": st.b2[m.je, m.is_:m.ie]}
        out = []
        for edge, faces in walls.items():
            if self._edge_kinds.get(edge) != "reflecting":
                continue
            local = self.boundaries.edges[edge][0] == "reflecting"
            bn = self.global_max(float(np.abs(faces).max()) if local else 0.0)
            if bmax > 0.0 and bn > 1e-6 * bmax:
                out.append(f"edges.{self._edge_names[edge]} = reflecting: the magnetic field "
                           f"crosses this wall (largest |B_n| on it {100 * bn / bmax:.3g} % "
                           "of the largest |B|); a reflecting wall keeps the field along it "
                           "(normal field mirrored odd), so total energy is not conserved "
                           "there; use an outflow edge or a field parallel to the wall")
        return out

    def global_sum(self, value):
        """Sum of a float or float array over the ranks (the value itself in serial).
        Collective under MPI.  For diagnostics only: the order of the sum depends on
        the rank count."""
        if self.comm is None:
            return value
        arr = np.atleast_1d(np.asarray(value, dtype=np.float64))
        tot = np.empty_like(arr)
        self.comm.Allreduce(arr, tot)
        return tot if np.ndim(value) else float(tot[0])

    def conserved(self) -> np.ndarray:
        """Interior conserved array ``[nvar, n2, n1]`` (a copy)."""
        m = self.mesh
        return self.state.U[:, m.js:m.je, m.is_:m.ie].copy()

    def totals(self) -> dict[str, float]:
        """Volume integrals (per radian in cylindrical geometry) of the conserved
        quantities: mass, the two in-plane momenta, angular momentum (cylindrical:
        sum V R_c rho v_phi; Cartesian: the third momentum) and total energy."""
        m = self.mesh
        V = m.cell_volumes()
        U = self.conserved()
        a, b = m.axis_names
        out = {"mass": float(np.sum(V * U[0])), f"momentum_{a}": float(np.sum(V * U[1])),
               f"momentum_{b}": float(np.sum(V * U[2]))}
        if m.cylindrical:
            out["angular_momentum"] = float(np.sum(V * m.h1c[m.is_:m.ie][None, :] * U[3]))
        else:
            out["momentum_z"] = float(np.sum(V * U[3]))
        if not self.eos.isothermal:
            out["energy"] = float(np.sum(V * U[4]))
        if self.comm is not None:
            keys = list(out)
            tot = np.empty(len(keys))
            self.comm.Allreduce(np.array([out[k] for k in keys]), tot)
            out = {k: float(v) for k, v in zip(keys, tot)}
        return out

    def divergence(self) -> np.ndarray:
        """Discrete div B of the interior cells (zeros without field)."""
        m = self.mesh
        out = np.zeros((m.n2, m.n1))
        if self.varmap.mhd:
            ct.divergence(self.state.b1, self.state.b2, m.area1, m.vol1, m.dx2,
                          m.js, m.je, m.is_, m.ie, out)
        return out

    @property
    def counters(self) -> dict[str, int]:
        """Cumulative positivity counters (fallback cells, floor activations), summed
        over all ranks of a parallel run (a collective call there)."""
        c = self.integrator.counters
        if self.comm is not None:
            tot = np.empty_like(c)
            self.comm.Allreduce(c.copy(), tot)
            c = tot
        return {n: int(v) for n, v in zip(COUNTER_NAMES, c)}
