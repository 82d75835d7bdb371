"""The injection kernel: energy, cosmic-ray energy and returned mass into cells."""
from __future__ import annotations

from numba import njit

from ...core.indexing import u
from ...state import IDN, IEN, IM1, IM2, IM3


@njit(cache=True, error_model="numpy")
def deposit(U, wgt, e_th, e_cr, dm, iE, iso, nhydro, nadv, vol1, dx2, js, je, is_, ie):
    """Add ``e_th * w``, ``e_cr * w`` (energy densities) and ``dm * w`` (mass
    density) to the interior cells, ``w = wgt[j, i]`` a weight per unit volume.

    The returned mass takes the velocity of the gas of its cell (the velocity
    is unchanged: momentum ``+= drho v``), brings its kinetic energy
    ``drho v^2 / 2`` into the total energy, and keeps the mass fractions of the
    passive scalars.  The thermal energy goes to the total energy ``U[IEN]``
    (ideal gas), the cosmic-ray energy to ``U[iE]`` (when ``iE >= 0``).

    Returns the amounts added, summed with the cell volumes (per radian):
    ``(thermal, cosmic-ray, mass, kinetic)``.
    """
    th = 0.0
    cr = 0.0
    mass = 0.0
    kin = 0.0
    for j in range(u(js), u(je)):
        for i in range(u(is_), u(ie)):
            w = wgt[j, i]
            if w == 0.0:
                continue
            vol = vol1[i] * dx2[j]
            if dm > 0.0:
                d = U[IDN, j, i]
                drho = dm * w
                v1 = U[IM1, j, i] / d
                v2 = U[IM2, j, i] / d
                v3 = U[IM3, j, i] / d
                ek = 0.5 * drho * (v1 * v1 + v2 * v2 + v3 * v3)
                frac = drho / d
                U[IDN, j, i] = d + drho
                U[IM1, j, i] += drho * v1
                U[IM2, j, i] += drho * v2
                U[IM3, j, i] += drho * v3
                for v in range(nhydro, nadv):
                    U[v, j, i] += frac * U[v, j, i]
                if not iso:
                    U[IEN, j, i] += ek
                    kin += ek * vol
                mass += drho * vol
            if e_th > 0.0:
                de = e_th * w
                U[IEN, j, i] += de
                th += de * vol
            if iE >= 0 and e_cr > 0.0:
                de = e_cr * w
                U[iE, j, i] += de
                cr += de * vol
    return th, cr, mass, kin
