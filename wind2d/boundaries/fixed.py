"""Fixed state: ghost cells hold a given primitive state ``w`` (code units) and
ghost faces its field components."""
from numba import njit


@njit(cache=True, error_model="numpy")
def fixed(W, bn, bt, side, ng, is_, ie, w, ibn, ibt, mhd):
    nv, nt, _ = W.shape
    for k in range(1, ng + 1):
        g = is_ - k if side == 0 else ie + k - 1
        for v in range(nv):
            for t in range(nt):
                W[v, t, g] = w[v]
    if mhd:
        for t in range(bn.shape[0]):
            for k in range(1, ng + 1):
                bn[t, is_ - k if side == 0 else ie + k] = w[ibn]
        for t in range(bt.shape[0]):
            for k in range(1, ng + 1):
                bt[t, is_ - k if side == 0 else ie + k - 1] = w[ibt]
