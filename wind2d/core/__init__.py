"""The Godunov step: EOS, reconstruction, Riemann solvers, CT, geometry, integrator.

numba's on-disk cache checks only the source file of each cached function,
not the files of the functions it inlines (the Riemann solvers, the limiter,
the EOS; physics modules inline the limiter and index helpers).  To never run
a stale kernel, the caches of the kernel packages are
dropped whenever any of their sources changes (checked once per import by a
hash of the sources).
"""
import hashlib
import pathlib

_PKG = pathlib.Path(__file__).resolve().parent.parent
# the core's kernel folders, plus every physics module folder (they inline core kernels)
_KERNEL_DIRS = ("core", "core/reconstruct", "core/riemann", "boundaries") + tuple(
    str(d.relative_to(_PKG)) for d in sorted((_PKG / "physics").iterdir())
    if d.is_dir() and (d / "__init__.py").is_file())


def _drop_stale_kernel_caches() -> None:
    h = hashlib.sha256()
    h.update((_PKG / "state.py").read_bytes())       # variable slots inlined everywhere
    for d in _KERNEL_DIRS:
        for f in sorted((_PKG / d).glob("*.py")):
            h.update(f.name.encode())
            h.update(f.read_bytes())
    digest = h.hexdigest()
    stamp = _PKG / "core" / "__pycache__" / "kernel-sources.sha256"
    try:
        if stamp.read_text() == digest:
            return
    except OSError:
        pass
    try:
        for d in _KERNEL_DIRS:
            for f in (_PKG / d / "__pycache__").glob("*.nb[ic]"):
                f.unlink(missing_ok=True)
        stamp.parent.mkdir(exist_ok=True)
        stamp.write_text(digest)
    except OSError:       # read-only install: numba then keeps its own checks
        pass


_drop_stale_kernel_caches()
