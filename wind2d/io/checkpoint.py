"""Checkpoints: the exact state of a run, verified on reading.

File ``checkpoint_<step, 8 digits>.h5`` (format ``wind2d-checkpoint``,
version 1; see docs/output-format.md).  Two independent checks guard it:

* a 512-byte HDF5 user block at the start of the file holds the line
  ``wind2d-checkpoint file-sha256 <hex>``: the SHA-256 of every byte after
  the user block (catches truncation and any flipped byte anywhere);
* the root attribute ``sha256`` is the SHA-256 over the array bytes (name,
  dtype, shape and data of each array, sorted by name) and the metadata JSON
  (catches a file whose content was altered while its bytes were re-hashed,
  and a user block lost to a repacking tool).

HDF5's own metadata checksums (``libver="latest"``) catch damage to the file
structure.  The file is written to a temporary name, flushed, fsynced and
renamed, and the folder is fsynced, so a crash leaves either the complete
new checkpoint or none.
"""
from __future__ import annotations

import hashlib
import json
import os
import re
from pathlib import Path

import h5py
import numpy as np

from ..errors import NonFiniteStateError
from ._atomic import atomic_path, fsync_dir

FORMAT_NAME = "wind2d-checkpoint"
FORMAT_VERSION = 1
USERBLOCK = 512
HEADER = b"wind2d-checkpoint file-sha256 "
NAME_RE = re.compile(r"^checkpoint_(\d+)\.h5$")
_CHUNK = 1 << 22


class CheckpointError(RuntimeError):
    """A checkpoint is missing, truncated, corrupted or does not fit the run."""


def checkpoint_name(step: int) -> str:
    """File name of the checkpoint taken at ``step``."""
    return f"checkpoint_{int(step):08d}.h5"


# ------------------------------------------------------------------ digests
def _content_digest(arrays: dict[str, np.ndarray], meta_json: str) -> str:
    h = hashlib.sha256()
    h.update(f"{FORMAT_NAME}-{FORMAT_VERSION}\n".encode())
    for name in sorted(arrays):
        a = np.ascontiguousarray(arrays[name])
        h.update(f"{name}|{a.dtype.str}|{a.shape}\n".encode())
        h.update(a.tobytes())
    h.update(meta_json.encode("utf-8"))
    return h.hexdigest()


def _file_digest(fh) -> str:
    h = hashlib.sha256()
    fh.seek(USERBLOCK)
    while True:
        buf = fh.read(_CHUNK)
        if not buf:
            break
        h.update(buf)
    return h.hexdigest()


def _seal(path: Path) -> None:
    """Write the whole-file digest into the user block."""
    with open(path, "r+b") as fh:
        digest = _file_digest(fh)
        line = HEADER + digest.encode() + b"\n"
        fh.seek(0)
        fh.write(line.ljust(USERBLOCK, b"\0"))
        fh.flush()
        os.fsync(fh.fileno())


def _check_seal(path: Path) -> None:
    with open(path, "rb") as fh:
        head = fh.read(USERBLOCK)
        if len(head) < USERBLOCK or not head.startswith(HEADER):
            raise CheckpointError(f"{path}: not a sealed {FORMAT_NAME} file (no file digest "
                                  "in the first 512 bytes; truncated, or not a checkpoint)")
        want = head[len(HEADER):len(HEADER) + 64].decode("ascii", "replace")
        got = _file_digest(fh)
    if got != want:
        raise CheckpointError(f"{path}: file digest mismatch (the file is truncated or "
                              "corrupted); it cannot be used for a restart")


# ------------------------------------------------------------------ writing
def _layout(sim) -> dict:
    m = sim.mesh
    return {"geometry": m.geometry, "mhd": bool(sim.varmap.mhd),
            "variables": list(sim.varmap.primitive_names), "n1": int(m.n1), "n2": int(m.n2),
            "eos": "isothermal" if sim.eos.isothermal else "ideal_gas",
            "gamma": float(sim.eos.gamma), "cs2": float(sim.eos.cs2)}


def write_checkpoint(path, sim, extra: dict) -> Path:
    """Write the exact state of ``sim`` plus the driver's ``extra`` bookkeeping.

    ``extra`` must be JSON-serialisable (tuples come back as lists, keys as
    strings).  Raises NonFiniteStateError if the state is not finite.
    """
    path = Path(path)
    st = sim.export_state()
    m = sim.mesh
    arrays = {"U": np.asarray(st["U"], dtype="<f8"),
              "counters": np.asarray(st["counters"], dtype="<i8"),
              "x1_edges": np.asarray(m.edges()[0], dtype="<f8"),
              "x2_edges": np.asarray(m.edges()[1], dtype="<f8")}
    for k in ("b1", "b2"):
        if k in st:
            arrays[k] = np.asarray(st[k], dtype="<f8")
    for k in ("U", "b1", "b2"):
        if k in arrays and not np.all(np.isfinite(arrays[k])):
            raise NonFiniteStateError(f"{path}: refusing to write a checkpoint: the state "
                                      f"array {k!r} holds non-finite values")
    meta = {"format": FORMAT_NAME, "format_version": FORMAT_VERSION,
            "t": float(st["t"]), "nstep": int(st["nstep"]), "dt_last": float(st["dt_last"]),
            "layout": _layout(sim), "extra": extra, "modules": st.get("modules", {})}
    try:
        meta_json = json.dumps(meta, sort_keys=True)
    except (TypeError, ValueError) as exc:
        raise TypeError(f"{path}: checkpoint extra data must be JSON-serialisable: {exc}") \
            from None
    digest = _content_digest(arrays, meta_json)
    with atomic_path(path) as tmp:
        with h5py.File(tmp, "w", userblock_size=USERBLOCK, libver="latest") as f:
            f.attrs["format"] = FORMAT_NAME
            f.attrs["format_version"] = FORMAT_VERSION
            f.attrs["time"] = meta["t"]
            f.attrs["step"] = meta["nstep"]
            f.attrs["sha256"] = digest
            f.create_dataset("meta", data=meta_json, dtype=h5py.string_dtype("utf-8"))
            g = f.create_group("arrays")
            for name, a in arrays.items():
                g.create_dataset(name, data=a)
        _seal(tmp)
    fsync_dir(path.parent)
    return path


# ------------------------------------------------------------------ reading
def _read(path: Path) -> dict:
    _check_seal(path)
    with h5py.File(path, "r") as f:
        fmt = f.attrs.get("format")
        fmt = fmt.decode() if isinstance(fmt, bytes) else fmt
        if fmt != FORMAT_NAME:
            raise CheckpointError(f"{path}: not a {FORMAT_NAME} file (format = {fmt!r})")
        ver = int(f.attrs["format_version"])
        if ver != FORMAT_VERSION:
            raise CheckpointError(f"{path}: checkpoint format version {ver}; this wind2d "
                                  f"reads version {FORMAT_VERSION}")
        want = f.attrs["sha256"]
        want = want.decode() if isinstance(want, bytes) else str(want)
        meta_json = f["meta"][()]
        meta_json = meta_json.decode("utf-8") if isinstance(meta_json, bytes) else meta_json
        arrays = {name: ds[()] for name, ds in f["arrays"].items()}
    if _content_digest(arrays, meta_json) != want:
        raise CheckpointError(f"{path}: content checksum mismatch (arrays or metadata were "
                              "altered); it cannot be used for a restart")
    meta = json.loads(meta_json)
    state = {"U": arrays["U"], "counters": arrays["counters"], "t": float(meta["t"]),
             "nstep": int(meta["nstep"]), "dt_last": float(meta["dt_last"]),
             "modules": meta.get("modules", {})}
    for k in ("b1", "b2"):
        if k in arrays:
            state[k] = arrays[k]
    return {"path": str(path), "state": state, "extra": meta["extra"],
            "layout": meta["layout"], "edges": (arrays["x1_edges"], arrays["x2_edges"])}


def read_checkpoint(path) -> dict:
    """Read and verify a checkpoint.

    Returns ``{"path", "state", "extra", "layout", "edges"}``; ``state`` is
    what :meth:`Simulation.restore_state` takes.  Raises CheckpointError,
    naming the file, if it is missing, truncated, corrupted or not a
    checkpoint.
    """
    path = Path(path)
    try:
        return _read(path)
    except CheckpointError:
        raise
    except Exception as exc:       # any failure to decode the file means it is unusable
        raise CheckpointError(f"{path}: unreadable checkpoint ({type(exc).__name__}: "
                              f"{exc})") from exc


def restore(sim, data: dict) -> None:
    """Put the state of a checkpoint read by :func:`read_checkpoint` into ``sim``.

    Refuses (CheckpointError) a checkpoint of a different geometry, variable
    set, EOS or grid.
    """
    where = data.get("path", "checkpoint")
    want, have = data["layout"], _layout(sim)
    for key in ("geometry", "mhd", "variables", "n1", "n2", "eos", "gamma", "cs2"):
        if want.get(key) != have[key]:
            raise CheckpointError(f"{where}: saved run has {key} = {want.get(key)!r}, this "
                                  f"run has {have[key]!r}; cannot restart from it")
    for k, (saved, mine) in enumerate(zip(data["edges"], sim.mesh.edges()), start=1):
        if saved.shape != mine.shape or not np.array_equal(saved, mine):
            raise CheckpointError(f"{where}: the cell edges of axis {k} differ from this "
                                  "run's grid; cannot restart from it")
    sim.restore_state(data["state"])


# ------------------------------------------------------------------ folders
def list_checkpoints(folder) -> list[tuple[int, Path]]:
    """Checkpoint files in ``folder``, newest (largest step) first."""
    folder = Path(folder)
    found = []
    for p in folder.iterdir() if folder.is_dir() else ():
        mt = NAME_RE.match(p.name)
        if mt and p.is_file():
            found.append((int(mt.group(1)), p))
    found.sort(key=lambda sp: sp[0], reverse=True)
    return found


def find_latest_valid(folder) -> tuple[Path, dict, list[str]]:
    """The newest checkpoint in ``folder`` that verifies.

    Returns ``(path, data, skipped)`` where ``skipped`` holds one message per
    newer checkpoint that failed verification.  Raises CheckpointError if
    none is valid.
    """
    skipped = []
    for _step, p in list_checkpoints(folder):
        try:
            return p, read_checkpoint(p), skipped
        except CheckpointError as exc:
            skipped.append(f"skipped {exc}")
    detail = ("; ".join(skipped)) if skipped else "no checkpoint_<step>.h5 files"
    raise CheckpointError(f"{folder}: no valid checkpoint to restart from ({detail})")


def prune(folder, keep: int) -> list[Path]:
    """Delete checkpoints older than the ``keep`` newest valid ones.

    Checkpoints are verified newest first until ``keep`` valid ones are
    found; invalid ones newer than those are left for inspection, everything
    older is removed.  Nothing is removed unless at least ``keep`` valid
    checkpoints exist, so the newest valid one is never deleted.  Returns
    the removed paths.
    """
    if isinstance(keep, bool) or not isinstance(keep, int) or keep < 1:
        from ..errors import ParameterError
        raise ParameterError(f"checkpoint keep = {keep!r}: must be an integer >= 1")
    files = list_checkpoints(folder)
    valid = 0
    cut = None
    for k, (_step, p) in enumerate(files):
        try:
            read_checkpoint(p)
        except CheckpointError:
            continue
        valid += 1
        if valid == keep:
            cut = k + 1
            break
    if cut is None:
        return []
    removed = []
    for _step, p in files[cut:]:
        try:
            p.unlink()
            removed.append(p)
        except FileNotFoundError:
            pass
    if removed:
        fsync_dir(Path(folder))
    return removed
