"""Slice plots of snapshot fields on the R-z (or x-y) plane.

* Cylindrical runs with an axis are mirrored across it (``mirror``), so the
  picture shows the whole meridional plane, R from -R_max to R_max.  The left
  half shows the same axisymmetric values (``v_R`` and ``B_R`` point away from
  the axis on both sides); arrows and field lines are drawn in the plane, so
  their R-direction flips on the left.
* Axes in the length unit that suits the domain (pc, kpc, Mpc, ...) or a given
  one.
* Colour bars with units: "friendly" units (default) show density as the
  particle number density ``n = rho / (mu m_H)`` in cm^-3, velocities in
  km/s, fields in microgauss, temperatures in K, everything else in CGS;
  ``units="cgs"`` keeps the CGS units of the snapshot.
* A positive field spanning more than two decades is drawn on a log scale
  (or as forced); a field of both signs on a symmetric diverging scale.
* Several fields side by side, velocity arrows (subsampled on an even grid),
  magnetic field lines as contours of the poloidal flux function
  (:mod:`wind2d.analysis.fieldlines`, exact in axisymmetry).

matplotlib with the Agg backend only.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

from ..errors import ParameterError
from ..problem.units import M_H_CGS

_LENGTHS = (("Mpc", 3.0856775814913673e24), ("kpc", 3.0856775814913673e21),
            ("pc", 3.0856775814913673e18), ("au", 1.495978707e13), ("km", 1e5), ("cm", 1.0))
LENGTH_UNITS = dict(_LENGTHS)

_TIMES = (("Gyr", 3.15576e16), ("Myr", 3.15576e13), ("kyr", 3.15576e10), ("yr", 3.15576e7),
          ("s", 1.0))
TIME_UNITS = dict(_TIMES)


# display names (matplotlib mathtext) of the standard fields
_PRETTY = {"rho": r"$\rho$", "p": r"$p$", "temperature": r"$T$", "plasma_beta": r"$\beta$",
           "magnetic_pressure": r"$p_B$", "vR": r"$v_R$", "vz": r"$v_z$", "vphi": r"$v_\phi$",
           "vx": r"$v_x$", "vy": r"$v_y$", "BR": r"$B_R$", "Bz": r"$B_z$",
           "Bphi": r"$B_\phi$", "Bx": r"$B_x$", "By": r"$B_y$"}

UNIT_STYLES = ("friendly", "cgs")
ALIASES = {"T": "temperature", "beta": "plasma_beta", "pB": "magnetic_pressure"}


def resolve_fields(snap, fields) -> list[str]:
    """Field names checked against ``snap`` (short aliases such as ``T`` for
    ``temperature`` accepted); ParameterError naming the available fields."""
    if isinstance(fields, str):
        fields = [fields]
    out = []
    for name in fields:
        real = name if name in snap.fields else ALIASES.get(name, name)
        if real not in snap.fields:
            raise ParameterError(f"--field {name!r}: not in {snap.path}; available: "
                                 + ", ".join(snap.fields))
        out.append(real)
    if not out:
        raise ParameterError("--field: give at least one field")
    return out


def resolve_options(snap, kwargs: dict) -> dict:
    """Per-field options (dicts) keyed by the resolved field names."""
    out = dict(kwargs)
    for key in ("log", "vmin", "vmax", "cmap"):
        opt = out.get(key)
        if isinstance(opt, dict):
            out[key] = {(k if k in snap.fields else ALIASES.get(k, k)): v
                        for k, v in opt.items()}
    return out


def time_unit(t_s: float) -> str:
    """The largest time unit (Julian years) in which ``|t_s|`` is at least 1."""
    for name, s in _TIMES:
        if abs(t_s) >= s:
            return name
    return "s"


def time_label(t_s: float, unit: str | None = None) -> str:
    """A time in seconds shown in ``unit`` or the largest fitting unit (Julian years)."""
    unit = unit or time_unit(t_s)
    if unit not in TIME_UNITS:
        raise ParameterError(f"time unit {unit!r}: allowed values are {', '.join(TIME_UNITS)}")
    return f"{t_s / TIME_UNITS[unit]:.4g} {unit}"


def length_unit(extent_cm: float) -> tuple[str, float]:
    """The largest common unit in which the extent is at least 1."""
    for name, cm in _LENGTHS:
        if extent_cm >= cm:
            return name, cm
    return "cm", 1.0


def _length(snap, length: str | None) -> tuple[str, float]:
    if length is None:
        e1, e2 = (np.asarray(e) * snap.length_to_cgs for e in snap.edges)
        return length_unit(max(e1[-1] - e1[0], e2[-1] - e2[0]))
    if length not in LENGTH_UNITS:
        raise ParameterError(f"length unit {length!r}: allowed values are "
                             + ", ".join(LENGTH_UNITS))
    return length, LENGTH_UNITS[length]


def _latex_unit(text: str) -> str:
    if not text:
        return ""
    try:
        import astropy.units as u
        return u.Unit(text).to_string("latex_inline")
    except ValueError:
        return text


def display_field(snap, name: str, units: str = "friendly"):
    """Field ``name`` of ``snap`` in display units.

    Returns ``(data, label)``: a float array ``[n2, n1]`` (non-finite values
    kept; the caller masks them) and the colour-bar label with its unit.
    """
    if units not in UNIT_STYLES:
        raise ParameterError(f"units = {units!r}: allowed values are {', '.join(UNIT_STYLES)}")
    if name not in snap.fields:
        raise ParameterError(f"--field {name!r}: not in {snap.path}; available: "
                             + ", ".join(snap.fields))
    data = np.asarray(snap._code.get(name, snap.fields[name]), dtype=np.float64) \
        * snap.to_cgs[name]
    kind, unit = snap.kinds.get(name, ""), snap.units.get(name, "")
    pretty = _PRETTY.get(name, name.replace("_", " "))
    if units == "friendly":
        if kind == "density":
            mu = float(snap.code_units.get("mu") or 1.0)
            lab = r"$n$ = $\rho/(\mu m_H)$" if name == "rho" else f"{pretty}$/(\\mu m_H)$"
            return data / (mu * M_H_CGS), lab + r" [cm$^{-3}$]"
        if kind == "velocity":
            return data * 1e-5, pretty + r" [km s$^{-1}$]"
        if kind == "magnetic_field":
            return data * 1e6, pretty + r" [$\mu$G]"
        if kind == "temperature":
            return data, pretty + " [K]"
        if kind == "diffusivity":
            return data, pretty + r" [cm$^2$ s$^{-1}$]"
    u = _latex_unit(unit)
    return data, (f"{pretty} [{u}]" if u else pretty)


def auto_log(data) -> bool:
    """Log scale for a field whose finite values are all positive and span > 2 decades."""
    d = np.asarray(data)
    d = d[np.isfinite(d)]
    return bool(d.size and d.min() > 0 and d.max() / d.min() > 100.0)


def value_limits(data, log: bool, percentiles=None) -> tuple[float, float]:
    """Colour limits of the finite (and, for a log scale, positive) values:
    min/max, or the given ``(lo, hi)`` percentiles; never empty."""
    d = np.asarray(data, dtype=np.float64).ravel()
    d = d[np.isfinite(d)]
    if log:
        d = d[d > 0]
    if d.size == 0:
        return (1.0, 10.0) if log else (-1.0, 1.0)
    if percentiles is None:
        lo, hi = float(d.min()), float(d.max())
    else:
        lo, hi = (float(v) for v in np.percentile(d, percentiles))
    return widen(lo, hi, log)


def widen(lo: float, hi: float, log: bool) -> tuple[float, float]:
    """Open up equal limits (a uniform field) so a colour bar can be drawn."""
    if hi > lo:
        return lo, hi
    if log:
        return lo / 1.5, hi * 1.5
    pad = 0.01 * abs(lo) if lo != 0 else 1.0
    return lo - pad, hi + pad


def _per(option, name, default=None):
    """A per-field option: one value for all fields or a dict by field name."""
    if isinstance(option, dict):
        return option.get(name, default)
    return default if option is None else option


def _mirror_default(snap, mirror):
    can = snap.geometry == "cylindrical" and float(snap.edges[0][0]) == 0.0
    if mirror is None:
        return can
    if mirror and snap.geometry != "cylindrical":
        raise ParameterError("mirror: only cylindrical (R, z) snapshots can be mirrored "
                             "across the axis")
    return bool(mirror)


def _mirror_edges(e):
    return np.concatenate((-e[::-1], e[1:])) if e[0] == 0.0 else np.concatenate((-e[::-1], e))


def _mirror_cells(a):
    return np.concatenate((a[:, ::-1], a), axis=1)


def _mirror_corners(psi, e):
    if e[0] == 0.0:
        return np.concatenate((psi[:, :0:-1], psi), axis=1), np.concatenate((-e[:0:-1], e))
    return np.concatenate((psi[:, ::-1], psi), axis=1), np.concatenate((-e[::-1], e))


def velocity_names(snap) -> tuple[str, str]:
    a1, a2 = snap.axis_names
    return f"v{a1}", f"v{a2}"


def arrow_samples(snap, mirror: bool, narrows: int, cm: float):
    """Cells picked for arrows on an even grid of points in the displayed plane:
    ``(X, Y, j, i, sign)`` with ``sign = -1`` on the mirrored half."""
    e1, e2 = (np.asarray(e) * snap.length_to_cgs / cm for e in snap.edges)
    x_lo = -e1[-1] if mirror else e1[0]
    w, h = e1[-1] - x_lo, e2[-1] - e2[0]
    step = max(w, h) / max(int(narrows), 1)
    xs = x_lo + step * (np.arange(int(np.floor(w / step))) + 0.5)
    ys = e2[0] + step * (np.arange(int(np.floor(h / step))) + 0.5)
    xs = xs + 0.5 * (w - (xs.size * step)) if xs.size else np.array([x_lo + 0.5 * w])
    ys = ys + 0.5 * (h - (ys.size * step)) if ys.size else np.array([e2[0] + 0.5 * h])
    X, Y = np.meshgrid(xs, ys)
    keep = np.abs(X) >= e1[0] if mirror else np.ones_like(X, dtype=bool)
    X, Y = X[keep], Y[keep]
    sign = np.where(X < 0, -1.0, 1.0) if mirror else np.ones_like(X)
    i = np.clip(np.searchsorted(e1, np.abs(X) if mirror else X) - 1, 0, e1.size - 2)
    j = np.clip(np.searchsorted(e2, Y) - 1, 0, e2.size - 2)
    return X, Y, j, i, sign, step


def _nice(x: float) -> float:
    """1, 2 or 5 times a power of ten, not above x."""
    if not (x > 0 and np.isfinite(x)):
        return 1.0
    e = np.floor(np.log10(x))
    for m in (5.0, 2.0, 1.0):
        if m * 10 ** e <= x:
            return float(m * 10 ** e)
    return float(10 ** e)


def flux_levels(psi: np.ndarray, nlines: int, lo=None, hi=None) -> np.ndarray:
    """``nlines`` psi values evenly spaced strictly inside [lo, hi] (default the
    range of psi): equal magnetic flux between neighbouring lines.

    Where psi takes both signs (a region of reversed field, closed loops) and
    the smaller side would get fewer than three lines, three more are spread
    over it so that the loops show.
    """
    lo = float(np.nanmin(psi)) if lo is None else lo
    hi = float(np.nanmax(psi)) if hi is None else hi
    if not hi > lo:
        return np.array([])
    levels = np.linspace(lo, hi, int(nlines) + 2)[1:-1]
    if lo < 0.0 < hi:
        minor = lo if -lo < hi else hi
        if np.count_nonzero(levels * np.sign(minor) > 0) < 3:
            levels = np.union1d(levels, np.linspace(minor, 0.0, 5)[1:-1])
    return levels


def draw_panel(fig, ax, snap, name, *, log=None, vmin=None, vmax=None, mirror=None,
               length=None, arrows=False, fieldlines=False, units="friendly", cmap=None,
               arrow_ref=None, psi_levels=None, nlines=16, narrows=16, flux=None):
    """Draw field ``name`` of ``snap`` on ``ax`` with its colour bar.

    ``vmin``/``vmax`` are in display units; ``arrow_ref`` (km/s in friendly
    units, cm/s in CGS) is the speed drawn as one arrow spacing (default the
    largest speed); ``psi_levels`` fixes the flux-function contour levels
    (code units; default ``nlines`` evenly spaced levels).  Returns the image.
    """
    from matplotlib.colors import LogNorm, Normalize

    mirror = _mirror_default(snap, mirror)
    lname, cm = _length(snap, length)
    data, label = display_field(snap, name, units)
    use_log = auto_log(data) if log is None else bool(log)
    lo, hi = value_limits(data, use_log)
    if lo < 0.0 < hi and not use_log and vmin is None and vmax is None:
        m = max(abs(lo), abs(hi))       # a field of both signs: symmetric limits
        lo, hi = -m, m
    lo = lo if vmin is None else float(vmin)
    hi = hi if vmax is None else float(vmax)
    if use_log and lo <= 0:
        raise ParameterError(f"field {name!r}: a log scale needs vmin > 0 (got {lo:g})")
    lo, hi = widen(lo, hi, use_log)
    norm = LogNorm(vmin=lo, vmax=hi) if use_log else Normalize(vmin=lo, vmax=hi)
    cmap = cmap or ("RdBu_r" if lo < 0.0 < hi and not use_log else "viridis")
    shown = np.ma.masked_invalid(data)
    if use_log:
        shown = np.ma.masked_less_equal(shown, 0.0)
    e1, e2 = (np.asarray(e) * snap.length_to_cgs / cm for e in snap.edges)
    if mirror:
        e1, shown = _mirror_edges(e1), np.ma.concatenate((shown[:, ::-1], shown), axis=1)
        if snap.edges[0][0] != 0.0:       # a gap around the axis stays blank
            n = shown.shape[1] // 2
            gap = np.ma.masked_all((shown.shape[0], 1))
            shown = np.ma.concatenate((shown[:, :n], gap, shown[:, n:]), axis=1)
    im = ax.pcolormesh(e1, e2, shown, shading="flat", norm=norm, cmap=cmap, rasterized=True)
    a1, a2 = snap.axis_names
    ax.set_xlabel(f"{a1} [{lname}]")
    ax.set_ylabel(f"{a2} [{lname}]")
    ratio = (e2[-1] - e2[0]) / (e1[-1] - e1[0])
    ax.set_aspect("equal" if 0.1 < ratio < 10 else "auto")
    ax.set_xlim(e1[0], e1[-1])
    ax.set_ylim(e2[0], e2[-1])
    cb = fig.colorbar(im, ax=ax, shrink=0.9)
    cb.set_label(label)

    if fieldlines:
        from ..analysis.fieldlines import flux_function_from_snapshot
        ff = flux if flux is not None else flux_function_from_snapshot(snap, check=False)
        psi, x1 = ff.psi, ff.x1 * snap.length_to_cgs / cm
        x2 = ff.x2 * snap.length_to_cgs / cm
        halves = [(x1, psi)]
        if mirror and x1[0] == 0.0:
            halves = [_mirror_corners(psi, x1)[::-1]]
        elif mirror:                  # a hole around the axis: draw each half alone
            halves.append((-x1[::-1], psi[:, ::-1]))
        levels = flux_levels(ff.psi, nlines) if psi_levels is None else np.asarray(psi_levels)
        for xs, ps in halves if levels.size else ():
            ax.contour(xs, x2, ps, levels=np.sort(levels), colors="white", linewidths=0.7,
                       alpha=0.85, linestyles="solid")

    if arrows:
        n1, n2 = velocity_names(snap)
        if n1 not in snap.fields or n2 not in snap.fields:
            raise ParameterError(f"arrows: the snapshot has no velocity fields {n1}, {n2}")
        v1, _ = display_field(snap, n1, units)
        v2, _ = display_field(snap, n2, units)
        X, Y, j, i, sign, step = arrow_samples(snap, mirror, narrows, cm)
        U, V = sign * v1[j, i], v2[j, i]
        speed = np.hypot(U, V)
        ref = arrow_ref if arrow_ref is not None else (float(speed.max()) if speed.size else 0.0)
        show = speed > 1e-3 * ref           # no dots for gas at rest
        X, Y, U, V = X[show], Y[show], U[show], V[show]
        if ref > 0:
            q = ax.quiver(X, Y, U, V, angles="xy", scale_units="xy", scale=ref / (0.9 * step),
                          color="white", edgecolor="black", linewidth=0.3, width=0.004,
                          pivot="middle")
            key = _nice(ref)
            vunit = "km/s" if units == "friendly" else "cm/s"
            ax.quiverkey(q, 0.82, 1.02, key, f"{key:g} {vunit}", labelpos="W",
                         coordinates="axes", fontproperties={"size": 8})
    return im


def figure_size(snap, nfields: int, mirror: bool, height: float = 5.0):
    """Figure size (inches) for ``nfields`` panels side by side."""
    e1, e2 = (np.asarray(e) for e in snap.edges)
    w = (2 * e1[-1] if mirror else e1[-1] - e1[0]) / (e2[-1] - e2[0])
    pw = float(np.clip(height * w, 2.5, 9.0))
    return (nfields * (pw + 1.6), height + 0.9)


def render(snap, fields, *, log=None, vmin=None, vmax=None, mirror=None, length=None,
           arrows=False, fieldlines=False, units="friendly", cmap=None, arrow_ref=None,
           psi_levels=None, nlines=16, narrows=16, time_unit_name=None, figsize=None,
           dpi=120, title=None, positions=None):
    """A matplotlib Figure with one panel per field of ``snap`` (side by side).

    ``log``, ``vmin``, ``vmax``, ``cmap`` are one value for all fields or a
    dict by field name; ``log=None`` chooses per field (:func:`auto_log`).
    ``positions`` (the ``get_position()`` of every axes of an earlier figure
    with the same fields and limits) skips the layout engine: movies lay out
    the first frame only.
    """
    # a bare Figure (no pyplot): drawn by the Agg canvas, whatever backend a
    # caller's pyplot uses
    from matplotlib.figure import Figure

    if isinstance(fields, str):
        fields = [fields]
    fields = list(fields)
    if not fields:
        raise ParameterError("--field: give at least one field")
    mir = _mirror_default(snap, mirror)
    fig = Figure(figsize=figsize or figure_size(snap, len(fields), mir), dpi=dpi,
                 layout=None if positions is not None else "constrained")
    axes = fig.subplots(1, len(fields), squeeze=False)[0]
    flux = None
    if fieldlines:
        from ..analysis.fieldlines import flux_function_from_snapshot
        flux = flux_function_from_snapshot(snap, check=False)
    for ax, name in zip(axes, fields):
        draw_panel(fig, ax, snap, name, log=_per(log, name), vmin=_per(vmin, name),
                   vmax=_per(vmax, name), mirror=mir, length=length, arrows=arrows,
                   fieldlines=fieldlines, units=units, cmap=_per(cmap, name),
                   arrow_ref=arrow_ref, psi_levels=psi_levels, nlines=nlines,
                   narrows=narrows, flux=flux)
    if positions is not None:
        for ax, pos in zip(fig.axes, positions):
            ax.set_position(pos)
    t = float(snap.time) * float(snap.time_to_cgs)
    if time_unit_name is None and t == 0.0 and snap.code_units.get("time") in TIME_UNITS:
        time_unit_name = snap.code_units["time"]      # "t = 0 Myr", not "0 s"
    stamp = f"t = {time_label(t, time_unit_name)}"
    fig.suptitle(stamp if title is None else f"{title}   {stamp}")
    return fig


def _load(path):
    if hasattr(path, "fields"):
        return path
    from ..io import read_snapshot
    if not Path(path).is_file():
        raise FileNotFoundError(2, "no such snapshot", str(path))
    return read_snapshot(path)


def plot_slices(path, fields, output=None, **kwargs) -> Path:
    """Write a PNG of one or more fields of a snapshot side by side.

    ``path`` is a snapshot file (or a read :class:`~wind2d.io.read.Snapshot`);
    ``output`` defaults to ``<snapshot stem>_<field>[_<field>...].png`` next to
    it.  Keyword arguments as for :func:`render`.  Returns the PNG path.
    """
    snap = _load(path)
    fields = resolve_fields(snap, fields)
    fig = render(snap, fields, **resolve_options(snap, kwargs))
    sp = Path(snap.path)
    out = Path(output) if output else sp.with_name(f"{sp.stem}_{'_'.join(fields)}.png")
    out.parent.mkdir(parents=True, exist_ok=True)
    fig.savefig(out, dpi=fig.dpi)
    return out


def plot_snapshot(path, field: str, output=None, log: bool | None = None) -> Path:
    """PNG of one field (the first interface; see :func:`plot_slices`)."""
    return plot_slices(path, [field], output, log=log)
