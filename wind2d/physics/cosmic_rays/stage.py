"""One stage of the cosmic-ray module: transport fluxes and implicit update, fused
into one sweep over rows.

The module acts after the core's cell update of a stage (its ``stage_source``
hook; the gas mass fluxes of the stage are then final, first-order fallback
included).  Row ``r`` of the sweep computes the per-cell values of row ``r +
1``, the interaction coefficients and the slopes across rows of row ``r``,
the axis-2 faces between rows ``r - 1`` and ``r``, the axis-1 faces of row
``r`` (:mod:`.transport`), and then updates row ``r - 1``, whose faces are
now all known (:mod:`.coupling`).  Face fluxes, coefficients and slopes live
in buffers of two or three rows, so a stage reads the primitives and writes
the cells once, without full-grid temporaries (a flux pass and an update pass
would write and read back ten full-grid arrays; cost: tools/bench_cr.py).
The first-order predictor stage skips the slopes.  The flux of E_c is also
written to the face arrays ``F1[iE]``, ``F2[iE]`` for whoever reads them (the
outflow tallies); the other rows of the module's variables in ``F1``, ``F2``
are not used.
"""
from __future__ import annotations

import math

from numba import njit

from ...core.indexing import ONE, u
from .coupling import FOUR_THIRDS, update_row
from .transport import (
    B1,
    B2,
    B3,
    DPAR,
    GRAD,
    D11,
    D22,
    VS,
    cell_row,
    coef_row,
    faces_across,
    faces_along,
    slopes_across,
)


@njit(cache=True, error_model="numpy")
def stage(W, U0, U, F1, F2, dt, limiter, CV, TB, FB1, FB2, S1, S2, R, acc, iE, iF1, iF2, iF3,
          mhd, gamma_c, vm, d_par, d_perp, streaming, stream_coef, reduce, feedback, iso,
          e_floor, tight, rdx1c, rdx2c, dx1, dx2, geo1, geo2, area1, rvol1, vol1,
          js, je, is_, ie):
    """Advance the module's variables of the interior cells from ``U0`` (start of
    the step) into ``U`` over ``dt`` with the stage primitives ``W`` (ghosts
    filled), and exchange momentum and energy with the gas in ``U``.

    ``limiter`` 0 gives the first-order predictor fluxes.  Row buffers:
    ``CV [3, 4, nt1]`` per-cell values, ``TB [2, 8, nt1]`` coefficients
    (slots of :mod:`.transport`), ``FB1 [2, 3, nt1 + 1]``, ``FB2 [2, 3,
    nt1]`` face fluxes (advective part of the flux of E_c, flux of the normal
    component, entropy flux), ``S1 [5, nt1]``, ``S2 [2, 5, nt1]`` slopes,
    ``R [5, nt1]`` and ``acc [2, nt1]`` for the update.  Returns ``(streaming
    heating, energy added by the floor)``, summed over the cells with their
    volumes (per radian in cylindrical geometry).
    """
    ft = gamma_c == FOUR_THIRDS
    vmc = vm * math.sqrt(gamma_c - 1.0)
    vm2c = vm * vm * (gamma_c - 1.0)
    n = u(W.shape[2])
    ja = u(js)
    jb = u(je)
    ia = u(is_)
    ib = u(ie)
    for i in range(ia, ib):
        acc[0, i] = 0.0
        acc[1, i] = 0.0
        R[4, i] = dt / vol1[i]
    for j in range(ja - ONE - ONE, jb + ONE + ONE):
        cell_row(W, CV[j % u(3)], j, n, iE, iF1, iF2, gamma_c, ft)
        if j < ja:
            continue
        r = j - ONE                       # js - 1 <= r <= je: coefficients, slopes
        tb = TB[r % u(2)]
        coef_row(W, r, ia - ONE, ib + ONE, iE, mhd, gamma_c, d_par, d_perp, streaming,
                 stream_coef, rdx1c, rdx2c, tb[B1], tb[B2], tb[B3], tb[DPAR], tb[VS],
                 tb[GRAD], tb[D11], tb[D22])
        if limiter != 0:
            slopes_across(W, CV, S2, r, ia, ib, iE, iF2, geo2, limiter)
        if r < ja:
            continue
        faces_across(W, F2, CV, S2, TB, FB2[r % u(2)], r, ia, ib, iE, iF2, geo2, dx2, vm,
                     vmc, vm2c, reduce, limiter == 0)
        if r < jb:
            faces_along(W, F1, CV, S1, TB, FB1[r % u(2)], r, ia, ib, iE, iF1, geo1, dx1,
                        limiter, vm, vmc, vm2c, reduce)
        if r > ja:
            q = r - ONE                   # every face of row r - 1 is known
            update_row(W, U0, U, F1, F2, q, dt, ia, ib, FB1[q % u(2)], FB2[q % u(2)],
                       FB2[r % u(2)], TB[q % u(2)], R, acc, iE, gamma_c, vm, d_perp,
                       feedback, iso, e_floor, tight, area1, rvol1, vol1, dx2)
    heat = 0.0
    added = 0.0
    for i in range(ia, ib):
        heat += acc[0, i]
        added += acc[1, i]
    return heat, added
