"""A PNG slice of one snapshot field with physical axis units and a colour bar.

Axes are shown in the length unit that suits the domain (pc, kpc, Mpc, or
cm for tiny domains); a positive field spanning more than two decades is
drawn on a log scale.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

from ..errors import ParameterError

_LENGTHS = (("Mpc", 3.0856775814913673e24), ("kpc", 3.0856775814913673e21),
            ("pc", 3.0856775814913673e18), ("au", 1.495978707e13), ("km", 1e5), ("cm", 1.0))


def length_unit(extent_cm: float) -> tuple[str, float]:
    """The largest common unit in which the extent is at least 1."""
    for name, cm in _LENGTHS:
        if extent_cm >= cm:
            return name, cm
    return "cm", 1.0


def plot_snapshot(path, field: str, output=None, log: bool | None = None) -> Path:
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from matplotlib.colors import LogNorm

    from ..io import read_snapshot
    snap = read_snapshot(path)
    if field not in snap.fields:
        raise ParameterError(f"--field {field!r}: not in {path}; available: "
                             + ", ".join(sorted(snap.fields)))
    q = snap.field(field, physical=True)
    data = np.asarray(q.value)
    unit = q.unit.to_string()
    e1, e2 = (np.asarray(e.to("cm").value) for e in snap.edges_physical())
    name, cm = length_unit(max(e1[-1] - e1[0], e2[-1] - e2[0]))
    pos = np.all(data > 0) and np.all(np.isfinite(data))
    if log is None:
        log = bool(pos and data.max() / data.min() > 100.0)
    fig, ax = plt.subplots(figsize=(6, 6 * min(2.0, max(0.5, (e2[-1] - e2[0]) /
                                                         (e1[-1] - e1[0]))) * 0.9 + 0.6))
    norm = LogNorm(vmin=data.min(), vmax=data.max()) if log else None
    im = ax.pcolormesh(e1 / cm, e2 / cm, data, shading="flat", norm=norm, cmap="viridis")
    a1, a2 = snap.axis_names
    ax.set_xlabel(f"{a1} [{name}]")
    ax.set_ylabel(f"{a2} [{name}]")
    ax.set_aspect("equal")
    t = snap.time_physical()
    ax.set_title(f"{field} at t = {t.value:.4g} {t.unit.to_string()}")
    cb = fig.colorbar(im, ax=ax)
    cb.set_label(f"{field} [{unit}]" if unit else field)
    out = Path(output) if output else Path(path).with_name(f"{Path(path).stem}_{field}.png")
    fig.savefig(out, dpi=120, bbox_inches="tight")
    plt.close(fig)
    return out
