"""One-dimensional profiles of a snapshot field.

* along ``z``: the average over the cells of each row whose centre lies in the
  cylinder ``R <= radius`` (at least the innermost column);
* along ``r`` (spherical radius from the origin): the average over the cells
  whose centre lies in the double cone of half-opening angle ``cone`` around
  the axis (``|z| >= r cos(cone)``, both hemispheres), in radial bins of equal
  width.

Averages are volume weighted (``sum V f / sum V``, per-radian cell volumes in
cylindrical geometry) or mass weighted (``sum rho V f / sum rho V``).  Bins
that hold no cell are left out.  On a Cartesian grid R and z read x and y.
"""
from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from ..errors import ParameterError


def find_snapshot(path) -> Path:
    """A snapshot file, or the last snapshot of a run directory."""
    p = Path(path)
    if p.is_dir():
        snaps = sorted((p / "snapshots").glob("snapshot_*.h5"))
        if not snaps:
            raise ParameterError(f"{p}: no snapshots (expected {p}/snapshots/snapshot_*.h5)")
        return snaps[-1]
    if not p.is_file():
        raise ParameterError(f"{p}: no such snapshot or run directory")
    return p


def cell_volumes(snap) -> np.ndarray:
    """Cell volumes [n2, n1] of a snapshot in code units (per radian in cylindrical)."""
    e1, e2 = snap.edges
    if snap.geometry == "cylindrical":
        v1 = 0.5 * np.abs(e1[1:] ** 2 - e1[:-1] ** 2)
    else:
        v1 = np.diff(e1)
    return np.outer(np.diff(e2), v1)


def _weights(snap, weight: str) -> np.ndarray:
    V = cell_volumes(snap)
    if weight == "volume":
        return V
    if weight == "mass":
        return V * snap.field("rho")
    raise ParameterError(f"weight {weight!r}: allowed values are volume, mass")


def _field(snap, field):
    if field not in snap.fields:
        raise ParameterError(f"--field {field!r}: not in {snap.path}; available: "
                             + ", ".join(sorted(snap.fields)))
    return snap.field(field)


def profile_z(snap, field: str, radius: float | None = None, weight: str = "volume"):
    """Average of ``field`` over ``R <= radius`` in each row.

    Returns ``(z centres, values)`` in code units; ``radius`` in code units
    (default: a tenth of the R range, at least one column).
    """
    R, z = snap.centres
    e1 = snap.edges[0]
    if radius is None:
        radius = e1[0] + 0.1 * (e1[-1] - e1[0])
    cols = np.abs(R) <= radius
    if not cols.any():
        cols[np.argmin(np.abs(R))] = True
    f = _field(snap, field)[:, cols]
    w = _weights(snap, weight)[:, cols]
    return np.asarray(z, dtype=float), np.sum(w * f, axis=1) / np.sum(w, axis=1)


def profile_r(snap, field: str, cone_deg: float = 30.0, bins: int | None = None,
              weight: str = "volume"):
    """Average of ``field`` in radial bins inside the double cone around the axis.

    Returns ``(r bin centres, values)`` in code units (empty bins left out).
    """
    if not 0.0 < cone_deg <= 90.0:
        raise ParameterError(f"--cone {cone_deg!r}: the half-opening angle must be in "
                             "(0, 90] degrees")
    if bins is not None and bins < 1:
        raise ParameterError(f"--bins {bins!r}: must be a positive number of bins")
    R, z = np.meshgrid(*snap.centres)
    r = np.hypot(R, z)
    inside = np.abs(z) >= r * math.cos(math.radians(cone_deg)) - 1e-300
    e1, e2 = snap.edges
    rmax = math.hypot(max(abs(e1[0]), abs(e1[-1])), max(abs(e2[0]), abs(e2[-1])))
    nb = bins or max(len(e1), len(e2)) - 1
    edges = np.linspace(0.0, rmax, nb + 1)
    k = np.clip(np.searchsorted(edges, r, side="right") - 1, 0, nb - 1)
    f = _field(snap, field)
    w = _weights(snap, weight)
    num = np.bincount(k[inside], weights=(w * f)[inside], minlength=nb)
    den = np.bincount(k[inside], weights=w[inside], minlength=nb)
    keep = den > 0
    if not keep.any():
        raise ParameterError(f"--cone {cone_deg:g}: no cell centre lies in the cone")
    rc = 0.5 * (edges[1:] + edges[:-1])
    return rc[keep], num[keep] / den[keep]


def profile(snap, field: str, along: str, radius=None, cone_deg=None, bins=None,
            weight="volume"):
    """Dispatch to :func:`profile_z` or :func:`profile_r`; returns ``(x, y, label)``
    in code units and a text saying how it was averaged."""
    if along == "z":
        if cone_deg is not None:
            raise ParameterError("--cone is for profiles along r; along z use --cylinder")
        x, y = profile_z(snap, field, radius, weight)
        rad = radius if radius is not None else None
        how = "R <= " + (f"{rad:g}" if rad is not None else "R_range/10") + " (code units)"
        return x, y, how
    if along == "r":
        if radius is not None:
            raise ParameterError("--cylinder is for profiles along z; along r use --cone")
        cone = 30.0 if cone_deg is None else cone_deg
        x, y = profile_r(snap, field, cone, bins, weight)
        return x, y, f"cone of half-opening {cone:g} deg around the axis"
    raise ParameterError(f"--along {along!r}: allowed values are z, r")


def length_in_code(text, snap, where: str) -> float | None:
    """A length given as text with a unit ('1 kpc') or a number in code units."""
    if text is None:
        return None
    try:
        return float(text)
    except (TypeError, ValueError):
        pass
    import astropy.units as u
    try:
        cm = u.Quantity(text).to(u.cm).value
    except Exception:
        raise ParameterError(f"{where} {text!r}: not a length (e.g. '1 kpc', or a number "
                             "in code units)") from None
    return float(cm / snap.length_to_cgs)


def physical(snap, field: str, x: np.ndarray, y: np.ndarray, length: str | None = None):
    """Profile in physical units: (x in ``length`` or else a fitting length unit,
    that unit's name, y in CGS, the CGS unit text)."""
    import astropy.units as u

    from ..viz.slice import length_unit
    xcm = x * snap.length_to_cgs
    if length is None:
        e1, e2 = snap.edges
        ext = max(e1[-1] - e1[0], e2[-1] - e2[0]) * snap.length_to_cgs
        length, cm = length_unit(ext)
    else:
        cm = u.Unit(length).to(u.cm)
    return xcm / cm, length, y * snap.to_cgs[field], snap.units[field]


def write_csv(path, xname: str, xunit: str, yname: str, yunit: str, x, y) -> Path:
    path = Path(path)
    lines = [f"{xname} [{xunit}],{yname} [{yunit}]"]
    lines += [f"{a!r},{b!r}" for a, b in zip(map(float, x), map(float, y))]
    path.write_text("\n".join(lines) + "\n")
    return path
