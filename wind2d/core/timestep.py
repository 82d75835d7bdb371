"""CFL time step over all signal speeds.

``dt = C / max_cells max((|v1| + c_f1)/dx1, (|v2| + c_f2)/dx2)`` with ``c_f``
the fast magnetosonic speed along each axis (the sound speed without field).
"""
import math

from numba import njit

from ..state import IDN, IV1, IV2, IPR, IB1, IB2, IB3
from .eos import fast_speed
from .indexing import u


@njit(cache=True, error_model="numpy")
def max_signal_rate(W, dx1, dx2, gamma, iso, cs2, mhd, js, je, is_, ie):
    """Largest (|v| + c_f)/dx over the interior; -1 if a cell is not finite or
    has non-positive density or pressure."""
    smax = 0.0
    for j in range(u(js), u(je)):
        idx2 = 1.0 / dx2[j]
        for i in range(u(is_), u(ie)):
            d = W[IDN, j, i]
            p = W[IPR, j, i]
            if not (d > 0.0 and p > 0.0 and d < 1e308 and p < 1e308):
                return -1.0
            if mhd:
                b1 = W[IB1, j, i]
                b2 = W[IB2, j, i]
                b3 = W[IB3, j, i]
                c1 = fast_speed(d, p, b1, b2, b3, gamma, iso, cs2)
                c2 = fast_speed(d, p, b2, b1, b3, gamma, iso, cs2)
            else:
                c1 = math.sqrt(cs2 if iso else gamma * p / d)
                c2 = c1
            s1 = (abs(W[IV1, j, i]) + c1) / dx1[i]
            s2 = (abs(W[IV2, j, i]) + c2) * idx2
            s = s1 if s1 > s2 else s2
            if not s < 1e308:
                return -1.0
            if s > smax:
                smax = s
    return smax
