"""Outflow rates through surfaces and through the edges of the domain.

Surfaces (all centred on the symmetry axis; on a Cartesian grid R and z read
x and y):

* ``plane``: the planes ``z = centre_z + height`` and ``z = centre_z - height``
  (either or both), outward normal ``+z`` and ``-z``;
* ``cylinder``: ``R = radius`` (Cartesian: the lines ``x = +radius`` and
  ``x = -radius`` that lie in the domain), outward normal ``+R`` (``+-x``);
* ``sphere``: ``r = radius`` around ``(0, centre_z)`` (Cartesian: a circle),
  outward normal ``r-hat``.

Planes and cylinders are made of cell faces: the requested position is moved
to the nearest face of the grid (:func:`snap_to_face`), and the cell values
on both sides are interpolated linearly to the face.  A sphere cuts cells
obliquely; in every cut cell the arc of the circle inside the cell is split
where it crosses the cell edges, and each piece contributes

    F(x_m) . n(x_m) * A_piece,

with ``x_m`` the piece's angular midpoint, ``F`` the flux density
interpolated bilinearly from the four nearest cell centres and ``A_piece``
the exact area of the piece.  In cylindrical geometry that area is, per
radian, ``r0 |z_a - z_b|`` (Archimedes: a spherical zone has the area of
the cylinder band of the same height, common practice), so the pieces add up
to exactly ``2 r0^2`` per radian (``4 pi r0^2`` in all); on a Cartesian grid
it is the arc length ``r0 |theta_b - theta_a|`` per unit length along the
third axis.  The estimate is second order in the cell size for smooth flows.

All rates are per radian in cylindrical geometry (multiply by ``2 pi`` for
the whole galaxy), like the totals of the history; per unit length along the
third axis on a Cartesian grid.

Flux densities (Heaviside-Lorentz field, ``v_n = v . n``)
-------------------------------------------------------
==========  =====================================================
mass        ``rho v_n``
momentum    ``rho v_n^2`` (flux of the normal momentum component)
kinetic     ``(1/2) rho |v|^2 v_n``
thermal     ``gamma/(gamma - 1) p v_n`` (enthalpy flux; ideal gas)
magnetic    ``|B|^2 v_n - (v . B) B_n`` (Poynting flux)
cr          ``F_c . n`` (the cosmic-ray energy flux variable)
energy      kinetic + thermal + magnetic + cr
==========  =====================================================

``net`` sums the flux over the surface.  ``out`` sums only the outward part:
for each surface element the positive part of that component's flux; for
the momentum the elements where the gas moves outward (``v_n > 0``), since
``rho v_n^2`` is positive either way.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

from ..state import IB1, IB2, IB3, IDN, IPR, IV1, IV2, IV3

COMPONENTS = ("mass", "momentum", "kinetic", "thermal", "magnetic", "cr", "energy")
KINDS = {"mass": "mass_rate", "momentum": None, "kinetic": "power", "thermal": "power",
         "magnetic": "power", "cr": "power", "energy": "power"}
NCOMP = len(COMPONENTS)
C_MASS, C_MOM, C_KIN, C_TH, C_MAG, C_CR, C_EN = range(NCOMP)


# ------------------------------------------------------------------ geometry
def snap_to_face(faces: np.ndarray, x: float) -> int:
    """Index of the face in ``faces`` nearest to ``x`` (the lower one on a tie)."""
    faces = np.asarray(faces, dtype=np.float64)
    k = int(np.argmin(np.abs(faces - x)))
    return k


class SurfacePoints:
    """The quadrature points of one surface on one tile.

    Attributes
    ----------
    jj, ii : int64 arrays
        Lower-left cell (tile indices, ghosts included) of each point's 2 x 2
        interpolation stencil ``(jj, ii), (jj, ii+1), (jj+1, ii), (jj+1, ii+1)``.
    wts : float64 array [n, 4]
        Interpolation weights of those four cells (they sum to 1).
    nrm : float64 array [n, 2]
        Outward unit normal (axis-1, axis-2 components).
    area : float64 array [n]
        Area of the surface element (per radian in cylindrical geometry).
    """

    def __init__(self):
        self._j, self._i, self._w, self._n, self._a = [], [], [], [], []

    def add(self, j, i, w, n, a):
        self._j.append(j)
        self._i.append(i)
        self._w.append(w)
        self._n.append(n)
        self._a.append(a)

    def finish(self) -> "SurfacePoints":
        n = len(self._j)
        self.jj = np.array(self._j, dtype=np.int64).reshape(n)
        self.ii = np.array(self._i, dtype=np.int64).reshape(n)
        self.wts = np.array(self._w, dtype=np.float64).reshape(n, 4)
        self.nrm = np.array(self._n, dtype=np.float64).reshape(n, 2)
        self.area = np.array(self._a, dtype=np.float64).reshape(n)
        del self._j, self._i, self._w, self._n, self._a
        return self

    def __len__(self):
        return len(self.area)


def plane_points(mesh, global_mesh, z_face: int, normal: float, R_max_face=None):
    """Points of the axis-2 face ``z_face`` (a global face index) on this tile.

    A face on the boundary between two tiles belongs to the tile that holds the
    cell above it (the top domain edge: the tile holding the cell below).
    ``R_max_face`` (global axis-1 face index) limits the plane to the columns
    inside it.
    """
    pts = SurfacePoints()
    i0, i1, j0, j1 = mesh.window
    n2 = global_mesh.n2
    owner = (j0 <= z_face < j1) or (z_face == n2 and j1 == n2)
    if not owner:
        return pts.finish()
    jf = z_face - j0 + mesh.js                 # the face between cells jf-1 and jf
    zf = mesh.x2f[jf]
    zl, zh = mesh.x2c[jf - 1], mesh.x2c[jf]
    wl = (zh - zf) / (zh - zl)
    wh = 1.0 - wl
    for i in range(mesh.is_, mesh.ie):
        gi = i - mesh.is_ + i0
        if R_max_face is not None and gi >= R_max_face:
            continue
        pts.add(jf - 1, i, (wl, 0.0, wh, 0.0), (0.0, normal), mesh.vol1[i])
    return pts.finish()


def cylinder_points(mesh, global_mesh, r_face: int, normal: float, z_rows=None):
    """Points of the axis-1 face ``r_face`` (global index) on this tile.

    ``z_rows`` (global ``(lo, hi)`` row range) limits the cylinder in height.
    """
    pts = SurfacePoints()
    i0, i1, j0, j1 = mesh.window
    n1 = global_mesh.n1
    owner = (i0 <= r_face < i1) or (r_face == n1 and i1 == n1)
    if not owner:
        return pts.finish()
    i_f = r_face - i0 + mesh.is_
    rf = mesh.x1f[i_f]
    rl, rh = mesh.x1c[i_f - 1], mesh.x1c[i_f]
    wl = (rh - rf) / (rh - rl)
    wh = 1.0 - wl
    for j in range(mesh.js, mesh.je):
        gj = j - mesh.js + j0
        if z_rows is not None and not (z_rows[0] <= gj < z_rows[1]):
            continue
        pts.add(j, i_f - 1, (wl, wh, 0.0, 0.0), (normal, 0.0), mesh.area1[i_f] * mesh.dx2[j])
    return pts.finish()


def _stencil(xc, x):
    """Lower index k with xc[k] <= x < xc[k+1] (clamped) and the weight of k+1."""
    k = int(np.searchsorted(xc, x, side="right")) - 1
    k = min(max(k, 0), len(xc) - 2)
    f = (x - xc[k]) / (xc[k + 1] - xc[k])
    return k, f


def _arc_pieces(r0, zc, rlo, rhi, zlo, zhi, cylindrical):
    """Pieces ``(theta_a, theta_b)`` of the circle of radius ``r0`` around
    ``(0, zc)`` inside the cell ``[rlo, rhi] x [zlo, zhi]``; theta is measured
    from the +z direction, point ``(r0 sin t, zc + r0 cos t)``."""
    tmin, tmax = (0.0, math.pi) if cylindrical else (-math.pi, math.pi)
    cuts = {tmin, tmax}
    for rb in (rlo, rhi):
        s = rb / r0
        if -1.0 <= s <= 1.0:
            a = math.asin(s)
            for t in (a, math.pi - a, a - 2 * math.pi, math.pi - a - 2 * math.pi):
                if tmin < t < tmax:
                    cuts.add(t)
    for zb in (zlo, zhi):
        c = (zb - zc) / r0
        if -1.0 <= c <= 1.0:
            a = math.acos(c)
            for t in (a, -a):
                if tmin < t < tmax:
                    cuts.add(t)
    cuts = sorted(cuts)
    out = []
    for ta, tb in zip(cuts[:-1], cuts[1:]):
        if tb - ta <= 0.0:
            continue
        tm = 0.5 * (ta + tb)
        R, z = r0 * math.sin(tm), zc + r0 * math.cos(tm)
        if rlo <= R <= rhi and zlo <= z <= zhi:
            out.append((ta, tb))
    return out


def sphere_points(mesh, r0: float, zc: float):
    """Points of the sphere (circle) of radius ``r0`` centred at ``(0, zc)`` on this tile."""
    pts = SurfacePoints()
    cyl = mesh.cylindrical
    x1f, x2f = mesh.x1f, mesh.x2f
    is_, ie, js, je = mesh.is_, mesh.ie, mesh.js, mesh.je
    # cells cut by the circle: nearest point inside, farthest corner outside
    R0, R1 = x1f[is_:ie][None, :], x1f[is_ + 1:ie + 1][None, :]
    Z0, Z1 = x2f[js:je][:, None] - zc, x2f[js + 1:je + 1][:, None] - zc
    dr = np.maximum(np.maximum(R0, -R1), 0.0)
    dz = np.maximum(np.maximum(Z0, -Z1), 0.0)
    near = np.hypot(dr, dz)
    far = np.hypot(np.maximum(np.abs(R0), np.abs(R1)), np.maximum(np.abs(Z0), np.abs(Z1)))
    jj, ii = np.nonzero((near <= r0) & (far >= r0))
    for jl, il in zip(jj.tolist(), ii.tolist()):
        j, i = jl + js, il + is_
        for ta, tb in _arc_pieces(r0, zc, x1f[i], x1f[i + 1], x2f[j], x2f[j + 1], cyl):
            tm = 0.5 * (ta + tb)
            st, ct = math.sin(tm), math.cos(tm)
            if cyl:
                area = r0 * r0 * abs(math.cos(ta) - math.cos(tb))
            else:
                area = r0 * (tb - ta)
            if area <= 0.0:
                continue
            R, z = r0 * st, zc + r0 * ct
            k1, f1 = _stencil(mesh.x1c, R)
            k2, f2 = _stencil(mesh.x2c, z)
            w = ((1 - f2) * (1 - f1), (1 - f2) * f1, f2 * (1 - f1), f2 * f1)
            pts.add(k2, k1, w, (st, ct), area)
    return pts.finish()


# ------------------------------------------------------------------ kernels
@njit(cache=True, error_model="numpy")
def surface_fluxes(W, jj, ii, wts, nrm, area, gamma, iso, mhd, icr1, icr2, out):
    """Add the rates through the points of one surface to ``out[2, NCOMP]``
    (row 0: net, row 1: outward part); see the module docstring."""
    gfac = 0.0 if iso else gamma / (gamma - 1.0)
    for k in range(area.shape[0]):
        n1 = nrm[k, 0]
        n2 = nrm[k, 1]
        fm = 0.0
        fp = 0.0
        fk = 0.0
        fth = 0.0
        fb = 0.0
        fc = 0.0
        for c in range(4):
            w = wts[k, c]
            if w == 0.0:
                continue
            j = jj[k] + c // 2
            i = ii[k] + c % 2
            rho = W[IDN, j, i]
            v1 = W[IV1, j, i]
            v2 = W[IV2, j, i]
            v3 = W[IV3, j, i]
            vn = v1 * n1 + v2 * n2
            fm += w * rho * vn
            fp += w * rho * vn * vn
            fk += w * 0.5 * rho * (v1 * v1 + v2 * v2 + v3 * v3) * vn
            fth += w * gfac * W[IPR, j, i] * vn
            if mhd:
                b1 = W[IB1, j, i]
                b2 = W[IB2, j, i]
                b3 = W[IB3, j, i]
                fb += w * ((b1 * b1 + b2 * b2 + b3 * b3) * vn
                           - (v1 * b1 + v2 * b2 + v3 * b3) * (b1 * n1 + b2 * n2))
            if icr1 >= 0:
                fc += w * (W[icr1, j, i] * n1 + W[icr2, j, i] * n2)
        a = area[k]
        fe = fk + fth + fb + fc
        out[0, 0] += a * fm
        out[0, 1] += a * fp
        out[0, 2] += a * fk
        out[0, 3] += a * fth
        out[0, 4] += a * fb
        out[0, 5] += a * fc
        out[0, 6] += a * fe
        if fm > 0.0:
            out[1, 0] += a * fm
            out[1, 1] += a * fp
        if fk > 0.0:
            out[1, 2] += a * fk
        if fth > 0.0:
            out[1, 3] += a * fth
        if fb > 0.0:
            out[1, 4] += a * fb
        if fc > 0.0:
            out[1, 5] += a * fc
        if fe > 0.0:
            out[1, 6] += a * fe


@njit(cache=True, error_model="numpy")
def edge_totals(F1, F2, var, dt, area1, vol1, dx2, lo1, hi1, lo2, hi2, js, je, is_, ie):
    """``dt`` times the net outward flux of variable ``var`` through the edges of
    this tile that are edges of the domain (``lo1`` ... flags), face areas per
    radian in cylindrical geometry."""
    tot = 0.0
    if lo1:
        for j in range(js, je):
            tot -= area1[is_] * dx2[j] * F1[var, j, is_]
    if hi1:
        for j in range(js, je):
            tot += area1[ie] * dx2[j] * F1[var, j, ie]
    if lo2:
        for i in range(is_, ie):
            tot -= vol1[i] * F2[var, js, i]
    if hi2:
        for i in range(is_, ie):
            tot += vol1[i] * F2[var, je, i]
    return dt * tot


__all__ = ["COMPONENTS", "KINDS", "SurfacePoints", "snap_to_face", "plane_points",
           "cylinder_points", "sphere_points", "surface_fluxes", "edge_totals"]
