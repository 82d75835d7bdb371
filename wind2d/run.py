"""The driver: main loop, output cadence, signals, wall-time limit, restart.

Exit statuses of ``wind2d run`` / ``wind2d resume`` (documented in the README):

====  =====================================================================
0     the run reached its stop time (or step limit)
1     an unexpected internal error (traceback in the log)
2     invalid input: problem file, overrides or run directory
3     stopped by SIGTERM, SIGINT or SIGUSR1 after writing a checkpoint
4     stopped before the wall-clock limit after writing a checkpoint
5     the state became non-finite; a crash dump was written, no snapshot
====  =====================================================================
"""
from __future__ import annotations

import json
import math
import os
import signal
import sys
import time
from pathlib import Path

import numpy as np

from . import __version__
from .errors import NonFiniteStateError
from .problem import ProblemError, build_simulation, load

EXIT_OK, EXIT_ERROR, EXIT_INPUT, EXIT_SIGNAL, EXIT_WALLTIME, EXIT_NONFINITE = 0, 1, 2, 3, 4, 5

RESOLVED = "problem.resolved.yaml"
LOG = "run.log"
HISTORY = "history.csv"
STATUS = "status.json"
SNAPDIR = "snapshots"
CKPTDIR = "checkpoints"


def fmt_hms(seconds: float) -> str:
    if not math.isfinite(seconds):
        return "--:--:--"
    s = int(round(seconds))
    return f"{s // 3600:02d}:{(s % 3600) // 60:02d}:{s % 60:02d}"


class Driver:
    """Runs a simulation in a run directory.

    ``state`` holds the output bookkeeping that a checkpoint must carry so that
    a resumed run writes the same outputs at the same times.
    """

    def __init__(self, res, sim, run_dir: Path, walltime: float | None = None,
                 quiet: bool = False):
        self.res, self.sim, self.dir = res, sim, Path(run_dir)
        self.p = res.problem
        self.units = res.units
        self.walltime = walltime if walltime is not None else self.p.stop.walltime
        self.quiet = quiet
        self.stop_signal = None
        self.wall0 = time.monotonic()
        self.book = {"snapshot_index": 0, "next_snapshot": 0.0, "next_history": 0.0,
                     "next_checkpoint": 0.0 if self.p.outputs.checkpoints.every else None,
                     "checkpoint_index": 0, "started": time.strftime("%Y-%m-%dT%H:%M:%SZ",
                                                                       time.gmtime())}
        self.snapshots: list[Path] = []
        self._log = None
        self._bar = None
        self._last_ckpt_wall = time.monotonic()
        self.comm = sim.comm
        self.root = self.comm is None or self.comm.rank == 0
        self.nranks = 1 if self.comm is None else self.comm.size

    # ------------------------------------------------------------ plumbing
    def log(self, line: str) -> None:
        if not self.root:
            return
        stamp = time.strftime("%Y-%m-%d %H:%M:%S")
        self._log.write(f"{stamp}  {line}\n")
        self._log.flush()
        if not self.quiet:
            if self._bar is not None:
                self._bar.write(line)
            else:
                print(line, flush=True)

    def _status(self, state: str, **extra) -> None:
        if not self.root:
            return
        data = {"state": state, "time": self.sim.t, "step": self.sim.nstep,
                "time_unit": self.units.time, "title": self.p.title, "version": __version__,
                **extra}
        tmp = self.dir / (STATUS + ".tmp")
        tmp.write_text(json.dumps(data, indent=1))
        os.replace(tmp, self.dir / STATUS)

    def _t(self, value: float) -> str:
        return f"{value:.6g} {self.units.time}"

    def _on_signal(self, signum, frame):
        self.stop_signal = signal.Signals(signum).name

    # ------------------------------------------------------------ outputs
    def _provenance(self):
        from .io import provenance
        return provenance(self.res.text, self.nranks, self.book["started"])

    def write_snapshot(self) -> None:
        from .io import write_series, write_snapshot
        from .parallel.gather import GlobalView
        k = self.book["snapshot_index"]
        path = self.dir / SNAPDIR / f"snapshot_{k:05d}.h5"
        if self.comm is None:
            write_snapshot(path, self.sim, self.units, self._provenance())
        else:
            # every rank writes its tile; rank 0 writes the global file of virtual datasets
            from .io import write_tile
            rel = f"tiles/snapshot_{k:05d}_rank{self.comm.rank:04d}.h5"
            kinds = write_tile(self.dir / SNAPDIR / rel, self.sim, self.units)
            tiles = self.comm.gather((rel, self.sim.mesh.window), root=0)
            view = GlobalView(self.sim, fields=False)     # collective (counters)
            self.comm.Barrier()
            if self.root:
                write_snapshot(path, view, self.units, self._provenance(), tiles=tiles,
                               kinds=kinds)
        if self.root:
            self.snapshots = sorted((self.dir / SNAPDIR).glob("snapshot_*.h5"))
            write_series(self.dir / SNAPDIR, self.snapshots)
        self.book["snapshot_index"] = k + 1
        self.book["last_snapshot_time"] = self.sim.t
        self.log(f"snapshot {path.name} at t = {self._t(self.sim.t)}")

    def write_checkpoint(self, reason: str) -> Path:
        from .io import checkpoint_name, prune, write_checkpoint
        from .parallel.gather import GlobalView
        path = self.dir / CKPTDIR / checkpoint_name(self.sim.nstep)
        extra = {"book": self.book, "problem": self.res.text, "reason": reason,
                 "ranks": self.nranks}
        # a parallel run gathers its tiles (collective); a serial run writes itself
        view = self.sim if self.comm is None else GlobalView(self.sim)
        if self.root:
            write_checkpoint(path, view, extra)
            prune(self.dir / CKPTDIR, self.p.outputs.checkpoints.keep)
        self._last_ckpt_wall = time.monotonic()
        self.log(f"checkpoint {path.name} at t = {self._t(self.sim.t)} ({reason})")
        return path

    def history_row(self) -> dict:
        row = {"time": self.sim.t, "dt": self.sim.dt_last, "step": self.sim.nstep}
        row.update(self.sim.totals())
        row.update(self.sim.counters)
        row.update({k: v for k, (v, _kind) in self.sim.module_history().items()})
        return row

    def history_columns(self):
        kinds = {"time": self.units.time, "dt": self.units.time, "step": "1",
                 "mass": self.units.mass, "energy": f"{self.units.mass} {self.units.length}2 "
                 f"{self.units.time}-2"}
        mom = f"{self.units.mass} {self.units.length} {self.units.time}-1"
        cols = []
        module_kinds = {k: kind for k, (_v, kind) in self.sim.module_history().items()}
        for name in self.history_row():
            if name in module_kinds:
                unit = self.units.code_unit(module_kinds[name])
            elif name.startswith("momentum"):
                unit = mom
            elif name == "angular_momentum":
                unit = f"{mom} {self.units.length}"
            else:
                unit = kinds.get(name, "1")
            cols.append((name, unit))
        return cols

    # ------------------------------------------------------------ loop
    def _next_output_time(self) -> float:
        cand = [self.p.stop.time]
        for key in ("next_snapshot", "next_history", "next_checkpoint"):
            v = self.book.get(key)
            if v is not None and v > self.sim.t:
                cand.append(v)
        return min(cand)

    def _due(self, key: str, every) -> bool:
        nxt = self.book.get(key)
        if every is None or nxt is None:
            return False
        if self.sim.t >= nxt * (1 - 1e-12) - 1e-300:
            while self.book[key] <= self.sim.t * (1 + 1e-12) + 1e-300:
                self.book[key] += every
            return True
        return False

    def run(self, fresh: bool) -> int:
        from .io import History
        stop = self.p.stop
        if self.root:
            self.dir.mkdir(parents=True, exist_ok=True)
            (self.dir / SNAPDIR).mkdir(exist_ok=True)
            (self.dir / CKPTDIR).mkdir(exist_ok=True)
            self._log = open(self.dir / LOG, "a", encoding="utf-8")
        if self.comm is not None:
            self.comm.Barrier()                           # folders exist for every rank
        for s in (signal.SIGTERM, signal.SIGINT, signal.SIGUSR1):
            signal.signal(s, self._on_signal)
        try:
            columns = self.history_columns()              # collective under MPI
            self.history = None
            if fresh:
                if self.root:
                    (self.dir / RESOLVED).write_text(self.res.text)
                    self.history = History(self.dir / HISTORY, columns)
                self.log(f"wind2d {__version__}: {self.p.title}"
                         + (f" on {self.nranks} ranks" if self.nranks > 1 else ""))
                for line in self.sim.advice():          # collective under MPI
                    self.log(f"warning: {line}")
            elif self.root:
                self.history = History.resume(self.dir / HISTORY, columns, self.sim.t)
            self.log(f"grid {self.sim.mesh}, {self.sim.mesh.n1 * self.sim.mesh.n2} cells; "
                     f"stop at t = {self._t(stop.time)}")
            self._status("running")
            return self._loop(fresh)
        finally:
            for s in (signal.SIGTERM, signal.SIGINT, signal.SIGUSR1):
                signal.signal(s, signal.SIG_DFL)
            if self._bar is not None:
                self._bar.close()
            if self._log is not None:
                self._log.close()

    def _outputs(self) -> None:
        o = self.p.outputs
        if self._due("next_history", o.history.every):
            row = self.history_row()                      # collective under MPI
            if self.root:
                self.history.append(row)
        if self._due("next_snapshot", o.snapshots.every):
            self.write_snapshot()
        if self._due("next_checkpoint", o.checkpoints.every):
            self.write_checkpoint("cadence")
        if self._agreed("wall_ckpt"):
            self.write_checkpoint("wall-clock cadence")

    def _loop(self, fresh: bool) -> int:
        sim, stop, o = self.sim, self.p.stop, self.p.outputs
        if fresh:
            self.book["next_snapshot"] = 0.0 if o.snapshots.every else None
            self.book["next_history"] = 0.0 if o.history.every else None
            self._outputs()
        cells = sim.mesh.n1 * sim.mesh.n2
        every = o.log.every_steps
        if sys.stdout.isatty() and not self.quiet and self.root:
            from tqdm import tqdm
            self._bar = tqdm(total=stop.time, initial=sim.t, unit=self.units.time,
                             bar_format="{l_bar}{bar}| {n:.4g}/{total:.4g} {unit} [{elapsed}<"
                                        "{remaining}]")
        t_wall, n_wall = time.monotonic(), 0
        step_wall = 0.0
        while sim.t < stop.time * (1 - 1e-14):
            if stop.max_steps is not None and sim.nstep >= stop.max_steps:
                break
            self._flags(step_wall)                        # one collective per step
            if self._agreed("walltime"):
                left = (self.walltime or 0.0) - (time.monotonic() - self.wall0)
                self.write_checkpoint("wall-clock limit")
                self.log(f"stopping {fmt_hms(left)} before the wall-clock limit; resume "
                         f"with: wind2d resume {self.dir}")
                self._status("stopped", reason="walltime")
                return EXIT_WALLTIME
            if self._agreed("signal"):
                name = self.stop_signal or "a signal on another rank"
                self.write_checkpoint(f"signal {name}")
                self.log(f"stopped by {name}; resume with: wind2d resume {self.dir}")
                self._status("stopped", reason=name)
                return EXIT_SIGNAL
            t_before = sim.t
            try:
                dt = min(sim.max_dt(), self._next_output_time() - sim.t)
                w0 = time.monotonic()
                self._fault_hook()
                sim.step(dt)
                step_wall = time.monotonic() - w0
            except NonFiniteStateError as exc:
                dump = self._crash_dump(exc)
                self.log(f"ERROR at step {sim.nstep}, t = {self._t(sim.t)}: {exc}; crash dump "
                         f"{dump}; no snapshot written")
                self._status("crashed", reason=str(exc))
                return EXIT_NONFINITE
            self._outputs()
            n_wall += 1
            if self._bar is not None:
                self._bar.update(sim.t - t_before)
            if sim.nstep % every == 0:
                el = time.monotonic() - t_wall
                rate = cells * self.nranks * n_wall / el if el > 0 else float("nan")
                eta = (stop.time - sim.t) / sim.dt_last * el / n_wall if n_wall else float("nan")
                c = sim.counters                         # collective under MPI
                self.log(f"step {sim.nstep}  t = {self._t(sim.t)}  dt = {self._t(sim.dt_last)}"
                         f"  {rate:.3g} zone-updates/s  ETA {fmt_hms(eta)}  floors: fallback "
                         f"{c['fallback_cells']} density {c['density_floor_cells']} pressure "
                         f"{c['pressure_floor_cells']}")
                t_wall, n_wall = time.monotonic(), 0
        try:
            sim.max_dt()                                  # the final state is finite
        except NonFiniteStateError as exc:
            dump = self._crash_dump(exc)
            self.log(f"ERROR at step {sim.nstep}: {exc}; crash dump {dump}")
            self._status("crashed", reason=str(exc))
            return EXIT_NONFINITE
        # the end: last snapshot if not just written, final checkpoint
        if self.book.get("last_snapshot_time") != sim.t:
            self.write_snapshot()
        self.write_checkpoint("end of run")
        self.log(f"finished at t = {self._t(sim.t)} after {sim.nstep} steps")
        self._status("finished")
        return EXIT_OK

    # ------------------------------------------------------------ agreement
    def _flags(self, step_wall: float) -> None:
        """Decide together (one allreduce) whether to stop or checkpoint now: a
        signal on any rank, or rank 0's wall clock."""
        o = self.p.outputs
        walltime = wall_ckpt = 0
        if self.root:
            used = time.monotonic() - self.wall0
            if self.walltime is not None and \
                    used + self.p.stop.walltime_margin + 2 * step_wall >= self.walltime:
                walltime = 1
            if o.checkpoints.every_wallclock and \
                    time.monotonic() - self._last_ckpt_wall >= o.checkpoints.every_wallclock:
                wall_ckpt = 1
        flags = np.array([1 if self.stop_signal else 0, walltime, wall_ckpt], dtype=np.int64)
        if self.comm is not None:
            from mpi4py import MPI
            out = np.empty_like(flags)
            self.comm.Allreduce(flags, out, op=MPI.MAX)
            flags = out
        flags = flags.tolist()
        self._agree = dict(zip(("signal", "walltime", "wall_ckpt"), flags))

    def _agreed(self, key: str) -> bool:
        return bool(getattr(self, "_agree", {}).get(key, 0))

    def _fault_hook(self) -> None:
        # test hook (documented in DEVELOPERS.md): fail on one rank at one step
        r, s = os.environ.get("WIND2D_FAULT_RANK"), os.environ.get("WIND2D_FAULT_STEP")
        if r is not None and s is not None and int(r) == (0 if self.comm is None else
                                                           self.comm.rank) \
                and int(s) == self.sim.nstep:
            raise RuntimeError(f"injected fault on rank {r} at step {s} (WIND2D_FAULT_* test "
                               "hook)")

    def _crash_dump(self, exc) -> Path:
        import h5py
        sim = self.sim
        tag = "" if self.comm is None else f"_rank{self.comm.rank:04d}"
        path = self.dir / f"crash_step{sim.nstep:09d}{tag}.h5"
        W = sim.integrator.W
        m = sim.mesh
        w = W[:, m.js:m.je, m.is_:m.ie]
        bad = ~np.isfinite(w).all(axis=0) | (w[0] <= 0) | (w[4] <= 0)
        jj, ii = np.nonzero(bad)
        with h5py.File(path, "w") as f:
            f.attrs["message"] = str(exc)
            f.attrs["time"] = sim.t
            f.attrs["step"] = sim.nstep
            f.attrs["tile"] = np.array(sim.mesh.window)
            f["U"] = sim.state.U
            f["W"] = W
            f["bad_cells_i"] = ii
            f["bad_cells_j"] = jj
            for k, v in sim.export_state().items():
                if isinstance(v, np.ndarray) and k not in ("U",):
                    f[f"state/{k}"] = v
        return path


# ---------------------------------------------------------------- entry points
def start(problem_file, out: Path | None, overrides, walltime=None, quiet=False) -> int:
    res = load(problem_file, overrides)
    sim = build_simulation(res)
    run_dir = Path(out) if out else Path("runs") / Path(problem_file).stem
    if (run_dir / RESOLVED).exists() or (run_dir / CKPTDIR).exists():
        raise ProblemError(str(run_dir), ["this folder already holds a run; resume it with "
                                          f"'wind2d resume {run_dir}' or choose another --out"])
    if sim.comm is not None:
        sim.comm.Barrier()          # every rank has checked the folder before rank 0 fills it
    return Driver(res, sim, run_dir, walltime, quiet).run(fresh=True)


RESUME_KEYS = ("stop.", "outputs.")


def resume(run_dir, walltime=None, quiet=False, overrides=()) -> int:
    """Continue a run from its newest valid checkpoint.

    ``overrides`` may change only ``stop.*`` and ``outputs.*`` (e.g. extend
    the run); the resolved problem file of the run directory is updated.
    """
    from .io import CheckpointError, find_latest_valid
    run_dir = Path(run_dir)
    rfile = run_dir / RESOLVED
    if not rfile.is_file():
        raise ProblemError(str(run_dir), [f"not a run directory: no {RESOLVED}"])
    bad = [o for o in overrides if not o.strip().startswith(RESUME_KEYS)]
    if bad:
        raise ProblemError(str(run_dir), [f"--set {o!r}: a resumed run may only change "
                                          "stop.* and outputs.* keys" for o in bad])
    res = load(rfile, list(overrides))
    from .parallel import rank
    if overrides and rank() == 0:
        tmp = rfile.with_suffix(".yaml.tmp")
        tmp.write_text(res.text)
        os.replace(tmp, rfile)
    sim = build_simulation(res)
    try:
        path, data, skipped = find_latest_valid(run_dir / CKPTDIR)
    except CheckpointError as exc:
        raise ProblemError(str(run_dir), [str(exc)]) from None
    for msg in skipped:
        if sim.comm is None or sim.comm.rank == 0:
            print(f"wind2d resume: skipping {msg}", file=sys.stderr)
    from .parallel.gather import restore_tile
    restore_tile(sim, data)
    d = Driver(res, sim, run_dir, walltime, quiet)
    d.book.update(data["extra"]["book"])
    d.snapshots = sorted((run_dir / SNAPDIR).glob("snapshot_*.h5"))
    # snapshots written after the checkpoint belong to the lost part of the run
    keep = d.book["snapshot_index"]
    if d.root:
        for s in d.snapshots[keep:]:
            s.rename(s.with_suffix(".h5.superseded"))
    d.snapshots = d.snapshots[:keep]
    code = d.run(fresh=False)
    return code
