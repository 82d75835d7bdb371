"""Cosmic rays by the two-moment method (Jiang & Oh 2018): the module
(:mod:`.module`), HLL transport (:mod:`.transport`), implicit gas coupling
(:mod:`.coupling`) and collisional losses (:mod:`.losses`).

numba's on-disk cache checks only the source file of each cached function, while
the kernels here inline functions and constants from the sibling files and from
the core (limiter, index helpers, variable slots); as the core does for its own
kernels, the caches of this package are dropped whenever any of those sources
changes (a hash checked once per import).
"""
import hashlib
import pathlib


def _drop_stale_kernel_caches() -> None:
    here = pathlib.Path(__file__).resolve().parent
    pkg = here.parent.parent
    sources = sorted(here.glob("*.py")) + [pkg / "core" / "reconstruct" / "plm.py",
                                          pkg / "core" / "indexing.py", pkg / "state.py"]
    h = hashlib.sha256()
    for f in sources:
        h.update(f.name.encode())
        try:
            h.update(f.read_bytes())
        except OSError:
            pass
    digest = h.hexdigest()
    stamp = here / "__pycache__" / "kernel-sources.sha256"
    try:
        if stamp.read_text() == digest:
            return
    except OSError:
        pass
    try:
        for f in (here / "__pycache__").glob("*.nb[ic]"):
            f.unlink(missing_ok=True)
        stamp.parent.mkdir(exist_ok=True)
        stamp.write_text(digest)
    except OSError:       # read-only install: numba then keeps its own checks
        pass


_drop_stale_kernel_caches()

from .module import CosmicRayParams, CosmicRays  # noqa: F401
