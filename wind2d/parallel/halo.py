"""Ghost exchange between tiles: one aggregated, non-blocking message per
neighbour per exchange, holding every cell variable and the face fields.

The mapping of cells and faces is that of the periodic kernel
(``boundaries/periodic.py``): a tile's ghosts receive exact copies of its
neighbour's interior, so the state stays bitwise identical to a serial run.
Axis 1 is exchanged over all rows, then axis 2 over all columns (ghost columns
included), which fills the corner ghosts as the serial boundaries do.  The
face a tile shares with its upper neighbour is overwritten with that
neighbour's copy, as the periodic kernel does for the wrap-around face: its
two computations can differ in the last bit there (ghost centres at the two
ends of a periodic axis differ by round-off).
"""
from __future__ import annotations

import numpy as np


class Halo:
    def __init__(self, comm, mesh, neighbours: dict, nvar: int, mhd: bool):
        self.comm, self.mesh, self.mhd = comm, mesh, mhd
        self.nb = neighbours
        m, g = mesh, mesh.ng
        # per axis: sizes of (cells, normal faces, tangential faces) blocks
        self.plan = {}
        for axis in (1, 2):
            nt = m.nt2 if axis == 1 else m.nt1             # transverse length (cells)
            size = nvar * nt * g
            if mhd:
                size += nt * (g + 1) + (nt + 1) * g
            self.plan[axis] = size
            for side in ("lo", "hi"):
                r = neighbours[f"x{axis}_{side}"]
                if r is not None:
                    setattr(self, f"_send{axis}{side}", np.empty(size))
                    setattr(self, f"_recv{axis}{side}", np.empty(size))

    def _views(self, buf, W, bn, bt, nt):
        g = self.mesh.ng
        nv = W.shape[0]
        a = nv * nt * g
        vw = buf[:a].reshape(nv, nt, g)
        if not self.mhd:
            return vw, None, None
        vbn = buf[a:a + nt * (g + 1)].reshape(nt, g + 1)
        vbt = buf[a + nt * (g + 1):].reshape(nt + 1, g)
        return vw, vbn, vbt

    def exchange(self, axis: int, W, b1, b2) -> None:
        """Fill the ghost cells and faces of both sides of ``axis`` from neighbours."""
        from mpi4py import MPI
        m, g = self.mesh, self.mesh.ng
        if axis == 1:
            Wv, bn, bt, lo, hi, nt = W, b1, b2, m.is_, m.ie, m.nt2
        else:
            Wv, bn, bt, lo, hi, nt = W.transpose(0, 2, 1), b2.T, b1.T, m.js, m.je, m.nt1
        reqs = []
        # tags: 2 axis for messages sent downwards, 2 axis + 1 for upwards
        for side, tag_in in (("lo", 2 * axis + 1), ("hi", 2 * axis)):
            r = self.nb[f"x{axis}_{side}"]
            if r is None:
                continue
            recv = getattr(self, f"_recv{axis}{side}")
            reqs.append(self.comm.Irecv([recv, MPI.DOUBLE], source=r, tag=tag_in))
        for side, tag_out in (("lo", 2 * axis), ("hi", 2 * axis + 1)):
            r = self.nb[f"x{axis}_{side}"]
            if r is None:
                continue
            send = getattr(self, f"_send{axis}{side}")
            vw, vbn, vbt = self._views(send, Wv, bn, bt, nt)
            if side == "lo":      # my first interior columns go to the low neighbour
                vw[...] = Wv[:, :, lo:lo + g]
                if self.mhd:
                    vbn[...] = bn[:, lo:lo + 1 + g]          # shared face included
                    vbt[...] = bt[:, lo:lo + g]
            else:
                vw[...] = Wv[:, :, hi - g:hi]
                if self.mhd:
                    vbn[...] = bn[:, hi - g:hi + 1]          # last column unused
                    vbt[...] = bt[:, hi - g:hi]
            reqs.append(self.comm.Isend([send, MPI.DOUBLE], dest=r, tag=tag_out))
        MPI.Request.Waitall(reqs)
        for side in ("lo", "hi"):
            r = self.nb[f"x{axis}_{side}"]
            if r is None:
                continue
            vw, vbn, vbt = self._views(getattr(self, f"_recv{axis}{side}"), Wv, bn, bt, nt)
            if side == "lo":      # from the low neighbour's last interior columns
                Wv[:, :, lo - g:lo] = vw
                if self.mhd:
                    bn[:, lo - g:lo] = vbn[:, :g]
                    bt[:, lo - g:lo] = vbt
            else:                 # from the high neighbour's first interior columns
                Wv[:, :, hi:hi + g] = vw
                if self.mhd:
                    bn[:, hi:hi + 1 + g] = vbn               # the shared face too
                    bt[:, hi:hi + g] = vbt

    def exchange_flags(self, flags) -> None:
        """Copy the edge rows/columns of the int8 ``flags`` of the neighbouring tiles
        into this tile's first ghost layer (interior extent only; no corners)."""
        from mpi4py import MPI
        m = self.mesh
        for axis in (1, 2):
            lo, hi = self.nb[f"x{axis}_lo"], self.nb[f"x{axis}_hi"]
            if lo is None and hi is None:
                continue
            if axis == 1:
                first, last = flags[m.js:m.je, m.is_], flags[m.js:m.je, m.ie - 1]
            else:
                first, last = flags[m.js, m.is_:m.ie], flags[m.je - 1, m.is_:m.ie]
            lo_r = MPI.PROC_NULL if lo is None else lo
            hi_r = MPI.PROC_NULL if hi is None else hi
            from_hi = np.zeros(first.size, dtype=np.int8)
            from_lo = np.zeros(first.size, dtype=np.int8)
            self.comm.Sendrecv(np.ascontiguousarray(first), dest=lo_r, sendtag=40 + axis,
                               recvbuf=from_hi, source=hi_r, recvtag=40 + axis)
            self.comm.Sendrecv(np.ascontiguousarray(last), dest=hi_r, sendtag=50 + axis,
                               recvbuf=from_lo, source=lo_r, recvtag=50 + axis)
            if axis == 1:
                if hi is not None:
                    flags[m.js:m.je, m.ie] = from_hi
                if lo is not None:
                    flags[m.js:m.je, m.is_ - 1] = from_lo
            else:
                if hi is not None:
                    flags[m.je, m.is_:m.ie] = from_hi
                if lo is not None:
                    flags[m.js - 1, m.is_:m.ie] = from_lo
