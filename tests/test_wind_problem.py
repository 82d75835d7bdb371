"""The ready wind problems of problems/wind, run in a reduced form through the CLI.

Each of the three low-resolution variants (cosmic-ray streaming, cosmic-ray
diffusion, no cosmic rays) runs a few steps on a coarse grid
(``wind2d run ... --set grid.R.cells=... --set stop.max_steps=...``); then
``wind2d summary --json``, ``wind2d plot`` and ``wind2d movie`` must produce
their outputs, non-empty and finite.  The long runs that show the wind itself
are documented in docs/wind-problem.md (they take minutes, not CI seconds).

Checks against references outside the code:

* the energy released by star formation is 1e51 erg per 100 Msun of stars
  formed (one core-collapse supernova per ~100 Msun, common practice), so the
  injected thermal plus cosmic-ray energy equals 1e49 erg/Msun times the mass
  of stars formed, converted with astropy's units; 10 % of it goes into
  cosmic rays in the cosmic-ray variants (the common estimate of the
  supernova energy given to cosmic rays, common practice) and none in the
  thermal variant;
* the mass of stars formed grows at the problem file's star-formation rate,
  3 Msun/yr, converted with astropy (``wind2d summary`` reports the same);
* mass conservation (common practice): the gas mass changes by the returned
  stellar mass minus what left through the domain edges, to round-off, as long
  as no density floor acted;
* ``wind2d check`` accepts every file in problems/wind.
"""
import json
import math
from pathlib import Path

import numpy as np
import pytest

from wind2d.cli import main
from wind2d.io import read_snapshot

WIND = Path(__file__).resolve().parents[1] / "problems" / "wind"
VARIANTS = {"streaming": 0.1, "diffusion": 0.1, "no_cr": 0.0}   # variant: cr_fraction
SFR_MSUN_PER_YR = 3.0                 # problems/wind/base.yaml
EPS_ERG_PER_MSUN = 1.0e51 / 100.0     # 1e51 erg per 100 Msun (common practice)
# a coarse grid that still puts cell centres inside the injection disk
# (R <= 1 kpc, |z| <= 0.2 kpc): cells 0.5 kpc in R, 0.3 kpc in z
# derived fields that are +inf by definition in some cells (no cooling at the 1e4 K floor)
MAY_BE_INFINITE = {"cooling_time"}
REDUCED = ["grid.R.cells=24", "grid.z.cells=80", "stop.max_steps=20",
           "outputs.snapshots.every=0.05 Myr", "outputs.history.every=0.025 Myr",
           "outputs.log.every_steps=1000"]


def _cli(*args):
    return main([str(a) for a in args])


def _history(run):
    lines = (run / "history.csv").read_text().splitlines()
    rows = [ln for ln in lines if not ln.startswith("#")]
    names = [c.strip() for c in rows[0].split(",")]
    data = np.array([[float(x) for x in ln.split(",")] for ln in rows[1:]])
    cols = {n.split(" [")[0]: data[:, k] for k, n in enumerate(names)}
    units = {n.split(" [")[0]: (n.split(" [")[1].rstrip("]") if " [" in n else "")
             for n in names}
    return cols, units


def _quantity(value, unit):
    import astropy.units as u
    return value * u.Unit(unit)


@pytest.fixture(scope="module", params=sorted(VARIANTS))
def reduced_run(request, tmp_path_factory):
    variant = request.param
    run = tmp_path_factory.mktemp("wind") / variant
    sets = [a for kv in REDUCED for a in ("--set", kv)]
    rc = _cli("run", WIND / f"{variant}_lowres.yaml", "--out", run, "--quiet", *sets)
    assert rc == 0
    return variant, run


def test_check_every_wind_file(capsys):
    files = sorted(WIND.glob("*.yaml"))
    assert {f"{v}{s}.yaml" for v in VARIANTS for s in ("", "_lowres")} <= \
        {f.name for f in files}
    for f in files:
        assert _cli("check", f) == 0, f
        assert "valid" in capsys.readouterr().out


def test_snapshots_and_history_finite(reduced_run):
    variant, run = reduced_run
    files = sorted((run / "snapshots").glob("snapshot_*.h5"))
    assert len(files) >= 3
    for f in files:
        snap = read_snapshot(f)
        for name, arr in snap.fields.items():
            assert arr.size == 24 * 80, (f.name, name)
            if name in MAY_BE_INFINITE:
                assert not np.any(np.isnan(arr)) and np.all(arr > 0.0), (f.name, name)
            else:
                assert np.all(np.isfinite(arr)), (f.name, name)
        assert snap.field("rho").min() > 0.0 and snap.field("p").min() > 0.0
        assert ("Ec" in snap.fields) == (VARIANTS[variant] > 0.0)
    h, _units = _history(run)
    assert len(h["time"]) >= 4
    assert all(np.all(np.isfinite(v)) for v in h.values())
    for surface in ("z1kpc", "z5kpc", "r10kpc"):
        assert f"{surface}_mass_out" in h and f"{surface}_energy_net" in h


def test_injection_and_mass_budget(reduced_run):
    variant, run = reduced_run
    import astropy.units as u
    h, units = _history(run)
    t = _quantity(h["time"], units["time"])
    stars = 2.0 * math.pi * _quantity(h["stars_formed"], units["stars_formed"])
    # stars form at the file's rate (whole galaxy: tallies are per radian)
    rate = ((stars[-1] - stars[0]) / (t[-1] - t[0])).to_value(u.Msun / u.yr)
    assert rate == pytest.approx(SFR_MSUN_PER_YR, rel=1e-9)
    # energy released = 1e49 erg per Msun of stars formed, split 10 % / 90 % (or 0 / 100 %)
    e_th = 2.0 * math.pi * _quantity(h["injected_thermal_energy"],
                                     units["injected_thermal_energy"])
    e_cr = 2.0 * math.pi * _quantity(h["injected_cr_energy"], units["injected_cr_energy"])
    released = (stars[-1] * EPS_ERG_PER_MSUN * u.erg / u.Msun).to_value(u.erg)
    total = (e_th[-1] + e_cr[-1]).to_value(u.erg)
    assert total == pytest.approx(released, rel=1e-10)
    assert e_cr[-1].to_value(u.erg) / total == pytest.approx(VARIANTS[variant], abs=1e-12)
    # mass: change = returned stellar mass - what left through the edges, unless a floor acted
    assert np.all(h["density_floor_cells"] == h["density_floor_cells"][0])
    dm = h["mass"] - h["mass"][0]
    budget = h["injected_mass"] - h["mass_left_domain"]
    assert np.max(np.abs(dm - budget)) <= 1e-10 * h["mass"][0]
    assert h["injected_mass"][-1] > 0.0


def test_summary_plot_and_movie(reduced_run, tmp_path, capsys):
    variant, run = reduced_run
    capsys.readouterr()
    assert _cli("summary", run, "--json") == 0
    res = json.loads(capsys.readouterr().out)
    assert res["star_formation_rate"] == pytest.approx(SFR_MSUN_PER_YR, rel=1e-9)
    assert res["injected_power"] > 0.0 and math.isfinite(res["injected_power"])
    assert set(res["surfaces"]) == {"z1kpc", "z5kpc", "r10kpc"}
    for name, comps in res["surfaces"].items():
        assert ("cr" in comps) == (VARIANTS[variant] > 0.0)
        for comp in ("mass", "energy", "kinetic", "thermal", "magnetic"):
            for key in ("net", "out", "loading_net", "loading_out"):
                assert math.isfinite(comps[comp][key]), (name, comp, key)
    # a slice PNG of several fields, not blank
    from PIL import Image
    snap = sorted((run / "snapshots").glob("snapshot_*.h5"))[-1]
    png = tmp_path / "slice.png"
    fields = ["rho", "T", "vz"] + (["Pc"] if VARIANTS[variant] > 0.0 else [])
    args = [a for f in fields for a in ("--field", f)]
    assert _cli("plot", snap, *args, "--fieldlines", "--out", png) == 0
    with Image.open(png) as im:
        assert im.format == "PNG"
        a = np.asarray(im.convert("RGB"))
    assert len(np.unique(a.reshape(-1, 3), axis=0)) > 100
    # a short movie: one frame per snapshot, frames not blank
    gif = tmp_path / "wind.gif"
    assert _cli("movie", run, "--field", "rho", "--field", "T", "--gif", "--dpi", "40",
                "--out", gif, "--quiet") == 0
    nsnap = len(list((run / "snapshots").glob("snapshot_*.h5")))
    with Image.open(gif) as im:
        assert im.format == "GIF" and im.n_frames == nsnap
        frames = []
        for k in range(im.n_frames):
            im.seek(k)
            frames.append(np.asarray(im.convert("RGB"), dtype=float))
    assert all(f.std() > 10.0 for f in frames)
