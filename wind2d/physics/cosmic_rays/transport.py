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
    """
    gm1 = gamma_c - 1.0
    rmax = 1.0 / D_MAX
    for j in range(u(j0), u(j1)):
        rz = gm1 * rdx2c[j]
        if not mhd:
            for i in range(u(i0), u(i1)):
                C[CB1, j, i] = 1.0
                C[CB2, j, i] = 0.0
                C[CB3, j, i] = 0.0
                C[CDPAR, j, i] = d_par
                C[CVS, j, i] = 0.0
                C[CGRAD, j, i] = 0.0
                C[CTAU1, j, i] = vm * dx1[i] / d_par
                C[CTAU2, j, i] = vm * dx2[j] / d_par
            continue
        for i in range(u(i0), u(i1)):
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
            dp = d_par
            vs = 0.0
            if streaming:
                vst = stream_coef * bb / math.sqrt(W[IDN, j, i])
                e = W[iE, j, i]
                num = vst * gamma_c * (e if e > 0.0 else 0.0)
                dp += num / (abs(gb) + num * rmax + 1e-300)
                vs = -vst if gb > 0.0 else (vst if gb < 0.0 else 0.0)
            C[CB1, j, i] = n1
            C[CB2, j, i] = n2
            C[CB3, j, i] = n3
            C[CDPAR, j, i] = dp
            C[CVS, j, i] = vs
            C[CGRAD, j, i] = gb
            C[CTAU1, j, i] = vm * dx1[i] / (d_perp + (dp - d_perp) * n1 * n1)
            C[CTAU2, j, i] = vm * dx2[j] / (d_perp + (dp - d_perp) * n2 * n2)


@njit(cache=True, error_model="numpy", inline="always")
def _cell(W, T, iE, iFn, iVn, gamma_c, j, k):
    # E_c, F_n, comoving flux f_n = F_n - gamma_c E_c v_n, specific enthalpy
    # gamma_c E_c / rho and specific entropy E_c^(1/gamma_c) / rho (from T)
    e = W[iE, j, k]
    fn = W[iFn, j, k]
    return e, fn, fn - gamma_c * e * W[iVn, j, k], gamma_c * e / W[IDN, j, k], T[j, k]


@njit(cache=True, error_model="numpy", inline="always")
def _slopes(W, T, iE, iFn, iVn, gamma_c, jm, km, j, k, jp, kp, idl, idr, idc, cl, cr,
            limiter, S, i):
    a0, a1, a2, a3, a4 = _cell(W, T, iE, iFn, iVn, gamma_c, jm, km)
    b0, b1, b2, b3, b4 = _cell(W, T, iE, iFn, iVn, gamma_c, j, k)
    c0, c1, c2, c3, c4 = _cell(W, T, iE, iFn, iVn, gamma_c, jp, kp)
    S[0, i] = limited_slope(a0, b0, c0, idl, idr, idc, cl, cr, limiter)
    S[1, i] = limited_slope(a1, b1, c1, idl, idr, idc, cl, cr, limiter)
    S[2, i] = limited_slope(a2, b2, c2, idl, idr, idc, cl, cr, limiter)
    S[3, i] = limited_slope(a3, b3, c3, idl, idr, idc, cl, cr, limiter)
    S[4, i] = limited_slope(a4, b4, c4, idl, idr, idc, cl, cr, limiter)


@njit(cache=True, error_model="numpy", inline="always")
def _face(W, T, iE, iFn, iVn, gamma_c, jl, kl, jr, kr, SL, SR, il, ir, dfr, dfl, m, S,
          vm2c):
    """Fluxes of one face from the left cell (jl, kl) and the right cell (jr, kr);
    slopes ``SL[:, il]``, ``SR[:, ir]``; ``m`` the gas mass flux.  Returns the
    flux of E_c, its advective part, the flux of F_n and the entropy flux."""
    e0, f0, g0, h0, s0 = _cell(W, T, iE, iFn, iVn, gamma_c, jl, kl)
    e1, f1, g1, h1, s1 = _cell(W, T, iE, iFn, iVn, gamma_c, jr, kr)
    EL = e0 + SL[0, il] * dfr
    ER = e1 + SR[0, ir] * dfl
    neg = EL < 0.0 or ER < 0.0
    o = 0.0 if neg else 1.0             # first order where a face value of E_c < 0
    EL = e0 + o * SL[0, il] * dfr
    ER = e1 + o * SR[0, ir] * dfl
    FL = f0 + o * SL[1, il] * dfr
    FR = f1 + o * SR[1, ir] * dfl
    gL = g0 + o * SL[2, il] * dfr
    gR = g1 + o * SR[2, ir] * dfl
    up = m >= 0.0
    adv = m * ((h0 + o * SL[3, il] * dfr) if up else (h1 + o * SR[3, ir] * dfl))
    ent = m * ((s0 + SL[4, il] * dfr) if up else (s1 + SR[4, ir] * dfl))
    fe = adv + 0.5 * (gL + gR) - 0.5 * S * (ER - EL)
    ff = vm2c * (0.5 * (EL + ER)) - 0.5 * S * (FR - FL)
    return fe, adv, ff, ent


@njit(cache=True, error_model="numpy")
def fluxes1(W, T, C, F1, PF, A1, G1, SB, iE, iFn, iFt, iF3, gamma_c, vm, reduce, limiter,
            geo, js, je, is_, ie):
    """Axis-1 (R or x) face fluxes on rows ``js <= j < je``, faces ``is_ <= i <= ie``.

    ``F1[iE]`` gets the flux of E_c (it needs the gas mass flux in ``F1[0]``,
    the core's), ``A1`` its advective part and ``G1`` the flux of the entropy
    ``E_c^(1/gamma_c)``.  The flux of the normal component ``F_1`` goes to
    ``PF[j, i]`` (applied by :func:`~.coupling.couple` in pressure-balanced
    form); ``F1`` of the three flux components is zeroed.  ``T`` holds the
    specific entropy (:func:`specific_entropy`), ``SB`` is a ``[2, 5, nt1]``
    buffer of slopes.
    """
    vmc = vm * math.sqrt(gamma_c - 1.0)
    vm2c = vm * vm * (gamma_c - 1.0)
    S = SB[0]
    for j in range(u(js), u(je)):
        for k in range(u(is_) - ONE, u(ie) + ONE):
            _slopes(W, T, iE, iFn, IV1, gamma_c, j, k - ONE, j, k, j, k + ONE,
                    geo[G_IDL, k], geo[G_IDR, k], geo[G_IDC, k], geo[G_CL, k], geo[G_CR, k],
                    limiter, S, k)
        for i in range(u(is_), u(ie) + ONE):
            il = i - ONE
            sp = vmc / (1.0 + 0.5 * (C[CTAU1, j, il] + C[CTAU1, j, i])) if reduce else vmc
            fe, adv, ff, ent = _face(W, T, iE, iFn, IV1, gamma_c, j, il, j, i, S, S, il, i,
                                     geo[G_DFR, il], geo[G_DFL, i], F1[IDN, j, i], sp, vm2c)
            F1[iE, j, i] = fe
            A1[j, i] = adv
            PF[j, i] = ff
            G1[j, i] = ent
            F1[iFn, j, i] = 0.0
            F1[iFt, j, i] = 0.0
            F1[iF3, j, i] = 0.0


@njit(cache=True, error_model="numpy")
def fluxes2(W, T, C, F2, A2, G2, SB, iE, iFn, iFt, iF3, gamma_c, vm, reduce, limiter, geo,
            js, je, is_, ie):
    """Axis-2 (z or y) face fluxes on faces ``js <= j <= je``, columns ``is_ <= i < ie``.

    ``F2[iE]`` and ``F2[iFn]`` (normal flux component) get the fluxes (the
    core applies their plain divergence), ``A2`` the advective part of the
    E_c flux, ``G2`` the entropy flux; needs the gas mass flux in ``F2[0]``.
    ``SB`` is a ``[2, 5, nt1]`` buffer of the slopes of two rows.
    """
    vmc = vm * math.sqrt(gamma_c - 1.0)
    vm2c = vm * vm * (gamma_c - 1.0)
    for j in range(u(js) - ONE, u(je) + ONE):
        cur = SB[j % u(2)]
        low = SB[(j + ONE) % u(2)]           # slopes of row j - 1
        idl = geo[G_IDL, j]
        idr = geo[G_IDR, j]
        idc = geo[G_IDC, j]
        cl = geo[G_CL, j]
        cr = geo[G_CR, j]
        for i in range(u(is_), u(ie)):
            _slopes(W, T, iE, iFn, IV2, gamma_c, j - ONE, i, j, i, j + ONE, i,
                    idl, idr, idc, cl, cr, limiter, cur, i)
        if j < u(js):
            continue
        jl = j - ONE
        dfr = geo[G_DFR, jl]
        dfl = geo[G_DFL, j]
        for i in range(u(is_), u(ie)):
            sp = vmc / (1.0 + 0.5 * (C[CTAU2, jl, i] + C[CTAU2, j, i])) if reduce else vmc
            fe, adv, ff, ent = _face(W, T, iE, iFn, IV2, gamma_c, jl, i, j, i, low, cur, i, i,
                                     dfr, dfl, F2[IDN, j, i], sp, vm2c)
            F2[iE, j, i] = fe
            A2[j, i] = adv
            F2[iFn, j, i] = ff
            G2[j, i] = ent
            F2[iFt, j, i] = 0.0
            F2[iF3, j, i] = 0.0


@njit(cache=True, error_model="numpy", inline="always")
def entropy(e, gamma_c, four_thirds):
    """Cosmic-ray entropy ``max(E_c, 0)^(1/gamma_c)``; for gamma_c = 4/3 as
    ``sqrt(E sqrt(E))`` (vectorises, unlike ``pow``)."""
    e = e if e > 0.0 else 0.0
    if four_thirds:
        return math.sqrt(e * math.sqrt(e))
    return e ** (1.0 / gamma_c)


@njit(cache=True, error_model="numpy")
def specific_entropy(W, T, iE, gamma_c, j0, j1, i0, i1):
    """``T = E_c^(1/gamma_c) / rho`` on a block of cells."""
    ft = gamma_c == 4.0 / 3.0
    for j in range(u(j0), u(j1)):
        for i in range(u(i0), u(i1)):
            T[j, i] = entropy(W[iE, j, i], gamma_c, ft) / W[IDN, j, i]


@njit(cache=True, error_model="numpy")
def start_values(W, E0, S0, iE, gamma_c, js, je, is_, ie):
    """E_c and its entropy at the start of a step (interior)."""
    ft = gamma_c == 4.0 / 3.0
    for j in range(u(js), u(je)):
        for i in range(u(is_), u(ie)):
            e = W[iE, j, i]
            E0[j, i] = e
            S0[j, i] = entropy(e, gamma_c, ft)


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
