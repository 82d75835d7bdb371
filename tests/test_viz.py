"""Pictures: slice PNGs and movies from tiny runs of verification problems.

Two runs through the CLI (``wind2d run ... --set stop.max_steps=...``): the
point blast (problems/verification/point_blast.yaml, hydro, pc units) on a
16 x 32 grid, and the magnetised uniform medium
(problems/verification/uniform_at_rest.yaml, 1 uG along z, kpc units) given
a uniform vertical flow.  What is checked:

* ``wind2d plot`` writes a PNG (read back with Pillow) with several fields
  side by side; bad input exits with status 2;
* the figure: the plane is mirrored across the axis (R from -R_max to R_max),
  axes in the unit that suits the domain, colour-bar units (density as
  n = rho / (mu m_H) in cm^-3 with m_H = 1.00782503207 u from astropy's
  atomic mass unit -- the hydrogen-1 atomic mass, CODATA/AME, from memory;
  velocities in km/s by astropy's unit conversion; microgauss), a log scale
  for the blast temperature (spans > 2 decades), symmetric limits for v_z;
* field lines of the uniform field: psi = B R^2 / 2 (the flux of a uniform
  field through a disc over 2 pi, common practice), so the contour of level
  psi_k drawn by the plot is the pair of vertical lines R = +-sqrt(2 psi_k / B);
* movies: MP4 (frames counted and decoded with imageio-ffmpeg's ffmpeg) and
  GIF (Pillow) hold one frame per snapshot, frames differ (time stamp and
  field), the GIF fallback works when ffmpeg is missing, and the colour
  limits are the same on every frame: the 0.5 / 99.5 percentiles of the
  values of all snapshots (checked against numpy's percentiles).
"""
from pathlib import Path

import numpy as np
import pytest

from wind2d.cli import main
from wind2d.io import read_snapshot

PROBLEMS = Path(__file__).resolve().parents[1] / "problems" / "verification"
M_H = 1.00782503207        # hydrogen-1 atomic mass in u (CODATA/AME, from memory)


def _cli(*args):
    return main([str(a) for a in args])


@pytest.fixture(scope="module")
def blast(tmp_path_factory):
    run = tmp_path_factory.mktemp("viz") / "blast"
    rc = _cli("run", PROBLEMS / "point_blast.yaml", "--out", run, "--quiet",
              "--set", "grid.R.cells=16", "--set", "grid.z.cells=32",
              "--set", "setup.radius=4 pc", "--set", "stop.max_steps=12",
              "--set", "outputs.snapshots.every=0.5 kyr")
    assert rc == 0
    files = sorted((run / "snapshots").glob("snapshot_*.h5"))
    assert len(files) >= 4
    return run, files


@pytest.fixture(scope="module")
def magnetised(tmp_path_factory):
    run = tmp_path_factory.mktemp("viz") / "uniform"
    rc = _cli("run", PROBLEMS / "uniform_at_rest.yaml", "--out", run, "--quiet",
              "--set", "grid.R.cells=12", "--set", "grid.z.cells=16",
              "--set", "setup.state.vz=20 km/s", "--set", "stop.max_steps=2")
    assert rc == 0
    return run, sorted((run / "snapshots").glob("snapshot_*.h5"))


def _png(path):
    from PIL import Image
    with Image.open(path) as im:
        assert im.format == "PNG"
        a = np.asarray(im.convert("RGB"))
    return a


def test_plot_cli_several_fields(blast, tmp_path):
    _run, files = blast
    out = tmp_path / "three.png"
    assert _cli("plot", files[-1], "--field", "rho", "--field", "T", "--field", "vz",
                "--arrows", "--out", out) == 0
    a = _png(out)
    h, w, _ = a.shape
    assert w > 2.5 * h                                   # three panels side by side
    assert len(np.unique(a.reshape(-1, 3), axis=0)) > 100  # a picture, not a blank
    # default name next to the snapshot, one field, forced linear
    assert _cli("plot", files[1], "--field", "p", "--linear") == 0
    assert (files[1].parent / f"{files[1].stem}_p.png").stat().st_size > 1000


def test_plot_cli_bad_input(blast, magnetised, tmp_path, capsys):
    _run, files = blast
    assert _cli("plot", files[-1], "--field", "nope", "--out", tmp_path / "x.png") == 2
    assert "available: rho" in capsys.readouterr().err
    assert _cli("plot", files[-1], "--field", "rho", "--fieldlines") == 2   # no field
    assert "no magnetic field" in capsys.readouterr().err
    assert _cli("plot", tmp_path / "missing.h5", "--field", "rho") == 2
    assert _cli("plot", files[-1], "--field", "rho", "--field", "p", "--vmin", "1",
                "--vmin", "2", "--vmin", "3") == 2
    assert _cli("movie", tmp_path, "--field", "rho") == 2                  # no snapshots
    assert not (tmp_path / "x.png").exists()


def test_figure_units_scales_and_mirror(blast):
    import astropy.constants as const
    import astropy.units as u
    from matplotlib.colors import LogNorm

    from wind2d.viz.slice import display_field, render
    _run, files = blast
    snap = read_snapshot(files[-1])
    fig = render(snap, ["rho", "temperature", "vz"], arrows=True)
    axes = [ax for ax in fig.axes if ax.get_label() != "<colorbar>"]
    cbars = [ax for ax in fig.axes if ax.get_label() == "<colorbar>"]
    assert len(axes) == 3 and len(cbars) == 3
    for ax in axes:
        assert ax.get_xlim() == pytest.approx((-40.0, 40.0))      # mirrored, in pc
        assert ax.get_ylim() == pytest.approx((-40.0, 40.0))
        assert ax.get_xlabel() == "R [pc]"
    labels = [cb.get_ylabel() for cb in cbars]
    assert "cm$^{-3}$" in labels[0] and "[K]" in labels[1] and "km s$^{-1}$" in labels[2]
    norms = [ax.collections[0].norm for ax in axes]
    assert not isinstance(norms[0], LogNorm)
    assert isinstance(norms[1], LogNorm)                # 100 K gas and a 1e8 K bubble
    assert norms[2].vmin == pytest.approx(-norms[2].vmax)
    # the mirrored half shows the same values
    mesh = axes[0].collections[0].get_array().reshape(32, 32)
    assert np.array_equal(mesh[:, :16], mesh[:, 16:][:, ::-1])
    # display units against astropy
    mu = snap.code_units["mu"]
    n, _ = display_field(snap, "rho")
    rho_cgs = snap.field("rho", physical=True)
    m_h = M_H * const.u.cgs.value
    assert np.allclose(n, rho_cgs.value / (mu * m_h), rtol=1e-9)
    v, _ = display_field(snap, "vz")
    assert np.allclose(v, snap.field("vz", physical=True).to_value(u.km / u.s), rtol=1e-12)
    w, lab = display_field(snap, "rho", units="cgs")
    assert np.allclose(w, rho_cgs.value) and "g" in lab


def test_fieldlines_of_uniform_field(magnetised, tmp_path):
    from wind2d.viz.slice import render
    _run, files = magnetised
    out = tmp_path / "b.png"
    assert _cli("plot", files[-1], "--field", "Bz", "--field", "beta", "--fieldlines",
                "--arrows", "--out", out) == 0
    assert _png(out).shape[1] > 500
    snap = read_snapshot(files[-1])
    fig = render(snap, ["Bz"], fieldlines=True, nlines=6)
    ax = fig.axes[0]
    cs = next(c for c in ax.collections if hasattr(c, "levels"))
    B_code = np.asarray(snap.fields["Bz"])[0, 0]
    assert len(cs.levels) == 6
    dR = np.diff(snap.edges[0]).max()
    for level, path in zip(cs.levels, cs.get_paths()):
        x = np.unique(np.round(path.vertices[:, 0], 9))
        R_k = np.sqrt(2.0 * level / B_code)           # kpc (code length)
        assert len(x) == 2 and x[0] == pytest.approx(-x[1])     # two vertical lines
        # contouring interpolates psi linearly between corners: psi = B R^2/2 is
        # then off by at most B dR^2/8, i.e. R by at most dR^2 / (8 R)
        assert abs(x[1] - R_k) <= dR ** 2 / (8 * R_k) * 1.01
        assert abs(x[1] - R_k) < 0.01 * R_k
    # colour bar in microgauss: 1 uG everywhere
    assert fig.axes[1].get_ylabel() == r"$B_z$ [$\mu$G]"
    assert ax.collections[0].get_array().mean() == pytest.approx(1.0, rel=1e-9)


def _mp4_frames(path):
    import imageio_ffmpeg
    reader = imageio_ffmpeg.read_frames(str(path))
    meta = next(reader)
    w, h = meta["size"]
    return [np.frombuffer(f, dtype=np.uint8).reshape(h, w, 3) for f in reader]


def test_movie_mp4_cli(blast, tmp_path):
    import imageio_ffmpeg
    _run, files = blast
    out = tmp_path / "m.mp4"
    assert _cli("movie", _run, "--field", "rho", "--field", "temperature", "--arrows",
                "--out", out, "--fps", "4", "--dpi", "60", "--quiet") == 0
    assert out.stat().st_size > 1000
    nframes, secs = imageio_ffmpeg.count_frames_and_secs(str(out))
    assert nframes == len(files)
    assert secs == pytest.approx(len(files) / 4.0, abs=0.3)
    frames = _mp4_frames(out)
    assert len(frames) == len(files)
    assert all(f.std() > 10 for f in frames)                # not blank
    assert all(np.abs(frames[k].astype(int) - frames[k + 1]).max() > 50
               for k in range(len(frames) - 1))


def test_movie_gif_and_fixed_limits(blast, tmp_path, monkeypatch):
    from PIL import Image

    from wind2d.viz import movie
    from wind2d.viz import slice as sl
    _run, files = blast
    seen = []
    real = sl.render

    def spy(snap, fields, **kw):
        seen.append((kw["vmin"], kw["vmax"], kw["log"]))
        return real(snap, fields, **kw)

    monkeypatch.setattr(movie, "render", spy)
    out = movie.make_movie(_run, ["rho", "T"], tmp_path / "m.mp4", gif=True, dpi=50,
                           progress=False)
    assert out == tmp_path / "m.gif"
    with Image.open(out) as im:
        assert im.format == "GIF" and im.n_frames == len(files)
    # the same limits on every frame: percentiles over all snapshots
    assert len(seen) == len(files) and all(s == seen[0] for s in seen)
    vmin, vmax, log = seen[0]
    allrho = np.concatenate([(read_snapshot(f).field("rho", physical=True).value).ravel()
                             for f in files])
    mu = read_snapshot(files[0]).code_units["mu"]
    import astropy.constants as const
    n = allrho / (mu * M_H * const.u.cgs.value)
    lo, hi = np.percentile(n, [0.5, 99.5])
    assert (vmin["rho"], vmax["rho"]) == pytest.approx((lo, hi), rel=1e-9)
    assert log == {"rho": False, "temperature": True}
    # given limits win, for one field
    seen.clear()
    movie.make_movie(_run, ["rho"], tmp_path / "g.gif", vmin=0.5, vmax=2.0, dpi=40,
                     progress=False)
    assert {(s[0]["rho"], s[1]["rho"]) for s in seen} == {(0.5, 2.0)}


def test_gif_fallback_without_ffmpeg(magnetised, tmp_path, monkeypatch):
    from PIL import Image

    from wind2d.viz import movie
    _run, files = magnetised
    monkeypatch.setattr(movie, "ffmpeg_available", lambda: False)
    with pytest.warns(RuntimeWarning, match="GIF"):
        out = movie.make_movie(_run, ["Bz"], tmp_path / "f.mp4", fieldlines=True,
                               arrows=True, dpi=40, progress=False)
    assert out.suffix == ".gif" and not (tmp_path / "f.mp4").exists()
    with Image.open(out) as im:
        assert im.n_frames == len(files)
