"""Constrained transport of the poloidal field on faces (Evans & Hawley 1988).

``b1`` lives on axis-1 faces (R or x), ``b2`` on axis-2 faces (z or y); the
electric field ``E3 = v1 B2 - v2 B1`` (``E_phi = v_R B_z - v_z B_R``) lives on
cell corners, ``E3[j, i]`` at ``(x1_{i-1/2}, x2_{j-1/2})``.  Faraday's law in
integral form over each face:

    b1 += dt (E3[j+1, i] - E3[j, i]) / dz
    b2 -= dt (A_{i+1} E3[j, i+1] - A_i E3[j, i]) / V_i

with the same ``A`` and ``V`` as the divergence

    div B = (A_{i+1} b1[i+1] - A_i b1[i]) / V_i + (b2[j+1] - b2[j]) / dz,

so the divergence is preserved to round-off, also in the cell next to the
axis where ``A = R = 0``.

Corner fields use the upwind-weighted "CT-contact" average of Gardiner &
Stone (2005, J. Comput. Phys. 205, 509): the mean of the four face fields
corrected by the gradients of E3 between faces and cell centres, each
gradient taken from the upwind side of the contact (sign of the mass flux).
"""
from numba import njit

from ..state import IDN, IV1, IV2, IB1, IB2
from .indexing import ONE, u


@njit(cache=True, error_model="numpy", inline="always")
def _pick(fm, a, b):
    if fm > 0.0:
        return a
    if fm < 0.0:
        return b
    return 0.5 * (a + b)


@njit(cache=True, error_model="numpy")
def corner_emf(W, F1, F2, E3, Ec, js, je, is_, ie, zero_edges):
    """Fill corner fields ``E3[j, i]`` for ``js <= j <= je``, ``is_ <= i <= ie``.

    ``zero_edges[k]`` (x1 low, x1 high, x2 low, x2 high) sets E3 = 0 on that edge:
    on the axis and on reflecting walls E3 is odd under the mirror, so it vanishes
    there exactly (the upwind choice would otherwise follow round-off in the mass flux).
    """
    for j in range(u(js) - ONE, u(je) + ONE):
        for i in range(u(is_) - ONE, u(ie) + ONE):
            Ec[j, i] = W[IV1, j, i] * W[IB2, j, i] - W[IV2, j, i] * W[IB1, j, i]
    for j in range(u(js), u(je) + ONE):
        for i in range(u(is_), u(ie) + ONE):
            e1n = F1[IB2, j, i]          # axis-1 face (i-1/2, j)
            e1s = F1[IB2, j - ONE, i]      # axis-1 face (i-1/2, j-1)
            e2e = -F2[IB1, j, i]         # axis-2 face (i, j-1/2)
            e2w = -F2[IB1, j, i - ONE]     # axis-2 face (i-1, j-1/2)
            dyu = _pick(F1[IDN, j, i], Ec[j, i - ONE] - e2w, Ec[j, i] - e2e)
            dyd = _pick(F1[IDN, j - ONE, i], e2w - Ec[j - ONE, i - ONE], e2e - Ec[j - ONE, i])
            dxr = _pick(F2[IDN, j, i], Ec[j - ONE, i] - e1s, Ec[j, i] - e1n)
            dxl = _pick(F2[IDN, j, i - ONE], e1s - Ec[j - ONE, i - ONE], e1n - Ec[j, i - ONE])
            E3[j, i] = 0.25 * (e1n + e1s + e2e + e2w) - 0.25 * (dyu - dyd + dxr - dxl)
    for j in range(js, je + 1):
        if zero_edges[0]:
            E3[j, is_] = 0.0
        if zero_edges[1]:
            E3[j, ie] = 0.0
    for i in range(is_, ie + 1):
        if zero_edges[2]:
            E3[js, i] = 0.0
        if zero_edges[3]:
            E3[je, i] = 0.0


@njit(cache=True, error_model="numpy")
def update_faces(b1_0, b2_0, b1, b2, E3, dt, area1, vol1, dx2, js, je, is_, ie):
    """Advance the interior face fields (boundary faces included) by ``dt``."""
    for j in range(u(js), u(je)):
        r = dt / dx2[j]
        for i in range(u(is_), u(ie) + ONE):
            b1[j, i] = b1_0[j, i] + r * (E3[j + ONE, i] - E3[j, i])
    for j in range(u(js), u(je) + ONE):
        for i in range(u(is_), u(ie)):
            b2[j, i] = b2_0[j, i] - dt * (area1[i + ONE] * E3[j, i + ONE]
                                         - area1[i] * E3[j, i]) / vol1[i]


@njit(cache=True, error_model="numpy")
def cell_centred_field(b1, b2, W, area1, j0, j1, i0, i1):
    """Cell-centred B1 (area-weighted along axis 1) and B2 (mean) from the faces."""
    for j in range(u(j0), u(j1)):
        for i in range(u(i0), u(i1)):
            a0 = area1[i]
            a1 = area1[i + ONE]
            W[IB1, j, i] = (a0 * b1[j, i] + a1 * b1[j, i + ONE]) / (a0 + a1)
            W[IB2, j, i] = 0.5 * (b2[j, i] + b2[j + ONE, i])


@njit(cache=True, error_model="numpy")
def divergence(b1, b2, area1, vol1, dx2, js, je, is_, ie, out):
    """Discrete div B of the interior cells into ``out[j - js, i - is_]``."""
    for j in range(js, je):
        for i in range(is_, ie):
            out[j - js, i - is_] = ((area1[i + 1] * b1[j, i + 1] - area1[i] * b1[j, i]) / vol1[i]
                                    + (b2[j + 1, i] - b2[j, i]) / dx2[j])
