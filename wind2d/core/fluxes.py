"""Face fluxes of one stage: reconstruct primitive states, then solve Riemann problems.

``sweep1`` fills the axis-1 (R or x) face fluxes ``F1[var, j, i]`` (face ``i``
is the lower face of cell ``i``), ``sweep2`` the axis-2 faces ``F2[var, j, i]``.
For MHD runs the normal field at each face is the face-centred value (``b1``
or ``b2``), as constrained transport requires; the fluxes of the tangential
field are the face electric fields used by ``ct.corner_emf``.  Passive
scalars are upwinded with the mass flux.  Reconstructed states with
non-positive density or pressure fall back to the cell value (first order).

Both sweeps first reconstruct a row into face-state buffers ``WL[v, i]``,
``WR[v, i]`` (left and right state of face ``i``) and then call
``solve_row``, which picks the solver once per row: a solver chosen inside
the face loop stops the compiler from inlining it (measured 10x slower).
Loops use unsigned indices (see ``indexing.py``).
"""
from numba import njit

from ..state import IDN, IV1, IV2, IV3, IPR, IB1, IB2, IB3
from .indexing import ONE, u
from .reconstruct.plm import (limited_slope, G_IDL, G_IDR, G_IDC, G_CL, G_CR,
                              G_DFL, G_DFR)
from .riemann.hlle import hlle
from .riemann.hllc import hllc
from .riemann.hlld import hlld


@njit(cache=True, error_model="numpy")
def solve_row(solver, WL, WR, b, F, G, j, f0, f1, iN, iT, iBN, iBT, mhd, gamma, iso, cs2,
              nscal, iscal):
    """Riemann fluxes of faces ``f0 <= i < f1`` of row ``j`` from the face states.

    ``iN``/``iT`` are the normal and in-plane tangential velocity slots,
    ``iBN``/``iBT`` the same for the field; ``b[j, i]`` is the face normal field.
    The solver loop writes the 7 flux components in solver order to the row
    buffer ``G[7, :]``; a second loop scatters them to the variable slots of
    ``F``.  (Scattering inside the HLLD loop measured five times slower.)
    """
    jr = u(j)
    ia = u(f0)
    ib = u(f1)
    if solver == 1:
        for i in range(ia, ib):
            f = hllc(WL[IDN, i], WL[iN, i], WL[iT, i], WL[IV3, i], WL[IPR, i], 0.0, 0.0,
                     WR[IDN, i], WR[iN, i], WR[iT, i], WR[IV3, i], WR[IPR, i], 0.0, 0.0,
                     0.0, gamma, iso, cs2)
            for k in range(7):
                G[k, i] = f[k]
    elif solver == 2:
        for i in range(ia, ib):
            f = hlld(WL[IDN, i], WL[iN, i], WL[iT, i], WL[IV3, i], WL[IPR, i],
                     WL[iBT, i], WL[IB3, i],
                     WR[IDN, i], WR[iN, i], WR[iT, i], WR[IV3, i], WR[IPR, i],
                     WR[iBT, i], WR[IB3, i], b[jr, i], gamma, iso, cs2)
            for k in range(7):
                G[k, i] = f[k]
    elif mhd:
        for i in range(ia, ib):
            f = hlle(WL[IDN, i], WL[iN, i], WL[iT, i], WL[IV3, i], WL[IPR, i],
                     WL[iBT, i], WL[IB3, i],
                     WR[IDN, i], WR[iN, i], WR[iT, i], WR[IV3, i], WR[IPR, i],
                     WR[iBT, i], WR[IB3, i], b[jr, i], gamma, iso, cs2)
            for k in range(7):
                G[k, i] = f[k]
    else:
        for i in range(ia, ib):
            f = hlle(WL[IDN, i], WL[iN, i], WL[iT, i], WL[IV3, i], WL[IPR, i], 0.0, 0.0,
                     WR[IDN, i], WR[iN, i], WR[iT, i], WR[IV3, i], WR[IPR, i], 0.0, 0.0,
                     0.0, gamma, iso, cs2)
            for k in range(7):
                G[k, i] = f[k]
    for i in range(ia, ib):
        F[IDN, jr, i] = G[0, i]
        F[iN, jr, i] = G[1, i]
        F[iT, jr, i] = G[2, i]
        F[IV3, jr, i] = G[3, i]
        F[IPR, jr, i] = G[4, i]
    if mhd:
        for i in range(ia, ib):
            F[iBN, jr, i] = 0.0
            F[iBT, jr, i] = G[5, i]
            F[IB3, jr, i] = G[6, i]
    # passive scalars: upwinded with the mass flux (kept out of the solver loops,
    # where a loop of run-time length made them several times slower)
    for s in range(nscal):
        q = iscal + s
        for i in range(ia, ib):
            F[q, jr, i] = F[IDN, jr, i] * (WL[q, i] if F[IDN, jr, i] >= 0.0 else WR[q, i])


@njit(cache=True, error_model="numpy", inline="always")
def _unphysical(d0, d1, p0, p1):
    return d0 <= 0.0 or d1 <= 0.0 or p0 <= 0.0 or p1 <= 0.0


@njit(cache=True, error_model="numpy")
def sweep1(W, b1, F, geo, limiter, solver, gamma, iso, cs2, mhd, nscal, iscal,
           j0, j1, f0, f1, WL, WR, G):
    """Axis-1 fluxes on rows ``j0 <= j < j1`` and faces ``f0 <= i < f1``.

    ``WL``/``WR`` are row buffers ``[nvar, nt1 + 1]``: cell ``k`` writes its
    lower-face value to ``WR[:, k]`` and its upper-face value to ``WL[:, k+1]``.
    """
    nv = iscal + nscal          # gas and scalars; module variables have their own fluxes
    k0 = u(f0) - ONE
    k1 = u(f1)
    for j in range(u(j0), u(j1)):
        for v in range(nv):
            for k in range(k0, k1):
                s = limited_slope(W[v, j, k - ONE], W[v, j, k], W[v, j, k + ONE],
                                  geo[G_IDL, k], geo[G_IDR, k], geo[G_IDC, k],
                                  geo[G_CL, k], geo[G_CR, k], limiter)
                WR[v, k] = W[v, j, k] + s * geo[G_DFL, k]
                WL[v, k + ONE] = W[v, j, k] + s * geo[G_DFR, k]
        if limiter != 0:
            for k in range(k0, k1):
                if _unphysical(WR[IDN, k], WL[IDN, k + ONE], WR[IPR, k], WL[IPR, k + ONE]):
                    for v in range(nv):
                        WR[v, k] = W[v, j, k]
                        WL[v, k + ONE] = W[v, j, k]
        solve_row(solver, WL, WR, b1, F, G, j, f0, f1, IV1, IV2, IB1, IB2, mhd, gamma, iso, cs2,
                  nscal, iscal)


@njit(cache=True, error_model="numpy")
def sweep2(W, b2, F, geo, limiter, solver, gamma, iso, cs2, mhd, nscal, iscal,
           f0, f1, i0, i1, WL, WR, S, G):
    """Axis-2 fluxes on faces ``f0 <= j < f1`` and columns ``i0 <= i < i1``.

    For each cell row ``j`` the slopes go to ``S``; the lower-face values fill
    ``WR`` (right states of face ``j``), the face is solved against ``WL``
    (upper-face values of row ``j - 1``), then ``WL`` takes row ``j``'s upper
    faces.  Each cell is reconstructed once.
    """
    nv = iscal + nscal          # gas and scalars; module variables have their own fluxes
    ia = u(i0)
    ib = u(i1)
    for j in range(u(f0) - ONE, u(f1)):
        idl = geo[G_IDL, j]
        idr = geo[G_IDR, j]
        idc = geo[G_IDC, j]
        cl = geo[G_CL, j]
        cr = geo[G_CR, j]
        dfl = geo[G_DFL, j]
        dfr = geo[G_DFR, j]
        for v in range(nv):
            for i in range(ia, ib):
                S[v, i] = limited_slope(W[v, j - ONE, i], W[v, j, i], W[v, j + ONE, i],
                                        idl, idr, idc, cl, cr, limiter)
        if limiter != 0:
            for i in range(ia, ib):
                if _unphysical(W[IDN, j, i] + S[IDN, i] * dfl, W[IDN, j, i] + S[IDN, i] * dfr,
                               W[IPR, j, i] + S[IPR, i] * dfl, W[IPR, j, i] + S[IPR, i] * dfr):
                    for v in range(nv):
                        S[v, i] = 0.0
        if j >= u(f0):
            for v in range(nv):
                for i in range(ia, ib):
                    WR[v, i] = W[v, j, i] + S[v, i] * dfl
            solve_row(solver, WL, WR, b2, F, G, j, ia, ib, IV2, IV1, IB2, IB1, mhd, gamma, iso,
                      cs2, nscal, iscal)
        for v in range(nv):
            for i in range(ia, ib):
                WL[v, i] = W[v, j, i] + S[v, i] * dfr
