"""HLLD approximate Riemann solver for ideal MHD (Miyoshi & Kusano 2005,
J. Comput. Phys. 208, 315).

Four intermediate states bounded by the fast waves ``S_L, S_R`` (their eq. 67),
the rotational (Alfven) waves ``S*_L = S_M - |B_n|/sqrt(rho*_L)``,
``S*_R = S_M + |B_n|/sqrt(rho*_R)`` and the contact

    S_M = ((S_R - u_R) rho_R u_R - (S_L - u_L) rho_L u_L - pt_R + pt_L)
          / ((S_R - u_R) rho_R - (S_L - u_L) rho_L).

Normal velocity and total pressure are constant across the fan; the star
states follow from their eqs. (43)-(48), the double-star states from
eqs. (59)-(63).  When ``rho_K (S_K - u_K)(S_K - S_M) - B_n^2`` vanishes (the
degenerate case of their sect. 4) the tangential components are carried
over unchanged.  If an intermediate density or pressure comes out
non-positive, the solver falls back to HLLE for that face.  Ideal gas only.
"""
import math

from numba import njit

from ..eos import fast_speed
from .flux import physical_flux, total_energy
from .hlle import hlle

_SMALL = 1.0e-12


@njit(cache=True, error_model="numpy", inline="always")
def hlld(dl, unl, ut1l, ut2l, pl, bt1l, bt2l,
         dr, unr, ut1r, ut2r, pr, bt1r, bt2r, bn, gamma, iso, cs2):
    cl = fast_speed(dl, pl, bn, bt1l, bt2l, gamma, iso, cs2)
    cr = fast_speed(dr, pr, bn, bt1r, bt2r, gamma, iso, cs2)
    cmax = max(cl, cr)
    sl = min(unl, unr) - cmax
    sr = max(unl, unr) + cmax
    el = total_energy(dl, unl, ut1l, ut2l, pl, bn, bt1l, bt2l, gamma, iso)
    er = total_energy(dr, unr, ut1r, ut2r, pr, bn, bt1r, bt2r, gamma, iso)
    if sl >= 0.0:
        return physical_flux(dl, unl, ut1l, ut2l, pl, bn, bt1l, bt2l, el)
    if sr <= 0.0:
        return physical_flux(dr, unr, ut1r, ut2r, pr, bn, bt1r, bt2r, er)
    bn2 = bn * bn
    ptl = pl + 0.5 * (bn2 + bt1l * bt1l + bt2l * bt2l)
    ptr = pr + 0.5 * (bn2 + bt1r * bt1r + bt2r * bt2r)
    ql = dl * (sl - unl)
    qr = dr * (sr - unr)
    sm = (qr * unr - ql * unl - ptr + ptl) / (qr - ql)
    pts = (qr * ptl - ql * ptr + ql * qr * (unr - unl)) / (qr - ql)
    dsl = ql / (sl - sm)
    dsr = qr / (sr - sm)
    if not (dsl > 0.0 and dsr > 0.0 and pts > 0.0):
        return hlle(dl, unl, ut1l, ut2l, pl, bt1l, bt2l,
                    dr, unr, ut1r, ut2r, pr, bt1r, bt2r, bn, gamma, iso, cs2)

    # star states (MK05 eqs. 44-48)
    den = ql * (sl - sm) - bn2
    if abs(den) < _SMALL * (ql * (sl - sm) + bn2):
        vs1l, vs2l, bs1l, bs2l = ut1l, ut2l, bt1l, bt2l
    else:
        a = bn * (sm - unl) / den
        b = (ql * (sl - unl) - bn2) / den
        vs1l = ut1l - bt1l * a
        vs2l = ut2l - bt2l * a
        bs1l = bt1l * b
        bs2l = bt2l * b
    den = qr * (sr - sm) - bn2
    if abs(den) < _SMALL * (qr * (sr - sm) + bn2):
        vs1r, vs2r, bs1r, bs2r = ut1r, ut2r, bt1r, bt2r
    else:
        a = bn * (sm - unr) / den
        b = (qr * (sr - unr) - bn2) / den
        vs1r = ut1r - bt1r * a
        vs2r = ut2r - bt2r * a
        bs1r = bt1r * b
        bs2r = bt2r * b
    vbl = unl * bn + ut1l * bt1l + ut2l * bt2l
    vbr = unr * bn + ut1r * bt1r + ut2r * bt2r
    vbsl = sm * bn + vs1l * bs1l + vs2l * bs2l
    vbsr = sm * bn + vs1r * bs1r + vs2r * bs2r
    esl = ((sl - unl) * el - ptl * unl + pts * sm + bn * (vbl - vbsl)) / (sl - sm)
    esr = ((sr - unr) * er - ptr * unr + pts * sm + bn * (vbr - vbsr)) / (sr - sm)

    sql = math.sqrt(dsl)
    sqr = math.sqrt(dsr)
    ssl = sm - abs(bn) / sql
    ssr = sm + abs(bn) / sqr

    if ssl >= 0.0:
        f = physical_flux(dl, unl, ut1l, ut2l, pl, bn, bt1l, bt2l, el)
        return (f[0] + sl * (dsl - dl),
                f[1] + sl * (dsl * sm - dl * unl),
                f[2] + sl * (dsl * vs1l - dl * ut1l),
                f[3] + sl * (dsl * vs2l - dl * ut2l),
                f[4] + sl * (esl - el),
                f[5] + sl * (bs1l - bt1l),
                f[6] + sl * (bs2l - bt2l))
    if ssr <= 0.0:
        f = physical_flux(dr, unr, ut1r, ut2r, pr, bn, bt1r, bt2r, er)
        return (f[0] + sr * (dsr - dr),
                f[1] + sr * (dsr * sm - dr * unr),
                f[2] + sr * (dsr * vs1r - dr * ut1r),
                f[3] + sr * (dsr * vs2r - dr * ut2r),
                f[4] + sr * (esr - er),
                f[5] + sr * (bs1r - bt1r),
                f[6] + sr * (bs2r - bt2r))

    # double-star states (MK05 eqs. 59-63)
    sgn = 1.0 if bn > 0.0 else (-1.0 if bn < 0.0 else 0.0)
    inv = 1.0 / (sql + sqr)
    vss1 = (sql * vs1l + sqr * vs1r + (bs1r - bs1l) * sgn) * inv
    vss2 = (sql * vs2l + sqr * vs2r + (bs2r - bs2l) * sgn) * inv
    bss1 = (sql * bs1r + sqr * bs1l + sql * sqr * (vs1r - vs1l) * sgn) * inv
    bss2 = (sql * bs2r + sqr * bs2l + sql * sqr * (vs2r - vs2l) * sgn) * inv
    vbss = sm * bn + vss1 * bss1 + vss2 * bss2
    if sm >= 0.0:
        f = physical_flux(dl, unl, ut1l, ut2l, pl, bn, bt1l, bt2l, el)
        esslv = esl - sql * (vbsl - vbss) * sgn
        # F**_L = F_L + S*_L U**_L - (S*_L - S_L) U*_L - S_L U_L
        return (f[0] + ssl * dsl - (ssl - sl) * dsl - sl * dl,
                f[1] + ssl * dsl * sm - (ssl - sl) * dsl * sm - sl * dl * unl,
                f[2] + ssl * dsl * vss1 - (ssl - sl) * dsl * vs1l - sl * dl * ut1l,
                f[3] + ssl * dsl * vss2 - (ssl - sl) * dsl * vs2l - sl * dl * ut2l,
                f[4] + ssl * esslv - (ssl - sl) * esl - sl * el,
                f[5] + ssl * bss1 - (ssl - sl) * bs1l - sl * bt1l,
                f[6] + ssl * bss2 - (ssl - sl) * bs2l - sl * bt2l)
    f = physical_flux(dr, unr, ut1r, ut2r, pr, bn, bt1r, bt2r, er)
    essrv = esr + sqr * (vbsr - vbss) * sgn
    return (f[0] + ssr * dsr - (ssr - sr) * dsr - sr * dr,
            f[1] + ssr * dsr * sm - (ssr - sr) * dsr * sm - sr * dr * unr,
            f[2] + ssr * dsr * vss1 - (ssr - sr) * dsr * vs1r - sr * dr * ut1r,
            f[3] + ssr * dsr * vss2 - (ssr - sr) * dsr * vs2r - sr * dr * ut2r,
            f[4] + ssr * essrv - (ssr - sr) * esr - sr * er,
            f[5] + ssr * bss1 - (ssr - sr) * bs1r - sr * bt1r,
            f[6] + ssr * bss2 - (ssr - sr) * bs2r - sr * bt2r)
