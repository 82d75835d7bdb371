"""Logically rectangular 2D mesh, cylindrical (R, z) or Cartesian (x, y).

Axis 1 is R (or x) and is the fast array index ``i``; axis 2 is z (or y),
index ``j``.  Cell arrays are ``[j, i]`` with ``ng`` ghost cells on each side.

Spacing per axis is uniform or stretched with a constant ratio ``r`` between
neighbouring widths, ``dx_k = dx_0 r^k``.  Ghost widths mirror the first or
last interior widths so that mirrored ghost cells sit at mirrored positions
(needed by the axis and reflecting boundaries).

Finite-volume metric (per radian and per unit length in z; the factor 2 pi
is dropped consistently):

* cylindrical: face area ``A_R = R_f``, cell volume ``V = (R_+^2 - R_-^2)/2``,
  cell "centre" in R is the volume centroid
  ``R_c = (2/3) (R_+^3 - R_-^3) / (R_+^2 - R_-^2)``;
* Cartesian: ``A = 1``, ``V = dx``, ``x_c`` the midpoint.

The z (or y) direction is always planar: area per unit ``V``, width ``dz``.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import ParameterError

GEOMETRIES = ("cylindrical", "cartesian")


@dataclass(frozen=True)
class AxisSpec:
    """One axis: ``cells`` cells between ``lo`` and ``hi``, width ratio ``stretch``."""

    lo: float
    hi: float
    cells: int
    stretch: float = 1.0

    def check(self, name: str) -> None:
        if isinstance(self.cells, bool) or not isinstance(self.cells, (int, np.integer)) \
                or self.cells <= 0:
            raise ParameterError(
                f"{name}.cells = {self.cells!r}: must be a positive integer")
        if not (np.isfinite(self.lo) and np.isfinite(self.hi)):
            raise ParameterError(f"{name}: lo and hi must be finite numbers")
        if not self.lo < self.hi:
            raise ParameterError(
                f"{name}: lo = {self.lo!r} must be smaller than hi = {self.hi!r}")
        if not (np.isfinite(self.stretch) and self.stretch > 0):
            raise ParameterError(
                f"{name}.stretch = {self.stretch!r}: must be a positive number "
                "(1 for uniform spacing)")


def _interior_edges(spec: AxisSpec) -> np.ndarray:
    n, r = spec.cells, float(spec.stretch)
    if r == 1.0:
        return spec.lo + (spec.hi - spec.lo) * np.arange(n + 1) / n
    w = r ** np.arange(n)
    edges = np.concatenate(([0.0], np.cumsum(w)))
    edges = spec.lo + (spec.hi - spec.lo) * edges / edges[-1]
    edges[-1] = spec.hi
    return edges


def _padded_edges(spec: AxisSpec, ng: int, periodic: bool) -> np.ndarray:
    e = _interior_edges(spec)
    w = np.diff(e)
    if periodic:
        wlo, whi = w[-ng:], w[:ng]
    else:
        wlo, whi = w[:ng][::-1], w[-ng:][::-1]
    lo = e[0] - np.cumsum(wlo[::-1])[::-1]
    hi = e[-1] + np.cumsum(whi)
    return np.concatenate((lo, e, hi))


class Mesh:
    """Mesh geometry with ghost zones.

    Parameters
    ----------
    geometry : {"cylindrical", "cartesian"}
    x1, x2 : AxisSpec or tuple (lo, hi, cells[, stretch])
        Axis 1 is R (or x), axis 2 is z (or y).  Lengths are in code units.
    ng : int
        Ghost cells per side (2 for piecewise-linear reconstruction).
    periodic1, periodic2 : bool
        Whether the axis wraps (ghost widths copy the opposite side).
    window : tuple (i0, i1, j0, j1), optional
        This mesh is the tile of global cells ``i0 <= i < i1``, ``j0 <= j < j1``
        (under MPI).  Its edges, ghosts included, are slices of the global
        padded edges, so every tile computes bitwise the same geometry as a
        serial run.
    """

    def __init__(self, geometry: str, x1, x2, ng: int = 2,
                 periodic1: bool = False, periodic2: bool = False, window=None):
        if geometry not in GEOMETRIES:
            raise ParameterError(
                f"geometry = {geometry!r}: allowed values are {', '.join(GEOMETRIES)}")
        x1 = x1 if isinstance(x1, AxisSpec) else AxisSpec(*x1)
        x2 = x2 if isinstance(x2, AxisSpec) else AxisSpec(*x2)
        n1, n2 = ("R", "z") if geometry == "cylindrical" else ("x", "y")
        x1.check(n1)
        x2.check(n2)
        if geometry == "cylindrical" and x1.lo < 0:
            raise ParameterError(f"R.lo = {x1.lo!r}: must be >= 0 in cylindrical geometry")
        if geometry == "cylindrical" and periodic1:
            raise ParameterError("R: a periodic R axis is not allowed in cylindrical geometry")
        self.geometry = geometry
        self.cylindrical = geometry == "cylindrical"
        self.axis_names = (n1, n2)
        self.spec = (x1, x2)
        self.ng = ng
        x1f = _padded_edges(x1, ng, periodic1)
        x2f = _padded_edges(x2, ng, periodic2)
        i0, i1, j0, j1 = window if window is not None else (0, x1.cells, 0, x2.cells)
        if not (0 <= i0 < i1 <= x1.cells and 0 <= j0 < j1 <= x2.cells):
            raise ParameterError(f"tile window {window} is outside the {x1.cells} x {x2.cells} "
                                 "grid or empty")
        self.window = (i0, i1, j0, j1)
        self.global_cells = (x1.cells, x2.cells)
        self.n1, self.n2 = i1 - i0, j1 - j0
        self.nt1, self.nt2 = self.n1 + 2 * ng, self.n2 + 2 * ng
        self.is_, self.ie = ng, ng + self.n1      # interior cells i in [is_, ie)
        self.js, self.je = ng, ng + self.n2

        self.x1f = x1f[i0:i1 + 2 * ng + 1]
        self.x2f = x2f[j0:j1 + 2 * ng + 1]
        self.dx1 = np.diff(self.x1f)
        self.dx2 = np.diff(self.x2f)
        self.x2c = 0.5 * (self.x2f[1:] + self.x2f[:-1])
        if self.cylindrical:
            rf = self.x1f
            rm, rp = rf[:-1], rf[1:]
            self.vol1 = np.abs(rp ** 2 - rm ** 2) / 2.0
            centroid = (2.0 / 3.0) * (rp ** 3 - rm ** 3) / (rp ** 2 - rm ** 2)
            self.x1c = centroid
            self.area1 = np.abs(rf)
            self.h1f = np.abs(rf)
            self.h1c = np.abs(centroid)
            # (A_+ - A_-)/V = 1/R_mid; the geometric-source factor
            self.geo1 = (self.area1[1:] - self.area1[:-1]) / self.vol1
        else:
            self.x1c = 0.5 * (self.x1f[1:] + self.x1f[:-1])
            self.vol1 = self.dx1.copy()
            self.area1 = np.ones(self.nt1 + 1)
            self.h1f = np.ones(self.nt1 + 1)
            self.h1c = np.ones(self.nt1)
            self.geo1 = np.zeros(self.nt1)
        self.has_axis = self.cylindrical and x1.lo == 0.0 and i0 == 0
        for a in ("x1f", "x2f", "dx1", "dx2", "x1c", "x2c", "vol1", "area1",
                  "h1f", "h1c", "geo1"):
            arr = np.ascontiguousarray(getattr(self, a), dtype=np.float64)
            arr.flags.writeable = False
            setattr(self, a, arr)

    # ----------------------------------------------------------- views
    @property
    def interior(self) -> tuple[slice, slice]:
        """Index ``[j, i]`` of the interior cells."""
        return (slice(self.js, self.je), slice(self.is_, self.ie))

    def centres(self) -> tuple[np.ndarray, np.ndarray]:
        """Interior cell centres (x1 volume centroid, x2 midpoint) as 2D arrays ``[j, i]``."""
        x1 = self.x1c[self.is_:self.ie]
        x2 = self.x2c[self.js:self.je]
        return np.meshgrid(x1, x2)

    def edges(self) -> tuple[np.ndarray, np.ndarray]:
        """Interior cell edges along axes 1 and 2 (1D)."""
        return (self.x1f[self.is_:self.ie + 1].copy(), self.x2f[self.js:self.je + 1].copy())

    def cell_volumes(self) -> np.ndarray:
        """Interior cell volumes ``[j, i]`` (per radian in cylindrical geometry)."""
        return np.outer(self.dx2[self.js:self.je], self.vol1[self.is_:self.ie])

    def __repr__(self) -> str:
        a, b = self.axis_names
        tile = "" if self.window == (0, self.global_cells[0], 0, self.global_cells[1]) else \
            f", tile {self.window}"
        return (f"Mesh({self.geometry}, {a}: [{self.spec[0].lo}, {self.spec[0].hi}] x "
                f"{self.global_cells[0]}, {b}: [{self.spec[1].lo}, {self.spec[1].hi}] x "
                f"{self.global_cells[1]}{tile})")
