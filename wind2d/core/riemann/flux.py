"""Physical MHD flux and conserved energy of one face state (shared by the solvers).

Normal direction ``n``, tangential ``t1``, ``t2``; field in Heaviside-Lorentz
units.  With total pressure ``pt = p + B^2/2``:

    F = (rho u_n, rho u_n^2 + pt - B_n^2, rho u_n u_t1 - B_n B_t1,
         rho u_n u_t2 - B_n B_t2, (E + pt) u_n - B_n (u . B),
         B_t1 u_n - B_n u_t1, B_t2 u_n - B_n u_t2)
"""
from numba import njit


@njit(cache=True, error_model="numpy", inline="always")
def total_energy(d, un, ut1, ut2, p, bn, bt1, bt2, gamma, iso):
    """E = p/(gamma-1) + rho u^2/2 + B^2/2 (0 for the isothermal EOS)."""
    if iso:
        return 0.0
    return p / (gamma - 1.0) + 0.5 * d * (un * un + ut1 * ut1 + ut2 * ut2) \
        + 0.5 * (bn * bn + bt1 * bt1 + bt2 * bt2)


@njit(cache=True, error_model="numpy", inline="always")
def physical_flux(d, un, ut1, ut2, p, bn, bt1, bt2, e):
    """Return the 7 flux components for one state with total energy ``e``."""
    pt = p + 0.5 * (bn * bn + bt1 * bt1 + bt2 * bt2)
    ub = un * bn + ut1 * bt1 + ut2 * bt2
    return (d * un,
            d * un * un + pt - bn * bn,
            d * un * ut1 - bn * bt1,
            d * un * ut2 - bn * bt2,
            (e + pt) * un - bn * ub,
            bt1 * un - bn * ut1,
            bt2 * un - bn * ut2)
