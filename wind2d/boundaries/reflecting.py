"""Reflecting wall: ghost cells mirror the interior, the normal velocity and the
normal field change sign (common practice for a slip wall; mass, energy and
tangential momentum fluxes through the wall vanish by symmetry).

Kernels see the side as "axis 1": ``W[var, t, n]``, normal faces ``bn[t, n]``,
tangential faces ``bt[t, n]``; the caller passes transposed views for axis 2.
"""
from numba import njit


@njit(cache=True)
def mirror(W, bn, bt, side, ng, is_, ie, flips, flip_bn, zero_face, mhd):
    """Mirror ghost cells about the boundary face, negating the variables in ``flips``."""
    nv, nt, _ = W.shape
    for k in range(1, ng + 1):
        g = is_ - k if side == 0 else ie + k - 1
        s = is_ + k - 1 if side == 0 else ie - k
        for v in range(nv):
            sign = 1.0
            for f in flips:
                if f == v:
                    sign = -1.0
            for t in range(nt):
                W[v, t, g] = sign * W[v, t, s]
    if mhd:
        sb = -1.0 if flip_bn else 1.0
        wall = is_ if side == 0 else ie
        for t in range(bn.shape[0]):
            if zero_face:
                bn[t, wall] = 0.0
            for k in range(1, ng + 1):
                if side == 0:
                    bn[t, is_ - k] = sb * bn[t, is_ + k]
                else:
                    bn[t, ie + k] = sb * bn[t, ie - k]
        for t in range(bt.shape[0]):
            for k in range(1, ng + 1):
                if side == 0:
                    bt[t, is_ - k] = bt[t, is_ + k - 1]
                else:
                    bt[t, ie + k - 1] = bt[t, ie - k]
