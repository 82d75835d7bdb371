"""Collisional cosmic-ray losses: Coulomb and hadronic (optional).

Loss rates per unit cosmic-ray energy density (CGS, from memory, after Guo &
Oh 2008, MNRAS 384, 251 and Pfrommer et al. 2017, MNRAS 465, 4500; check the
originals before relying on the numbers; they are parameters)::

    Lambda_C = a_C n_e E_c,   a_C = 2.78e-16 cm^3 s^-1   (Coulomb, all to the gas)
    Lambda_h = a_h n_e E_c,   a_h = 4.73e-16 cm^3 s^-1   (hadronic; a_C + a_h =
                                                          7.51e-16, the total of
                                                          the sources above)

A fraction ``f_h`` (1/6 by default, from memory: the share of the pion-decay
energy that ends in secondary electrons thermalised in the gas) of the
hadronic loss heats the gas; the rest leaves the system (gamma rays,
neutrinos) and is tallied.  ``n_e = rho / (mu_e m_H)`` with ``mu_e = 1.18``
for a fully ionised gas of hydrogen mass fraction 0.7 (common practice).

Over a step the losses are integrated exactly,
``E_c' = E_c exp(-(a_C + a_h) n_e dt)`` (unconditionally stable, positive).
"""
from __future__ import annotations

import math

from numba import njit

from ...core.indexing import u
from ...state import IDN, IEN


@njit(cache=True, error_model="numpy")
def apply_losses(U, iE, rate_c, rate_h, f_heat_h, dt, feedback, iso, vol1, dx2,
                 js, je, is_, ie):
    """Decay ``E_c`` over ``dt``; ``rate_c``, ``rate_h`` are ``a n_e / rho`` in code
    units (rate per unit density).  Returns (energy to the gas, energy lost from
    the system), volume-weighted."""
    heat = 0.0
    lost = 0.0
    rt = rate_c + rate_h
    fh = (rate_c + f_heat_h * rate_h) / rt if rt > 0.0 else 0.0
    for j in range(u(js), u(je)):
        for i in range(u(is_), u(ie)):
            e = U[iE, j, i]
            if e <= 0.0:
                continue
            de = e * -math.expm1(-rt * U[IDN, j, i] * dt)
            U[iE, j, i] = e - de
            h = fh * de
            if feedback and not iso:
                U[IEN, j, i] += h
            vol = vol1[i] * dx2[j]
            heat += h * vol
            lost += (de - h) * vol
    return heat, lost
