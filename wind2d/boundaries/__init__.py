"""Boundary conditions, chosen per edge; one file per kind.

Boundaries act on the primitive array ``W`` and the face fields after the
interior primitives are known, so ghost cells never hold an inconsistent
energy.  Axis 1 is filled first over all rows, then axis 2 over all columns,
which fills the corner ghosts the constrained-transport stencil needs.
"""
from __future__ import annotations

import numpy as np

from ..errors import ParameterError
from ..state import IV1, IV2, IV3, IB1, IB2, IB3
from ..core.ct import cell_centred_field
from .fixed import fixed
from .outflow import outflow
from .periodic import periodic
from .reflecting import mirror

KINDS = ("axis", "reflecting", "outflow", "periodic", "fixed")
EDGES = ("x1_lo", "x1_hi", "x2_lo", "x2_hi")


def edge_names(mesh_axis_names) -> dict[str, str]:
    """User-facing edge names (``R_low`` ...) mapped to internal ones (``x1_lo`` ...)."""
    a, b = mesh_axis_names
    return {f"{a}_low": "x1_lo", f"{a}_high": "x1_hi", f"{b}_low": "x2_lo",
            f"{b}_high": "x2_hi"}


def normalise(edges: dict, axis_names, cylindrical: bool, has_axis: bool) -> dict:
    """Check a per-edge choice of boundary kinds; return it keyed by internal names."""
    names = edge_names(axis_names)
    out = {}
    for key, val in edges.items():
        internal = names.get(key, key if key in EDGES else None)
        if internal is None:
            raise ParameterError(
                f"boundaries: unknown edge {key!r}; allowed edges are {', '.join(names)}")
        kind, state = (val, None) if isinstance(val, str) else (val.get("kind"), val.get("state"))
        if kind not in KINDS:
            raise ParameterError(
                f"boundaries.{key} = {kind!r}: allowed kinds are {', '.join(KINDS)}")
        if kind == "fixed" and state is None:
            raise ParameterError(f"boundaries.{key}: a fixed boundary needs a 'state'")
        out[internal] = (kind, state)
    missing = [k for k, v in names.items() if v not in out]
    if missing:
        raise ParameterError(f"boundaries: no kind given for edge(s) {', '.join(missing)}; "
                             f"allowed kinds are {', '.join(KINDS)}")
    rev = {v: k for k, v in names.items()}
    for lo, hi in (("x1_lo", "x1_hi"), ("x2_lo", "x2_hi")):
        if (out[lo][0] == "periodic") != (out[hi][0] == "periodic"):
            raise ParameterError(f"boundaries: {rev[lo]} and {rev[hi]} must both be periodic "
                                 "or neither")
    for e, (kind, _) in out.items():
        if kind == "axis" and not (e == "x1_lo" and has_axis):
            raise ParameterError(
                f"boundaries.{rev[e]} = 'axis': the axis kind is only allowed at the low R "
                "edge of a cylindrical grid that starts at R = 0")
    if has_axis and out["x1_lo"][0] != "axis":
        raise ParameterError(f"boundaries.{rev['x1_lo']}: the grid starts at R = 0, so this "
                             "edge must be 'axis'")
    return out


class Boundaries:
    """Applies the chosen kind on each edge to ``W`` and the face fields."""

    def __init__(self, mesh, edges: dict, varmap, state_vector, global_mesh=None,
                 halo=None):
        self.mesh = mesh
        self.mhd = varmap.mhd
        gm = global_mesh if global_mesh is not None else mesh
        self.edges = normalise(edges, gm.axis_names, gm.cylindrical, gm.has_axis)
        # periodicity of the global grid, before tile edges become exchanges
        self.periodic1 = self.edges["x1_lo"][0] == "periodic"
        self.periodic2 = self.edges["x2_lo"][0] == "periodic"
        self.halo = halo
        if halo is not None:
            # edges shared with another tile are filled by the ghost exchange
            for e, r in halo.nb.items():
                if r is not None:
                    self.edges[e] = ("exchange", None)
        self.fixed_w = {}
        for e, (kind, st) in self.edges.items():
            if kind == "fixed":
                self.fixed_w[e] = state_vector(st)
        mhd = self.mhd
        # variables that change sign in mirrored ghost cells (module vectors too)
        c1, c2, c3 = (varmap.components(k) for k in (1, 2, 3))
        self.flips = {
            "x1": np.array(([IV1, IB1] if mhd else [IV1]) + c1, dtype=np.int64),
            "x2": np.array(([IV2, IB2] if mhd else [IV2]) + c2, dtype=np.int64),
            "axis": np.array(([IV1, IV3, IB1, IB3] if mhd else [IV1, IV3]) + c1 + c3,
                             dtype=np.int64),
        }

    def _side(self, W, bn, bt, axis, side, ng, lo, hi):
        e = f"x{axis}_{'lo' if side == 0 else 'hi'}"
        kind = self.edges[e][0]
        mhd = self.mhd
        inorm = IV1 if axis == 1 else IV2
        if kind == "exchange":
            return
        if kind == "periodic":
            if side == 0:
                periodic(W, bn, bt, ng, lo, hi, mhd)
        elif kind == "reflecting":
            mirror(W, bn, bt, side, ng, lo, hi, self.flips[f"x{axis}"], True, False, False, mhd)
        elif kind == "axis":
            mirror(W, bn, bt, side, ng, lo, hi, self.flips["axis"], True, False, True, mhd)
        elif kind == "outflow":
            outflow(W, bn, bt, side, ng, lo, hi, inorm, mhd)
        else:
            ibn, ibt = (IB1, IB2) if axis == 1 else (IB2, IB1)
            fixed(W, bn, bt, side, ng, lo, hi, self.fixed_w[e], ibn, ibt, mhd)

    def apply(self, W, b1, b2):
        m = self.mesh
        for side in (0, 1):
            self._side(W, b1, b2, 1, side, m.ng, m.is_, m.ie)
        if self.halo is not None:
            self.halo.exchange(1, W, b1, b2)
        Wt = W.transpose(0, 2, 1)
        for side in (0, 1):
            self._side(Wt, b2.T, b1.T, 2, side, m.ng, m.js, m.je)
        if self.halo is not None:
            self.halo.exchange(2, W, b1, b2)
        if self.mhd:
            cell_centred_field(b1, b2, W, m.area1, 0, m.nt2, 0, m.nt1)
