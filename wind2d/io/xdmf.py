"""XDMF descriptions of snapshots, so ParaView and VisIt open them directly.

XDMF (eXtensible Data Model and Format, version 3) is an open XML standard
that describes heavy data kept in HDF5.  Each snapshot gets a sidecar
``<stem>.xdmf`` with one 2D rectilinear grid (topology ``2DRectMesh``,
geometry ``VXVY`` from the cell edges) on the R-z (or x-y) plane: axis 1 (R)
is the viewer's X, axis 2 (z) its Y.  Every dataset of ``/fields`` is a
cell-centred scalar attribute.  :func:`write_series` writes one temporal
collection for a whole run.  Coordinates, times and values are in code
units; the unit of each field is given as an ``Information`` element.
All paths to HDF5 files are relative to the XDMF file.
"""
from __future__ import annotations

import os
import xml.etree.ElementTree as ET
from pathlib import Path

import h5py

from ._atomic import write_text_atomic

XDMF_VERSION = "3.0"


def _data_item(parent, ref: str, dims) -> ET.Element:
    el = ET.SubElement(parent, "DataItem", Dimensions=" ".join(str(d) for d in dims),
                       NumberType="Float", Precision="8", Format="HDF")
    el.text = ref
    return el


def _rel(h5path: Path, folder: Path) -> str:
    return Path(os.path.relpath(Path(h5path).resolve(), Path(folder).resolve())).as_posix()


def snapshot_grid(h5path, xdmf_folder, with_time: bool = True) -> tuple[ET.Element, float]:
    """The ``Grid`` element of one snapshot and its time (read from the file)."""
    h5path = Path(h5path)
    ref = _rel(h5path, xdmf_folder)
    with h5py.File(h5path, "r") as f:
        time = float(f.attrs["time"])
        step = int(f.attrs["step"])
        ax1, ax2 = (str(a) for a in f.attrs["axis_names"])
        e1, e2 = f["grid"][f"{ax1}_edges"].shape[0], f["grid"][f"{ax2}_edges"].shape[0]
        fields = [(name, ds.shape, str(ds.attrs.get("unit", "")))
                  for name, ds in f["fields"].items()]
    grid = ET.Element("Grid", Name=h5path.stem, GridType="Uniform")
    if with_time:
        ET.SubElement(grid, "Time", Value=repr(time))
    ET.SubElement(grid, "Information", Name="step", Value=str(step))
    # dimensions are listed slowest index first: (axis 2 nodes, axis 1 nodes)
    ET.SubElement(grid, "Topology", TopologyType="2DRectMesh", Dimensions=f"{e2} {e1}")
    geo = ET.SubElement(grid, "Geometry", GeometryType="VXVY")
    _data_item(geo, f"{ref}:/grid/{ax1}_edges", (e1,))
    _data_item(geo, f"{ref}:/grid/{ax2}_edges", (e2,))
    for name, shape, unit in fields:
        att = ET.SubElement(grid, "Attribute", Name=name, AttributeType="Scalar",
                            Center="Cell")
        ET.SubElement(att, "Information", Name="unit",
                      Value=unit if unit else "dimensionless")
        _data_item(att, f"{ref}:/fields/{name}", shape)
    return grid, time


def _document(grid: ET.Element) -> str:
    root = ET.Element("Xdmf", Version=XDMF_VERSION)
    dom = ET.SubElement(root, "Domain")
    dom.append(grid)
    ET.indent(root)
    return '<?xml version="1.0" encoding="utf-8"?>\n' + ET.tostring(root, encoding="unicode") \
        + "\n"


def sidecar_path(h5path) -> Path:
    return Path(h5path).with_suffix(".xdmf")


def write_sidecar(h5path) -> Path:
    """Write ``<stem>.xdmf`` next to the snapshot ``h5path``; returns its path."""
    out = sidecar_path(h5path)
    grid, _ = snapshot_grid(h5path, out.parent, with_time=True)
    return write_text_atomic(out, _document(grid))


def write_series(folder, snapshot_paths, filename: str = "series.xdmf") -> Path:
    """One XDMF temporal collection over ``snapshot_paths`` (ordered by time).

    Written atomically to ``folder/filename``; each grid's ``Time`` is the
    snapshot's ``time`` attribute (code units).
    """
    folder = Path(folder)
    items = [snapshot_grid(p, folder, with_time=True) for p in snapshot_paths]
    items.sort(key=lambda it: it[1])
    coll = ET.Element("Grid", Name="wind2d_run", GridType="Collection",
                      CollectionType="Temporal")
    for grid, _ in items:
        coll.append(grid)
    return write_text_atomic(folder / filename, _document(coll))
