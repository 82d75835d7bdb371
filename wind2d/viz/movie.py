"""Movies of a run's snapshots: MP4 (imageio-ffmpeg) or GIF (Pillow).

Every frame is one snapshot drawn by :func:`wind2d.viz.slice.render` (several
fields side by side, optional velocity arrows and field lines) with the time
stamp in a fixed physical unit.  Colour limits are the same on every frame:
given, or chosen from the whole run as robust percentiles (default 0.5 and
99.5) of the values of all snapshots; the log/linear choice, the arrow
length scale and the field-line levels are fixed over the run the same way.

MP4 uses the ffmpeg binary shipped by the ``imageio-ffmpeg`` package (H.264,
yuv420p; frames padded to multiples of 16 pixels).  A GIF is written through
Pillow when asked for (``gif=True`` or a ``.gif`` output) or when ffmpeg is
not available (a warning says so and the file gets the ``.gif`` suffix).
"""
from __future__ import annotations

import os
import warnings
from pathlib import Path

import numpy as np

from ..errors import ParameterError
from .slice import (
    _mirror_default,
    _per,
    auto_log,
    display_field,
    figure_size,
    flux_levels,
    render,
    resolve_fields,
    resolve_options,
    time_unit,
    value_limits,
    velocity_names,
    widen,
)

SAMPLES_PER_SNAPSHOT = 50_000     # values kept per snapshot and field for the percentiles


def snapshot_files(run) -> list[Path]:
    """The snapshots of a run in order: ``run/snapshots/snapshot_*.h5``, the
    ``*.h5`` files of a folder of snapshots, or a given list of files."""
    if isinstance(run, (list, tuple)):
        files = [Path(p) for p in run]
    else:
        run = Path(run)
        if not run.exists():
            raise FileNotFoundError(2, "no such run directory", str(run))
        if (run / "snapshots").is_dir():
            files = sorted((run / "snapshots").glob("snapshot_*.h5"))
        elif run.is_dir():
            files = sorted(run.glob("snapshot_*.h5")) or sorted(run.glob("*.h5"))
        else:
            files = [run]
    if not files:
        raise ParameterError(f"{run}: no snapshots (expected snapshots/snapshot_*.h5)")
    return files


def ffmpeg_available() -> bool:
    """Whether imageio-ffmpeg and its ffmpeg binary can be used."""
    try:
        import imageio_ffmpeg
        imageio_ffmpeg.get_ffmpeg_exe()
    except (ImportError, RuntimeError, OSError):
        return False
    return True


def _sample(a: np.ndarray, n: int) -> np.ndarray:
    a = np.asarray(a, dtype=np.float64).ravel()
    if a.size > n:
        a = a[:: int(np.ceil(a.size / n))]
    return a


def run_limits(files, fields, *, log=None, vmin=None, vmax=None, units="friendly",
               percentiles=(0.5, 99.5), arrows=False, fieldlines=False, nlines=16):
    """Fixed display settings over the whole run.

    Returns ``{"log": {field: bool}, "vmin": {...}, "vmax": {...}, "arrow_ref":
    speed or None, "psi_levels": array or None, "time_unit": str}``.  A field of
    both signs on a linear scale gets symmetric limits.  ``log``, ``vmin``,
    ``vmax`` (display units) may be given per field (dict) or for all.
    """
    from ..io import read_snapshot
    values = {f: [] for f in fields}
    speeds, psi_lo, psi_hi, t_max = [], np.inf, -np.inf, 0.0
    for path in files:
        snap = read_snapshot(path)
        t_max = max(t_max, abs(float(snap.time) * float(snap.time_to_cgs)))
        for f in fields:
            data, _ = display_field(snap, f, units)
            values[f].append(_sample(data, SAMPLES_PER_SNAPSHOT))
        if arrows:
            n1, n2 = velocity_names(snap)
            if n1 not in snap.fields or n2 not in snap.fields:
                raise ParameterError(f"arrows: {path} has no velocity fields {n1}, {n2}")
            v1, _ = display_field(snap, n1, units)
            v2, _ = display_field(snap, n2, units)
            speeds.append(_sample(np.hypot(v1, v2), SAMPLES_PER_SNAPSHOT))
        if fieldlines:
            from ..analysis.fieldlines import flux_function_from_snapshot
            psi = flux_function_from_snapshot(snap, check=False).psi
            psi_lo, psi_hi = min(psi_lo, float(psi.min())), max(psi_hi, float(psi.max()))
    out = {"log": {}, "vmin": {}, "vmax": {}, "arrow_ref": None, "psi_levels": None,
           "time_unit": time_unit(t_max) if t_max > 0 else "Myr"}
    for f in fields:
        allv = np.concatenate(values[f])
        lg = _per(log, f)
        lg = auto_log(allv) if lg is None else bool(lg)
        lo, hi = value_limits(allv, lg, percentiles)
        if not lg and lo < 0.0 < hi and _per(vmin, f) is None and _per(vmax, f) is None:
            m = max(abs(lo), abs(hi))
            lo, hi = -m, m
        lo = lo if _per(vmin, f) is None else float(_per(vmin, f))
        hi = hi if _per(vmax, f) is None else float(_per(vmax, f))
        if lg and lo <= 0:
            raise ParameterError(f"field {f!r}: a log scale needs vmin > 0 (got {lo:g})")
        if not hi > lo and _per(vmin, f) is not None and _per(vmax, f) is not None:
            raise ParameterError(f"field {f!r}: vmin = {lo:g} must be below vmax = {hi:g}")
        out["log"][f], (out["vmin"][f], out["vmax"][f]) = lg, widen(lo, hi, lg)
    if arrows:
        s = np.concatenate(speeds)
        s = s[np.isfinite(s)]
        out["arrow_ref"] = float(np.percentile(s, percentiles[1])) if s.size else 0.0
    if fieldlines and np.isfinite(psi_lo):
        out["psi_levels"] = flux_levels(np.array([psi_lo, psi_hi]), nlines)
    return out


def _pad(frame: np.ndarray, block: int) -> np.ndarray:
    h, w = frame.shape[:2]
    H, W = -(-h // block) * block, -(-w // block) * block
    if (H, W) == (h, w):
        return frame
    out = np.full((H, W, 3), 255, dtype=np.uint8)
    out[:h, :w] = frame
    return out


def _frames(files, fields, settings, kw, figsize, dpi, progress):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from tqdm import tqdm

    from ..io import read_snapshot
    positions = None
    for path in tqdm(files, desc="movie", unit="frame", disable=not progress):
        snap = read_snapshot(path)
        fig = render(snap, fields, log=settings["log"], vmin=settings["vmin"],
                     vmax=settings["vmax"], arrow_ref=settings["arrow_ref"],
                     psi_levels=settings["psi_levels"], time_unit_name=settings["time_unit"],
                     figsize=figsize, dpi=dpi, positions=positions, **kw)
        canvas = FigureCanvasAgg(fig)
        canvas.draw()
        if positions is None:
            # limits and ticks are the same on every frame: lay out the first only
            positions = [ax.get_position() for ax in fig.axes]
        frame = np.array(canvas.buffer_rgba())[..., :3]
        fig.clear()
        yield frame


def _tmp_name(out: Path) -> Path:
    return out.with_name(f".{out.stem}.tmp-{os.getpid()}{out.suffix}")


def write_mp4(frames, out: Path, fps: float) -> int:
    """Encode RGB frames to H.264 MP4 with imageio-ffmpeg; returns the frame count."""
    import imageio_ffmpeg
    tmp = _tmp_name(out)
    writer, n = None, 0
    try:
        for frame in frames:
            frame = _pad(frame, 16)
            if writer is None:
                size = (frame.shape[1], frame.shape[0])
                writer = imageio_ffmpeg.write_frames(str(tmp), size, fps=fps, quality=7,
                                                     macro_block_size=16,
                                                     ffmpeg_log_level="error")
                writer.send(None)
            writer.send(np.ascontiguousarray(frame))
            n += 1
        if writer is not None:
            writer.close()
            writer = None
        os.replace(tmp, out)
    finally:
        if writer is not None:
            writer.close()
        if tmp.exists():
            tmp.unlink()
    return n


def write_gif(frames, out: Path, fps: float) -> int:
    """Write RGB frames as a looping GIF with Pillow; returns the frame count."""
    from PIL import Image
    images = [Image.fromarray(f).quantize(colors=256) for f in frames]
    if not images:
        raise ParameterError("movie: no frames")
    tmp = _tmp_name(out)
    try:
        images[0].save(tmp, format="GIF", save_all=True, append_images=images[1:],
                       duration=round(1000.0 / fps), loop=0, optimize=False)
        os.replace(tmp, out)
    finally:
        if tmp.exists():
            tmp.unlink()
    return len(images)


def make_movie(run, fields, output=None, *, gif: bool = False, fps: float = 8.0,
               vmin=None, vmax=None, log=None, arrows: bool = False,
               fieldlines: bool = False, mirror=None, length=None, units: str = "friendly",
               dpi: int = 100, percentiles=(0.5, 99.5), nlines: int = 16,
               narrows: int = 16, progress: bool = True) -> Path:
    """Write a movie of the snapshots of ``run`` (a run directory, a folder of
    snapshots or a list of files).

    Parameters
    ----------
    fields : str or list of str
        Snapshot fields, drawn side by side.
    output : path, optional
        ``.mp4`` (default ``<run>/movie_<fields>.mp4``) or ``.gif``.
    gif : bool
        Write a GIF (Pillow) whatever the suffix; the suffix becomes ``.gif``.
    fps : float
        Frames (snapshots) per second.
    vmin, vmax, log : one value or a dict by field
        Colour limits in display units and the scale; by default from the
        whole run (``percentiles`` of all values; log for a positive field
        spanning more than two decades).
    arrows, fieldlines, mirror, length, units, nlines, narrows
        As for :func:`wind2d.viz.slice.render`.
    progress : bool
        Show a tqdm progress bar (on stderr).

    Returns the path written.
    """
    if not (isinstance(fps, (int, float)) and np.isfinite(fps) and fps > 0):
        raise ParameterError(f"--fps = {fps!r}: must be a positive number")
    files = snapshot_files(run)
    from ..io import read_snapshot
    first = read_snapshot(files[0])
    fields = resolve_fields(first, fields)
    opts = resolve_options(first, {"log": log, "vmin": vmin, "vmax": vmax})
    log, vmin, vmax = opts["log"], opts["vmin"], opts["vmax"]
    if output is None:
        base = Path(run) if not isinstance(run, (list, tuple)) else files[0].parent
        base = base if base.is_dir() else base.parent
        output = base / f"movie_{'_'.join(fields)}.mp4"
    out = Path(output)
    if gif or out.suffix.lower() == ".gif":
        out, use_gif = out.with_suffix(".gif"), True
    elif out.suffix.lower() != ".mp4":
        raise ParameterError(f"--out {out}: the movie file must end in .mp4 or .gif")
    elif not ffmpeg_available():
        warnings.warn("imageio-ffmpeg (with its ffmpeg binary) is not available: writing "
                      "a GIF with Pillow instead", RuntimeWarning, stacklevel=2)
        out, use_gif = out.with_suffix(".gif"), True
    else:
        use_gif = False
    out.parent.mkdir(parents=True, exist_ok=True)
    settings = run_limits(files, fields, log=log, vmin=vmin, vmax=vmax, units=units,
                          percentiles=percentiles, arrows=arrows, fieldlines=fieldlines,
                          nlines=nlines)
    mir = _mirror_default(first, mirror)
    figsize = figure_size(first, len(fields), mir)
    kw = {"mirror": mirror, "length": length, "arrows": arrows, "fieldlines": fieldlines,
          "units": units, "nlines": nlines, "narrows": narrows}
    frames = _frames(files, fields, settings, kw, figsize, dpi, progress)
    if use_gif:
        write_gif(frames, out, fps)
    else:
        write_mp4(frames, out, fps)
    return out
