"""Piecewise-linear reconstruction in primitive variables on non-uniform spacing.

Slopes use the distances between cell centres (volume centroids in R), so the
scheme stays second order and monotone on stretched and cylindrical grids
(generalised limiters of Mignone 2014, J. Comput. Phys. 270, 784).  For cell
``k`` with backward, forward and central differences ``dL, dR, dC`` and
``cL = (x_k - x_{k-1})/(x_k - x_{k-1/2})``, ``cR = (x_{k+1} - x_k)/(x_{k+1/2} - x_k)``
(both 2 on a uniform grid):

* monotonised central: ``s = sgn min(|dC|, cL |dL|, cR |dR|)`` when ``dL dR > 0``;
* van Leer: ``s = dL dR (cR dL + cL dR) / (dL^2 + (cL + cR - 2) dL dR + dR^2)``;
* minmod: ``s = sgn min(|dL|, |dR|)``.

Face values are ``w_k + s (x_{k -+ 1/2} - x_k)``.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit

LIMITERS = {"first_order": 0, "mc": 1, "vanleer": 2, "minmod": 3}

# rows of the per-axis coefficient table
G_IDL, G_IDR, G_IDC, G_CL, G_CR, G_DFL, G_DFR = range(7)


def axis_coefficients(xf: np.ndarray, xc: np.ndarray) -> np.ndarray:
    """Per-cell coefficient table ``[7, n]`` for one axis (ends left at zero)."""
    n = xc.size
    g = np.zeros((7, n))
    k = np.arange(1, n - 1)
    g[G_IDL, k] = 1.0 / (xc[k] - xc[k - 1])
    g[G_IDR, k] = 1.0 / (xc[k + 1] - xc[k])
    g[G_IDC, k] = 1.0 / (xc[k + 1] - xc[k - 1])
    g[G_CL, k] = (xc[k] - xc[k - 1]) / (xc[k] - xf[k])
    g[G_CR, k] = (xc[k + 1] - xc[k]) / (xf[k + 1] - xc[k])
    g[G_DFL, :] = xf[:-1] - xc
    g[G_DFR, :] = xf[1:] - xc
    return np.ascontiguousarray(g)


@njit(cache=True, error_model="numpy", inline="always")
def limited_slope(wm, w0, wp, idl, idr, idc, cl, cr, limiter):
    """Limited slope dw/dx of cell 0 from its neighbours ``wm``, ``wp``.

    Written without data-dependent branches so the row loops vectorise; the
    ``limiter`` test is loop-invariant and hoisted by the compiler.
    """
    dl = (w0 - wm) * idl
    dr = (wp - w0) * idr
    same = dl * dr > 0.0
    if limiter == 1:
        dc = (wp - wm) * idc
        m = min(abs(dc), min(cl * abs(dl), cr * abs(dr)))
        return math.copysign(m, dc) if same else 0.0
    if limiter == 2:
        den = dl * dl + (cl + cr - 2.0) * dl * dr + dr * dr
        return dl * dr * (cr * dl + cl * dr) / den if same else 0.0
    if limiter == 3:
        return math.copysign(min(abs(dl), abs(dr)), dl) if same else 0.0
    return 0.0
