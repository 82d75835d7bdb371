"""Line figures: history time series of several runs, and 1D profiles.

Used by ``wind2d compare`` and ``wind2d profile``; the numbers come from
:mod:`wind2d.analysis.profiles` and :mod:`wind2d.io.history`.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

from ..errors import ParameterError


def _plt():
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    return plt


def _log_scale(ys) -> bool:
    vals = np.concatenate([np.asarray(y, dtype=float).ravel() for y in ys]) if ys else \
        np.zeros(0)
    vals = vals[np.isfinite(vals)]
    return bool(len(vals) and np.all(vals > 0) and vals.max() / vals.min() > 100.0)


def history_series(runs, column: str):
    """``[(label, t, y)]`` of one history column of each run, converted to the
    time unit and column unit of the first run; returns also those units."""
    import astropy.units as u

    from ..analysis.loading import _unit
    from ..io import read_history, read_history_units
    out, tunit, yunit = [], None, None
    for run in runs:
        path = Path(run) / "history.csv"
        if not path.is_file():
            raise ParameterError(f"{run}: not a run directory with a history (no history.csv)")
        h, units = read_history(path), read_history_units(path)
        if column not in h:
            raise ParameterError(f"--column {column!r}: not in {path}; columns: "
                                 + ", ".join(h))
        if tunit is None:
            tunit, yunit = units["time"], units[column]
        t = (h["time"] * _unit(units["time"])).to(_unit(tunit)).value
        try:
            y = (h[column] * _unit(units[column])).to(_unit(yunit)).value
        except u.UnitConversionError:
            raise ParameterError(f"--column {column!r}: unit {units[column]!r} of {run} "
                                 f"cannot be compared with {yunit!r}") from None
        out.append((Path(run).name or str(run), t, y))
    return out, tunit, yunit


def compare_figure(runs, columns, profile=None, out="compare.png") -> Path:
    """Time series of history ``columns`` of every run (one panel per column),
    plus one panel of profiles ``profile = (field, [(label, x, y)], x label,
    y label)`` if given."""
    plt = _plt()
    npan = len(columns) + (1 if profile else 0)
    if npan == 0:
        raise ParameterError("compare: give at least one --column or --profile")
    fig, axes = plt.subplots(npan, 1, figsize=(7, 3.2 * npan), squeeze=False)
    for ax, col in zip(axes[:, 0], columns):
        series, tunit, yunit = history_series(runs, col)
        for label, t, y in series:
            ax.plot(t, y, label=label)
        ax.set_xlabel(f"time [{tunit}]")
        ax.set_ylabel(f"{col} [{yunit}]" if yunit not in ("", "1") else col)
        if _log_scale([y for _, _, y in series]):
            ax.set_yscale("log")
        ax.legend(fontsize="small")
    if profile:
        _field, curves, xlabel, ylabel = profile
        ax = axes[-1, 0]
        for label, x, y in curves:
            ax.plot(x, y, label=label)
        ax.set_xlabel(xlabel)
        ax.set_ylabel(ylabel)
        if _log_scale([y for _, _, y in curves]):
            ax.set_yscale("log")
        ax.legend(fontsize="small")
    fig.tight_layout()
    out = Path(out)
    fig.savefig(out, dpi=110)
    plt.close(fig)
    return out


def profile_figure(x, y, xlabel: str, ylabel: str, title: str, out) -> Path:
    """One profile as a PNG."""
    plt = _plt()
    fig, ax = plt.subplots(figsize=(7, 4))
    ax.plot(x, y, marker=".")
    ax.set_xlabel(xlabel)
    ax.set_ylabel(ylabel)
    ax.set_title(title, fontsize="medium")
    if _log_scale([y]):
        ax.set_yscale("log")
    fig.tight_layout()
    out = Path(out)
    fig.savefig(out, dpi=110)
    plt.close(fig)
    return out
