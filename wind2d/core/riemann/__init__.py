"""Riemann solvers; one file per method, selected by name.

Every solver is a scalar numba function with the same signature
``(rho, u_n, u_t1, u_t2, p, B_t1, B_t2)_L, (...)_R, B_n, gamma, iso, cs2``
returning the 7 flux components ``(rho, m_n, m_t1, m_t2, E, B_t1, B_t2)``.
The sweep kernels dispatch on the integer id below.
"""
SOLVERS = {"hlle": 0, "hllc": 1, "hlld": 2}
# which solvers handle which physics
GAS_ONLY = ("hllc",)
MHD_ONLY = ("hlld",)
IDEAL_ONLY = ("hlld",)

__all__ = ["SOLVERS", "GAS_ONLY", "MHD_ONLY", "IDEAL_ONLY"]
