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


_TIMES = (("Gyr", 3.15576e16), ("Myr", 3.15576e13), ("kyr", 3.15576e10), ("yr", 3.15576e7),
          ("s", 1.0))


def time_label(t_s: float) -> str:
    """A time in seconds shown in the largest fitting unit (Julian years)."""
    for name, s in _TIMES:
        if abs(t_s) >= s:
            return f"{t_s / s:.4g} {name}"
    return f"{t_s:.4g} s"


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
    e1, e2 = (np.asarray(e.to("cm").value) for e in snap.edges_quantity())
    name, cm = length_unit(max(e1[-1] - e1[0], e2[-1] - e2[0]))
    pos = np.all(data > 0) and np.all(np.isfinite(data))
    if log is None:
        log = bool(pos and data.max() / data.min() > 100.0)
    ratio = (e2[-1] - e2[0]) / (e1[-1] - e1[0])
    fig, ax = plt.subplots(figsize=(7, 7 * min(1.5, max(0.35, ratio))))
    norm = LogNorm(vmin=data.min(), vmax=data.max()) if log else None
    im = ax.pcolormesh(e1 / cm, e2 / cm, data, shading="flat", norm=norm, cmap="viridis")
    a1, a2 = snap.axis_names
    ax.set_xlabel(f"{a1} [{name}]")
    ax.set_ylabel(f"{a2} [{name}]")
    ax.set_aspect("equal" if 0.1 < ratio < 10 else "auto")
    t = snap.time_quantity()
    ax.set_title(f"{field} at t = {time_label(float(t.to('s').value))}")
    cb = fig.colorbar(im, ax=ax)
    cb.set_label(f"{field} [{unit}]" if unit else field)
    out = Path(output) if output else Path(path).with_name(f"{Path(path).stem}_{field}.png")
    fig.savefig(out, dpi=120, bbox_inches="tight")
    plt.close(fig)
    return out
