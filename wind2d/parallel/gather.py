"""Global views of a tiled run for output, and restarts on any rank count.

:class:`GlobalView` gathers the tiles of every rank on rank 0 and presents
the same attributes as a serial :class:`~wind2d.simulation.Simulation` to the
writers in ``wind2d.io`` (``mesh``, ``field()``, ``export_state()`` ...), so a
snapshot or checkpoint of a parallel run is one file of global arrays, exactly
the file a serial run writes.  A checkpoint holds global arrays, so it
restarts on any number of ranks (:func:`restore_tile`).
"""
from __future__ import annotations

from types import SimpleNamespace

import numpy as np


def _gather(sim, local: np.ndarray, shape_global: tuple, extra_faces=(0, 0)):
    """Assemble per-tile interior arrays (last two axes j, i) on rank 0."""
    comm = sim.comm
    i0, i1, j0, j1 = sim.mesh.window
    parts = comm.gather((i0, j0, local), root=0)
    if comm.rank != 0:
        return None
    out = np.empty(shape_global, dtype=local.dtype)
    for a, b, arr in parts:
        n2, n1 = arr.shape[-2:]
        out[..., b:b + n2, a:a + n1] = arr
    return out


class GlobalView:
    """Read-only global state of a (possibly tiled) simulation; collective to build.

    On ranks other than 0 the gathered arrays are ``None``; only rank 0 writes.
    """

    def __init__(self, sim, fields: bool = True):
        self.sim = sim
        self.mesh = sim.global_mesh
        self.varmap, self.eos, self.options = sim.varmap, sim.eos, sim.options
        self.t, self.nstep, self.dt_last = sim.t, sim.nstep, sim.dt_last
        self.counters = sim.counters                      # summed over ranks
        self.root = sim.comm is None or sim.comm.rank == 0
        gm = self.mesh
        if sim.comm is None:
            self._fields = {n: sim.field(n) for n in sim.varmap.primitive_names}
            self._state = sim.export_state()
            return
        if not fields:              # metadata only (snapshots over tile files)
            self._fields, self._state = {}, None
            return
        self._fields = {n: _gather(sim, sim.field(n), (gm.n2, gm.n1))
                        for n in sim.varmap.primitive_names}
        st = sim.export_state()
        g = {"U": _gather(sim, st["U"], (st["U"].shape[0], gm.n2, gm.n1))}
        if "b1" in st:
            g["b1"] = _gather(sim, st["b1"], (gm.n2, gm.n1 + 1))
            g["b2"] = _gather(sim, st["b2"], (gm.n2 + 1, gm.n1))
        tot = np.empty_like(st["counters"])
        sim.comm.Allreduce(st["counters"].copy(), tot)
        if "modules" in st:
            # module tallies are running totals of each rank: the checkpoint holds their sum
            for entry in st["modules"].values():
                keys = list(entry["tallies"])
                sums = sim.global_sum(np.array([entry["tallies"][k] for k in keys]))
                entry["tallies"] = {k: float(v) for k, v in zip(keys, sums)}
            g["modules"] = st["modules"]
        if self.root:
            g.update(t=st["t"], nstep=st["nstep"], dt_last=st["dt_last"], counters=tot)
            self._state = g
        else:
            self._state = None

    def field(self, name: str):
        return self._fields[name]

    def export_state(self) -> dict:
        return self._state


def restore_tile(sim, data: dict) -> None:
    """Restore a checkpoint of global arrays into this rank's tile (any rank count).

    The layout and grid are checked against the global mesh; positivity
    counters go to rank 0 so that their sum over ranks is the saved total.
    """
    from ..io import restore
    st = data["state"]
    i0, i1, j0, j1 = sim.mesh.window
    rank0 = sim.comm is None or sim.comm.rank == 0

    def put(state):
        local = {"U": np.ascontiguousarray(state["U"][:, j0:j1, i0:i1]), "t": state["t"],
                 "nstep": state["nstep"], "dt_last": state["dt_last"],
                 "counters": state["counters"] if rank0 else np.zeros_like(state["counters"])}
        if "modules" in state:
            # tallies go to rank 0, so that their sum over ranks is the saved total
            local["modules"] = {name: {"tallies": {k: (v if rank0 else 0.0)
                                                   for k, v in e.get("tallies", {}).items()},
                                       "state": e.get("state", {})}
                                for name, e in state["modules"].items()}
        if "b1" in state:
            local["b1"] = np.ascontiguousarray(state["b1"][j0:j1, i0:i1 + 1])
            local["b2"] = np.ascontiguousarray(state["b2"][j0:j1 + 1, i0:i1])
        sim.restore_state(local)

    view = SimpleNamespace(mesh=sim.global_mesh, varmap=sim.varmap, eos=sim.eos,
                           restore_state=put)
    restore(view, {**data, "state": st})
