"""Finite-volume update of the cell variables with the cylindrical geometric sources.

For a cell with axis-1 face areas ``A_-``, ``A_+`` (``R_f`` in cylindrical
geometry, 1 in Cartesian), volume ``V`` and axis-2 width ``dz``:

* density, z-momentum, energy, scalars:
  ``dU/dt = -(A_+ F_+ - A_- F_-)/V - (G_+ - G_-)/dz``;
* R-momentum: the face fluxes carry ``rho v_R^2 + P* - B_R^2`` with
  ``P* = p + B^2/2``; the source ``(P* + rho v_phi^2 - B_phi^2)/R`` uses the
  discrete ``1/R = (A_+ - A_-)/V``.  ``P*`` of the cell is subtracted inside the
  face fluxes, ``-(A_+ (F_+ - P*) - A_- (F_- - P*))/V``, so that a uniform
  pressure is an exact (bitwise) equilibrium;
* phi-momentum (angular momentum form):
  ``d(rho v_phi)/dt = -(A_+ R_+ F_+ - A_- R_- F_-)/(V R_c) - ...`` so that
  the total angular momentum ``sum V R_c rho v_phi`` is conserved to round-off;
* B_phi: ``dB_phi/dt = -(F_+ - F_-)/dR - (G_+ - G_-)/dz`` (no R weight: the
  induction equation for B_phi is a plain divergence in (R, z)).

``B1``, ``B2`` cell slots are skipped: they follow from the face fields, and so
are variables whose ``own[v]`` is non-zero: a physics module updates them itself
(``Module.updates_own_variables``).
"""
from numba import njit

from ..state import IDN, IM1, IM3, IEN, IPR, IV3, IB1, IB2, IB3
from .indexing import ONE, u


@njit(cache=True, error_model="numpy", inline="always")
def _rate(v, j, i, W, F1, F2, area1, h1f, h1c, vol1, geo1, dx1, dx2, cyl, mhd):
    """Flux divergence minus geometric source of variable ``v`` in cell (j, i)."""
    g2 = (F2[v, j + ONE, i] - F2[v, j, i]) / dx2[j]
    if v == IM3:
        g1 = (area1[i + ONE] * h1f[i + ONE] * F1[v, j, i + ONE]
              - area1[i] * h1f[i] * F1[v, j, i]) / (vol1[i] * h1c[i])
    elif v == IB3:
        g1 = (F1[v, j, i + ONE] - F1[v, j, i]) / dx1[i]
    elif v == IM1 and cyl:
        pst = W[IPR, j, i]
        src = W[IDN, j, i] * W[IV3, j, i] * W[IV3, j, i]
        if mhd:
            pst += 0.5 * (W[IB1, j, i] ** 2 + W[IB2, j, i] ** 2 + W[IB3, j, i] ** 2)
            src -= W[IB3, j, i] * W[IB3, j, i]
        g1 = (area1[i + ONE] * (F1[v, j, i + ONE] - pst)
              - area1[i] * (F1[v, j, i] - pst)) / vol1[i] - src * geo1[i]
    else:
        g1 = (area1[i + ONE] * F1[v, j, i + ONE] - area1[i] * F1[v, j, i]) / vol1[i]
    return g1 + g2


@njit(cache=True, error_model="numpy")
def update_cells(U0, U1, W, F1, F2, dt, area1, h1f, h1c, vol1, geo1, dx1, dx2,
                 cyl, mhd, iso, own, js, je, is_, ie):
    """``U1 = U0 - dt * div F + dt * S`` on the interior, with fluxes ``F1``, ``F2``,
    for every variable ``v`` with ``own[v] == 0``.

    One loop nest per kind of variable, so the inner loops carry no branches.
    """
    nv = U0.shape[0]
    for v in range(nv):
        if (mhd and (v == IB1 or v == IB2)) or (iso and v == IEN) or own[v] != 0:
            continue
        for j in range(u(js), u(je)):
            r2 = dt / dx2[j]
            if v == IM3:
                for i in range(u(is_), u(ie)):
                    U1[v, j, i] = (U0[v, j, i]
                                   - dt * (area1[i + ONE] * h1f[i + ONE] * F1[v, j, i + ONE]
                                           - area1[i] * h1f[i] * F1[v, j, i]) / (vol1[i] * h1c[i])
                                   - r2 * (F2[v, j + ONE, i] - F2[v, j, i]))
            elif v == IB3:
                for i in range(u(is_), u(ie)):
                    U1[v, j, i] = (U0[v, j, i] - dt * (F1[v, j, i + ONE] - F1[v, j, i]) / dx1[i]
                                   - r2 * (F2[v, j + ONE, i] - F2[v, j, i]))
            elif v == IM1 and cyl:
                for i in range(u(is_), u(ie)):
                    U1[v, j, i] = U0[v, j, i] - dt * _rate(v, j, i, W, F1, F2, area1, h1f, h1c,
                                                           vol1, geo1, dx1, dx2, cyl, mhd)
            else:
                for i in range(u(is_), u(ie)):
                    U1[v, j, i] = (U0[v, j, i]
                                   - dt * (area1[i + ONE] * F1[v, j, i + ONE]
                                           - area1[i] * F1[v, j, i]) / vol1[i]
                                   - r2 * (F2[v, j + ONE, i] - F2[v, j, i]))


@njit(cache=True, error_model="numpy")
def update_flagged(U0, U1, W, F1, F2, dt, area1, h1f, h1c, vol1, geo1, dx1, dx2,
                   cyl, mhd, iso, own, flags, js, je, is_, ie):
    """As ``update_cells`` but only for cells with a non-zero flag."""
    nv = U0.shape[0]
    for j in range(u(js), u(je)):
        for i in range(u(is_), u(ie)):
            if flags[j, i] == 0:
                continue
            for v in range(nv):
                if (mhd and (v == IB1 or v == IB2)) or (iso and v == IEN) or own[v] != 0:
                    continue
                U1[v, j, i] = U0[v, j, i] - dt * _rate(v, j, i, W, F1, F2, area1, h1f, h1c,
                                                       vol1, geo1, dx1, dx2, cyl, mhd)
