"""Unsplit second-order predictor-corrector (van Leer type) stage loop.

    stage 1:  U* = U^n - (dt/2) L_1st(U^n)      donor-cell fluxes
    stage 2:  U^{n+1} = U^n - dt L_rec(U*)        reconstructed fluxes

Both directions of a stage use the same state.  In MHD runs the face fields
follow the same two stages with corner electric fields (``ct``).  After the
second stage, cells with non-positive density or pressure are recomputed
with first-order HLLE fluxes on their faces (``floors``).  All work arrays
are allocated once here; a step allocates no full-grid temporaries.

Physics modules (``self.modules``, set by the Simulation; the core knows only
their hooks) act inside each stage: ``add_fluxes`` after the core fluxes,
``stage_source`` after the cell update (see wind2d/physics/base.py).  The cell
update skips the variables of modules that update them themselves (``own``).
"""
from __future__ import annotations

import numpy as np

from ..errors import NonFiniteStateError
from ..state import State
from . import ct, floors
from .fluxes import sweep1, sweep2
from .geometry import update_cells, update_flagged
from .reconstruct.plm import axis_coefficients
from .timestep import max_signal_rate


class Integrator:
    """Advances a :class:`~wind2d.state.State` on a mesh by one time step."""

    def __init__(self, mesh, varmap, eos, boundaries, solver: int, limiter: int,
                 courant: float, density_floor: float, pressure_floor: float):
        self.mesh, self.varmap, self.eos, self.bc = mesh, varmap, eos, boundaries
        self.solver, self.limiter, self.courant = solver, limiter, courant
        self.d_floor, self.p_floor = float(density_floor), float(pressure_floor)
        m, nv = mesh, varmap.nvar
        self.mhd = varmap.mhd
        self.W = np.zeros((nv, m.nt2, m.nt1))
        self.half = State(nv, m.nt2, m.nt1, self.mhd)
        self.F1 = np.zeros((nv, m.nt2, m.nt1 + 1))
        self.F2 = np.zeros((nv, m.nt2 + 1, m.nt1))
        self.E3 = np.zeros((m.nt2 + 1, m.nt1 + 1) if self.mhd else (1, 1))
        self.Ec = np.zeros((m.nt2, m.nt1) if self.mhd else (1, 1))
        self.rows = [np.zeros((nv, m.nt1 + 1)) for _ in range(3)]
        self.frow = np.zeros((7, m.nt1 + 1))     # solver-ordered fluxes of one row
        self.flags = np.zeros((m.nt2, m.nt1), dtype=np.int8)
        self.counters = np.zeros(len(floors.COUNTER_NAMES), dtype=np.int64)
        self.g1 = axis_coefficients(m.x1f, self._mirrored_centres(m.x1f, m.x1c, 1))
        self.g2 = axis_coefficients(m.x2f, self._mirrored_centres(m.x2f, m.x2c, 2))
        # ranges: MHD needs fluxes one row/column beyond the interior for the corners
        e = 1 if self.mhd else 0
        self.r1 = (m.js - e, m.je + e, m.is_, m.ie + 1)
        self.r2 = (m.js, m.je + 1, m.is_ - e, m.ie + e)
        self.gas = (eos.gamma, eos.isothermal, eos.cs2)
        self.zero_emf = np.array([boundaries.edges[e][0] in ("axis", "reflecting")
                                  for e in ("x1_lo", "x1_hi", "x2_lo", "x2_hi")])
        # edges whose other side is a cell of this run (periodic or another tile): the
        # first-order fallback must agree on the fluxes through them
        self.shared_edges = any(boundaries.edges[e][0] in ("periodic", "exchange")
                                for e in ("x1_lo", "x1_hi", "x2_lo", "x2_hi"))
        # own[v] = 1: a physics module updates variable v itself (the core skips it)
        self.own = np.zeros(nv, dtype=np.int8)
        self.modules = []           # physics modules, in acting order
        self.owner = None           # the Simulation handed to module hooks

    def _mirrored_centres(self, xf, xc, axis):
        # Ghost centres behind a wall are the mirror images of the interior ones, so
        # that reconstruction sees mirror-symmetric data and wall fluxes of mass and
        # energy vanish (the R centroid is not symmetric about its cell's midpoint).
        xc = xc.copy()
        m = self.mesh
        lo, hi = (m.is_, m.ie) if axis == 1 else (m.js, m.je)
        for k in range(1, m.ng + 1):
            if self.bc.edges[f"x{axis}_lo"][0] in ("reflecting", "axis"):
                xc[lo - k] = 2.0 * xf[lo] - xc[lo + k - 1]
            if self.bc.edges[f"x{axis}_hi"][0] == "reflecting":
                xc[hi + k - 1] = 2.0 * xf[hi] - xc[hi - k]
        return xc

    # ------------------------------------------------------------ pieces
    def primitives(self, st: State) -> None:
        """Interior primitives of ``st`` (with floors), then ghost cells and faces."""
        m, vm = self.mesh, self.varmap
        g, iso, cs2 = self.gas
        floors.cons_to_prim(st.U, self.W, st.b1, st.b2, m.area1, g, iso, cs2, self.mhd,
                            vm.nhydro, vm.nadv, self.d_floor, self.p_floor, self.counters,
                            m.js, m.je, m.is_, m.ie)
        self.bc.apply(self.W, st.b1, st.b2)

    def _fluxes(self, b1, b2, limiter: int, stage: int) -> None:
        g, iso, cs2 = self.gas
        vm, r = self.varmap, self.rows
        nscal = len(vm.scalars)
        sweep1(self.W, b1, self.F1, self.g1, limiter, self.solver, g, iso, cs2, self.mhd,
               nscal, vm.iscal, *self.r1, r[0], r[1], self.frow)
        sweep2(self.W, b2, self.F2, self.g2, limiter, self.solver, g, iso, cs2, self.mhd,
               nscal, vm.iscal, *self.r2, r[0], r[1], r[2], self.frow)
        for mod in self.modules:
            mod.add_fluxes(self.owner, self.W, b1, b2, self.F1, self.F2, stage)

    def _sources(self, out: State, dt: float, stage: int) -> None:
        for mod in self.modules:
            mod.stage_source(self.owner, self.W, out.U, self.F1, self.F2, dt, stage)

    def _faces(self, st: State, out: State, dt: float) -> None:
        m = self.mesh
        ct.corner_emf(self.W, self.F1, self.F2, self.E3, self.Ec, m.js, m.je, m.is_, m.ie,
                      self.zero_emf)
        ct.update_faces(st.b1, st.b2, out.b1, out.b2, self.E3, dt, m.area1, m.vol1, m.dx2,
                        m.js, m.je, m.is_, m.ie)

    def _cells(self, st: State, out: State, dt: float) -> None:
        m = self.mesh
        update_cells(st.U, out.U, self.W, self.F1, self.F2, dt, m.area1, m.h1f, m.h1c,
                     m.vol1, m.geo1, m.dx1, m.dx2, m.cylindrical, self.mhd,
                     self.eos.isothermal, self.own, m.js, m.je, m.is_, m.ie)

    def _fallback(self, st: State, out: State, dt: float) -> None:
        m = self.mesh
        g, iso, cs2 = self.gas
        nbad = floors.find_bad_cells(out.U, out.b1, out.b2, m.area1, g, iso, self.mhd,
                                     self.flags, m.js, m.je, m.is_, m.ie)
        nghost = self._ghost_flags() if self.shared_edges else 0
        if nbad == 0 and nghost == 0:
            return
        floors.first_order_faces(self.W, out.b1, out.b2, self.F1, self.F2, self.flags, g, iso,
                                 cs2, self.mhd, self.varmap.nhydro, self.varmap.nadv,
                                 m.js, m.je, m.is_, m.ie)
        update_flagged(st.U, out.U, self.W, self.F1, self.F2, dt, m.area1, m.h1f, m.h1c,
                       m.vol1, m.geo1, m.dx1, m.dx2, m.cylindrical, self.mhd, iso,
                       self.own, self.flags, m.js, m.je, m.is_, m.ie)
        self.counters[floors.FALLBACK] += nbad

    def _ghost_flags(self) -> int:
        """Copy the fallback flags of the cells across periodic and tile edges into
        the first ghost layer; return how many of them are flagged."""
        f, m = self.flags, self.mesh
        edges = self.bc.edges
        if edges["x1_lo"][0] == "periodic":
            f[m.js:m.je, m.is_ - 1] = f[m.js:m.je, m.ie - 1]
            f[m.js:m.je, m.ie] = f[m.js:m.je, m.is_]
        if edges["x2_lo"][0] == "periodic":
            f[m.js - 1, m.is_:m.ie] = f[m.je - 1, m.is_:m.ie]
            f[m.je, m.is_:m.ie] = f[m.js, m.is_:m.ie]
        if self.bc.halo is not None:
            self.bc.halo.exchange_flags(f)
        return int(np.count_nonzero(f[m.js:m.je, m.is_ - 1] == 1)
                   + np.count_nonzero(f[m.js:m.je, m.ie] == 1)
                   + np.count_nonzero(f[m.js - 1, m.is_:m.ie] == 1)
                   + np.count_nonzero(f[m.je, m.is_:m.ie] == 1))

    # ------------------------------------------------------------ public
    def max_dt(self) -> float:
        """CFL step of the state whose primitives are in ``self.W``."""
        m = self.mesh
        g, iso, cs2 = self.gas
        s = max_signal_rate(self.W, m.dx1, m.dx2, g, iso, cs2, self.mhd, m.js, m.je,
                            m.is_, m.ie)
        if s < 0.0:
            self.raise_nonfinite()
        if s == 0.0:
            return np.inf
        return self.courant / s

    def raise_nonfinite(self):
        m = self.mesh
        w = self.W[:, m.js:m.je, m.is_:m.ie]
        bad = ~np.isfinite(w).all(axis=0) | (w[0] <= 0) | (w[4] <= 0)
        jj, ii = np.nonzero(bad)
        cells = ", ".join(f"(i={i}, j={j})" for j, i in list(zip(jj, ii))[:5])
        raise NonFiniteStateError(
            f"the state is not finite or lost positivity in {len(jj)} cell(s), first: {cells}")

    def step(self, st: State, dt: float) -> None:
        """Advance ``st`` by ``dt``; on entry ``self.W`` holds its primitives."""
        h = self.half
        self._fluxes(st.b1, st.b2, 0, 0)
        if self.mhd:
            self._faces(st, h, 0.5 * dt)
        self._cells(st, h, 0.5 * dt)
        self._sources(h, 0.5 * dt, 0)
        self.primitives(h)
        self._fluxes(h.b1, h.b2, self.limiter, 1)
        if self.mhd:
            self._faces(st, h, dt)
        self._cells(st, h, dt)
        self._fallback(st, h, dt)
        self._sources(h, dt, 1)
        st.U, h.U = h.U, st.U
        st.b1, h.b1 = h.b1, st.b1
        st.b2, h.b2 = h.b2, st.b2
        self.primitives(st)
