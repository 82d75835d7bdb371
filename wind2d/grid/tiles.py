"""Decomposition of the global grid into a 2D Cartesian arrangement of tiles.

A serial run is one tile.  ``px * py = nranks`` is chosen to minimise the
total length of tile boundaries (the halo traffic) for the given grid; cells
are split as evenly as possible (uneven splits allowed).  Rank ``r`` holds
tile ``(r % px, r // px)``.
"""
from __future__ import annotations

from dataclasses import dataclass

from ..errors import ParameterError


def _split(n: int, parts: int) -> list[int]:
    base, extra = divmod(n, parts)
    return [0] + [sum(base + (1 if k < extra else 0) for k in range(m + 1))
                  for m in range(parts)]


@dataclass(frozen=True)
class Tiling:
    n1: int
    n2: int
    px: int
    py: int
    periodic1: bool
    periodic2: bool

    def window(self, rank: int) -> tuple[int, int, int, int]:
        """Interior cell range (i0, i1, j0, j1) of the tile of ``rank``."""
        a, b = rank % self.px, rank // self.px
        e1, e2 = _split(self.n1, self.px), _split(self.n2, self.py)
        return (e1[a], e1[a + 1], e2[b], e2[b + 1])

    def coords(self, rank: int) -> tuple[int, int]:
        return rank % self.px, rank // self.px

    def rank_of(self, a: int, b: int) -> int | None:
        """Rank of tile (a, b), wrapping periodic axes; None outside the grid."""
        if self.periodic1:
            a %= self.px
        if self.periodic2:
            b %= self.py
        if not (0 <= a < self.px and 0 <= b < self.py):
            return None
        return b * self.px + a

    def neighbours(self, rank: int) -> dict[str, int | None]:
        """Ranks across each edge (None at a physical edge)."""
        a, b = self.coords(rank)
        return {"x1_lo": self.rank_of(a - 1, b), "x1_hi": self.rank_of(a + 1, b),
                "x2_lo": self.rank_of(a, b - 1), "x2_hi": self.rank_of(a, b + 1)}


def decompose(n1: int, n2: int, nranks: int, periodic1=False, periodic2=False,
              min_cells: int = 2) -> Tiling:
    """Best ``px x py`` arrangement; a clear error if a tile would be too small."""
    if nranks < 1:
        raise ParameterError(f"ranks = {nranks}: must be >= 1")
    best = None
    for px in range(1, nranks + 1):
        if nranks % px:
            continue
        py = nranks // px
        if px > n1 or py > n2:
            continue
        cost = (px - 1) * n2 + (py - 1) * n1      # interior tile-boundary length
        if best is None or cost < best[0]:
            best = (cost, px, py)
    if best is None:
        raise ParameterError(f"{nranks} ranks cannot split a {n1} x {n2} grid: some tile "
                             "would hold no cells; use fewer ranks")
    _, px, py = best
    t = Tiling(n1, n2, px, py, periodic1, periodic2)
    small = min(n1 // px, n2 // py)
    if small < min_cells:
        raise ParameterError(f"{nranks} ranks split the {n1} x {n2} grid into {px} x {py} "
                             f"tiles of only {small} cell(s) across; each tile needs at least "
                             f"{min_cells} (the ghost-zone width); use fewer ranks")
    return t
