"""Loading factors of a run from its history: outflow rates over star formation.

Over a time window ``[t0, t1]`` (history rows inside it):

* mean outflow rates: the trapezoidal time average of each ``<surface>_<component>_net``
  and ``_out`` column (instantaneous rates sampled at the history cadence);
* mean star-formation rate: ``2 pi (stars_formed(t1) - stars_formed(t0)) / (t1 - t0)``
  from the running total of the ``injection`` module (exact for any
  star-formation history), or the average of ``star_formation_rate``;
* mean injected power: ``2 pi`` times the change of the injected thermal,
  cosmic-ray and returned-kinetic energy tallies over ``t1 - t0``.

Loading factors (dimensionless, common practice in galactic-wind studies):

* mass loading ``eta_m = Mdot / SFR`` (mass rates);
* energy loading ``eta_E = Edot / Edot_injected`` for each energy component
  (kinetic, thermal, magnetic, cr) and their sum (energy).

The history holds rates per radian (cylindrical geometry); the values
reported here are for the whole galaxy (times ``2 pi``).  No loading is given
for the momentum rate (its reference, the momentum injected by supernovae, is
not modelled).
"""
from __future__ import annotations

import math
import re
from pathlib import Path

import numpy as np

from ..errors import ParameterError

COMPONENTS = ("mass", "momentum", "kinetic", "thermal", "magnetic", "cr", "energy")
_COL = re.compile(r"^(.+)_(" + "|".join(COMPONENTS) + r")_(net|out)$")
REPORT_UNITS = {"mass": "Msun / yr", "momentum": "Msun km / (s yr)", "power": "erg / s"}
INJECTED = ("injected_thermal_energy", "injected_cr_energy", "injected_kinetic_energy")


def _quantity_kind(component: str) -> str:
    return {"mass": "mass", "momentum": "momentum"}.get(component, "power")


def read_run(run_dir):
    """History columns, their units and the geometry of a run directory."""
    from ..io import read_history, read_history_units
    d = Path(run_dir)
    hist = d / "history.csv"
    if not hist.is_file():
        raise ParameterError(f"{d}: not a run directory with a history (no history.csv)")
    geometry = "cylindrical"
    resolved = d / "problem.resolved.yaml"
    if resolved.is_file():
        import yaml
        data = yaml.safe_load(resolved.read_text()) or {}
        geometry = (data.get("grid") or {}).get("geometry", geometry)
    return read_history(hist), read_history_units(hist), geometry


def surfaces(columns) -> dict[str, list[str]]:
    """Surfaces named in the history columns and their components, in column order."""
    out: dict[str, list[str]] = {}
    for c in columns:
        m = _COL.match(c)
        if m:
            comps = out.setdefault(m.group(1), [])
            if m.group(2) not in comps:
                comps.append(m.group(2))
    return out


def _unit(text: str):
    import astropy.units as u
    return u.dimensionless_unscaled if text in ("", "1") else u.Unit(text)


def time_in(value, unit_text: str, where: str) -> float:
    """A time given as text with a unit ('10 Myr') or a number in the history's unit."""
    import astropy.units as u
    if value is None:
        return None
    try:
        return float(value)
    except (TypeError, ValueError):
        pass
    try:
        return float(u.Quantity(value).to(_unit(unit_text)).value)
    except Exception:
        raise ParameterError(f"{where} {value!r}: not a time (e.g. '10 Myr', or a number in "
                             f"the history's unit {unit_text})") from None


def window(t: np.ndarray, t_from=None, t_to=None) -> np.ndarray:
    """Indices of the history rows with ``t_from <= t <= t_to`` (ends optional)."""
    lo = -np.inf if t_from is None else t_from
    hi = np.inf if t_to is None else t_to
    idx = np.nonzero((t >= lo * (1 - 1e-12) - 1e-300) & (t <= hi * (1 + 1e-12) + 1e-300))[0]
    if not len(idx):
        raise ParameterError(f"no history row in the window {lo:g} .. {hi:g} "
                             f"(the history covers {t.min():g} .. {t.max():g})")
    return idx


def time_mean(t: np.ndarray, y: np.ndarray) -> float:
    """Trapezoidal time average (the value itself for a single row)."""
    if len(t) == 1 or t[-1] == t[0]:
        return float(np.mean(y))
    return float(np.sum(0.5 * (y[1:] + y[:-1]) * np.diff(t)) / (t[-1] - t[0]))


def loading_factors(run_dir, t_from=None, t_to=None) -> dict:
    """Mean rates and loading factors of a run over a time window.

    ``t_from``, ``t_to``: numbers in the history's time unit or texts with a
    unit.  Returns a JSON-serialisable dict (rates in ``REPORT_UNITS``, whole
    galaxy)::

        {"run", "geometry", "time_unit", "window": [t0, t1], "rows",
         "star_formation_rate": Msun/yr or None, "injected_power": erg/s or None,
         "per": "whole galaxy (2 pi)" ...,
         "surfaces": {name: {component: {"net", "out", "unit",
                                         "loading_net", "loading_out"}}}}
    """
    import astropy.units as u
    h, units, geometry = read_run(run_dir)
    tunit = units.get("time", "")
    t0 = time_in(t_from, tunit, "--from")
    t1 = time_in(t_to, tunit, "--to")
    idx = window(h["time"], t0, t1)
    t = h["time"][idx].astype(np.float64)
    per = 2.0 * math.pi if geometry == "cylindrical" else 1.0
    dt = t[-1] - t[0]

    def conv(value, unit_text, target):
        return float((value * _unit(unit_text)).to(u.Unit(target)).value)

    sfr = None
    if "stars_formed" in h and dt > 0:
        ms = h["stars_formed"][idx]
        sfr = conv(per * (ms[-1] - ms[0]) / dt, f"({units['stars_formed']}) / ({tunit})",
                   REPORT_UNITS["mass"])
    elif "star_formation_rate" in h:
        sfr = conv(time_mean(t, h["star_formation_rate"][idx].astype(float)),
                   units["star_formation_rate"], REPORT_UNITS["mass"])
    power = None
    have = [k for k in INJECTED if k in h]
    if have and dt > 0:
        e = sum(h[k][idx].astype(float) for k in have)
        power = conv(per * (e[-1] - e[0]) / dt, f"({units[have[0]]}) / ({tunit})",
                     REPORT_UNITS["power"])
    out = {"run": str(run_dir), "geometry": geometry, "time_unit": tunit,
           "window": [float(t[0]), float(t[-1])], "rows": int(len(idx)),
           "per": "whole galaxy (2 pi)" if per != 1.0 else "per unit length (Cartesian)",
           "star_formation_rate": sfr, "star_formation_rate_unit": REPORT_UNITS["mass"],
           "injected_power": power, "injected_power_unit": REPORT_UNITS["power"],
           "surfaces": {}}
    for name, comps in surfaces(h).items():
        entry = {}
        for c in comps:
            target = REPORT_UNITS[_quantity_kind(c)]
            row = {"unit": target}
            for side in ("net", "out"):
                col = f"{name}_{c}_{side}"
                if col not in h:
                    row[side] = None
                    continue
                mean = time_mean(t, h[col][idx].astype(float)) * per
                row[side] = conv(mean, units[col], target)
            ref = sfr if c == "mass" else (power if _quantity_kind(c) == "power" else None)
            for side in ("net", "out"):
                v = row.get(side)
                row[f"loading_{side}"] = (v / ref) if (v is not None and ref) else None
            entry[c] = row
        out["surfaces"][name] = entry
    return out


def _fmt(v) -> str:
    return "-" if v is None else f"{v:.4g}"


def format_table(res: dict) -> str:
    """The result of :func:`loading_factors` as a plain-text table."""
    lines = [f"run {res['run']}: window {res['window'][0]:.6g} .. {res['window'][1]:.6g} "
             f"{res['time_unit']} ({res['rows']} history rows); rates: {res['per']}"]
    lines.append(f"star-formation rate: {_fmt(res['star_formation_rate'])} "
                 f"{res['star_formation_rate_unit']}; injected power: "
                 f"{_fmt(res['injected_power'])} {res['injected_power_unit']}")
    if not res["surfaces"]:
        lines.append("no outflow surfaces in the history (add the outflow_rates module)")
        return "\n".join(lines)
    head = ("surface", "component", "net", "outflow", "unit", "loading net", "loading out")
    rows = [head]
    for name, comps in res["surfaces"].items():
        for c, r in comps.items():
            rows.append((name, c, _fmt(r["net"]), _fmt(r["out"]), r["unit"],
                         _fmt(r["loading_net"]), _fmt(r["loading_out"])))
    widths = [max(len(r[k]) for r in rows) for k in range(len(head))]
    for k, r in enumerate(rows):
        lines.append("  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip())
        if k == 0:
            lines.append("  ".join("-" * w for w in widths))
    lines.append("loading: mass rate / star-formation rate; energy rates / injected power "
                 "(thermal + cosmic-ray + kinetic of returned mass)")
    return "\n".join(lines)
