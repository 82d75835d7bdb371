"""The State: variable map, conserved cell arrays and face-centred poloidal field.

Cell arrays are ``U[var, j, i]`` (float64, C order).  Conserved and primitive
arrays share one layout so that kernels use the same integer indices:

=====  ===============================  ==========================
index  conserved ``U``                  primitive ``W``
=====  ===============================  ==========================
0      density rho                      rho
1      momentum rho v1  (R or x)        v1
2      momentum rho v2  (z or y)        v2
3      momentum rho v3  (phi or z)      v3
4      total energy E                   pressure p
5-7    B1, B2, B3 (MHD runs only)       B1, B2, B3
...    rho * s for each passive scalar  s
...    module variables (densities)     the same values
=====  ===============================  ==========================

``B1`` and ``B2`` in the cell arrays are derived from the face fields
``b1[j, i]`` (on axis-1 faces, shape ``[nt2, nt1 + 1]``) and ``b2[j, i]`` (on
axis-2 faces, shape ``[nt2 + 1, nt1]``), area-weighted along R.  Only ``B3``
(B_phi) is a cell-centred evolved field.

Magnetic field is in Heaviside-Lorentz code units: magnetic pressure B^2/2.
"""
from __future__ import annotations

import numpy as np

IDN, IM1, IM2, IM3, IEN = 0, 1, 2, 3, 4
IV1, IV2, IV3, IPR = 1, 2, 3, 4
IB1, IB2, IB3 = 5, 6, 7


class VariableMap:
    """Names and integer indices of the cell variables of a run.

    ``fields`` are the variables physics modules own
    (:class:`wind2d.physics.Variable`-like objects with ``name``, ``kind`` and
    ``component``); they follow the passive scalars, from index ``nadv`` on.
    """

    def __init__(self, geometry: str, mhd: bool, scalars: tuple[str, ...] = (),
                 fields: tuple = ()):
        self.mhd = bool(mhd)
        self.nhydro = 8 if mhd else 5
        self.scalars = tuple(scalars)
        self.iscal = self.nhydro
        self.nadv = self.nhydro + len(self.scalars)
        self.fields = tuple(fields)
        self.nvar = self.nadv + len(self.fields)
        c = ("R", "z", "phi") if geometry == "cylindrical" else ("x", "y", "z")
        names = ["rho", f"v{c[0]}", f"v{c[1]}", f"v{c[2]}", "p"]
        if mhd:
            names += [f"B{c[0]}", f"B{c[1]}", f"B{c[2]}"]
        names += list(self.scalars)
        names += [f.name for f in self.fields]
        dup = sorted({n for n in names if names.count(n) > 1})
        if dup:
            from .errors import ParameterError
            raise ParameterError(f"variable name(s) used twice (gas, scalars or physics "
                                 f"modules): {', '.join(dup)}")
        self.primitive_names = tuple(names)
        self.index = {n: k for k, n in enumerate(names)}

    def components(self, k: int) -> list[int]:
        """Indices of module variables that are component ``k`` (1, 2, 3) of a vector."""
        return [self.nadv + n for n, f in enumerate(self.fields) if f.component == k]

    def __contains__(self, name: str) -> bool:
        return name in self.index


class State:
    """Conserved cells ``U`` plus face fields ``b1``, ``b2`` (zero-size when no field)."""

    def __init__(self, nvar: int, nt2: int, nt1: int, mhd: bool):
        self.U = np.zeros((nvar, nt2, nt1))
        if mhd:
            self.b1 = np.zeros((nt2, nt1 + 1))
            self.b2 = np.zeros((nt2 + 1, nt1))
        else:
            self.b1 = np.zeros((1, 1))
            self.b2 = np.zeros((1, 1))

    def copy_from(self, other: "State") -> None:
        self.U[...] = other.U
        self.b1[...] = other.b1
        self.b2[...] = other.b2
