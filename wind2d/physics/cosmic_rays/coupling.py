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
gas mass flux like the core's scalars (:func:`entropy_update`):

    E_c  <-  E_c + [ s'^gamma_c - (E_c^n - dt div A) ]

where ``s' = s^n - dt div G`` (entropy fluxes ``G``) and ``A`` are the advective
parts of the energy fluxes (``m (E_c + P_c)/rho``, upwinded with the mass flux
``m``); the difference goes to the gas energy (it is the work ``-v . grad P_c``
done on the gas in smooth flow).  The implicit solve (:func:`couple`) then
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

from numba import njit

from ...core.indexing import ONE, u
from ...state import IDN, IEN, IM1, IM2, IM3
from .transport import CB1, CB2, CB3, CDPAR, CVS


@njit(cache=True, error_model="numpy")
def entropy_update(U, E0, S0, A1, A2, G1, G2, iE, gamma_c, dt, feedback, iso, area1, vol1,
                   dx2, js, je, is_, ie):
    """Replace the advective part of the E_c update by the conservative entropy
    update (see the module docstring); the difference goes to the gas energy.
    ``E0``, ``S0``: E_c and E_c^(1/gamma_c) at the start of the step."""
    for j in range(u(js), u(je)):
        r2 = dt / dx2[j]
        for i in range(u(is_), u(ie)):
            rv = dt / vol1[i]
            s = (S0[j, i] - rv * (area1[i + ONE] * G1[j, i + ONE] - area1[i] * G1[j, i])
                 - r2 * (G2[j + ONE, i] - G2[j, i]))
            ea = (E0[j, i] - rv * (area1[i + ONE] * A1[j, i + ONE] - area1[i] * A1[j, i])
                  - r2 * (A2[j + ONE, i] - A2[j, i]))
            de = (s ** gamma_c if s > 0.0 else 0.0) - ea
            U[iE, j, i] += de
            if feedback and not iso:
                U[IEN, j, i] -= de


@njit(cache=True, error_model="numpy")
def couple(W, U, C, PF, F2, acc, iE, iF1, iF2, iF3, gamma_c, vm, d_perp, dt, feedback, iso,
           e_floor, tight, area1, rvol1, vol1, dx2, js, je, is_, ie):
    """Apply the R/x flux divergence of ``F_1`` and the implicit coupling to ``U``.

    ``F2[iF2]`` holds the axis-2 fluxes of ``F_2`` (for ``X_ad``); ``d_perp`` is
    ``D`` across the field, ``rvol1 = 1/vol1``.  With ``tight`` (no diffusion,
    no streaming) E_c keeps its adiabatic value from :func:`entropy_update` (the
    residual work, O(P_c / (rho V_m^2)) of the adiabatic one, is dropped), the gas
    gets the impulse, and the flux is set to ``gamma_c E_c v`` of the new state.  Returns ``(streaming heating, energy
    added by the floor)`` summed over the cells with their volumes (per radian
    in cylindrical geometry).  ``acc`` is a work array ``[2, nt1]`` (per-column
    sums, so the cell loop has no scalar reduction).
    """
    vm2 = vm * vm
    vm2c = vm2 * (gamma_c - 1.0)
    rvm2 = 1.0 / vm2
    a = vm2 * dt
    gdt = gamma_c * dt if feedback else 0.0      # the gas inertia term k (none if frozen)
    for i in range(u(is_), u(ie)):
        acc[0, i] = 0.0
        acc[1, i] = 0.0
    for j in range(u(js), u(je)):
        r2 = dt / dx2[j]
        for i in range(u(is_), u(ie)):
            pc = vm2c * W[iE, j, i]
            d1 = -dt * (area1[i + ONE] * (PF[j, i + ONE] - pc)
                        - area1[i] * (PF[j, i] - pc)) * rvol1[i]
            f1 = U[iF1, j, i] + d1
            e = U[iE, j, i]
            f2 = U[iF2, j, i]
            f3 = U[iF3, j, i]
            rd = 1.0 / U[IDN, j, i]
            v1 = U[IM1, j, i] * rd
            v2 = U[IM2, j, i] * rd
            v3 = U[IM3, j, i] * rd
            # transport impulse X_ad = (F* - F^n) / V_m^2 (no flux for the phi component)
            vxa = (d1 * v1 - r2 * (F2[iF2, j + ONE, i] - F2[iF2, j, i]) * v2) * rvm2
            n1 = C[CB1, j, i]
            n2 = C[CB2, j, i]
            n3 = C[CB3, j, i]
            ak = a + gdt * (e if e > 0.0 else 0.0) * rd
            mp = dt / (C[CDPAR, j, i] + ak)
            mq = dt / (d_perp + ak)
            md = mp - mq
            vs = C[CVS, j, i]
            w1 = v1 + vs * n1
            w2 = v2 + vs * n2
            w3 = v3 + vs * n3
            wb = w1 * n1 + w2 * n2 + w3 * n3
            vb = v1 * n1 + v2 * n2 + v3 * n3
            fb = f1 * n1 + f2 * n2 + f3 * n3
            wmf = mq * (w1 * f1 + w2 * f2 + w3 * f3) + md * wb * fb
            wmv = mq * (w1 * v1 + w2 * v2 + w3 * v3) + md * wb * vb
            # tightly coupled: E_c is the adiabatic (entropy) value, no further exchange
            q = gamma_c * e if tight else gamma_c * (e + vxa - wmf) / (1.0 - gamma_c * wmv)
            x1 = f1 - q * v1
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
            enew += low
            U[iE, j, i] = enew
            if feedback:
                U[IM1, j, i] += x1
                U[IM2, j, i] += x2
                U[IM3, j, i] += x3
                if not iso:
                    U[IEN, j, i] -= de
            if tight:
                qn = gamma_c * enew / U[IDN, j, i]
                U[iF1, j, i] = qn * U[IM1, j, i]
                U[iF2, j, i] = qn * U[IM2, j, i]
                U[iF3, j, i] = qn * U[IM3, j, i]
            else:
                U[iF1, j, i] = f1 - vm2 * x1
                U[iF2, j, i] = f2 - vm2 * x2
                U[iF3, j, i] = f3 - vm2 * x3
            vol = vol1[i] * dx2[j]
            acc[0, i] += hs * vol
            acc[1, i] += low * vol
    heat = 0.0
    added = 0.0
    for i in range(u(is_), u(ie)):
        heat += acc[0, i]
        added += acc[1, i]
    return heat, added
