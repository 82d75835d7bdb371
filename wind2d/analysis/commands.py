"""The analysis subcommands of ``wind2d``: summary, compare, profile.

``wind2d.cli`` adds these parsers and hands the parsed arguments to
:func:`run_command`; the numbers come from :mod:`.loading` and
:mod:`.profiles`, the figures from :mod:`wind2d.viz.lines`.
"""
from __future__ import annotations

import json
from pathlib import Path

from ..errors import ParameterError

COMMANDS = ("summary", "compare", "profile")


def _add_profile_args(p, required_field: bool) -> None:
    p.add_argument("--along", choices=("z", "r"), default="z",
                   help="profile along z (averaged over a cylinder R <= --cylinder) or "
                        "along the spherical radius r (averaged over a cone, --cone)")
    p.add_argument("--cylinder", metavar="RADIUS", help="radius of the cylinder for "
                   "--along z, e.g. '1 kpc' or a number in code units (default: a tenth of "
                   "the R range)")
    p.add_argument("--cone", metavar="DEG", type=float, help="half-opening angle in degrees "
                   "of the double cone around the axis for --along r (default 30)")
    p.add_argument("--bins", type=int, help="number of radial bins for --along r (default: "
                   "the number of cells along the longer axis)")
    p.add_argument("--weight", choices=("volume", "mass"), default="volume",
                   help="volume- or mass-weighted average (default volume)")


def add_parsers(sub) -> None:
    """Add the analysis subcommands to the ``wind2d`` subparsers."""
    s = sub.add_parser("summary", help="loading factors of a run over a time window")
    s.add_argument("run_dir", type=Path)
    s.add_argument("--from", dest="t_from", metavar="T", help="start of the window, e.g. "
                   "'10 Myr' or a number in the history's time unit (default: first row)")
    s.add_argument("--to", dest="t_to", metavar="T", help="end of the window (default: "
                   "last row)")
    s.add_argument("--json", action="store_true", help="print JSON instead of a table")

    c = sub.add_parser("compare", help="history columns (and profiles) of several runs on "
                       "one figure")
    c.add_argument("runs", nargs="+", type=Path, help="two or more run directories")
    c.add_argument("--column", action="append", default=[], metavar="NAME",
                   help="history column to plot against time (repeatable)")
    c.add_argument("--profile", metavar="FIELD", help="also plot the profile of FIELD from "
                   "each run's last snapshot")
    _add_profile_args(c, False)
    c.add_argument("--out", "--output", dest="output", type=Path, default=Path("compare.png"),
                   help="PNG file (default compare.png)")

    p = sub.add_parser("profile", help="profile of a snapshot field along z or r")
    p.add_argument("source", type=Path, help="snapshot file or run directory (its last "
                   "snapshot)")
    p.add_argument("--field", required=True, help="field name, e.g. rho, p, vz, temperature")
    _add_profile_args(p, True)
    p.add_argument("--out", "--output", dest="output", type=Path,
                   help="PNG file (default: <field>_<along>.png next to the snapshot)")
    p.add_argument("--csv", type=Path, help="also write the profile as CSV")


def cmd_summary(args) -> int:
    from .loading import format_table, loading_factors
    res = loading_factors(args.run_dir, args.t_from, args.t_to)
    print(json.dumps(res, indent=1) if args.json else format_table(res))
    return 0


def _profile_of(source, args, field, length=None):
    from ..io import read_snapshot
    from .profiles import find_snapshot, length_in_code, physical, profile
    path = find_snapshot(source)
    snap = read_snapshot(path)
    radius = length_in_code(args.cylinder, snap, "--cylinder")
    x, y, how = profile(snap, field, args.along, radius, args.cone, args.bins, args.weight)
    xp, xunit, yp, yunit = physical(snap, field, x, y, length)
    return path, snap, xp, xunit, yp, yunit, how


def cmd_profile(args) -> int:
    from ..viz.lines import profile_figure
    from ..viz.slice import time_label
    from .profiles import write_csv
    path, snap, x, xunit, y, yunit, how = _profile_of(args.source, args, args.field)
    xname = args.along
    out = args.output or path.with_name(f"{path.stem}_{args.field}_{args.along}.png")
    title = f"{path.name}, t = {time_label(snap.time * snap.time_to_cgs)}; {how}, " \
            f"{args.weight}-weighted"
    ylabel = f"{args.field} [{yunit}]" if yunit else args.field
    print(profile_figure(x, y, f"{xname} [{xunit}]", ylabel, title, out))
    if args.csv:
        print(write_csv(args.csv, xname, xunit, args.field, yunit, x, y))
    return 0


def cmd_compare(args) -> int:
    from ..viz.lines import compare_figure
    if len(args.runs) < 2:
        raise ParameterError("compare: give two or more run directories")
    if not args.column and not args.profile:
        raise ParameterError("compare: give at least one --column NAME or --profile FIELD")
    prof = None
    if args.profile:
        curves, xl, yl, xunit = [], None, None, None
        for run in args.runs:
            _, _, x, xunit, y, yunit, how = _profile_of(run, args, args.profile, xunit)
            xl = xl or f"{args.along} [{xunit}] ({how})"
            yl = yl or (f"{args.profile} [{yunit}]" if yunit else args.profile)
            curves.append((Path(run).name or str(run), x, y))
        prof = (args.profile, curves, xl, yl)
    print(compare_figure(args.runs, args.column, prof, args.output))
    return 0


def run_command(args) -> int:
    return {"summary": cmd_summary, "compare": cmd_compare,
            "profile": cmd_profile}[args.command](args)
