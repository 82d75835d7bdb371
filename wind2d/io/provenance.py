"""Provenance of a run: code version, source commit, library versions, host.

Every snapshot and checkpoint carries this record, so that a result can be
traced back to the code and the problem file that made it.
"""
from __future__ import annotations

import datetime as _dt
import platform
import socket
import subprocess
import sys
from pathlib import Path

PACKAGE_DIR = Path(__file__).resolve().parent.parent


def _git(args: list[str], timeout: float = 2.0) -> str | None:
    try:
        out = subprocess.run(["git", "-C", str(PACKAGE_DIR), *args], capture_output=True,
                             text=True, timeout=timeout, check=False)
    except (OSError, subprocess.SubprocessError):
        return None
    if out.returncode != 0:
        return None
    return out.stdout.strip()


def git_commit() -> str | None:
    """Commit of the source tree the package was imported from, or None.

    None when git is missing, the package is not in a git work tree, or the
    work tree is some other repository that does not track the package (for
    example a site-packages folder inside an unrelated checkout).
    """
    if _git(["ls-files", "--error-unmatch", "__init__.py"]) is None:
        return None
    sha = _git(["rev-parse", "HEAD"])
    if sha is None or len(sha) < 40:
        return None
    return sha


def git_dirty(commit: str | None = None) -> bool | None:
    """Whether the package source differs from the commit: modified or new
    (untracked, not ignored) files under the package folder; None if unknown."""
    if (commit or git_commit()) is None:
        return None
    out = _git(["status", "--porcelain", "--", "."])
    return None if out is None else bool(out)


def _version(module: str) -> str | None:
    try:
        mod = __import__(module)
    except Exception:       # any import failure just means "not available"
        return None
    return getattr(mod, "__version__", None)


def utc_now() -> str:
    """The current wall-clock time, ISO 8601 in UTC (e.g. ``2025-01-31T12:00:00+00:00``)."""
    return _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")


def provenance(problem_text: str | None = None, nranks: int = 1,
               started: str | None = None) -> dict:
    """The provenance record of this process.

    Keys: ``wind2d_version``, ``git_commit`` (None when unknown), ``git_dirty``,
    ``python``, ``numpy``, ``numba``, ``h5py``, ``astropy`` (versions, None if
    not importable), ``platform``, ``hostname``, ``nranks``, ``started`` (ISO
    8601 UTC; now when not given) and ``problem_text`` (the resolved problem
    file, or None for runs built through the Python API).
    """
    import wind2d

    commit = git_commit()
    return {
        "wind2d_version": wind2d.__version__,
        "git_commit": commit,
        "git_dirty": None if commit is None else git_dirty(commit),
        "python": platform.python_version(),
        "numpy": _version("numpy"),
        "numba": _version("numba"),
        "h5py": _version("h5py"),
        "astropy": _version("astropy"),
        "platform": platform.platform(),
        "hostname": socket.gethostname(),
        "nranks": int(nranks),
        "started": utc_now() if started is None else str(started),
        "problem_text": problem_text,
        "argv": " ".join(sys.argv),
    }
