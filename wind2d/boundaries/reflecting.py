"""Reflecting (slip) wall: ghost cells are the mirror image of the interior.

The normal components of velocity and field are odd, the tangential ones
even (common practice for a slip wall): the field lies along the wall, no
current sheet forms on it, and the mass, energy and tangential-momentum
fluxes through the wall vanish by symmetry.  A field that threads the wall
is not a mirror-symmetric state; give such problems an outflow or fixed edge.

Kernels see the side as "axis 1": ``W[var, t, n]``, normal faces ``bn[t, n]``,
tangential faces ``bt[t, n]``; the caller passes transposed views for axis 2.
"""
from numba import njit


@njit(cache=True, error_model="numpy")
def mirror(W, bn, bt, side, ng, is_, ie, flips, flip_bn, flip_bt, zero_face, mhd):
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
        st = -1.0 if flip_bt else 1.0
        for t in range(bt.shape[0]):
            for k in range(1, ng + 1):
                if side == 0:
                    bt[t, is_ - k] = st * bt[t, is_ + k - 1]
                else:
                    bt[t, ie + k - 1] = st * bt[t, ie - k]
