"""Cosmic-ray transport: interaction coefficients and HLL face fluxes of (E_c, F_c).

Two-moment system (Jiang & Oh 2018, ApJ 854, 5; equations from memory), in
code units with the reduced maximum speed ``V_m``::

    dE_c/dt + div F_c                 = -(v + v_s) . sigma . [F_c - (E_c + P_c) v]
    (1/V_m^2) dF_c/dt + grad P_c      = -sigma . [F_c - (E_c + P_c) v]

with ``P_c = (gamma_c - 1) E_c`` (isotropic pressure tensor ``P_c I``).

Interaction coefficient
-----------------------
``sigma`` is stored through its inverse ``D = sigma^-1`` (a diffusivity,
cm^2 s^-1 in CGS; finite where sigma is infinite):

* along the field ``D_par = 3 kappa_par + v_st (E_c + P_c) / |b . grad P_c|``
  (diffusion and streaming add as mean free paths; either term is absent
  when switched off);
* across the field ``D_perp = 3 kappa_perp`` (zero when kappa_perp = 0: no transport
  across B);
* without a field ``D_par = D_perp = 3 kappa`` (isotropic diffusion).

With the ``(1/V_m^2) dF/dt`` form above, the quasi-steady flux is
``F_c = (E_c + P_c) v - sigma^-1 grad P_c``, i.e. ``-(gamma_c - 1) D grad E_c``:
for gamma_c = 4/3 the diffusion limit ``F_c = -kappa grad E_c`` needs
``sigma_d = 1/(3 kappa)`` (derived here, [C-derivation] in methods.md item 5).
No ``V_m`` enters sigma in this form; ``V_m`` appears in the dimensionless
optical depth of a cell, ``tau = V_m dx sigma = V_m dx / D`` (the radiation
analogue ``sigma_rad = V_m sigma`` per unit length).  The relaxation time of
the flux is ``D / V_m^2``.

Streaming runs at ``v_st = f_s |B| / sqrt(chi rho)`` (ion Alfven speed with
ionised fraction ``chi``, speed factor ``f_s``; Heaviside-Lorentz field),
down the gradient along the field: ``v_s = -v_st b sgn(b . grad P_c)``.
The gradient is the central difference of the cell values.  ``D_par`` is
capped at ``D_MAX`` where ``b . grad P_c`` vanishes (free streaming).

Fluxes
------
HLL with symmetric signal speeds ``-S, +S`` along each axis for the normal
component ``F_n`` of the flux (the tangential components carry no flux for an
isotropic pressure tensor; their exact Riemann flux, a stationary jump, is
zero).  The energy flux is split into its advective part ``(E_c + P_c) v``
and the comoving part ``f_n = F_n - gamma_c E_c v_n`` (diffusion, streaming)::

    flux(E_c) = m (gamma_c E_c / rho)_upwind + (f_n,L + f_n,R)/2 - (S/2) (E_R - E_L)
    flux(F_n) = V_m^2 (gamma_c - 1) (E_L + E_R)/2 - (S/2) (F_n,R - F_n,L)

where ``m`` is the gas mass flux of the face from the core's Riemann solver
and the specific enthalpy is upwinded with it, as the core advects passive
scalars.  Our choice: with the advective flux from cell velocities instead,
tightly coupled cosmic rays do not move with the gas where the face mass
flux and the cell velocities differ (next to a wall of a hydrostatic
atmosphere they pile up by several per cent).  Both forms are consistent
with ``F_c``; they differ by O(dx^2) in smooth flow.

The transport subsystem has speeds ``+-V_m sqrt(gamma_c - 1)``
(``V_m/sqrt(3)``).  In optically thick cells the HLL dissipation
``S dx / 2`` would exceed the physical diffusivity (it grows like
``tau kappa``), so the speed is reduced with the optical depth of the face
(following the idea of Jiang & Oh 2018, from memory: they reduce the speed
by a function of the cell optical depth; the form below is our choice)::

    S = V_m sqrt(gamma_c - 1) / (1 + tau)

with ``tau`` the mean of the two neighbours' ``V_m dx / D_nn``, ``D_nn`` the
diagonal component of the tensor ``D`` along the axis (``D_nn = 0``, e.g.
across the field, gives ``tau = inf`` and no dissipation).  ``1/(1 + tau)``
has the limits of the radiation-transport factor ``(1 - e^-tau)/tau`` (1
when thin, ``1/tau`` when thick) without an exponential, so the face loops
vectorise.  The numerical diffusivity ``S dx / 2`` is then at most
``(sqrt(3)/2) kappa`` times the relative face jump, which is O(dx^2) for
smooth data with piecewise-linear reconstruction: the scheme stays second
order in the diffusion limit and its answer does not grow with ``V_m``.
Face values of ``E_c``, ``F_n``, ``f_n`` and ``gamma_c E_c / rho`` are
piecewise linear (the core's limiter), first order where a face value of
``E_c`` would be negative.

Implementation
--------------
One sweep over rows per stage (:func:`stage_fluxes`) computes the per-cell
values, the coefficients, the slopes and the fluxes of both axes, keeping
only a few rows of intermediate values (no full-grid temporaries besides what
the update after the core's cell update reads).  Every inner loop runs over
``i``, is branch-free and touches few arrays, so that numba vectorises it
(measured with LLVM's vectoriser remarks).  Things that stopped it: too many
distinct arrays written and read in one loop (the run-time overlap checks
exceed the compiler's budget: split such loops through row buffers); a
loop-invariant flag whose untaken branch holds a library call (``pow``),
which the compiler may evaluate in every cell (test such flags outside the
loop); and choosing the upwind value by a ternary over two expressions of
the same shape, which the compiler turns into a gather of the upwind cell
(compute both values first, then choose).
"""
from __future__ import annotations

import math

from numba import njit

from ...core.indexing import ONE, u
from ...core.reconstruct.plm import (
    G_CL,
    G_CR,
    G_DFL,
    G_DFR,
    G_IDC,
    G_IDL,
    G_IDR,
    limited_slope,
)
from ...state import IB1, IB2, IB3, IDN, IV1, IV2

# slots of the coefficient array C[k, j, i]
CB1, CB2, CB3, CDPAR, CVS, CGRAD, CTAU1, CTAU2 = range(8)
NCOEF = 8
D_MAX = 1e100          # cap of D_par where b . grad P_c vanishes (free streaming)


@njit(cache=True, error_model="numpy", inline="always")
def _coef_row(W, j, i0, i1, iE, mhd, gamma_c, vm, d_par, d_perp, streaming, stream_coef,
              rdx1c, rdx2c, dx1, dx2, b1r, b2r, b3r, dpr, vsr, gr, t1r, t2r):
    # interaction coefficients of row j, cells i0 <= i < i1 (see interaction), into
    # the rows b1r, b2r, b3r (unit field vector), dpr, vsr, gr, t1r, t2r
    gm1 = gamma_c - 1.0
    rmax = 1.0 / D_MAX
    rz = gm1 * rdx2c[j]
    if not mhd:
        for i in range(i0, i1):
            b1r[i] = 1.0
            b2r[i] = 0.0
            b3r[i] = 0.0
            dpr[i] = d_par
            vsr[i] = 0.0
            gr[i] = 0.0
            t1r[i] = vm * dx1[i] / d_par
            t2r[i] = vm * dx2[j] / d_par
        return
    if streaming:
        for i in range(i0, i1):
            b1 = W[IB1, j, i]
            b2 = W[IB2, j, i]
            b3 = W[IB3, j, i]
            bb = math.sqrt(b1 * b1 + b2 * b2 + b3 * b3)
            has = bb > 0.0
            rb = 1.0 / (bb if has else 1.0)
            n1 = b1 * rb if has else 1.0
            n2 = b2 * rb
            n3 = b3 * rb
            g1 = gm1 * (W[iE, j, i + ONE] - W[iE, j, i - ONE]) * rdx1c[i]
            g2 = (W[iE, j + ONE, i] - W[iE, j - ONE, i]) * rz
            gb = n1 * g1 + n2 * g2
            vst = stream_coef * bb / math.sqrt(W[IDN, j, i])
            e = W[iE, j, i]
            num = vst * gamma_c * (e if e > 0.0 else 0.0)
            dp = d_par + num / (abs(gb) + num * rmax + 1e-300)
            b1r[i] = n1
            b2r[i] = n2
            b3r[i] = n3
            dpr[i] = dp
            vsr[i] = -vst if gb > 0.0 else (vst if gb < 0.0 else 0.0)
            gr[i] = gb
            t1r[i] = vm * dx1[i] / (d_perp + (dp - d_perp) * n1 * n1)
            t2r[i] = vm * dx2[j] / (d_perp + (dp - d_perp) * n2 * n2)
        return
    for i in range(i0, i1):
        b1 = W[IB1, j, i]
        b2 = W[IB2, j, i]
        b3 = W[IB3, j, i]
        bb = math.sqrt(b1 * b1 + b2 * b2 + b3 * b3)
        has = bb > 0.0
        rb = 1.0 / (bb if has else 1.0)
        n1 = b1 * rb if has else 1.0
        n2 = b2 * rb
        n3 = b3 * rb
        g1 = gm1 * (W[iE, j, i + ONE] - W[iE, j, i - ONE]) * rdx1c[i]
        g2 = (W[iE, j + ONE, i] - W[iE, j - ONE, i]) * rz
        b1r[i] = n1
        b2r[i] = n2
        b3r[i] = n3
        dpr[i] = d_par
        vsr[i] = 0.0
        gr[i] = n1 * g1 + n2 * g2
        t1r[i] = vm * dx1[i] / (d_perp + (d_par - d_perp) * n1 * n1)
        t2r[i] = vm * dx2[j] / (d_perp + (d_par - d_perp) * n2 * n2)


@njit(cache=True, error_model="numpy")
def interaction(W, C, iE, mhd, gamma_c, vm, d_par, d_perp, streaming, stream_coef,
                rdx1c, rdx2c, dx1, dx2, j0, j1, i0, i1):
    """Interaction coefficients of cells ``j0 <= j < j1``, ``i0 <= i < i1``.

    Fills ``C[CB1:CB3+1]`` (unit field vector; (1, 0, 0) where B = 0),
    ``C[CDPAR]`` (``D = 1/sigma`` along the field; across it ``D = d_perp``),
    ``C[CVS]`` (signed streaming speed along ``b``: ``v_s = C[CVS] b``),
    ``C[CGRAD]`` (``b . grad P_c``) and ``C[CTAU1]``, ``C[CTAU2]``, the optical
    depths ``V_m dx_k / D_kk`` of the cell along each axis (``inf`` where
    ``D_kk = 0``).  ``d_par = 3 kappa_par``, ``d_perp = 3 kappa_perp`` (code
    units, 0 when off); ``stream_coef = f_s / sqrt(chi)``; ``rdx1c[i] =
    1/(x_{i+1} - x_{i-1})`` (centres).  Needs one ring of neighbours.  The
    streaming part ``v_st (E_c + P_c) / |b . grad P_c|`` is evaluated as
    ``num / (|g| + num / D_MAX + tiny)``: finite, at most ``D_MAX``.
    (:func:`stage_fluxes` computes the same row by row inside its sweep.)
    """
    for j in range(u(j0), u(j1)):
        _coef_row(W, j, u(i0), u(i1), iE, mhd, gamma_c, vm, d_par, d_perp, streaming,
                  stream_coef, rdx1c, rdx2c, dx1, dx2, C[CB1, j], C[CB2, j], C[CB3, j],
                  C[CDPAR, j], C[CVS, j], C[CGRAD, j], C[CTAU1, j], C[CTAU2, j])


@njit(cache=True, error_model="numpy", inline="always")
def entropy(e, gamma_c, four_thirds):
    """Cosmic-ray entropy ``max(E_c, 0)^(1/gamma_c)``; for gamma_c = 4/3 as
    ``sqrt(E sqrt(E))`` (vectorises, unlike ``pow``)."""
    e = e if e > 0.0 else 0.0
    if four_thirds:
        return math.sqrt(e * math.sqrt(e))
    return e ** (1.0 / gamma_c)


@njit(cache=True, error_model="numpy", inline="always")
def _cell_row(W, V, j, n, iE, iF1, iF2, gamma_c, ft):
    # per-cell values of row j that the faces reconstruct: V[0] specific entropy
    # E_c^(1/gamma_c) / rho, V[1] specific enthalpy gamma_c E_c / rho, V[2], V[3]
    # comoving fluxes F_k - gamma_c E_c v_k.  The test of ft is outside the loops
    # (inside, the compiler may evaluate the pow of the other branch in every cell).
    if ft:
        for i in range(u(0), n):
            V[0, i] = entropy(W[iE, j, i], gamma_c, True) / W[IDN, j, i]
    else:
        for i in range(u(0), n):
            V[0, i] = entropy(W[iE, j, i], gamma_c, False) / W[IDN, j, i]
    for i in range(u(0), n):
        e = W[iE, j, i]
        ge = gamma_c * e
        V[1, i] = ge / W[IDN, j, i]
        V[2, i] = W[iF1, j, i] - ge * W[IV1, j, i]
        V[3, i] = W[iF2, j, i] - ge * W[IV2, j, i]


@njit(cache=True, error_model="numpy", inline="always")
def _start_row(W, S0, j, i0, i1, iE, gamma_c, ft):
    # the entropy E_c^(1/gamma_c) at the start of the step
    if ft:
        for i in range(i0, i1):
            S0[j, i] = entropy(W[iE, j, i], gamma_c, True)
    else:
        for i in range(i0, i1):
            S0[j, i] = entropy(W[iE, j, i], gamma_c, False)


@njit(cache=True, error_model="numpy", inline="always")
def _slopes_x(x, k0, k1, geo, limiter, S, v):
    # limited slopes along a row x[k], k0 <= k < k1, into S[v, k]; one loop per
    # limiter so that the loop body has no branch
    if limiter == 1:
        for k in range(k0, k1):
            S[v, k] = limited_slope(x[k - ONE], x[k], x[k + ONE], geo[G_IDL, k],
                                    geo[G_IDR, k], geo[G_IDC, k], geo[G_CL, k], geo[G_CR, k], 1)
    elif limiter == 2:
        for k in range(k0, k1):
            S[v, k] = limited_slope(x[k - ONE], x[k], x[k + ONE], geo[G_IDL, k],
                                    geo[G_IDR, k], geo[G_IDC, k], geo[G_CL, k], geo[G_CR, k], 2)
    elif limiter == 3:
        for k in range(k0, k1):
            S[v, k] = limited_slope(x[k - ONE], x[k], x[k + ONE], geo[G_IDL, k],
                                    geo[G_IDR, k], geo[G_IDC, k], geo[G_CL, k], geo[G_CR, k], 3)
    else:
        for k in range(k0, k1):
            S[v, k] = 0.0


@njit(cache=True, error_model="numpy", inline="always")
def _slopes_y(xm, x0, xp, i0, i1, idl, idr, idc, cl, cr, limiter, S, v):
    # limited slopes across rows (xm below, x0, xp above), i0 <= i < i1, into S[v, i]
    if limiter == 1:
        for i in range(i0, i1):
            S[v, i] = limited_slope(xm[i], x0[i], xp[i], idl, idr, idc, cl, cr, 1)
    elif limiter == 2:
        for i in range(i0, i1):
            S[v, i] = limited_slope(xm[i], x0[i], xp[i], idl, idr, idc, cl, cr, 2)
    elif limiter == 3:
        for i in range(i0, i1):
            S[v, i] = limited_slope(xm[i], x0[i], xp[i], idl, idr, idc, cl, cr, 3)
    else:
        for i in range(i0, i1):
            S[v, i] = 0.0


@njit(cache=True, error_model="numpy", inline="always")
def _face(e0, f0, g0, h0, s0, e1, f1, g1, h1, s1, le, lf, lg, lh, ls, re, rf, rg, rh, rs,
          dfr, dfl, m, S, vm2c):
    """Fluxes of one face from the left cell values (``e0`` E_c, ``f0`` F_n, ``g0``
    comoving flux, ``h0`` specific enthalpy, ``s0`` specific entropy), the right
    ones, the left cell's slopes ``le ... ls`` and the right cell's ``re ... rs``;
    ``m`` the gas mass flux.  Returns the flux of E_c, its advective part, the
    flux of F_n and the entropy flux.  Branch-free (selects only)."""
    EL = e0 + le * dfr
    ER = e1 + re * dfl
    o = 0.0 if (EL < 0.0) | (ER < 0.0) else 1.0   # first order where a face E_c < 0
    EL = e0 + o * le * dfr
    ER = e1 + o * re * dfl
    FL = f0 + o * lf * dfr
    FR = f1 + o * rf * dfl
    gL = g0 + o * lg * dfr
    gR = g1 + o * rg * dfl
    # both face values first, then the upwind choice (computed inside the branches,
    # the compiler merges the two loads into a gather of the upwind cell)
    hL = h0 + o * lh * dfr
    hR = h1 + o * rh * dfl
    sL = s0 + ls * dfr
    sR = s1 + rs * dfl
    up = m >= 0.0
    adv = m * (hL if up else hR)
    ent = m * (sL if up else sR)
    fe = adv + 0.5 * (gL + gR) - 0.5 * S * (ER - EL)
    ff = vm2c * (0.5 * (EL + ER)) - 0.5 * S * (FR - FL)
    return fe, adv, ff, ent


@njit(cache=True, error_model="numpy")
def stage_fluxes(W, F1, F2, limiter, first, C, CV, TB, S0, PF, A1, G1, A2, G2, S1, S2, iE,
                 iF1, iF2, mhd, gamma_c, vm, d_par, d_perp, streaming, stream_coef, reduce,
                 rdx1c, rdx2c, dx1, dx2, geo1, geo2, js, je, is_, ie):
    """Everything a stage needs before the core's cell update, in one sweep over rows.

    Per row: the per-cell values the faces reconstruct (``CV[row % 3]``: specific
    entropy ``E_c^(1/gamma_c) / rho``, specific enthalpy ``gamma_c E_c / rho``,
    comoving fluxes ``F_k - gamma_c E_c v_k``; three rows kept), on the first
    stage the start entropy ``S0`` (interior), the interaction
    coefficients (:func:`interaction`, one ring of ghosts; into ``C`` the slots
    ``CDPAR`` and ``CVS`` that :func:`~.coupling.stage_update` needs, the optical
    depths of two rows into ``TB`` ``[2, 6, nt1]``, whose other rows take what
    the step does not keep), the limited slopes (``S1`` ``[5, nt1]`` along the
    row, ``S2`` ``[2, 5, nt1]`` across rows, two rows kept) and the face fluxes:

    * axis 1 (R or x), rows ``js <= j < je``, faces ``is_ <= i <= ie``:
      ``F1[iE]`` the flux of E_c (needs the gas mass flux in ``F1[0]``, the
      core's), ``A1`` its advective part, ``G1`` the flux of the entropy
      ``E_c^(1/gamma_c)``, ``PF`` the flux of ``F_1`` (applied by
      :func:`~.coupling.stage_update` in pressure-balanced form);
    * axis 2 (z or y), faces ``js <= j <= je``, columns ``is_ <= i < ie``:
      ``F2[iE]``, ``F2[iF2]`` (plain divergence), ``A2``, ``G2``.

    The other flux rows of the three components (``F1[iF1]``, ``F1[iF2]``,
    ``F1[iF3]``, ``F2[iF1]``, ``F2[iF3]``) must be zero; the module zeroes them
    once when it is attached (nothing else writes them).  Every inner loop
    runs over ``i`` and touches few arrays, so that it vectorises.
    """
    ft = gamma_c == 4.0 / 3.0
    vmc = vm * math.sqrt(gamma_c - 1.0)
    vm2c = vm * vm * (gamma_c - 1.0)
    n = u(W.shape[2])
    WE = W[iE]
    WF1 = W[iF1]
    WF2 = W[iF2]
    ja = u(js)
    jb = u(je)
    ia = u(is_)
    ib = u(ie)
    for j in range(ja - ONE - ONE, jb + ONE + ONE):
        _cell_row(W, CV[j % u(3)], j, n, iE, iF1, iF2, gamma_c, ft)
        if first and ja <= j and j < jb:
            _start_row(W, S0, j, ia, ib, iE, gamma_c, ft)
        if j < ja:
            continue
        r = j - ONE                       # js - 1 <= r <= je: coefficients, slopes
        tb = TB[r % u(2)]
        _coef_row(W, r, ia - ONE, ib + ONE, iE, mhd, gamma_c, vm, d_par, d_perp, streaming,
                  stream_coef, rdx1c, rdx2c, dx1, dx2, tb[3], tb[4], tb[5], C[CDPAR, r],
                  C[CVS, r], tb[2], tb[0], tb[1])
        vm_ = CV[(r - ONE) % u(3)]
        v0 = CV[r % u(3)]
        vp = CV[j % u(3)]
        cur = S2[r % u(2)]
        low = S2[(r + ONE) % u(2)]        # slopes of row r - 1
        idl = geo2[G_IDL, r]
        idr = geo2[G_IDR, r]
        idc = geo2[G_IDC, r]
        cl = geo2[G_CL, r]
        cr = geo2[G_CR, r]
        _slopes_y(WE[r - ONE], WE[r], WE[j], ia, ib, idl, idr, idc, cl, cr, limiter, cur, 0)
        _slopes_y(WF2[r - ONE], WF2[r], WF2[j], ia, ib, idl, idr, idc, cl, cr, limiter, cur,
                  1)
        _slopes_y(vm_[3], v0[3], vp[3], ia, ib, idl, idr, idc, cl, cr, limiter, cur, 2)
        _slopes_y(vm_[1], v0[1], vp[1], ia, ib, idl, idr, idc, cl, cr, limiter, cur, 3)
        _slopes_y(vm_[0], v0[0], vp[0], ia, ib, idl, idr, idc, cl, cr, limiter, cur, 4)
        if r < ja:
            continue
        # axis-2 faces between rows r - 1 and r
        rl = r - ONE
        dfr = geo2[G_DFR, rl]
        dfl = geo2[G_DFL, r]
        el = WE[rl]
        er = WE[r]
        fl = WF2[rl]
        fr = WF2[r]
        taul = TB[rl % u(2), 1]
        taur = tb[1]
        m2 = F2[IDN, r]
        for i in range(ia, ib):
            sp = vmc / (1.0 + 0.5 * (taul[i] + taur[i])) if reduce else vmc
            fe, adv, ff, ent = _face(
                el[i], fl[i], vm_[3, i], vm_[1, i], vm_[0, i],
                er[i], fr[i], v0[3, i], v0[1, i], v0[0, i],
                low[0, i], low[1, i], low[2, i], low[3, i], low[4, i],
                cur[0, i], cur[1, i], cur[2, i], cur[3, i], cur[4, i],
                dfr, dfl, m2[i], sp, vm2c)
            F2[iE, r, i] = fe
            A2[r, i] = adv
            F2[iF2, r, i] = ff
            G2[r, i] = ent
        if r == jb:
            continue
        # axis-1 faces of row r
        e = WE[r]
        f = WF1[r]
        _slopes_x(e, ia - ONE, ib + ONE, geo1, limiter, S1, 0)
        _slopes_x(f, ia - ONE, ib + ONE, geo1, limiter, S1, 1)
        _slopes_x(v0[2], ia - ONE, ib + ONE, geo1, limiter, S1, 2)
        _slopes_x(v0[1], ia - ONE, ib + ONE, geo1, limiter, S1, 3)
        _slopes_x(v0[0], ia - ONE, ib + ONE, geo1, limiter, S1, 4)
        tau = tb[0]
        m1 = F1[IDN, r]
        for i in range(ia, ib + ONE):
            il = i - ONE
            sp = vmc / (1.0 + 0.5 * (tau[il] + tau[i])) if reduce else vmc
            fe, adv, ff, ent = _face(
                e[il], f[il], v0[2, il], v0[1, il], v0[0, il],
                e[i], f[i], v0[2, i], v0[1, i], v0[0, i],
                S1[0, il], S1[1, il], S1[2, il], S1[3, il], S1[4, il],
                S1[0, i], S1[1, i], S1[2, i], S1[3, i], S1[4, i],
                geo1[G_DFR, il], geo1[G_DFL, i], m1[i], sp, vm2c)
            F1[iE, r, i] = fe
            A1[r, i] = adv
            PF[r, i] = ff
            G1[r, i] = ent


@njit(cache=True, error_model="numpy")
def tight_signal_rate(W, iE, gamma, iso, cs2, gamma_c, mhd, dx1, dx2, js, je, is_, ie):
    """Largest ``max(|v_k| + c, gamma_c |v_k|) / dx_k`` with the composite speed
    ``c^2 = (gamma p + gamma_c P_c + B^2) / rho`` (an upper bound of the fast speed)."""
    smax = 0.0
    gm1c = gamma_c - 1.0
    for j in range(u(js), u(je)):
        for i in range(u(is_), u(ie)):
            d = W[IDN, j, i]
            p = cs2 * d if iso else gamma * W[4, j, i]
            e = W[iE, j, i]
            c2 = p + gamma_c * gm1c * (e if e > 0.0 else 0.0)
            if mhd:
                c2 += W[IB1, j, i] ** 2 + W[IB2, j, i] ** 2 + W[IB3, j, i] ** 2
            c = math.sqrt(c2 / d)
            a1 = abs(W[IV1, j, i])
            a2 = abs(W[IV2, j, i])
            s1 = max(a1 + c, gamma_c * a1) / dx1[i]
            s2 = max(a2 + c, gamma_c * a2) / dx2[j]
            s = s1 if s1 > s2 else s2
            if s > smax:
                smax = s
    return smax
