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
across the field, gives ``tau = inf`` and no dissipation; :func:`_speed`
evaluates it with one division per face).  ``1/(1 + tau)``
has the limits of the radiation-transport factor ``(1 - e^-tau)/tau`` (1
when thin, ``1/tau`` when thick) without an exponential, so the face loops
vectorise.  The numerical diffusivity ``S dx / 2`` is then at most
``(sqrt(3)/2) kappa`` times the relative face jump, which is O(dx^2) for
smooth data with piecewise-linear reconstruction: the scheme stays second
order in the diffusion limit and its answer does not grow with ``V_m``.
Face values of ``E_c``, ``F_n``, ``f_n`` and ``gamma_c E_c / rho`` are
piecewise linear (the core's limiter), first order where a face value of
``E_c`` would be negative; in the predictor stage first order (no slopes).

Implementation
--------------
Row functions, called by the sweep of a stage (:func:`~.stage.stage`): the
per-cell values of a row (:func:`cell_row`), its coefficients
(:func:`coef_row`), the slopes across rows (:func:`slopes_across`) and the
fluxes of the axis-2 faces below a row (:func:`faces_across`) and of the
axis-1 faces of a row (:func:`faces_along`), into buffers of a few rows.
Every inner loop runs over ``i`` (unsigned indices, ``core.indexing``), is
branch-free and touches few arrays, so that numba vectorises it (checked in
the generated assembly: vector instructions on the wide registers).  Things
that stopped it: too many distinct arrays written and read in one loop (the
run-time overlap checks exceed the compiler's budget: split such loops through
row buffers); a loop-invariant flag whose untaken branch holds a library call
(``pow``), which the compiler may evaluate in every cell (test such flags
outside the loop); choosing the upwind value by a ternary over two
expressions of the same shape, which the compiler turns into a gather of the
upwind cell (compute both values first, then choose); and signed loop indices
(numba's wrap-around test for negative indices).
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

# slots of the coefficient array C[k, j, i] (interaction) and of the row buffers
# TB[k % 2, slot, i] of a stage (stage.py)
CB1, CB2, CB3, CDPAR, CVS, CGRAD, CD11, CD22 = range(8)
NCOEF = 8
D11, D22, GRAD, B1, B2, B3, DPAR, VS = range(8)
D_MAX = 1e100          # cap of D_par where b . grad P_c vanishes (free streaming)


@njit(cache=True, error_model="numpy", inline="always")
def coef_row(W, j, i0, i1, iE, mhd, gamma_c, d_par, d_perp, streaming, stream_coef,
             rdx1c, rdx2c, b1r, b2r, b3r, dpr, vsr, gr, d1r, d2r):
    # interaction coefficients of row j, cells i0 <= i < i1 (see interaction), into
    # the rows b1r, b2r, b3r (unit field vector), dpr, vsr, gr, d1r, d2r
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
            d1r[i] = d_par
            d2r[i] = d_par
        return
    if streaming:
        for i in range(i0, i1):
            b1 = W[IB1, j, i]
            b2 = W[IB2, j, i]
            b3 = W[IB3, j, i]
            b2s = b1 * b1 + b2 * b2 + b3 * b3
            bb = math.sqrt(b2s)
            has = bb > 0.0
            # one division for 1/|B| and |B|/sqrt(rho): t = 1/(|B| sqrt(rho))
            sd = math.sqrt(W[IDN, j, i])
            t = 1.0 / ((bb if has else 1.0) * sd)
            rb = sd * t
            n1 = b1 * rb if has else 1.0
            n2 = b2 * rb
            n3 = b3 * rb
            g1 = gm1 * (W[iE, j, i + ONE] - W[iE, j, i - ONE]) * rdx1c[i]
            g2 = (W[iE, j + ONE, i] - W[iE, j - ONE, i]) * rz
            gb = n1 * g1 + n2 * g2
            vst = stream_coef * b2s * t
            e = W[iE, j, i]
            num = vst * gamma_c * (e if e > 0.0 else 0.0)
            dp = d_par + num / (abs(gb) + num * rmax + 1e-300)
            b1r[i] = n1
            b2r[i] = n2
            b3r[i] = n3
            dpr[i] = dp
            vsr[i] = -vst if gb > 0.0 else (vst if gb < 0.0 else 0.0)
            gr[i] = gb
            d1r[i] = d_perp + (dp - d_perp) * n1 * n1
            d2r[i] = d_perp + (dp - d_perp) * n2 * n2
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
        d1r[i] = d_perp + (d_par - d_perp) * n1 * n1
        d2r[i] = d_perp + (d_par - d_perp) * n2 * n2


@njit(cache=True, error_model="numpy")
def interaction(W, C, iE, mhd, gamma_c, d_par, d_perp, streaming, stream_coef,
                rdx1c, rdx2c, j0, j1, i0, i1):
    """Interaction coefficients of cells ``j0 <= j < j1``, ``i0 <= i < i1``.

    Fills ``C[CB1:CB3+1]`` (unit field vector; (1, 0, 0) where B = 0),
    ``C[CDPAR]`` (``D = 1/sigma`` along the field; across it ``D = d_perp``),
    ``C[CVS]`` (signed streaming speed along ``b``: ``v_s = C[CVS] b``),
    ``C[CGRAD]`` (``b . grad P_c``) and ``C[CD11]``, ``C[CD22]``, the
    diagonal components ``D_kk`` of ``D`` along the axes (the optical depth of
    a cell along axis k is ``V_m dx_k / D_kk``).  ``d_par = 3 kappa_par``,
    ``d_perp = 3 kappa_perp`` (code units, 0 when off); ``stream_coef = f_s /
    sqrt(chi)``; ``rdx1c[i] = 1/(x_{i+1} - x_{i-1})`` (centres).  Needs one
    ring of neighbours.  The streaming part ``v_st (E_c + P_c) / |b . grad
    P_c|`` is evaluated as ``num / (|g| + num / D_MAX + tiny)``: finite, at
    most ``D_MAX``.
    (:func:`~.stage.stage` computes the same row by row inside its sweep.)
    """
    for j in range(u(j0), u(j1)):
        coef_row(W, j, u(i0), u(i1), iE, mhd, gamma_c, d_par, d_perp, streaming,
                 stream_coef, rdx1c, rdx2c, C[CB1, j], C[CB2, j], C[CB3, j],
                 C[CDPAR, j], C[CVS, j], C[CGRAD, j], C[CD11, j], C[CD22, j])


@njit(cache=True, error_model="numpy", inline="always")
def entropy(e, gamma_c, four_thirds):
    """Cosmic-ray entropy ``max(E_c, 0)^(1/gamma_c)``; for gamma_c = 4/3 as
    ``sqrt(E sqrt(E))`` (vectorises, unlike ``pow``)."""
    e = e if e > 0.0 else 0.0
    if four_thirds:
        return math.sqrt(e * math.sqrt(e))
    return e ** (1.0 / gamma_c)


@njit(cache=True, error_model="numpy", inline="always")
def cell_row(W, V, j, n, iE, iF1, iF2, gamma_c, ft):
    # per-cell values of row j that the faces reconstruct: V[0] specific entropy
    # E_c^(1/gamma_c) / rho, V[1] specific enthalpy gamma_c E_c / rho, V[2], V[3]
    # comoving fluxes F_k - gamma_c E_c v_k.  The test of ft is outside the loops
    # (inside, the compiler may evaluate the pow of the other branch in every cell).
    for i in range(u(0), n):
        e = W[iE, j, i]
        ge = gamma_c * e
        rd = 1.0 / W[IDN, j, i]
        V[1, i] = ge * rd
        V[2, i] = W[iF1, j, i] - ge * W[IV1, j, i]
        V[3, i] = W[iF2, j, i] - ge * W[IV2, j, i]
        V[0, i] = rd
    if ft:
        for i in range(u(0), n):
            V[0, i] = entropy(W[iE, j, i], gamma_c, True) * V[0, i]
    else:
        for i in range(u(0), n):
            V[0, i] = entropy(W[iE, j, i], gamma_c, False) * V[0, i]


@njit(cache=True, error_model="numpy", inline="always")
def _slopes_x(x, k0, k1, geo, limiter, S, v):
    # limited slopes along a row x[k], k0 <= k < k1, into S[v, k] (limiter 1-3: first
    # order takes no slopes); one loop per limiter so that the loop body has no branch
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


@njit(cache=True, error_model="numpy", inline="always")
def _slopes_y(xm, x0, xp, i0, i1, idl, idr, idc, cl, cr, limiter, S, v):
    # limited slopes across rows (xm below, x0, xp above), i0 <= i < i1, into S[v, i]
    # (limiter 1-3)
    if limiter == 1:
        for i in range(i0, i1):
            S[v, i] = limited_slope(xm[i], x0[i], xp[i], idl, idr, idc, cl, cr, 1)
    elif limiter == 2:
        for i in range(i0, i1):
            S[v, i] = limited_slope(xm[i], x0[i], xp[i], idl, idr, idc, cl, cr, 2)
    elif limiter == 3:
        for i in range(i0, i1):
            S[v, i] = limited_slope(xm[i], x0[i], xp[i], idl, idr, idc, cl, cr, 3)


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
    return _face_first(EL, FL, gL, hL, sL, ER, FR, gR, hR, sR, m, S, vm2c)


@njit(cache=True, error_model="numpy", inline="always")
def _face_first(e0, f0, g0, h0, s0, e1, f1, g1, h1, s1, m, S, vm2c):
    """Fluxes of one face from the face values either side (``e`` E_c, ``f``
    F_n, ``g`` comoving flux, ``h`` specific enthalpy, ``s`` specific entropy;
    the cell values themselves at first order, no slopes): flux of E_c, its
    advective part, flux of F_n, entropy flux."""
    up = m >= 0.0
    adv = m * (h0 if up else h1)
    ent = m * (s0 if up else s1)
    fe = adv + 0.5 * (g0 + g1) - 0.5 * S * (e1 - e0)
    ff = vm2c * (0.5 * (e0 + e1)) - 0.5 * S * (f1 - f0)
    return fe, adv, ff, ent


@njit(cache=True, error_model="numpy", inline="always")
def _speed(vmc, hvm, dl, dr, xl, xr):
    """Signal speed of a face ``vmc / (1 + (tau_l + tau_r) / 2)``, reduced by the
    optical depths ``tau = V_m dx / D`` of the two cells (``hvm = V_m / 2``,
    ``dl``, ``dr`` their ``D`` along the axis, ``xl``, ``xr`` their widths),
    written with one division: ``vmc D_l D_r / (D_l D_r + (V_m/2)(dx_l D_r +
    dx_r D_l))``, 0 where either ``D`` is 0."""
    p = dl * dr
    return vmc * p / (p + hvm * (xl * dr + xr * dl) + 1e-300)


@njit(cache=True, error_model="numpy", inline="always")
def slopes_across(W, CV, S2, r, ia, ib, iE, iF2, geo2, limiter):
    """Limited slopes across rows of row ``r`` (cells ``ia <= i < ib``) into
    ``S2[r % 2]``: E_c, F_2, comoving F_2, specific enthalpy, specific entropy
    (the per-cell values of rows ``r - 1, r, r + 1`` in ``CV[k % 3]``)."""
    vm_ = CV[(r - ONE) % u(3)]
    v0 = CV[r % u(3)]
    vp = CV[(r + ONE) % u(3)]
    cur = S2[r % u(2)]
    idl = geo2[G_IDL, r]
    idr = geo2[G_IDR, r]
    idc = geo2[G_IDC, r]
    cl = geo2[G_CL, r]
    cr = geo2[G_CR, r]
    WE = W[iE]
    WF2 = W[iF2]
    _slopes_y(WE[r - ONE], WE[r], WE[r + ONE], ia, ib, idl, idr, idc, cl, cr, limiter, cur, 0)
    _slopes_y(WF2[r - ONE], WF2[r], WF2[r + ONE], ia, ib, idl, idr, idc, cl, cr, limiter, cur,
              1)
    _slopes_y(vm_[3], v0[3], vp[3], ia, ib, idl, idr, idc, cl, cr, limiter, cur, 2)
    _slopes_y(vm_[1], v0[1], vp[1], ia, ib, idl, idr, idc, cl, cr, limiter, cur, 3)
    _slopes_y(vm_[0], v0[0], vp[0], ia, ib, idl, idr, idc, cl, cr, limiter, cur, 4)


@njit(cache=True, error_model="numpy", inline="always")
def faces_across(W, F2, CV, S2, TB, out, r, ia, ib, iE, iF2, geo2, dx2, vm, vmc, vm2c, reduce,
                 first):
    """Axis-2 faces between rows ``r - 1`` and ``r``, columns ``ia <= i < ib``:
    the flux of E_c into ``F2[iE, r]``, its advective part, the flux of ``F_2``
    and the entropy flux into ``out[0:3]``.  Needs the slopes of both rows
    (``S2``, not read when ``first``: first-order faces), their ``D_22``
    (``TB[k % 2, D22]``) and the gas mass flux ``F2[0, r]``."""
    rl = r - ONE
    vm_ = CV[rl % u(3)]
    v0 = CV[r % u(3)]
    low = S2[rl % u(2)]
    cur = S2[r % u(2)]
    dfr = geo2[G_DFR, rl]
    dfl = geo2[G_DFL, r]
    el = W[iE, rl]
    er = W[iE, r]
    fl = W[iF2, rl]
    fr = W[iF2, r]
    dl = TB[rl % u(2), D22]
    dr = TB[r % u(2), D22]
    xl = dx2[rl]
    xr = dx2[r]
    hvm = 0.5 * vm
    m2 = F2[IDN, r]
    fe2 = F2[iE, r]
    if first:
        for i in range(ia, ib):
            sp = _speed(vmc, hvm, dl[i], dr[i], xl, xr) if reduce else vmc
            fe, adv, ff, ent = _face_first(el[i], fl[i], vm_[3, i], vm_[1, i], vm_[0, i],
                                           er[i], fr[i], v0[3, i], v0[1, i], v0[0, i],
                                           m2[i], sp, vm2c)
            fe2[i] = fe
            out[0, i] = adv
            out[1, i] = ff
            out[2, i] = ent
        return
    for i in range(ia, ib):
        sp = _speed(vmc, hvm, dl[i], dr[i], xl, xr) if reduce else vmc
        fe, adv, ff, ent = _face(
            el[i], fl[i], vm_[3, i], vm_[1, i], vm_[0, i],
            er[i], fr[i], v0[3, i], v0[1, i], v0[0, i],
            low[0, i], low[1, i], low[2, i], low[3, i], low[4, i],
            cur[0, i], cur[1, i], cur[2, i], cur[3, i], cur[4, i],
            dfr, dfl, m2[i], sp, vm2c)
        fe2[i] = fe
        out[0, i] = adv
        out[1, i] = ff
        out[2, i] = ent


@njit(cache=True, error_model="numpy", inline="always")
def faces_along(W, F1, CV, S1, TB, out, r, ia, ib, iE, iF1, geo1, dx1, limiter, vm, vmc,
                vm2c, reduce):
    """Axis-1 faces of row ``r``, ``ia <= i <= ib``: slopes along the row into
    ``S1``, the flux of E_c into ``F1[iE, r]``, its advective part, the flux of
    ``F_1`` and the entropy flux into ``out[0:3]``; needs the ``D_11`` of the
    row (``TB[r % 2, D11]``) and the gas mass flux ``F1[0, r]``.  ``limiter`` 0:
    first-order faces (no slopes)."""
    v0 = CV[r % u(3)]
    e = W[iE, r]
    f = W[iF1, r]
    d = TB[r % u(2), D11]
    hvm = 0.5 * vm
    m1 = F1[IDN, r]
    fe1 = F1[iE, r]
    if limiter == 0:
        for i in range(ia, ib + ONE):
            il = i - ONE
            sp = _speed(vmc, hvm, d[il], d[i], dx1[il], dx1[i]) if reduce else vmc
            fe, adv, ff, ent = _face_first(e[il], f[il], v0[2, il], v0[1, il], v0[0, il],
                                           e[i], f[i], v0[2, i], v0[1, i], v0[0, i],
                                           m1[i], sp, vm2c)
            fe1[i] = fe
            out[0, i] = adv
            out[1, i] = ff
            out[2, i] = ent
        return
    _slopes_x(e, ia - ONE, ib + ONE, geo1, limiter, S1, 0)
    _slopes_x(f, ia - ONE, ib + ONE, geo1, limiter, S1, 1)
    _slopes_x(v0[2], ia - ONE, ib + ONE, geo1, limiter, S1, 2)
    _slopes_x(v0[1], ia - ONE, ib + ONE, geo1, limiter, S1, 3)
    _slopes_x(v0[0], ia - ONE, ib + ONE, geo1, limiter, S1, 4)
    for i in range(ia, ib + ONE):
        il = i - ONE
        sp = _speed(vmc, hvm, d[il], d[i], dx1[il], dx1[i]) if reduce else vmc
        fe, adv, ff, ent = _face(
            e[il], f[il], v0[2, il], v0[1, il], v0[0, il],
            e[i], f[i], v0[2, i], v0[1, i], v0[0, i],
            S1[0, il], S1[1, il], S1[2, il], S1[3, il], S1[4, il],
            S1[0, i], S1[1, i], S1[2, i], S1[3, i], S1[4, i],
            geo1[G_DFR, il], geo1[G_DFL, i], m1[i], sp, vm2c)
        fe1[i] = fe
        out[0, i] = adv
        out[1, i] = ff
        out[2, i] = ent


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
