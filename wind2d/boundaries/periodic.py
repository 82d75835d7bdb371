"""Periodic: ghost cells and ghost faces copy the opposite end of the axis.
The two boundary faces of the normal field are the same face; they receive
bitwise identical updates because their stencils are identical copies."""
from numba import njit


@njit(cache=True, error_model="numpy")
def periodic(W, bn, bt, ng, is_, ie, mhd):
    nv, nt, _ = W.shape
    n = ie - is_
    for k in range(1, ng + 1):
        for v in range(nv):
            for t in range(nt):
                W[v, t, is_ - k] = W[v, t, ie - k]
                W[v, t, ie + k - 1] = W[v, t, is_ + k - 1]
    if mhd:
        for t in range(bn.shape[0]):
            bn[t, ie] = bn[t, is_]
            for k in range(1, ng + 1):
                bn[t, is_ - k] = bn[t, is_ - k + n]
                bn[t, ie + k] = bn[t, is_ + k]
        for t in range(bt.shape[0]):
            for k in range(1, ng + 1):
                bt[t, is_ - k] = bt[t, ie - k]
                bt[t, ie + k - 1] = bt[t, is_ + k - 1]
