"""Read a snapshot back, in code units or as astropy Quantities in CGS."""
from __future__ import annotations

from dataclasses import dataclass, field as _field
from pathlib import Path

import h5py
import numpy as np

from ._h5 import attr_str, read_record
from .snapshot import FORMAT_NAME, FORMAT_VERSION


class SnapshotFormatError(ValueError):
    """The file is not a wind2d snapshot this version can read."""


def _unit(text: str):
    import astropy.units as u
    return u.dimensionless_unscaled if text == "" else u.Unit(text)


@dataclass
class Snapshot:
    """One snapshot in memory.

    Arrays are in code units; ``to_cgs[name]`` converts to the CGS unit
    ``units[name]``.  ``field(name, physical=True)`` (or ``read_snapshot(...,
    physical=True)``) gives astropy Quantities.
    """

    path: Path
    time: float
    step: int
    dt_last: float
    geometry: str
    axis_names: tuple[str, str]
    edges: tuple[np.ndarray, np.ndarray]
    centres: tuple[np.ndarray, np.ndarray]
    fields: dict
    units: dict[str, str]
    to_cgs: dict[str, float]
    kinds: dict[str, str]
    code_units: dict
    time_to_cgs: float
    length_to_cgs: float
    counters: dict[str, int]
    options: dict
    provenance: dict
    attrs: dict = _field(default_factory=dict)
    faces: dict = _field(default_factory=dict)
    physical: bool = False
    _code: dict = _field(default_factory=dict, repr=False)

    def field(self, name: str, physical: bool = False):
        """Field ``name`` [n2, n1]: code units, or a CGS Quantity if ``physical``."""
        if name not in self.fields:
            raise KeyError(f"{self.path}: no field {name!r}; fields: "
                           + ", ".join(self.fields))
        data = self._code.get(name, self.fields[name])
        if not physical:
            return np.array(data, copy=True)
        return np.asarray(data) * self.to_cgs[name] * _unit(self.units[name])

    def time_quantity(self):
        """Time as an astropy Quantity in seconds."""
        import astropy.units as u
        return self.time * self.time_to_cgs * u.s

    def edges_quantity(self):
        """Cell edges of both axes as Quantities in cm."""
        import astropy.units as u
        return tuple(e * self.length_to_cgs * u.cm for e in self.edges)

    def centres_quantity(self):
        """Cell centres of both axes as Quantities in cm."""
        import astropy.units as u
        return tuple(c * self.length_to_cgs * u.cm for c in self.centres)


def read_snapshot(path, physical: bool = False) -> Snapshot:
    """Read a snapshot; with ``physical`` the fields are CGS astropy Quantities."""
    path = Path(path)
    with h5py.File(path, "r") as f:
        fmt = attr_str(f, "format")
        if fmt != FORMAT_NAME:
            raise SnapshotFormatError(f"{path}: not a {FORMAT_NAME} file (format = {fmt!r})")
        ver = int(f.attrs["format_version"])
        if ver > FORMAT_VERSION:
            raise SnapshotFormatError(f"{path}: format version {ver} is newer than this "
                                      f"wind2d reads ({FORMAT_VERSION}); update wind2d")
        attrs = {k: attr_str(f, k) for k in f.attrs}
        axes = tuple(str(a) for a in f.attrs["axis_names"])
        g = f["grid"]
        edges = tuple(g[f"{a}_edges"][()] for a in axes)
        centres = tuple(g[f"{a}_centres"][()] for a in axes)
        lcgs = float(g[f"{axes[0]}_edges"].attrs["to_cgs"])
        fields, units, to_cgs, kinds = {}, {}, {}, {}
        for name, ds in f["fields"].items():
            fields[name] = ds[()]
            units[name] = attr_str(ds, "unit")
            to_cgs[name] = float(ds.attrs["to_cgs"])
            kinds[name] = attr_str(ds, "kind")
        # face-centred poloidal field (MHD runs): [n2, n1+1] and [n2+1, n1], code units
        faces = {name: ds[()] for name, ds in f["faces"].items()} if "faces" in f else {}
        counters = {k: int(v) for k, v in f["counters"].attrs.items()}
        options = read_record(f["options"]) if "options" in f else {}
        prov = read_record(f["provenance"]) if "provenance" in f else {}
    # keep the order the fields were written in
    order = [str(n) for n in attrs.get("field_names", list(fields))]
    order += [n for n in fields if n not in order]
    fields = {n: fields[n] for n in order if n in fields}
    snap = Snapshot(
        path=path, time=float(attrs["time"]), step=int(attrs["step"]),
        dt_last=float(attrs.get("dt_last", 0.0)), geometry=str(attrs["geometry"]),
        axis_names=axes, edges=edges, centres=centres, fields=fields, units=units,
        to_cgs=to_cgs, kinds=kinds,
        code_units={"length": attrs.get("code_length"), "time": attrs.get("code_time"),
                    "mass": attrs.get("code_mass"), "mu": attrs.get("mu")},
        time_to_cgs=float(attrs["time_to_cgs"]), length_to_cgs=lcgs, counters=counters,
        options=options, provenance=prov, attrs=attrs, faces=faces, _code=fields)
    if physical:
        snap.fields = {n: snap.field(n, physical=True) for n in fields}
        snap.physical = True
    return snap
