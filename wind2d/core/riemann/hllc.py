"""HLLC approximate Riemann solver for gas without magnetic field (Toro, Spruce &
Speares 1994; Toro 2009, *Riemann Solvers and Numerical Methods*, sect. 10.4).

Ideal gas: two star states separated by the contact speed

    S* = (p_R - p_L + rho_L u_L (S_L - u_L) - rho_R u_R (S_R - u_R))
         / (rho_L (S_L - u_L) - rho_R (S_R - u_R)),

with ``U*_K = rho_K (S_K - u_K)/(S_K - S*) (1, S*, u_t1, u_t2,
E_K/rho_K + (S* - u_K)(S* + p_K/(rho_K (S_K - u_K))))`` and
``F*_K = F_K + S_K (U*_K - U_K)``.

Isothermal gas: density and normal momentum from the HLL state, the
tangential velocities carried by the contact ``S* = (rho u)_HLL / rho_HLL``.
"""
import math

from numba import njit

from ..eos import sound_speed2
from .flux import physical_flux, total_energy


@njit(cache=True, error_model="numpy", inline="always")
def hllc(dl, unl, ut1l, ut2l, pl, bt1l, bt2l,
         dr, unr, ut1r, ut2r, pr, bt1r, bt2r, bn, gamma, iso, cs2):
    cl = math.sqrt(sound_speed2(dl, pl, gamma, iso, cs2))
    cr = math.sqrt(sound_speed2(dr, pr, gamma, iso, cs2))
    sl = min(unl - cl, unr - cr)
    sr = max(unl + cl, unr + cr)
    el = total_energy(dl, unl, ut1l, ut2l, pl, 0.0, 0.0, 0.0, gamma, iso)
    er = total_energy(dr, unr, ut1r, ut2r, pr, 0.0, 0.0, 0.0, gamma, iso)
    if sl >= 0.0:
        return physical_flux(dl, unl, ut1l, ut2l, pl, 0.0, 0.0, 0.0, el)
    if sr <= 0.0:
        return physical_flux(dr, unr, ut1r, ut2r, pr, 0.0, 0.0, 0.0, er)
    if iso:
        fdl = dl * unl
        fdr = dr * unr
        fml = dl * unl * unl + pl
        fmr = dr * unr * unr + pr
        inv = 1.0 / (sr - sl)
        d_hll = (sr * dr - sl * dl - fdr + fdl) * inv
        m_hll = (sr * dr * unr - sl * dl * unl - fmr + fml) * inv
        fd = (sr * fdl - sl * fdr + sl * sr * (dr - dl)) * inv
        fm = (sr * fml - sl * fmr + sl * sr * (dr * unr - dl * unl)) * inv
        sm = m_hll / d_hll
        if sm >= 0.0:
            return (fd, fm, fd * ut1l, fd * ut2l, 0.0, 0.0, 0.0)
        return (fd, fm, fd * ut1r, fd * ut2r, 0.0, 0.0, 0.0)
    ql = dl * (sl - unl)
    qr = dr * (sr - unr)
    sm = (pr - pl + ql * unl - qr * unr) / (ql - qr)
    if sm >= 0.0:
        d, un, ut1, ut2, p, e, s = dl, unl, ut1l, ut2l, pl, el, sl
        q = ql
    else:
        d, un, ut1, ut2, p, e, s = dr, unr, ut1r, ut2r, pr, er, sr
        q = qr
    f = physical_flux(d, un, ut1, ut2, p, 0.0, 0.0, 0.0, e)
    ds = q / (s - sm)
    es = ds * (e / d + (sm - un) * (sm + p / q))
    return (f[0] + s * (ds - d),
            f[1] + s * (ds * sm - d * un),
            f[2] + s * (ds * ut1 - d * ut1),
            f[3] + s * (ds * ut2 - d * ut2),
            f[4] + s * (es - e),
            0.0, 0.0)
