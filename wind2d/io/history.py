"""Run history: one CSV row of scalar diagnostics per history interval.

Format (see docs/output-format.md)::

    # wind2d-history 1; header cells are "name [unit]"
    time [Myr],mass [Msun],energy [erg]
    0.0,1250000.0,3.2e+55
    ...

The first line is a comment; the second the header; values are written with
full float precision (``repr``).  Readers: ``numpy.genfromtxt(path,
delimiter=",", names=True, skip_header=1)``, ``pandas.read_csv(path,
comment="#")`` or :func:`read_history`.  Each row is flushed and fsynced as it
is appended.  On a restart :meth:`History.resume` drops the rows later than
the restart time (and an incomplete last row left by a crash), rewriting the
file atomically, so a resumed run never duplicates rows.
"""
from __future__ import annotations

import os
import re
from pathlib import Path

import numpy as np

from ..errors import ParameterError
from ._atomic import write_text_atomic

MAGIC = "# wind2d-history 1"
COMMENT = MAGIC + '; header cells are "name [unit]"'
_HEAD_RE = re.compile(r"^(.*) \[(.*)\]$")
_BAD = re.compile(r"[,\[\]\n\r\"]")


class HistoryError(ValueError):
    """A history file that does not match the run's columns, or is malformed."""


def _header(columns) -> str:
    return ",".join(f"{n} [{u}]" for n, u in columns)


def _check_columns(columns) -> list[tuple[str, str]]:
    cols = [(str(n), str(u)) for n, u in columns]
    if not cols:
        raise ParameterError("history: at least one column is needed")
    names = [n for n, _ in cols]
    if len(set(names)) != len(names):
        raise ParameterError(f"history: duplicate column names in {names}")
    for n, u in cols:
        if not n or _BAD.search(n) or _BAD.search(u) or n != n.strip():
            raise ParameterError(f"history column {n!r} [{u!r}]: names and units may not "
                                 "contain , [ ] quotes or newlines")
    return cols


def _parse_header(line: str, path) -> list[tuple[str, str]]:
    cols = []
    for cell in line.rstrip("\n").split(","):
        mt = _HEAD_RE.match(cell)
        if not mt:
            raise HistoryError(f"{path}: header cell {cell!r} is not 'name [unit]'")
        cols.append((mt.group(1), mt.group(2)))
    return cols


def _split(path) -> tuple[list[tuple[str, str]], list[str], bool]:
    """Columns, complete data lines (with newline) and whether a partial tail was dropped."""
    with open(path, "r", encoding="utf-8", newline="") as fh:
        text = fh.read()
    lines = text.splitlines(keepends=True)
    if not lines or not lines[0].startswith(MAGIC):
        raise HistoryError(f"{path}: not a wind2d history file (first line must start "
                           f"with {MAGIC!r})")
    if len(lines) < 2 or not lines[1].endswith("\n"):
        raise HistoryError(f"{path}: the header line is missing or incomplete")
    cols = _parse_header(lines[1], path)
    rows, partial = [], False
    for k, line in enumerate(lines[2:], start=3):
        if line.startswith("#") or not line.strip():
            continue
        complete = line.endswith("\n") and len(line.split(",")) == len(cols)
        if not complete:
            if k == len(lines):           # the last line of a crashed append
                partial = True
                continue
            raise HistoryError(f"{path}: line {k} has {len(line.split(','))} values, "
                               f"the header has {len(cols)}")
        rows.append(line)
    return cols, rows, partial


def _format(v) -> str:
    if isinstance(v, (bool, np.bool_)):
        return str(int(v))
    if isinstance(v, (int, np.integer)):
        return str(int(v))
    return repr(float(v))


class History:
    """Append-only CSV of diagnostics with units in the header.

    ``columns`` is a list of ``(name, unit)``; the unit is any astropy unit
    string ("" for dimensionless).  A new history refuses to replace a file
    that already holds rows (use :meth:`resume`).
    """

    def __init__(self, path, columns, *, _resume_rows: list[str] | None = None):
        self.path = Path(path)
        self.columns = _check_columns(columns)
        self.names = [n for n, _ in self.columns]
        if _resume_rows is None:
            if self.path.exists() and self.path.stat().st_size > 0:
                cols, rows, _ = _split(self.path)
                if rows or cols != self.columns:
                    raise FileExistsError(f"{self.path}: a history file already exists; "
                                          "use History.resume to continue it or choose "
                                          "another output folder")
            else:
                write_text_atomic(self.path, COMMENT + "\n" + _header(self.columns) + "\n")
        self._fh = open(self.path, "a", encoding="utf-8", newline="\n")

    @classmethod
    def resume(cls, path, columns, t_restart: float, time_column: str | None = None):
        """Continue a history after a restart at ``t_restart``.

        Rows with time > ``t_restart`` (in the unit of the time column, the
        column named ``time`` or else the first one) are dropped, as is an
        incomplete last row; the file is then rewritten atomically.  A
        missing file starts a new history.
        """
        path = Path(path)
        columns = _check_columns(columns)
        if not path.exists():
            return cls(path, columns)
        cols, rows, partial = _split(path)
        if cols != columns:
            raise HistoryError(f"{path}: its columns {_header(cols)!r} differ from this "
                               f"run's {_header(columns)!r}; cannot continue it")
        names = [n for n, _ in cols]
        tcol = time_column or ("time" if "time" in names else names[0])
        if tcol not in names:
            raise HistoryError(f"{path}: no time column {tcol!r}")
        k = names.index(tcol)
        kept = [r for r in rows if float(r.split(",")[k]) <= t_restart]
        if partial or len(kept) != len(rows):
            write_text_atomic(path, COMMENT + "\n" + _header(cols) + "\n" + "".join(kept))
        return cls(path, columns, _resume_rows=kept)

    def append(self, row: dict) -> None:
        """Write one row (every column, nothing else), flushed and fsynced."""
        missing = [n for n in self.names if n not in row]
        unknown = [n for n in row if n not in self.names]
        if missing or unknown:
            raise ParameterError(f"history row: missing {missing}, unknown {unknown}; "
                                 f"columns are {self.names}")
        vals = []
        for n in self.names:
            v = row[n]
            if not isinstance(v, (int, float, np.integer, np.floating, bool, np.bool_)):
                raise ParameterError(f"history row: {n} = {v!r} is not a number")
            vals.append(_format(v))
        self._fh.write(",".join(vals) + "\n")
        self._fh.flush()
        os.fsync(self._fh.fileno())

    def close(self) -> None:
        if not self._fh.closed:
            self._fh.close()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()


def read_history(path) -> dict[str, np.ndarray]:
    """Columns of a history file as numpy arrays (int64 if every value is an
    integer, float64 otherwise), keyed by name; units in ``read_history_units``."""
    cols, rows, _ = _split(path)
    cells = [r.rstrip("\n").split(",") for r in rows]
    out = {}
    for k, (name, _u) in enumerate(cols):
        vals = [c[k] for c in cells]
        if vals and all(re.fullmatch(r"-?\d+", v) for v in vals):
            out[name] = np.array([int(v) for v in vals], dtype=np.int64)
        else:
            out[name] = np.array([float(v) for v in vals], dtype=np.float64)
    return out


def read_history_units(path) -> dict[str, str]:
    """Unit string of each column of a history file."""
    cols, _, _ = _split(path)
    return dict(cols)
