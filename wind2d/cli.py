"""The ``wind2d`` command: run, resume, check, info, plot, movie, summary, compare, profile.

Invalid input (problem file, overrides, run directory) prints one clear
message and exits with status 2, never a traceback.
"""
from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from . import __version__

EPILOG = ("exit status: 0 finished, 1 internal error, 2 invalid input, 3 stopped by a "
          "signal (checkpoint written), 4 wall-clock limit (checkpoint written), "
          "5 non-finite state (crash dump written)")


def _walltime(text):
    from .problem.schema import _wallclock_seconds
    try:
        return _wallclock_seconds(text)
    except ValueError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def _add_picture_args(p) -> None:
    """Options shared by ``plot`` and ``movie`` (wind2d.viz)."""
    p.add_argument("--field", dest="fields", action="append", required=True, metavar="NAME",
                   help="snapshot field, e.g. rho, temperature, p, vz, Bz, plasma_beta "
                   "(repeatable: panels side by side)")
    scale = p.add_mutually_exclusive_group()
    scale.add_argument("--log", dest="log", action="store_const", const=True, default=None,
                       help="log colour scale for every field (default: log where a "
                       "positive field spans more than two decades)")
    scale.add_argument("--linear", dest="log", action="store_const", const=False,
                       help="never a log scale")
    p.add_argument("--vmin", type=float, action="append", help="lower colour limit in the "
                   "units of the colour bar (once for all fields, or once per --field)")
    p.add_argument("--vmax", type=float, action="append", help="upper colour limit")
    p.add_argument("--arrows", action="store_true", help="velocity arrows")
    p.add_argument("--fieldlines", action="store_true", help="magnetic field lines "
                   "(contours of the poloidal flux function)")
    p.add_argument("--length-unit", dest="length", choices=("Mpc", "kpc", "pc", "au", "km",
                                                            "cm"),
                   help="axis unit (default: chosen from the domain size)")
    p.add_argument("--units", choices=("friendly", "cgs"), default="friendly",
                   help="colour-bar units: friendly (n in cm^-3, km/s, uG, K) or cgs")
    p.add_argument("--no-mirror", dest="mirror", action="store_const", const=False,
                   default=None, help="show only R >= 0 (default: mirror across the axis)")


def parser() -> argparse.ArgumentParser:
    ap = argparse.ArgumentParser(prog="wind2d", description="Axisymmetric (R, z) MHD runs "
                                 "for galactic-wind studies.", epilog=EPILOG)
    ap.add_argument("--version", action="version", version=f"wind2d {__version__}")
    sub = ap.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True

    r = sub.add_parser("run", help="start a run from a problem file", epilog=EPILOG)
    r.add_argument("problem", help="YAML problem file")
    r.add_argument("--out", type=Path, help="run directory (default runs/<file name>)")
    r.add_argument("--set", dest="overrides", action="append", default=[],
                   metavar="KEY.PATH=VALUE", help="override a key of the problem file "
                   "(repeatable), e.g. --set grid.R.cells=256")
    r.add_argument("--walltime", type=_walltime, help="wall-clock limit HH:MM:SS; the run "
                   "checkpoints and exits before it")
    r.add_argument("--quiet", action="store_true", help="log to the run directory only")

    s = sub.add_parser("resume", help="continue a run from its newest valid checkpoint",
                       epilog=EPILOG)
    s.add_argument("run_dir", type=Path)
    s.add_argument("--walltime", type=_walltime, help="wall-clock limit HH:MM:SS")
    s.add_argument("--set", dest="overrides", action="append", default=[],
                   metavar="KEY.PATH=VALUE", help="change stop.* or outputs.* keys, e.g. "
                   "--set stop.time='200 Myr' to extend a finished run")
    s.add_argument("--quiet", action="store_true")

    c = sub.add_parser("check", help="validate a problem file and show what it would run")
    c.add_argument("problem")
    c.add_argument("--set", dest="overrides", action="append", default=[],
                   metavar="KEY.PATH=VALUE")

    i = sub.add_parser("info", help="what a run is, how far it got, its outputs")
    i.add_argument("run_dir", type=Path)

    p = sub.add_parser("plot", help="PNG slice plot of snapshot fields (side by side)")
    p.add_argument("snapshot", type=Path)
    p.add_argument("--out", "--output", dest="output", type=Path,
                   help="PNG file (default next to the snapshot)")
    _add_picture_args(p)

    mv = sub.add_parser("movie", help="MP4 (or GIF) of the snapshots of a run")
    mv.add_argument("run_dir", type=Path, help="run directory (or a folder of snapshots)")
    mv.add_argument("--out", "--output", dest="output", type=Path,
                    help="movie file, .mp4 or .gif (default RUN_DIR/movie_<fields>.mp4)")
    mv.add_argument("--gif", action="store_true", help="write a GIF (Pillow) instead of MP4")
    mv.add_argument("--fps", type=float, default=8.0, help="frames per second (default 8)")
    mv.add_argument("--dpi", type=int, default=100, help="pixels per inch of the frames "
                    "(default 100)")
    mv.add_argument("--quiet", action="store_true", help="no progress bar")
    _add_picture_args(mv)

    from .analysis.commands import add_parsers      # summary, compare, profile
    add_parsers(sub)
    return ap


def cmd_check(args) -> int:
    from .problem import build_simulation, load
    res = load(args.problem, args.overrides)
    sim = build_simulation(res)
    p, us = res.problem, res.units
    m = sim.mesh
    print(f"{args.problem}: valid. {p.title}")
    print(f"code units: length {us.length}, time {us.time}, mass {us.mass} "
          f"(mu = {us.mu}); field unit {us.to_cgs('magnetic_field'):.4g} G")
    for name, spec, e in zip(m.axis_names, m.spec, m.edges()):
        w = e[1:] - e[:-1]
        print(f"grid {name}: {us.describe(spec.lo, 'length')} .. {us.describe(spec.hi, 'length')},"
              f" {spec.cells} cells, widths {us.describe(w.min(), 'length')} .. "
              f"{us.describe(w.max(), 'length')}")
    print("edges: " + ", ".join(f"{k}: {v if isinstance(v, str) else v.get('kind')}"
                                for k, v in p.edges.items()))
    print(f"gas: eos {p.gas.eos}, gamma {p.gas.gamma:.6g}, magnetised {p.gas.magnetised}, "
          f"floors density {us.describe(p.gas.floors.density, 'density')}, pressure "
          f"{us.describe(p.gas.floors.pressure, 'pressure')}")
    print(f"scheme: riemann {sim.options['riemann']}, {p.scheme.reconstruction} "
          f"({p.scheme.limiter}), courant {p.scheme.courant}")
    print(f"setup: {p.setup.kind} " + json.dumps(res.setup_params.model_dump(), default=str))
    print(f"stop: t = {us.describe(p.stop.time, 'time')}")
    if sim.modules:
        print("physics: " + ", ".join(f"{mod.name} (order {mod.order})" for mod in sim.modules))
    for line in sim.advice():
        print(f"warning: {line}")
    cells = m.n1 * m.n2
    per_zone = 56 * sim.varmap.nvar + 6 * 8        # bytes; measured by tools/bench_core.py
    dt0 = sim.max_dt()                               # CFL and every module's limit
    steps = p.stop.time / dt0 if dt0 > 0 else float("inf")
    # measured here: one warm-up step, then two timed steps of this very problem
    import time
    from .errors import NonFiniteStateError
    print(f"memory: about {cells * per_zone / 2**20:.1f} MiB for {cells} cells")
    try:
        sim.step()
        w0 = time.perf_counter()
        for _ in range(2):
            sim.step()
        rate = 2 * cells / max(time.perf_counter() - w0, 1e-9)
    except NonFiniteStateError as exc:
        print(f"cost: unknown; the first test steps failed: {exc}")
        return 5
    print(f"cost: first step dt = {dt0:.4g} {us.time}; about {steps:.3g} steps, "
          f"{steps * cells:.3g} zone-updates; measured {rate:.3g} zone-updates/s, so "
          f"~{steps * cells / rate / 60:.3g} min on one core (the step may shrink as the "
          "flow develops)")
    return 0


def cmd_info(args) -> int:
    from .problem.load import ProblemError
    d = args.run_dir
    st = d / "status.json"
    if not st.is_file():
        raise ProblemError(str(d), ["not a run directory (no status.json)"])
    status = json.loads(st.read_text())
    print(f"{d}: {status.get('title')}")
    print(f"state: {status['state']}" + (f" ({status['reason']})" if status.get("reason") else ""))
    print(f"reached t = {status['time']:.6g} {status.get('time_unit', '')} at step {status['step']}")
    snaps = sorted((d / "snapshots").glob("snapshot_*.h5"))
    ckpts = sorted((d / "checkpoints").glob("checkpoint_*.h5"))
    print(f"snapshots: {len(snaps)}" + (f" ({snaps[0].name} .. {snaps[-1].name})" if snaps else ""))
    print(f"checkpoints: {len(ckpts)}" + (f" (newest {ckpts[-1].name})" if ckpts else ""))
    hist = d / "history.csv"
    if hist.is_file():
        n = sum(1 for line in hist.open() if line.strip() and not line.startswith("#")) - 1
        print(f"history: {max(n, 0)} rows in {hist.name}")
    return 0


def _picture_kwargs(args) -> dict:
    from .errors import ParameterError
    kw = {"log": args.log, "arrows": args.arrows, "fieldlines": args.fieldlines,
          "mirror": args.mirror, "length": args.length, "units": args.units}
    for key in ("vmin", "vmax"):
        vals = getattr(args, key)
        if vals is None:
            continue
        if len(vals) == 1:
            kw[key] = vals[0]
        elif len(vals) == len(args.fields):
            kw[key] = dict(zip(args.fields, vals))
        else:
            raise ParameterError(f"--{key}: give it once (all fields) or once per --field "
                                 f"({len(args.fields)}), not {len(vals)} times")
    return kw


def cmd_plot(args) -> int:
    from .viz.slice import plot_slices
    print(plot_slices(args.snapshot, args.fields, args.output, **_picture_kwargs(args)))
    return 0


def cmd_movie(args) -> int:
    from .viz.movie import make_movie
    print(make_movie(args.run_dir, args.fields, args.output, gif=args.gif, fps=args.fps,
                     dpi=args.dpi, progress=not args.quiet, **_picture_kwargs(args)))
    return 0


def main(argv=None) -> int:
    from .errors import ParameterError
    from .parallel import abort, rank, world
    from .problem.load import ProblemError
    args = parser().parse_args(argv)
    parallel = args.command in ("run", "resume") and world() is not None
    try:
        if args.command == "run":
            from .run import start
            return start(args.problem, args.out, args.overrides, args.walltime, args.quiet)
        if args.command == "resume":
            from .run import resume
            return resume(args.run_dir, args.walltime, args.quiet, args.overrides)
        if args.command == "check":
            return cmd_check(args)
        if args.command == "info":
            return cmd_info(args)
        if args.command == "plot":
            return cmd_plot(args)
        if args.command == "movie":
            return cmd_movie(args)
        if args.command in ("summary", "compare", "profile"):
            from .analysis.commands import run_command
            return run_command(args)
    except (ProblemError, ParameterError) as exc:
        # every rank validates the same input, so all of them stop here; one prints
        if rank() == 0:
            print(f"wind2d {args.command}: {exc}", file=sys.stderr)
        return 2
    except FileNotFoundError as exc:
        if rank() == 0:
            print(f"wind2d {args.command}: {exc.filename}: no such file", file=sys.stderr)
        return 2
    except BrokenPipeError:
        # the reader of our output went away (e.g. `wind2d check ... | head`): not an error
        import os
        try:
            os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        except OSError:
            pass
        return 0
    except MemoryError:
        if rank() == 0:
            print(f"wind2d {args.command}: not enough memory for this problem on this "
                  "machine; use fewer cells (grid.*.cells)", file=sys.stderr)
        return 2
    except BaseException as exc:
        # a failure on one rank must end the whole job with its message, not hang it
        if parallel and not isinstance(exc, (SystemExit, KeyboardInterrupt)):
            import traceback
            abort(f"wind2d {args.command}: rank {rank()} failed: {type(exc).__name__}: {exc}"
                  f"\n{traceback.format_exc()}", 1)
        raise
    return 1


if __name__ == "__main__":
    sys.exit(main())
