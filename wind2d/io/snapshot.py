"""Snapshots: one HDF5 file per output time, with units on every dataset.

Layout (format ``wind2d-snapshot``, version 1; see docs/output-format.md):

* root attributes: ``format``, ``format_version``, ``time``, ``step``,
  ``dt_last``, ``geometry``, ``axis_names``, ``field_names``, ``mhd``, EOS,
  code units (``code_length``, ``code_time``, ``code_mass``, ``mu``) and the
  CGS factor of the time attribute;
* ``grid/``: ``<axis>_edges`` and ``<axis>_centres`` for both axes (interior,
  code units; attributes ``unit`` = ``"cm"``, ``to_cgs``);
* ``fields/``: every primitive field plus ``temperature`` and, with field,
  ``magnetic_pressure`` and ``plasma_beta``; float64 ``[n2, n1]``, attributes
  ``unit`` (CGS, astropy syntax), ``to_cgs`` (physical = data * to_cgs) and
  ``kind``;
* ``counters/``: positivity counters as attributes;
* ``options/``: the numerical options of the run;
* ``provenance/``: the provenance record (problem text as a dataset).

Writes are atomic; a state with NaN or infinite values is refused.
"""
from __future__ import annotations

import datetime as _dt
from pathlib import Path

import h5py
import numpy as np

from ..errors import NonFiniteStateError, ParameterError
from ..problem.units import KINDS
from ._atomic import atomic_path
from ._h5 import write_record

FORMAT_NAME = "wind2d-snapshot"
FORMAT_VERSION = 1
DERIVED = ("temperature", "magnetic_pressure", "plasma_beta")


def field_kind(name: str, varmap) -> str:
    """Physical kind of a primitive field of ``varmap`` (a key of units.KINDS)."""
    if name == "rho":
        return "density"
    if name == "p":
        return "pressure"
    if name in varmap.scalars:
        return "dimensionless"
    for f in getattr(varmap, "fields", ()):
        if f.name == name:
            return f.kind
    if name.startswith("v"):
        return "velocity"
    if name.startswith("B"):
        return "magnetic_field"
    raise KeyError(name)


def snapshot_fields(sim, extra_fields=None) -> dict[str, tuple[np.ndarray, str]]:
    """All fields a snapshot holds: name -> (array [n2, n1] in code units, kind).

    ``plasma_beta`` is ``p / (B^2/2)`` and is ``+inf`` in cells where the field
    is exactly zero.
    """
    vm = sim.varmap
    out: dict[str, tuple[np.ndarray, str]] = {}
    for name in vm.primitive_names:
        out[name] = (np.asarray(sim.field(name), dtype=np.float64), field_kind(name, vm))
    for name in DERIVED:
        if name in out:
            raise ParameterError(f"snapshot: the passive scalar {name!r} has the name of a "
                                 "derived field; rename the scalar")
    rho, p = out["rho"][0], out["p"][0]
    with np.errstate(divide="ignore", invalid="ignore"):
        out["temperature"] = (p / rho, "temperature")
    if vm.mhd:
        b = [n for n in vm.primitive_names if n.startswith("B")]
        pmag = 0.5 * sum(out[n][0] ** 2 for n in b)
        with np.errstate(divide="ignore", invalid="ignore"):
            beta = np.where(pmag > 0.0, p / np.where(pmag > 0.0, pmag, 1.0), np.inf)
        out["magnetic_pressure"] = (pmag, "pressure")
        out["plasma_beta"] = (beta, "dimensionless")
    m = sim.mesh
    derived = getattr(sim, "derived_fields", None)
    extra_fields = {**(derived() if derived is not None else {}), **(extra_fields or {})}
    for name, item in extra_fields.items():
        try:
            arr, kind = item
        except (TypeError, ValueError):
            raise ParameterError(f"snapshot extra field {name!r}: expected (array, kind)") \
                from None
        if name in out:
            raise ParameterError(f"snapshot extra field {name!r}: a field of that name "
                                 "already exists")
        if kind not in KINDS:
            raise ParameterError(f"snapshot extra field {name!r}: kind {kind!r}; allowed: "
                                 + ", ".join(KINDS))
        arr = np.asarray(arr, dtype=np.float64)
        if arr.shape != (m.n2, m.n1):
            raise ParameterError(f"snapshot extra field {name!r}: shape {arr.shape}, "
                                 f"expected {(m.n2, m.n1)} (n2, n1)")
        out[name] = (arr, kind)
    return out


def check_finite(fields: dict[str, tuple[np.ndarray, str]], path=None, state=()) -> None:
    """Raise NonFiniteStateError naming the first bad field, cell and value.

    Fields named in ``state`` (the evolved variables) must be finite; derived
    fields may be ``+inf`` where that is their meaning (plasma beta without field,
    cooling time without cooling), never NaN or ``-inf``.
    """
    where = f"{path}: " if path is not None else ""
    for name, (arr, _kind) in fields.items():
        bad = ~np.isfinite(arr)
        if name not in state:
            bad &= ~np.isposinf(arr)
        if bad.any():
            j, i = np.argwhere(bad)[0]
            raise NonFiniteStateError(
                f"{where}refusing to write a snapshot: field {name!r} has "
                f"{int(bad.sum())} non-finite value(s), first at cell (j={j}, i={i}) "
                f"= {arr[j, i]!r}")


def write_tile(path, sim, units,
               extra_fields: dict[str, tuple[np.ndarray, str]] | None = None) -> dict:
    """Write this rank's tile of every snapshot field (parallel runs).

    Returns ``{name: kind}`` in field order.  Raises NonFiniteStateError (and
    writes nothing) if a field is not finite.  The global snapshot refers to
    these files through HDF5 virtual datasets (see :func:`write_snapshot`).
    """
    path = Path(path)
    fields = snapshot_fields(sim, extra_fields)
    check_finite(fields, path, sim.varmap.primitive_names)
    path.parent.mkdir(parents=True, exist_ok=True)
    with atomic_path(path) as tmp:
        with h5py.File(tmp, "w") as f:
            f.attrs["format"] = FORMAT_NAME + "-tile"
            f.attrs["window"] = np.array(sim.mesh.window, dtype=np.int64)
            g = f.create_group("fields", track_order=True)
            for name, (arr, _kind) in fields.items():
                g.create_dataset(name, data=arr)
            if sim.varmap.mhd:
                # faces shared with the next tile belong to that tile (no overlap)
                m = sim.mesh
                i0, i1, j0, j1 = m.window
                n1g, n2g = m.global_cells
                e1 = 1 if i1 == n1g else 0
                e2 = 1 if j1 == n2g else 0
                st = sim.state
                g = f.create_group("faces")
                g.create_dataset("b1", data=st.b1[m.js:m.je, m.is_:m.ie + e1])
                g.create_dataset("b2", data=st.b2[m.js:m.je + e2, m.is_:m.ie])
    return {name: kind for name, (_arr, kind) in fields.items()}


def _face_fields(sim, tiles):
    """The face-centred poloidal field ``{name: (array or virtual layout, axis)}``."""
    m = sim.mesh
    a1, a2 = m.axis_names
    shapes = {"b1": (m.n2, m.n1 + 1), "b2": (m.n2 + 1, m.n1)}
    if tiles is None:
        st = sim.state
        return {f"B{a1}": (st.b1[m.js:m.je, m.is_:m.ie + 1].copy(), 1),
                f"B{a2}": (st.b2[m.js:m.je + 1, m.is_:m.ie].copy(), 2)}
    out = {}
    for key, name, axis in (("b1", f"B{a1}", 1), ("b2", f"B{a2}", 2)):
        lay = h5py.VirtualLayout(shape=shapes[key], dtype="f8")
        for rel, (i0, i1, j0, j1) in tiles:
            e1 = 1 if (key == "b1" and i1 == m.n1) else 0
            e2 = 1 if (key == "b2" and j1 == m.n2) else 0
            lay[j0:j1 + e2, i0:i1 + e1] = h5py.VirtualSource(
                str(rel), f"faces/{key}", shape=(j1 - j0 + e2, i1 - i0 + e1))
        out[name] = (lay, axis)
    return out


def write_snapshot(path, sim, units, provenance: dict,
                   extra_fields: dict[str, tuple[np.ndarray, str]] | None = None,
                   xdmf: bool = True, tiles=None, kinds=None) -> Path:
    """Write one snapshot of ``sim`` to ``path`` (HDF5) and its XDMF sidecar.

    Parameters
    ----------
    path : str or Path
        Target file (``.h5``); replaced atomically if it exists.
    sim : Simulation
    units : UnitSystem
        Code units of the run (conversion factors to CGS).
    provenance : dict
        From :func:`wind2d.io.provenance`.
    extra_fields : dict name -> (array [n2, n1], kind), optional
        Module fields (kind a key of ``wind2d.problem.units.KINDS``).
    xdmf : bool
        Also write ``<path stem>.xdmf`` next to the file.
    tiles, kinds : optional
        Parallel runs: ``tiles`` lists ``(file relative to path's folder,
        (i0, i1, j0, j1))`` of the tile files written by :func:`write_tile`,
        ``kinds`` maps field name to kind.  The fields are then HDF5 virtual
        datasets over the tiles: readers see one global array per field.

    Raises NonFiniteStateError (and writes nothing) if any field is not finite.
    """
    path = Path(path)
    m, eos = sim.mesh, sim.eos
    if tiles is None:
        fields = snapshot_fields(sim, extra_fields)
        check_finite(fields, path, sim.varmap.primitive_names)
    else:
        fields = {}
        for name, kind in kinds.items():
            lay = h5py.VirtualLayout(shape=(m.n2, m.n1), dtype="f8")
            for rel, (i0, i1, j0, j1) in tiles:
                lay[j0:j1, i0:i1] = h5py.VirtualSource(str(rel), f"fields/{name}",
                                                       shape=(j1 - j0, i1 - i0))
            fields[name] = (lay, kind)
    names = list(fields)
    with atomic_path(path) as tmp:
        with h5py.File(tmp, "w") as f:
            a = f.attrs
            a["format"] = FORMAT_NAME
            a["format_version"] = FORMAT_VERSION
            a["time"] = float(sim.t)
            a["time_unit"] = "s"
            a["time_to_cgs"] = units.to_cgs("time")
            a["step"] = int(sim.nstep)
            a["dt_last"] = float(sim.dt_last)
            a["geometry"] = m.geometry
            a["axis_names"] = list(m.axis_names)
            a["shape"] = np.array([m.n2, m.n1], dtype=np.int64)
            a["field_names"] = names
            a["mhd"] = bool(sim.varmap.mhd)
            a["eos"] = "isothermal" if eos.isothermal else "ideal_gas"
            a["gamma"] = float(eos.gamma)
            a["sound_speed"] = float(np.sqrt(eos.cs2))
            a["code_length"] = str(units.length)
            a["code_time"] = str(units.time)
            a["code_mass"] = str(units.mass)
            a["mu"] = float(units.mu)
            a["written"] = _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")

            g = f.create_group("grid")
            lcgs = units.to_cgs("length")
            edges, centres = m.edges(), (m.x1c[m.is_:m.ie], m.x2c[m.js:m.je])
            for ax, e, c in zip(m.axis_names, edges, centres):
                for suffix, data in (("edges", e), ("centres", c)):
                    ds = g.create_dataset(f"{ax}_{suffix}", data=np.asarray(data, np.float64))
                    ds.attrs["unit"] = "cm"
                    ds.attrs["to_cgs"] = lcgs
                    ds.attrs["kind"] = "length"
            g[f"{m.axis_names[0]}_centres"].attrs["note"] = (
                "volume centroid of each annulus" if m.cylindrical else "cell midpoint")

            g = f.create_group("fields", track_order=True)
            for name, (arr, kind) in fields.items():
                if tiles is None:
                    ds = g.create_dataset(name, data=arr)
                else:
                    ds = g.create_virtual_dataset(name, arr, fillvalue=np.nan)
                ds.attrs["unit"] = units.cgs_unit(kind)
                ds.attrs["to_cgs"] = float(units.to_cgs(kind))
                ds.attrs["kind"] = kind
                ds.attrs["centring"] = "cell"
            if "plasma_beta" in g:
                g["plasma_beta"].attrs["note"] = "p / (B^2/2); +inf where B = 0"

            if sim.varmap.mhd:
                # the evolved poloidal field on the faces (exact flux function, field lines)
                g = f.create_group("faces")
                for name, (arr, axis) in _face_fields(sim, tiles).items():
                    if tiles is None:
                        ds = g.create_dataset(name, data=arr)
                    else:
                        ds = g.create_virtual_dataset(name, arr, fillvalue=np.nan)
                    ds.attrs["unit"] = units.cgs_unit("magnetic_field")
                    ds.attrs["to_cgs"] = float(units.to_cgs("magnetic_field"))
                    ds.attrs["kind"] = "magnetic_field"
                    ds.attrs["centring"] = f"faces normal to axis {axis}"

            g = f.create_group("counters")
            for k, v in sim.counters.items():
                g.attrs[k] = int(v)
            write_record(f.create_group("options"), dict(getattr(sim, "options", {})))
            write_record(f.create_group("provenance"), dict(provenance))
    if xdmf:
        from .xdmf import write_sidecar
        write_sidecar(path)
    return path
