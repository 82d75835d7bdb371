"""Face fluxes of one stage: reconstruct primitive states, then solve Riemann problems.

``sweep1`` fills the axis-1 (R or x) face fluxes ``F1[var, j, i]`` (face ``i``
is the lower face of cell ``i``), ``sweep2`` the axis-2 faces ``F2[var, j, i]``.
For MHD runs the normal field at each face is the face-centred value (``b1``
or ``b2``), as constrained transport requires; the fluxes of the tangential
field are the face electric fields used by ``ct.corner_emf``.  Passive
scalars are upwinded with the mass flux.  Reconstructed states with
non-positive density or pressure fall back to the cell value (first order).
"""
from numba import njit

from ..state import IDN, IV1, IV2, IV3, IPR, IB1, IB2, IB3
from .reconstruct.plm import (limited_slope, G_IDL, G_IDR, G_IDC, G_CL, G_CR,
                              G_DFL, G_DFR)
from .riemann.hlle import hlle
from .riemann.hllc import hllc
from .riemann.hlld import hlld


@njit(cache=True, error_model="numpy")
def riemann(solver, dl, unl, ut1l, ut2l, pl, bt1l, bt2l,
            dr, unr, ut1r, ut2r, pr, bt1r, bt2r, bn, gamma, iso, cs2):
    """Dispatch to the solver with integer id ``solver`` (see riemann.SOLVERS)."""
    if solver == 1:
        return hllc(dl, unl, ut1l, ut2l, pl, bt1l, bt2l,
                    dr, unr, ut1r, ut2r, pr, bt1r, bt2r, bn, gamma, iso, cs2)
    if solver == 2:
        return hlld(dl, unl, ut1l, ut2l, pl, bt1l, bt2l,
                    dr, unr, ut1r, ut2r, pr, bt1r, bt2r, bn, gamma, iso, cs2)
    return hlle(dl, unl, ut1l, ut2l, pl, bt1l, bt2l,
                dr, unr, ut1r, ut2r, pr, bt1r, bt2r, bn, gamma, iso, cs2)


@njit(cache=True, error_model="numpy")
def _positivity_guard(wlo, whi, W, j, k, kk, nv):
    # first order in cell (j, k) (buffer slot kk) if its face values lost positivity
    if wlo[IDN, kk] <= 0.0 or whi[IDN, kk] <= 0.0 or wlo[IPR, kk] <= 0.0 or whi[IPR, kk] <= 0.0:
        for v in range(nv):
            wlo[v, kk] = W[v, j, k]
            whi[v, kk] = W[v, j, k]


@njit(cache=True, error_model="numpy")
def sweep1(W, b1, F, geo, limiter, solver, gamma, iso, cs2, mhd, nscal, iscal,
           j0, j1, f0, f1, wlo, whi):
    """Axis-1 fluxes on rows ``j0 <= j < j1`` and faces ``f0 <= i < f1``.

    ``wlo``/``whi`` are row buffers ``[nvar, nt1]`` for the values at the lower
    and upper face of each cell.
    """
    nv = W.shape[0]
    for j in range(j0, j1):
        for v in range(nv):
            for k in range(f0 - 1, f1):
                s = limited_slope(W[v, j, k - 1], W[v, j, k], W[v, j, k + 1],
                                  geo[G_IDL, k], geo[G_IDR, k], geo[G_IDC, k],
                                  geo[G_CL, k], geo[G_CR, k], limiter)
                wlo[v, k] = W[v, j, k] + s * geo[G_DFL, k]
                whi[v, k] = W[v, j, k] + s * geo[G_DFR, k]
        if limiter != 0:
            for k in range(f0 - 1, f1):
                _positivity_guard(wlo, whi, W, j, k, k, nv)
        for i in range(f0, f1):
            L = i - 1
            R = i
            if mhd:
                bn = b1[j, i]
                f = riemann(solver,
                            whi[IDN, L], whi[IV1, L], whi[IV2, L], whi[IV3, L], whi[IPR, L],
                            whi[IB2, L], whi[IB3, L],
                            wlo[IDN, R], wlo[IV1, R], wlo[IV2, R], wlo[IV3, R], wlo[IPR, R],
                            wlo[IB2, R], wlo[IB3, R], bn, gamma, iso, cs2)
                F[IB1, j, i] = 0.0
                F[IB2, j, i] = f[5]
                F[IB3, j, i] = f[6]
            else:
                f = riemann(solver,
                            whi[IDN, L], whi[IV1, L], whi[IV2, L], whi[IV3, L], whi[IPR, L],
                            0.0, 0.0,
                            wlo[IDN, R], wlo[IV1, R], wlo[IV2, R], wlo[IV3, R], wlo[IPR, R],
                            0.0, 0.0, 0.0, gamma, iso, cs2)
            F[IDN, j, i] = f[0]
            F[IV1, j, i] = f[1]
            F[IV2, j, i] = f[2]
            F[IV3, j, i] = f[3]
            F[IPR, j, i] = f[4]
            for s in range(nscal):
                q = iscal + s
                F[q, j, i] = f[0] * (whi[q, L] if f[0] >= 0.0 else wlo[q, R])


@njit(cache=True, error_model="numpy")
def sweep2(W, b2, F, geo, limiter, solver, gamma, iso, cs2, mhd, nscal, iscal,
           f0, f1, i0, i1, wlo_a, whi_a, wlo_b, whi_b):
    """Axis-2 fluxes on faces ``f0 <= j < f1`` and columns ``i0 <= i < i1``.

    Two pairs of row buffers hold the face values of the cell rows below and
    above the current face, so each cell is reconstructed once.
    """
    nv = W.shape[0]
    lo_prev, hi_prev, lo_cur, hi_cur = wlo_a, whi_a, wlo_b, whi_b
    for j in range(f0 - 1, f1):
        for v in range(nv):
            idl = geo[G_IDL, j]
            idr = geo[G_IDR, j]
            idc = geo[G_IDC, j]
            cl = geo[G_CL, j]
            cr = geo[G_CR, j]
            dfl = geo[G_DFL, j]
            dfr = geo[G_DFR, j]
            for i in range(i0, i1):
                s = limited_slope(W[v, j - 1, i], W[v, j, i], W[v, j + 1, i],
                                  idl, idr, idc, cl, cr, limiter)
                lo_cur[v, i] = W[v, j, i] + s * dfl
                hi_cur[v, i] = W[v, j, i] + s * dfr
        if limiter != 0:
            for i in range(i0, i1):
                _positivity_guard(lo_cur, hi_cur, W, j, i, i, nv)
        if j >= f0:
            for i in range(i0, i1):
                if mhd:
                    bn = b2[j, i]
                    f = riemann(solver,
                                hi_prev[IDN, i], hi_prev[IV2, i], hi_prev[IV1, i],
                                hi_prev[IV3, i], hi_prev[IPR, i], hi_prev[IB1, i],
                                hi_prev[IB3, i],
                                lo_cur[IDN, i], lo_cur[IV2, i], lo_cur[IV1, i],
                                lo_cur[IV3, i], lo_cur[IPR, i], lo_cur[IB1, i],
                                lo_cur[IB3, i], bn, gamma, iso, cs2)
                    F[IB2, j, i] = 0.0
                    F[IB1, j, i] = f[5]
                    F[IB3, j, i] = f[6]
                else:
                    f = riemann(solver,
                                hi_prev[IDN, i], hi_prev[IV2, i], hi_prev[IV1, i],
                                hi_prev[IV3, i], hi_prev[IPR, i], 0.0, 0.0,
                                lo_cur[IDN, i], lo_cur[IV2, i], lo_cur[IV1, i],
                                lo_cur[IV3, i], lo_cur[IPR, i], 0.0, 0.0,
                                0.0, gamma, iso, cs2)
                F[IDN, j, i] = f[0]
                F[IV2, j, i] = f[1]
                F[IV1, j, i] = f[2]
                F[IV3, j, i] = f[3]
                F[IPR, j, i] = f[4]
                for s in range(nscal):
                    q = iscal + s
                    F[q, j, i] = f[0] * (hi_prev[q, i] if f[0] >= 0.0 else lo_cur[q, i])
        lo_prev, lo_cur = lo_cur, lo_prev
        hi_prev, hi_cur = hi_cur, hi_prev
