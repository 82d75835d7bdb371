"""HLLE approximate Riemann solver (Harten, Lax & van Leer 1983; Einfeldt 1988).

One intermediate state between the fastest left- and right-going signals
``S_L = min(u_L - c_L, u_R - c_R)``, ``S_R = max(u_L + c_L, u_R + c_R)``
(fast magnetosonic speeds, Davis 1988 estimates):

    F = (S_R F_L - S_L F_R + S_L S_R (U_R - U_L)) / (S_R - S_L)

Works for gas and MHD, ideal and isothermal; positively conservative, so it
is also the fallback solver of the other methods.
"""
from numba import njit

from ..eos import fast_speed
from .flux import physical_flux, total_energy


@njit(cache=True, error_model="numpy", inline="always")
def hlle(dl, unl, ut1l, ut2l, pl, bt1l, bt2l,
         dr, unr, ut1r, ut2r, pr, bt1r, bt2r, bn, gamma, iso, cs2):
    cl = fast_speed(dl, pl, bn, bt1l, bt2l, gamma, iso, cs2)
    cr = fast_speed(dr, pr, bn, bt1r, bt2r, gamma, iso, cs2)
    sl = min(unl - cl, unr - cr)
    sr = max(unl + cl, unr + cr)
    el = total_energy(dl, unl, ut1l, ut2l, pl, bn, bt1l, bt2l, gamma, iso)
    er = total_energy(dr, unr, ut1r, ut2r, pr, bn, bt1r, bt2r, gamma, iso)
    if sl >= 0.0:
        return physical_flux(dl, unl, ut1l, ut2l, pl, bn, bt1l, bt2l, el)
    if sr <= 0.0:
        return physical_flux(dr, unr, ut1r, ut2r, pr, bn, bt1r, bt2r, er)
    fl = physical_flux(dl, unl, ut1l, ut2l, pl, bn, bt1l, bt2l, el)
    fr = physical_flux(dr, unr, ut1r, ut2r, pr, bn, bt1r, bt2r, er)
    a = sr / (sr - sl)
    b = -sl / (sr - sl)
    c = sl * sr / (sr - sl)
    return (a * fl[0] + b * fr[0] + c * (dr - dl),
            a * fl[1] + b * fr[1] + c * (dr * unr - dl * unl),
            a * fl[2] + b * fr[2] + c * (dr * ut1r - dl * ut1l),
            a * fl[3] + b * fr[3] + c * (dr * ut2r - dl * ut2l),
            a * fl[4] + b * fr[4] + c * (er - el),
            a * fl[5] + b * fr[5] + c * (bt1r - bt1l),
            a * fl[6] + b * fr[6] + c * (bt2r - bt2l))
