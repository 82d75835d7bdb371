"""The poloidal flux function: field lines of an axisymmetric field as contours.

In axisymmetry a poloidal field can be written with the flux function
``psi(R, z) = R A_phi``::

    B_R = -(1/R) dpsi/dz,      B_z = (1/R) dpsi/dR,

so ``B . grad(psi) = 0``: psi is constant along every field line, and the
contours of psi are the field lines.  ``2 pi [psi(P) - psi(Q)]`` is the
magnetic flux through the surface of revolution swept by any curve from Q
to P (common practice; e.g. the flux function of axisymmetric equilibria,
Goedbloed & Poedts 2004, Principles of Magnetohydrodynamics, ch. 16, from
memory).

Exactness in the code's discretisation
--------------------------------------
wind2d evolves the poloidal field on faces by constrained transport:
``b1 = B_R`` on R-faces (area per radian ``A = R_f``), ``b2 = B_z`` on
z-faces, cell volume per radian and unit height ``V = (R_+^2 - R_-^2)/2``.
The flux per radian through a z-face is ``V b2`` and through an R-face
``A b1 dz``.  Define psi on cell corners by

    psi[j, i+1] = psi[j, i] + V_i b2[j, i]                (along a z-face row)
    psi[j+1, 0] = psi[j, 0] - A_0 b1[j, 0] dz_j           (up the inner edge)

with ``psi[0, 0] = 0`` (on the axis ``A_0 = 0``, so psi = 0 there).  The
difference of psi across any face is then minus/plus its flux, and summing
around one cell gives ``V dz div B``: the discrete divergence the CT update
keeps at round-off.  Hence psi is single valued (independent of the path of
faces) to round-off, every face flux is a psi difference, and a curve of
constant psi is crossed by no flux: its contours are the discrete field lines
exactly, not to truncation error.  If the faces were set from a vector
potential on corners (``Simulation.set_field``), psi equals ``R A_phi`` at the
corners to round-off.

The code's cell-centred field (``B_R`` area-weighted over the two R-faces,
``B_z`` the mean of the two z-faces) satisfies ``B_R d_R psi + B_z d_z psi = 0``
to round-off in each cell when the gradient is the cell-centred difference of
the corner values (the mean of the two edge differences).

Cartesian (x, y) geometry: ``A_z`` with ``B_x = dA/dy``, ``B_y = -dA/dx``
(area 1, volume ``dx``):

    psi[j, i+1] = psi[j, i] - dx_i b2[j, i],   psi[j+1, 0] = psi[j, 0] + dy_j b1[j, 0].

Units: code units of field x length^2 (per radian) in cylindrical geometry,
field x length in Cartesian; :func:`flux_function_from_snapshot` also gives
the factor to CGS (G cm^2 or G cm).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import ParameterError


@dataclass
class FluxFunction:
    """psi on cell corners ``[n2+1, n1+1]`` with the corner coordinates.

    ``x1``, ``x2`` are the cell edges (code units); ``to_cgs`` converts psi to
    ``unit``; ``exact`` is False when the face field had to be estimated from
    cell-centred values (old snapshots without faces, no axis); ``mismatch``
    is max |psi built along columns - psi built along rows| / max |psi|: the
    round-off-level measure of div B (NaN when not computed).
    """

    psi: np.ndarray
    x1: np.ndarray
    x2: np.ndarray
    geometry: str
    to_cgs: float = 1.0
    unit: str = ""
    exact: bool = True
    mismatch: float = float("nan")


def _metric(x1f: np.ndarray, cylindrical: bool):
    if cylindrical:
        return np.abs(x1f), np.abs(x1f[1:] ** 2 - x1f[:-1] ** 2) / 2.0
    return np.ones_like(x1f), np.diff(x1f)


def flux_function(b1, b2, x1f, x2f, geometry: str = "cylindrical",
                  check: bool = False):
    """psi on the cell corners from the face field.

    Parameters
    ----------
    b1 : array [n2, n1+1]
        Field on faces normal to axis 1 (B_R or B_x), interior faces with the
        two boundary faces.
    b2 : array [n2+1, n1]
        Field on faces normal to axis 2 (B_z or B_y).
    x1f, x2f : arrays (n1+1), (n2+1)
        Cell edges.
    geometry : {"cylindrical", "cartesian"}
    check : bool
        Also build psi the other way round (up every column from the bottom
        row) and return the largest difference relative to max |psi|.

    Returns
    -------
    psi : array [n2+1, n1+1]
        ``psi[j, i]`` at ``(x1f[i], x2f[j])``; zero at the corner (x1f[0], x2f[0]).
    mismatch : float, only with ``check``
    """
    b1 = np.asarray(b1, dtype=np.float64)
    b2 = np.asarray(b2, dtype=np.float64)
    x1f = np.asarray(x1f, dtype=np.float64)
    x2f = np.asarray(x2f, dtype=np.float64)
    n1, n2 = x1f.size - 1, x2f.size - 1
    if b1.shape != (n2, n1 + 1) or b2.shape != (n2 + 1, n1):
        raise ParameterError(f"flux_function: face fields of shapes {b1.shape} and {b2.shape} "
                             f"do not fit {n1} x {n2} cells (expected {(n2, n1 + 1)} and "
                             f"{(n2 + 1, n1)})")
    if geometry not in ("cylindrical", "cartesian"):
        raise ParameterError(f"flux_function: geometry = {geometry!r}; allowed values are "
                             "cylindrical, cartesian")
    cyl = geometry == "cylindrical"
    area, vol = _metric(x1f, cyl)
    dz = np.diff(x2f)
    s = 1.0 if cyl else -1.0
    psi = np.zeros((n2 + 1, n1 + 1))
    # up the inner edge (the axis in cylindrical geometry: zero there)
    psi[1:, 0] = np.cumsum(-s * area[0] * b1[:, 0] * dz)
    # along every z-face row
    psi[:, 1:] = psi[:, :1] + np.cumsum(s * vol[None, :] * b2, axis=1)
    if not check:
        return psi
    alt = np.zeros_like(psi)
    alt[0, 1:] = np.cumsum(s * vol * b2[0])
    alt[1:, :] = alt[:1, :] + np.cumsum(-s * area[None, :] * b1 * dz[:, None], axis=0)
    scale = np.max(np.abs(psi))
    mismatch = float(np.max(np.abs(alt - psi)) / scale) if scale > 0 else 0.0
    return psi, mismatch


def faces_from_cells(B1c, B2c, x1f, x2f, geometry: str = "cylindrical"):
    """Face fields estimated from the cell-centred field of a snapshot.

    With an axis (cylindrical, ``x1f[0] == 0``) the inversion is exact: the
    cell value ``B_R = (A_- b1_- + A_+ b1_+)/(A_- + A_+)`` with ``b1 = 0`` on
    the axis gives every R-face in turn (errors shrink by ``A_-/A_+`` from
    face to face), and ``div B = 0`` with ``B_z = (b2_- + b2_+)/2`` gives both
    z-faces of a cell: ``b2_-+ = B_z +- dz (A_+ b1_+ - A_- b1_-)/(2 V)``.
    Without an axis the inner face is unknown; the R- (x-) faces are then the
    area-weighted mean of the two neighbouring cells (extrapolated linearly at
    the two edges) and the result is only second-order accurate.

    Returns ``(b1, b2, exact)``.
    """
    B1c = np.asarray(B1c, dtype=np.float64)
    B2c = np.asarray(B2c, dtype=np.float64)
    x1f = np.asarray(x1f, dtype=np.float64)
    x2f = np.asarray(x2f, dtype=np.float64)
    n2, n1 = B1c.shape
    cyl = geometry == "cylindrical"
    area, vol = _metric(x1f, cyl)
    dz = np.diff(x2f)
    b1 = np.zeros((n2, n1 + 1))
    exact = cyl and x1f[0] == 0.0
    if exact:
        for i in range(n1):
            b1[:, i + 1] = ((area[i] + area[i + 1]) * B1c[:, i] - area[i] * b1[:, i]) \
                / area[i + 1]
    else:
        if cyl:
            xc = (2.0 / 3.0) * (x1f[1:] ** 3 - x1f[:-1] ** 3) / (x1f[1:] ** 2 - x1f[:-1] ** 2)
        else:
            xc = 0.5 * (x1f[1:] + x1f[:-1])
        if n1 == 1:
            b1[:] = B1c[:, :1]
        else:
            w = (x1f[1:-1] - xc[:-1]) / (xc[1:] - xc[:-1])
            b1[:, 1:-1] = (1.0 - w) * B1c[:, :-1] + w * B1c[:, 1:]
            for face, (a, b) in ((0, (0, 1)), (n1, (n1 - 2, n1 - 1))):
                slope = (B1c[:, b] - B1c[:, a]) / (xc[b] - xc[a])
                ref = a if face == 0 else b
                b1[:, face] = B1c[:, ref] + slope * (x1f[face] - xc[ref])
    D = (area[None, 1:] * b1[:, 1:] - area[None, :-1] * b1[:, :-1]) / vol[None, :]
    b2 = np.zeros((n2 + 1, n1))
    b2[:-1] = B2c + 0.5 * dz[:, None] * D          # lower face of every cell
    b2[-1] = B2c[-1] - 0.5 * dz[-1] * D[-1]         # upper face of the last row
    return b1, b2, bool(exact)


def flux_function_from_simulation(sim, check: bool = True) -> FluxFunction:
    """psi of a (serial) :class:`wind2d.Simulation` from its face field, code units."""
    if not sim.varmap.mhd:
        raise ParameterError("flux function: this simulation has no magnetic field "
                             "(built with mhd=False)")
    if sim.comm is not None:
        raise ParameterError("flux function: the simulation is split over MPI ranks; "
                             "use a snapshot (it holds the global face field)")
    m, st = sim.mesh, sim.state
    b1 = st.b1[m.js:m.je, m.is_:m.ie + 1]
    b2 = st.b2[m.js:m.je + 1, m.is_:m.ie]
    x1f, x2f = m.edges()
    psi, mis = flux_function(b1, b2, x1f, x2f, m.geometry, check=True) if check else \
        (flux_function(b1, b2, x1f, x2f, m.geometry), float("nan"))
    return FluxFunction(psi, x1f, x2f, m.geometry, mismatch=mis)


def flux_function_from_snapshot(snap, check: bool = True) -> FluxFunction:
    """psi of a snapshot (a path or a :class:`wind2d.io.read.Snapshot`).

    Uses the face field stored in the snapshot (``faces/``); for snapshots
    written without it, the faces are rebuilt from the cell-centred field by
    :func:`faces_from_cells` (exact with an axis, approximate otherwise:
    ``exact`` tells).  ``to_cgs`` turns psi into G cm^2 (per radian) in
    cylindrical geometry, G cm in Cartesian.
    """
    if not hasattr(snap, "fields"):
        from ..io import read_snapshot
        snap = read_snapshot(snap)
    a1, a2 = snap.axis_names
    faces = getattr(snap, "faces", None) or {}
    x1f, x2f = (np.asarray(e, dtype=np.float64) for e in snap.edges)
    if f"B{a1}" in faces and f"B{a2}" in faces:
        b1, b2, exact = faces[f"B{a1}"], faces[f"B{a2}"], True
    elif f"B{a1}" in snap.fields and f"B{a2}" in snap.fields:
        b1, b2, exact = faces_from_cells(snap._code.get(f"B{a1}", snap.fields[f"B{a1}"]),
                                         snap._code.get(f"B{a2}", snap.fields[f"B{a2}"]),
                                         x1f, x2f, snap.geometry)
    else:
        raise ParameterError(f"{snap.path}: no magnetic field in this snapshot (no field "
                             f"B{a1}, B{a2}); field lines need a magnetised run")
    b1 = np.asarray(getattr(b1, "value", b1), dtype=np.float64)
    b2 = np.asarray(getattr(b2, "value", b2), dtype=np.float64)
    if check:
        psi, mis = flux_function(b1, b2, x1f, x2f, snap.geometry, check=True)
    else:
        psi, mis = flux_function(b1, b2, x1f, x2f, snap.geometry), float("nan")
    bcgs = float(snap.to_cgs.get(f"B{a1}", 1.0))
    L = float(snap.length_to_cgs)
    cyl = snap.geometry == "cylindrical"
    return FluxFunction(psi, x1f, x2f, snap.geometry,
                        to_cgs=bcgs * L ** (2 if cyl else 1),
                        unit="G cm2" if cyl else "G cm", exact=exact, mismatch=mis)


def cell_gradient(psi, x1f, x2f):
    """Cell-centred gradient of corner values: the mean of the two edge differences
    along each axis, ``(d1 psi, d2 psi)`` each ``[n2, n1]``."""
    psi = np.asarray(psi, dtype=np.float64)
    d1 = np.diff(x1f)[None, :]
    d2 = np.diff(x2f)[:, None]
    g1 = 0.5 * ((psi[:-1, 1:] - psi[:-1, :-1]) + (psi[1:, 1:] - psi[1:, :-1])) / d1
    g2 = 0.5 * ((psi[1:, :-1] - psi[:-1, :-1]) + (psi[1:, 1:] - psi[:-1, 1:])) / d2
    return g1, g2
