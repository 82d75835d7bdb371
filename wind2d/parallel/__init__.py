"""Optional MPI layer on mpi4py.

A serial run never imports mpi4py: :func:`world` returns ``None`` unless the
process was started by an MPI launcher with more than one rank (detected from
the launcher's environment: MPICH/Hydra, Open MPI, MVAPICH, Slurm's srun) or
``WIND2D_MPI=1`` is set.
"""
from __future__ import annotations

import os

_SIZE_VARS = ("PMI_SIZE", "OMPI_COMM_WORLD_SIZE", "MV2_COMM_WORLD_SIZE", "PMIX_SIZE")
_comm = None


def launched_size() -> int:
    for v in _SIZE_VARS:
        if v in os.environ:
            try:
                return int(os.environ[v])
            except ValueError:
                pass
    return 1


def world():
    """The MPI communicator of a parallel run, or ``None`` for a serial run."""
    global _comm
    if _comm is not None:
        return _comm
    if launched_size() <= 1 and os.environ.get("WIND2D_MPI") != "1":
        return None
    try:
        from mpi4py import MPI
    except ImportError as exc:
        raise RuntimeError("this run was started with several MPI ranks but mpi4py is not "
                           "installed: pip install mpi4py (and an MPI library, e.g. the "
                           "'mpich' wheel, or build mpi4py against the site MPI)") from exc
    comm = MPI.COMM_WORLD
    if comm.size == 1 and os.environ.get("WIND2D_MPI") != "1":
        return None
    _comm = comm
    return comm


def rank() -> int:
    c = world()
    return 0 if c is None else c.rank


def abort(message: str, code: int = 1) -> None:
    """End every rank of the job with ``message`` (no rank is left waiting)."""
    import sys
    c = world()
    print(message, file=sys.stderr, flush=True)
    if c is not None and c.size > 1:
        c.Abort(code)
    raise SystemExit(code)
