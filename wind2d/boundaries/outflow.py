"""Outflow: zero-gradient ghost cells, with inflow suppressed (a ghost normal
velocity pointing into the domain is set to zero, so the boundary never
feeds mass in).  Face fields are copied outward."""
from numba import njit


@njit(cache=True, error_model="numpy")
def outflow(W, bn, bt, side, ng, is_, ie, inorm, mhd):
    nv, nt, _ = W.shape
    for k in range(1, ng + 1):
        g = is_ - k if side == 0 else ie + k - 1
        s = is_ if side == 0 else ie - 1
        for v in range(nv):
            for t in range(nt):
                W[v, t, g] = W[v, t, s]
        for t in range(nt):
            vn = W[inorm, t, g]
            if (side == 0 and vn > 0.0) or (side == 1 and vn < 0.0):
                W[inorm, t, g] = 0.0
    if mhd:
        for t in range(bn.shape[0]):
            for k in range(1, ng + 1):
                if side == 0:
                    bn[t, is_ - k] = bn[t, is_]
                else:
                    bn[t, ie + k] = bn[t, ie]
        for t in range(bt.shape[0]):
            for k in range(1, ng + 1):
                if side == 0:
                    bt[t, is_ - k] = bt[t, is_]
                else:
                    bt[t, ie + k - 1] = bt[t, ie - 1]
