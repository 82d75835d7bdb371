"""Positivity: conserved-to-primitive conversion with floors, first-order fallback,
and counters of every activation.

Counter slots (``counters[k]``, int64, cumulative over the run):

* ``FALLBACK``: cells whose second-order update gave non-positive density or
  pressure and were recomputed with first-order HLLE fluxes on their faces;
* ``DENSITY_FLOOR``: cells where density was raised to the floor (velocity kept);
* ``PRESSURE_FLOOR``: cells where pressure was raised to the floor (energy adjusted).
"""
from numba import njit

from ..state import IDN, IM1, IM2, IM3, IEN, IV1, IV2, IV3, IPR, IB1, IB2, IB3
from .indexing import ONE, u
from .riemann.hlle import hlle

FALLBACK, DENSITY_FLOOR, PRESSURE_FLOOR = 0, 1, 2
COUNTER_NAMES = ("fallback_cells", "density_floor_cells", "pressure_floor_cells")


@njit(cache=True, error_model="numpy")
def cons_to_prim(U, W, b1, b2, area1, gamma, iso, cs2, mhd, nhydro, nadv, d_floor, p_floor,
                 counters, js, je, is_, ie):
    """Primitives of the interior cells; floors applied to ``U`` and counted.

    Variables ``nhydro <= v < nadv`` are passive scalars (``W = U / rho``); those
    from ``nadv`` on belong to physics modules and are densities (``W = U``).
    """
    nv = U.shape[0]
    gm1 = gamma - 1.0
    for j in range(u(js), u(je)):
        for i in range(u(is_), u(ie)):
            d = U[IDN, j, i]
            if mhd:
                a0 = area1[i]
                a1 = area1[i + ONE]
                B1 = (a0 * b1[j, i] + a1 * b1[j, i + ONE]) / (a0 + a1)
                B2 = 0.5 * (b2[j, i] + b2[j + ONE, i])
                B3 = U[IB3, j, i]
                U[IB1, j, i] = B1
                U[IB2, j, i] = B2
                W[IB1, j, i] = B1
                W[IB2, j, i] = B2
                W[IB3, j, i] = B3
                emag = 0.5 * (B1 * B1 + B2 * B2 + B3 * B3)
            else:
                emag = 0.0
            if d < d_floor:
                # keep the velocity, raise the mass; the thermal energy is kept
                scale = d_floor / d if d > 0.0 else 0.0
                ek_old = 0.0
                if d > 0.0:
                    ek_old = 0.5 * (U[IM1, j, i] ** 2 + U[IM2, j, i] ** 2
                                    + U[IM3, j, i] ** 2) / d
                U[IM1, j, i] *= scale
                U[IM2, j, i] *= scale
                U[IM3, j, i] *= scale
                for v in range(nhydro, nadv):
                    U[v, j, i] *= scale
                U[IDN, j, i] = d_floor
                if not iso:
                    U[IEN, j, i] += ek_old * (scale - 1.0)
                d = d_floor
                counters[DENSITY_FLOOR] += 1
            rd = 1.0 / d
            v1 = U[IM1, j, i] * rd
            v2 = U[IM2, j, i] * rd
            v3 = U[IM3, j, i] * rd
            W[IDN, j, i] = d
            W[IV1, j, i] = v1
            W[IV2, j, i] = v2
            W[IV3, j, i] = v3
            if iso:
                W[IPR, j, i] = d * cs2
            else:
                ek = 0.5 * d * (v1 * v1 + v2 * v2 + v3 * v3)
                p = gm1 * (U[IEN, j, i] - ek - emag)
                if p < p_floor:
                    p = p_floor
                    U[IEN, j, i] = p / gm1 + ek + emag
                    counters[PRESSURE_FLOOR] += 1
                W[IPR, j, i] = p
            for v in range(nhydro, nadv):
                W[v, j, i] = U[v, j, i] * rd
    for v in range(nadv, nv):            # module variables: densities, copied row by row
        for j in range(u(js), u(je)):
            for i in range(u(is_), u(ie)):
                W[v, j, i] = U[v, j, i]


@njit(cache=True, error_model="numpy")
def prim_to_cons(W, U, gamma, iso, mhd, nhydro, nadv, js, je, is_, ie):
    """Conserved variables from primitives (cell-centred field taken from ``W``);
    scalars ``nhydro <= v < nadv`` per unit mass, module variables as they are."""
    nv = W.shape[0]
    for j in range(js, je):
        for i in range(is_, ie):
            d = W[IDN, j, i]
            v1 = W[IV1, j, i]
            v2 = W[IV2, j, i]
            v3 = W[IV3, j, i]
            U[IDN, j, i] = d
            U[IM1, j, i] = d * v1
            U[IM2, j, i] = d * v2
            U[IM3, j, i] = d * v3
            emag = 0.0
            if mhd:
                for v in (IB1, IB2, IB3):
                    U[v, j, i] = W[v, j, i]
                emag = 0.5 * (W[IB1, j, i] ** 2 + W[IB2, j, i] ** 2 + W[IB3, j, i] ** 2)
            if iso:
                U[IEN, j, i] = 0.0
            else:
                U[IEN, j, i] = (W[IPR, j, i] / (gamma - 1.0)
                                + 0.5 * d * (v1 * v1 + v2 * v2 + v3 * v3) + emag)
            for v in range(nhydro, nadv):
                U[v, j, i] = d * W[v, j, i]
            for v in range(nadv, nv):
                U[v, j, i] = W[v, j, i]


@njit(cache=True, error_model="numpy")
def _first_order_flux(W, b, F, dirn, j, i, gamma, iso, cs2, mhd, nhydro, nadv):
    # HLLE flux between the cell values either side of face (j, i) of direction dirn
    if dirn == 1:
        jl, il = j, i - 1
        n, t1 = IV1, IV2
        bt1 = IB2
    else:
        jl, il = j - 1, i
        n, t1 = IV2, IV1
        bt1 = IB1
    bn = b[j, i] if mhd else 0.0
    b1l = W[bt1, jl, il] if mhd else 0.0
    b2l = W[IB3, jl, il] if mhd else 0.0
    b1r = W[bt1, j, i] if mhd else 0.0
    b2r = W[IB3, j, i] if mhd else 0.0
    f = hlle(W[IDN, jl, il], W[n, jl, il], W[t1, jl, il], W[IV3, jl, il], W[IPR, jl, il],
             b1l, b2l,
             W[IDN, j, i], W[n, j, i], W[t1, j, i], W[IV3, j, i], W[IPR, j, i],
             b1r, b2r, bn, gamma, iso, cs2)
    F[IDN, j, i] = f[0]
    F[n, j, i] = f[1]
    F[t1, j, i] = f[2]
    F[IV3, j, i] = f[3]
    F[IPR, j, i] = f[4]
    if mhd:
        F[IB3, j, i] = f[6]
    for v in range(nhydro, nadv):        # module variables keep their own fluxes
        F[v, j, i] = f[0] * (W[v, jl, il] if f[0] >= 0.0 else W[v, j, i])


@njit(cache=True, error_model="numpy")
def find_bad_cells(U, b1, b2, area1, gamma, iso, mhd, flags, js, je, is_, ie):
    """Mark interior cells with non-positive density or pressure; return their number."""
    nbad = 0
    for j in range(u(js), u(je)):
        for i in range(u(is_), u(ie)):
            d = U[IDN, j, i]
            bad = not d > 0.0
            if not iso and not bad:
                emag = 0.0
                if mhd:
                    a0 = area1[i]
                    a1 = area1[i + ONE]
                    B1 = (a0 * b1[j, i] + a1 * b1[j, i + ONE]) / (a0 + a1)
                    B2 = 0.5 * (b2[j, i] + b2[j + ONE, i])
                    emag = 0.5 * (B1 * B1 + B2 * B2 + U[IB3, j, i] ** 2)
                ek = 0.5 * (U[IM1, j, i] ** 2 + U[IM2, j, i] ** 2 + U[IM3, j, i] ** 2) / d
                bad = not (U[IEN, j, i] - ek - emag) > 0.0
            flags[j, i] = 1 if bad else 0
            nbad += 1 if bad else 0
    return nbad


@njit(cache=True, error_model="numpy")
def first_order_faces(W, b1, b2, F1, F2, flags, gamma, iso, cs2, mhd, nhydro, nadv,
                      js, je, is_, ie):
    """Replace the fluxes on every face of a flagged cell by first-order HLLE fluxes
    and flag the neighbours that share those faces (they must be recomputed).

    Flags in the first ghost layer mark flagged cells of the neighbouring tile or
    of the periodic image: the face they share with an interior cell is replaced
    too, so both sides use the same flux (conservative, and bitwise the same on any
    number of tiles)."""
    for j in range(js, je):
        for i in range(is_, ie):
            if flags[j, i] == 1:
                _first_order_flux(W, b1, F1, 1, j, i, gamma, iso, cs2, mhd, nhydro, nadv)
                _first_order_flux(W, b1, F1, 1, j, i + 1, gamma, iso, cs2, mhd, nhydro, nadv)
                _first_order_flux(W, b2, F2, 2, j, i, gamma, iso, cs2, mhd, nhydro, nadv)
                _first_order_flux(W, b2, F2, 2, j + 1, i, gamma, iso, cs2, mhd, nhydro, nadv)
    for j in range(js, je):
        if flags[j, is_ - 1] == 1:
            _first_order_flux(W, b1, F1, 1, j, is_, gamma, iso, cs2, mhd, nhydro, nadv)
        if flags[j, ie] == 1:
            _first_order_flux(W, b1, F1, 1, j, ie, gamma, iso, cs2, mhd, nhydro, nadv)
    for i in range(is_, ie):
        if flags[js - 1, i] == 1:
            _first_order_flux(W, b2, F2, 2, js, i, gamma, iso, cs2, mhd, nhydro, nadv)
        if flags[je, i] == 1:
            _first_order_flux(W, b2, F2, 2, je, i, gamma, iso, cs2, mhd, nhydro, nadv)
    for j in range(js, je):
        for i in range(is_, ie):
            if flags[j, i] == 1:
                for jj, ii in ((j - 1, i), (j + 1, i), (j, i - 1), (j, i + 1)):
                    if js <= jj < je and is_ <= ii < ie and flags[jj, ii] == 0:
                        flags[jj, ii] = 2
    for j in range(js, je):
        if flags[j, is_ - 1] == 1 and flags[j, is_] == 0:
            flags[j, is_] = 2
        if flags[j, ie] == 1 and flags[j, ie - 1] == 0:
            flags[j, ie - 1] = 2
    for i in range(is_, ie):
        if flags[js - 1, i] == 1 and flags[js, i] == 0:
            flags[js, i] = 2
        if flags[je, i] == 1 and flags[je - 1, i] == 0:
            flags[je - 1, i] = 2
