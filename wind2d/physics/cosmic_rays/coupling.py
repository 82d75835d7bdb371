"""Implicit cell-by-cell update of the stiff cosmic-ray interaction terms and the
equal-and-opposite exchange with the gas.

Split of the energy equation
----------------------------
The energy source of the two-moment system (Jiang & Oh 2018, ApJ 854, 5;
from memory), ``-(v + v_s) . sigma (F_c - (E_c + P_c) v)``, tends in the
quasi-steady limit ``sigma (F_c - (E_c + P_c) v) -> -grad P_c`` to the
adiabatic work ``v . grad P_c`` plus the streaming loss ``v_s . grad P_c``.
The adiabatic part, together with the advective flux ``(E_c + P_c) v``, is
``dE_c/dt + div(E_c v) = -P_c div v``, which is not in conservation form: at
shocks its discrete solution depends on the numerical shock structure
(Kudoh & Hanawa 2016, arXiv 1608.03206, abstract; methods.md item 6), and
with cell velocities it does not follow the gas mass fluxes (next to the
wall of a hydrostatic atmosphere the cosmic rays drift and pile up).  So it
is done in conserved form, with the cosmic-ray entropy ``s = E_c^(1/gamma_c)``
(``ds/dt + div(s v) = 0``; ``s / rho`` is a passive scalar), advected with the
gas mass flux like the core's scalars (first part of :func:`update_row`):

    E_c  <-  E_c + [ s'^gamma_c - (E_c^n - dt div A) ]

where ``s' = s^n - dt div G`` (entropy fluxes ``G``) and ``A`` are the advective
parts of the energy fluxes (``m (E_c + P_c)/rho``, upwinded with the mass flux
``m``); the difference goes to the gas energy (it is the work ``-v . grad P_c``
done on the gas in smooth flow).  The implicit solve (same kernel) then
exchanges only what the adiabatic part does not hold: the streaming loss and
the work of the non-steady part of the force.

Implicit solve
--------------
Per cell, after the explicit flux update of a stage (``E*``, ``F*``; gas
velocity ``v*`` and density ``rho``), with the unit field vector ``b``, the
streaming velocity ``v_s`` and ``D = sigma^-1`` frozen over the stage::

    F' = F* - V_m^2 X,       X = dt sigma (F' - gamma_c E' v')   (impulse to the gas)
    v' = v* + X / rho                                              (gas momentum)
    E' = E* - v* . (X - X_ad) - v_s . X                            (energy exchange)

with ``X_ad = (F* - F^n) / V_m^2 = -dt grad_h P_c`` the transport increment of
the flux (the discrete pressure force; ``X -> X_ad`` in the quasi-steady
limit, so the adiabatic work is not counted twice).  Taking the gas
acceleration into the solve (``v'`` in the advective flux) keeps tightly
coupled cosmic rays from drifting with the unbalanced intermediate velocity
(~dt g) of a stage.  Eliminating ``F'`` and ``v'``:
``X = M (F* - gamma_c E' v*)``, ``M = dt (D + (V_m^2 + k) dt I)^-1`` with
``k = gamma_c E* / rho`` (``E*`` for ``E'`` in this term of relative size
``P_c / (rho V_m^2)``); ``M`` has eigenvalues ``m_par = dt / (D_par + (V_m^2 +
k) dt)`` along ``b`` and ``m_perp`` across it, finite for ``D -> 0``.  Then::

    E' = (E* + v* . X_ad - w . M F*) / (1 - gamma_c w . M v*),   w = v* + v_s
    rho v  += X                    (gas momentum; total gas + F_c/V_m^2 conserved)
    E_gas  -= E' - E*              (total gas + cosmic-ray energy conserved)

``v_s . X`` is the streaming (collisionless) heating of the gas,
``v_A |b . grad P_c| dt`` in the quasi-steady limit.  The update is
unconditionally stable (backward Euler of a linear relaxation) and in the
tight-coupling limit ``D -> 0`` gives ``F' = gamma_c E' v'`` (up to the lag in
``k``).

The same kernel applies the R (or x) divergence of the normal-flux component
``F_1`` in pressure-balanced form (like the core's gas pressure)::

    F_1 -= dt [A_+ (PF_+ - V_m^2 P_c) - A_- (PF_- - V_m^2 P_c)] / V

with ``P_c`` of the cell (stage primitives), so that a uniform ``P_c`` is an
exact equilibrium on the cylindrical grid: this is the divergence of
``V_m^2 P_c`` plus the geometric source ``+V_m^2 P_c / R`` (discrete
``1/R = (A_+ - A_-)/V``).  For an isotropic pressure tensor the phi component
has neither flux nor geometric source.
"""
from __future__ import annotations

import math

import numpy as np
from llvmlite import ir
from numba import njit, types
from numba.core import cgutils
from numba.extending import intrinsic

from ...core.indexing import ONE
from ...state import IDN, IEN, IM1, IM2, IM3
from .transport import B1, B2, B3, DPAR, VS, entropy

# ----------------------------------------------------------------- x ** (4/3)
# The entropy update needs E = s ** gamma_c in every cell and stage; the library
# ``pow`` is a scalar call (about 40 cycles) and was a third of the module's time.
# For gamma_c = 4/3 (the default) :func:`pow43` computes it without ``pow``: a
# double-double evaluation of s ** gamma_c accurate to ~1e-3 ulp (inverse cube
# root by Newton's iteration from a bit-pattern guess, one compensated Newton
# correction of the cube root with error-free products, Dekker 1971, and the
# factor s^(-EPS43) because gamma_c is 4/3 rounded), rounded to nearest: the
# result errs by at most ~0.501 ulp, no more than the library pow (glibc's pow
# documents a worst case of 0.54 ulp, from memory; we observed at most 0.508 ulp
# in 4e7 samples).  The update uses it for 2^-700 < s < 2^700 and ``pow``
# outside.  Where the exact value lies within 0.45 ulp of the result, every pow
# with an error below 0.55 ulp returns the same double; :func:`pow43` reports
# those cases (nine in ten) as ``exact``, and tests/test_cr_pow43.py checks both
# the accuracy against a 50-digit reference and the bitwise agreement with the
# library pow where it claims it.

@intrinsic
def _fma(typingctx, a, b, c):
    """``a * b + c`` with one rounding (llvm.fma: a vector instruction where the
    CPU has FMA, else the C library's exact fma)."""
    sig = types.float64(types.float64, types.float64, types.float64)

    def codegen(context, builder, signature, args):
        d = ir.DoubleType()
        fn = cgutils.get_or_insert_function(builder.module, ir.FunctionType(d, (d, d, d)),
                                            "llvm.fma.f64")
        return builder.call(fn, args)
    return sig, codegen


@intrinsic
def _bits(typingctx, x):
    """The bit pattern of a double as an int64."""
    sig = types.int64(types.float64)

    def codegen(context, builder, signature, args):
        return builder.bitcast(args[0], ir.IntType(64))
    return sig, codegen


@intrinsic
def _double(typingctx, k):
    """The double with bit pattern ``k``."""
    sig = types.float64(types.int64)

    def codegen(context, builder, signature, args):
        return builder.bitcast(args[0], ir.DoubleType())
    return sig, codegen


FOUR_THIRDS = 4.0 / 3.0            # gamma_c = 4/3 as a double: 4/3 - EPS43
EPS43 = 2.0 ** -52 / 3.0           # x ** FOUR_THIRDS = x^(4/3) (1 - EPS43 ln x + ...)
_LO43 = 2.0 ** -700
_HI43 = 2.0 ** 700
_GUESS = 1364 << 52                # x^(-1/3) ~ (1023 + 341) << 52 - bits(x) / 3 (< 9 %)
_MANT = (1 << 52) - 1
_EXP0 = 1023 << 52
_LN2 = math.log(2.0)
_LN1, _LN2C, _LN3 = 0.986692, -0.407413, 0.11478   # ln(1+u), 0 <= u < 1: 1e-3 (fit)
_ULP1 = 2.0 ** -52
_SAFE = 0.45                       # in ulp: the exact value is this near the result


@njit(cache=True, error_model="numpy", inline="always")
def pow43(s):
    """``(y, ok, exact)``: ``y`` = ``s ** FOUR_THIRDS`` rounded to nearest (error
    at most ~0.501 ulp) where ``ok``, i.e. ``2^-700 < s < 2^700``; ``exact`` is
    true where ``y`` is also bitwise the library ``s ** FOUR_THIRDS`` (the exact
    power lies within 0.45 ulp of ``y``).  Branch-free and without divisions,
    so loops over it vectorise."""
    ok = (s > _LO43) & (s < _HI43)
    x = s if ok else 1.0
    k = _bits(x)
    third = 1.0 / 3.0
    r = _double(_GUESS - np.int64(np.float64(k) * third))
    for _ in range(4):                    # Newton for x^(-1/3): error 9e-2 -> 2e-13
        r = r + r * ((1.0 - x * (r * r * r)) * third)
    rr = r * r
    c = x * rr                            # x^(1/3)
    # residual x - c^3 from error-free products: c + d = x^(1/3) to ~1e-25
    c2 = c * c
    e2 = _fma(c, c, -c2)
    c3 = c2 * c
    e3 = _fma(c2, c, -c3)
    d = (((x - c3) - e3) - e2 * c) * rr * third
    # ln x to 1e-3 (enough for the EPS43 term): exponent and a cubic in the mantissa
    w = _double((k & _MANT) | _EXP0) - 1.0
    lnx = np.float64((k >> 52) - 1023) * _LN2 + w * (_LN1 + w * (_LN2C + w * _LN3))
    # x (c + d) (1 - EPS43 ln x) as p + lo, rounded; t is the rounding remainder
    p = x * c
    lo = (_fma(x, c, -p) + x * d) - p * (EPS43 * lnx)
    y = p + lo
    t = (p - y) + lo
    ulp = _double((_bits(y) >> 52) << 52) * _ULP1
    return y, ok, ok & (abs(t) < _SAFE * ulp)


@njit(cache=True, error_model="numpy", inline="always")
def update_row(W, U0, U, F1, F2, j, dt, ia, ib, f1, flo, fhi, tb, R, acc, iE, gamma_c, vm,
               d_perp, feedback, iso, e_floor, tight, area1, rvol1, vol1, dx2):
    """The module's update of row ``j`` (cells ``ia <= i < ib``) in a stage: its
    variables from the start of the step ``U0`` into ``U`` (the core skips
    them) and the exchange with the gas in ``U`` (after the core's update).

    First the flux divergence of E_c (``F1[iE]``, ``F2[iE]``) and of ``F_2``
    (``flo[1]``, ``fhi[1]``, also used for ``X_ad``); then the conservative
    entropy update replaces the advective part of the E_c update (see the
    module docstring; ``E_c^(1/gamma_c)`` of ``U0``, advective and entropy
    fluxes ``f1[0]``, ``f1[2]`` of the row's axis-1 faces and ``flo``,
    ``fhi`` ``[0]``, ``[2]`` of its lower and upper axis-2 faces) and the
    difference goes to the gas energy; then the R/x divergence of ``F_1``
    (face fluxes ``f1[1]``) and the implicit coupling with the row's
    coefficients ``tb`` (slots of :mod:`.transport`).  ``d_perp`` is ``D``
    across the field, ``rvol1 = 1/vol1``; ``R[4]`` holds ``dt / vol1``.  With
    ``tight`` (no diffusion, no streaming) E_c keeps its adiabatic value (the
    residual work, O(P_c / (rho V_m^2)) of the adiabatic one, is dropped), the
    gas gets the impulse, and the flux is set to ``gamma_c E_c v`` of the new
    state.  Adds the streaming heating and the energy added by the floor of
    each column, times the cell volume, to ``acc[0]``, ``acc[1]``.  The flux
    components follow E_c: ``iE + 1, iE + 2, iE + 3``.  (At most 30
    arguments: Python passes longer argument lists as a tuple, which numba
    cannot inline.)

    The row runs as a few branch-free loops over ``i`` that each touch few
    arrays (so that they vectorise): divergences, entropy and advective
    updates, the power ``s ** gamma_c`` of the entropy (:func:`pow43` for
    gamma_c = 4/3, as accurate as the library ``pow``), the transport
    increment of ``F_1``, the implicit solve, then the gas energy and the
    tallies.
    """
    iF1 = iE + 1
    iF2 = iE + 2
    iF3 = iE + 3
    vm2 = vm * vm
    vm2c = vm2 * (gamma_c - 1.0)
    rvm2 = 1.0 / vm2
    a = vm2 * dt
    gdt = gamma_c * dt if feedback else 0.0      # the gas inertia term k (none if frozen)
    egas = feedback and not iso
    ft = gamma_c == FOUR_THIRDS
    r2 = dt / dx2[j]
    # flux divergences of E_c and F_2 (F_1 below, F_3 has no flux), written as the
    # core writes its cell update
    for i in range(ia, ib):
        U[iE, j, i] = (U0[iE, j, i]
                       - dt * (area1[i + ONE] * F1[iE, j, i + ONE]
                               - area1[i] * F1[iE, j, i]) / vol1[i]
                       - r2 * (F2[iE, j + ONE, i] - F2[iE, j, i]))
        U[iF2, j, i] = U0[iF2, j, i] - r2 * (fhi[1, i] - flo[1, i])
    # entropy of the start of the step (R[0])
    if ft:
        for i in range(ia, ib):
            R[0, i] = entropy(U0[iE, j, i], gamma_c, True)
    else:
        for i in range(ia, ib):
            R[0, i] = entropy(U0[iE, j, i], gamma_c, False)
    # conservative entropy (R[0]) and advective part of E_c (R[1])
    for i in range(ia, ib):
        rv = R[4, i]
        R[0, i] = (R[0, i] - rv * (area1[i + ONE] * f1[2, i + ONE] - area1[i] * f1[2, i])
                   - r2 * (fhi[2, i] - flo[2, i]))
        R[1, i] = (U0[iE, j, i]
                   - rv * (area1[i + ONE] * f1[0, i + ONE] - area1[i] * f1[0, i])
                   - r2 * (fhi[0, i] - flo[0, i]))
    # the change of E_c that replaces the advective part (R[0]): s ** gamma_c - R[1]
    if ft:
        # vectorised pow43 into R[2], flags in R[3]; pow only outside its range
        for i in range(ia, ib):
            s = R[0, i]
            y, ok, exact = pow43(s)
            pos = s > 0.0
            R[2, i] = y if pos else 0.0
            R[3, i] = 1.0 if pos & (not ok) else 0.0
        for i in range(ia, ib):
            if R[3, i] != 0.0:
                R[2, i] = R[0, i] ** gamma_c
        for i in range(ia, ib):
            R[0, i] = R[2, i] - R[1, i]
    else:
        for i in range(ia, ib):
            s = R[0, i]
            R[0, i] = (s ** gamma_c if s > 0.0 else 0.0) - R[1, i]
    # pressure-balanced R/x divergence of F_1: F_1* (R[1]), X_ad . v (R[2]), 1/rho (R[3])
    for i in range(ia, ib):
        pc = vm2c * W[iE, j, i]
        d1 = -dt * (area1[i + ONE] * (f1[1, i + ONE] - pc)
                    - area1[i] * (f1[1, i] - pc)) * rvol1[i]
        rd = 1.0 / U[IDN, j, i]
        v1 = U[IM1, j, i] * rd
        v2 = U[IM2, j, i] * rd
        R[3, i] = rd
        R[1, i] = U0[iF1, j, i] + d1
        # transport impulse X_ad = (F* - F^n) / V_m^2 (no flux for the phi component)
        R[2, i] = (d1 * v1 - r2 * (fhi[1, i] - flo[1, i]) * v2) * rvm2
    # implicit solve; E_c, gas momentum and flux updated in place
    for i in range(ia, ib):
        dent = R[0, i]
        f1_ = R[1, i]
        vxa = R[2, i]
        e = U[iE, j, i] + dent
        f2 = U[iF2, j, i]
        f3 = U0[iF3, j, i]
        rd = R[3, i]
        m1 = U[IM1, j, i]
        m2 = U[IM2, j, i]
        m3 = U[IM3, j, i]
        v1 = m1 * rd
        v2 = m2 * rd
        v3 = m3 * rd
        n1 = tb[B1, i]
        n2 = tb[B2, i]
        n3 = tb[B3, i]
        ak = a + gdt * (e if e > 0.0 else 0.0) * rd
        # mq = dt / (D_perp + ak) and md = mp - mq, mp = dt / (D_par + ak), with one
        # division
        dpa = tb[DPAR, i] + ak
        rpq = dt / (dpa * (d_perp + ak))
        mq = dpa * rpq
        md = (d_perp - tb[DPAR, i]) * rpq
        vs = tb[VS, i]
        w1 = v1 + vs * n1
        w2 = v2 + vs * n2
        w3 = v3 + vs * n3
        wb = w1 * n1 + w2 * n2 + w3 * n3
        vb = v1 * n1 + v2 * n2 + v3 * n3
        fb = f1_ * n1 + f2 * n2 + f3 * n3
        wmf = mq * (w1 * f1_ + w2 * f2 + w3 * f3) + md * wb * fb
        wmv = mq * (w1 * v1 + w2 * v2 + w3 * v3) + md * wb * vb
        # tightly coupled: E_c is the adiabatic (entropy) value, no further exchange
        q = gamma_c * e if tight else gamma_c * (e + vxa - wmf) / (1.0 - gamma_c * wmv)
        x1 = f1_ - q * v1
        x2 = f2 - q * v2
        x3 = f3 - q * v3
        xb = x1 * n1 + x2 * n2 + x3 * n3
        x1 = mq * x1 + md * xb * n1
        x2 = mq * x2 + md * xb * n2
        x3 = mq * x3 + md * xb * n3
        hs = vs * (n1 * x1 + n2 * x2 + n3 * x3)
        de = 0.0 if tight else vxa - (v1 * x1 + v2 * x2 + v3 * x3) - hs
        enew = e + de
        low = e_floor - enew
        low = low if low > 0.0 else 0.0
        U[iE, j, i] = enew + low
        U[IM1, j, i] = m1 + x1 if feedback else m1
        U[IM2, j, i] = m2 + x2 if feedback else m2
        U[IM3, j, i] = m3 + x3 if feedback else m3
        U[iF1, j, i] = f1_ - vm2 * x1
        U[iF2, j, i] = f2 - vm2 * x2
        U[iF3, j, i] = f3 - vm2 * x3
        R[1, i] = de
        R[2, i] = hs
        R[3, i] = low
    if tight:
        for i in range(ia, ib):
            qn = gamma_c * U[iE, j, i] / U[IDN, j, i]
            U[iF1, j, i] = qn * U[IM1, j, i]
            U[iF2, j, i] = qn * U[IM2, j, i]
            U[iF3, j, i] = qn * U[IM3, j, i]
    if egas:
        # the entropy correction and the exchange, in this order
        for i in range(ia, ib):
            U[IEN, j, i] = (U[IEN, j, i] - R[0, i]) - R[1, i]
    dz = dx2[j]
    for i in range(ia, ib):
        vol = vol1[i] * dz
        acc[0, i] += R[2, i] * vol
        acc[1, i] += R[3, i] * vol
