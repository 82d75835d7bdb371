"""The run lifecycle from the command line: outputs, bitwise resume, signals,
wall-clock limit, killed and corrupted checkpoints, and every ready problem file.

Reference for the shock-tube check: the exact Riemann solution (Toro 2009,
ch. 4), computed by tests/reference/exact_euler.py.
"""
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from tests.reference.exact_euler import solution
from wind2d.cli import main
from wind2d.io import list_checkpoints, read_checkpoint, read_history, read_snapshot

ROOT = Path(__file__).resolve().parent.parent
PROBLEMS = sorted((ROOT / "problems").rglob("*.yaml"))

MHD_TUBE = """
title: small MHD tube for lifecycle tests
grid:
  geometry: cylindrical
  R: {from: 1.0, to: 1.1, cells: 4}
  z: {from: 0, to: 1, cells: 64}
edges: {R_low: reflecting, R_high: reflecting, z_low: outflow, z_high: outflow}
gas: {gamma: 2, magnetised: true}
setup:
  kind: shock_tube
  along: z
  at: 0.5
  left: {rho: 1.0, p: 1.0, Bz: 0.75, Bphi: 1.0, vphi: 0.2}
  right: {rho: 0.125, p: 0.1, Bz: 0.75, Bphi: -1.0}
stop: {time: 10.0, max_steps: 40}
outputs:
  snapshots: {every: 0.01}
  history: {every: 0.002}
  checkpoints: {every: 0.02, keep: 2}
"""


def _cli(*args):
    return main([str(a) for a in args])


def _checkpoints(folder):
    """Checkpoint paths, oldest first."""
    return [p for _, p in list_checkpoints(folder)][::-1]


def _final_state(run_dir):
    return read_checkpoint(_checkpoints(run_dir / "checkpoints")[-1])["state"]


def test_check_succeeds_on_every_ready_problem_file(capsys):
    assert PROBLEMS
    for path in PROBLEMS:
        assert _cli("check", path) == 0, capsys.readouterr().err
        assert "valid" in capsys.readouterr().out


def test_shock_tube_run_from_the_command_line_matches_the_exact_solution(tmp_path):
    out = tmp_path / "sod"
    assert _cli("run", ROOT / "problems/verification/shock_tube_base.yaml", "--out", out,
                "--quiet", "--set", "grid.x.cells=200") == 0
    snap = read_snapshot(sorted((out / "snapshots").glob("snapshot_*.h5"))[-1])
    assert snap.time == pytest.approx(0.2, rel=1e-12)
    x = snap.centres[0]
    exact = solution((1.0, 0.0, 1.0), (0.125, 0.0, 0.1), x, 0.2, x0=0.5, gamma=1.4)[0]
    err = np.mean(np.abs(snap.fields["rho"][0] - exact))
    # measured 2.3e-3 at 200 cells (Toro test 1; tests/test_euler_riemann.py)
    assert err < 3.5e-3, err
    hist = read_history(out / "history.csv")
    assert np.all(np.diff(hist["time"]) > 0) and hist["time"][-1] == pytest.approx(0.2)
    png = tmp_path / "rho.png"
    assert _cli("plot", sorted((out / "snapshots").glob("*.h5"))[-1], "--field", "rho",
                "--output", png) == 0
    assert png.stat().st_size > 1000
    assert _cli("info", out) == 0


@pytest.mark.parametrize("magnetised", [False, True])
def test_resume_is_bitwise_identical(tmp_path, magnetised):
    f = tmp_path / "p.yaml"
    text = MHD_TUBE if magnetised else MHD_TUBE.replace("magnetised: true", "magnetised: false") \
        .replace(", Bz: 0.75, Bphi: 1.0", "").replace(", Bz: 0.75, Bphi: -1.0", "")
    f.write_text(text)
    assert _cli("run", f, "--out", tmp_path / "straight", "--quiet") == 0
    assert _cli("run", f, "--out", tmp_path / "split", "--quiet",
                "--set", "stop.max_steps=20") == 0
    assert _cli("resume", tmp_path / "split", "--quiet", "--set", "stop.max_steps=40") == 0
    a, b = _final_state(tmp_path / "straight"), _final_state(tmp_path / "split")
    assert a["nstep"] == b["nstep"] == 40
    for key in ("U", "b1", "b2", "counters"):
        if key in a:
            assert np.array_equal(a[key], b[key]), key
    assert a["t"] == b["t"]
    ha, hb = read_history(tmp_path / "straight/history.csv"), \
        read_history(tmp_path / "split/history.csv")
    assert np.array_equal(ha["time"], hb["time"])      # no duplicated or missing rows
    assert np.array_equal(ha["energy"], hb["energy"])


def _spawn(args, cwd):
    env = dict(os.environ, PYTHONUNBUFFERED="1")
    return subprocess.Popen([sys.executable, "-m", "wind2d", *map(str, args)], cwd=cwd,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=env, text=True)


LONG = MHD_TUBE.replace("max_steps: 40", "max_steps: 100000").replace(
    "cells: 64", "cells: 2048").replace("time: 10.0", "time: 50.0").replace(
    "checkpoints: {every: 0.02, keep: 2}", "checkpoints: {every: 0.0005, keep: 3}")


def _wait_for(pred, timeout=120, proc=None):
    t0 = time.monotonic()
    while not pred():
        if proc is not None and proc.poll() is not None:
            raise AssertionError(f"the run ended early: {proc.communicate()}")
        if time.monotonic() - t0 > timeout:
            raise TimeoutError
        time.sleep(0.05)


def test_sigterm_checkpoints_and_resume_finishes(tmp_path):
    f = tmp_path / "long.yaml"
    f.write_text(LONG)
    run = tmp_path / "run"
    proc = _spawn(["run", f, "--out", run, "--quiet"], tmp_path)
    _wait_for(lambda: (run / "status.json").exists() and len(_checkpoints(
        run / "checkpoints")) >= 1, proc=proc)
    proc.send_signal(signal.SIGTERM)
    out, err = proc.communicate(timeout=120)
    assert proc.returncode == 3, err            # documented: stopped by a signal
    assert "Traceback" not in err
    log = (run / "run.log").read_text()
    assert "signal SIGTERM" in log
    newest = read_checkpoint(_checkpoints(run / "checkpoints")[-1])
    assert newest["extra"]["reason"] == "signal SIGTERM"
    # finish quickly: shorten the run, then resume
    assert _cli("resume", run, "--quiet", "--set",
                f"stop.max_steps={newest['state']['nstep'] + 5}") == 0
    assert "finished" in (run / "status.json").read_text()


def test_sigkill_while_checkpointing_leaves_a_resumable_run(tmp_path):
    f = tmp_path / "long.yaml"
    f.write_text(LONG)
    run = tmp_path / "run"
    proc = _spawn(["run", f, "--out", run, "--quiet"], tmp_path)
    ck = run / "checkpoints"
    _wait_for(lambda: ck.exists() and len(_checkpoints(ck)) >= 2, proc=proc)
    # kill as soon as a checkpoint is being written (a temporary file exists)
    _wait_for(lambda: any(p.name.startswith(".") or ".tmp" in p.name for p in ck.iterdir()),
              timeout=60, proc=proc)
    proc.kill()
    proc.communicate(timeout=60)
    valid = _checkpoints(ck)
    assert valid
    read_checkpoint(valid[-1])                 # the newest complete one is intact
    step = read_checkpoint(valid[-1])["state"]["nstep"]
    assert _cli("resume", run, "--quiet", "--set", f"stop.max_steps={step + 3}") == 0


def test_corrupted_newest_checkpoint_is_skipped(tmp_path, capsys):
    f = tmp_path / "p.yaml"
    f.write_text(MHD_TUBE)
    run = tmp_path / "run"
    assert _cli("run", f, "--out", run, "--quiet", "--set", "stop.max_steps=25") == 0
    cks = _checkpoints(run / "checkpoints")
    assert len(cks) == 2
    data = bytearray(cks[-1].read_bytes())
    data[len(data) // 2] ^= 0xFF
    cks[-1].write_bytes(bytes(data))
    assert _cli("resume", run, "--quiet", "--set", "stop.max_steps=30") == 0
    err = capsys.readouterr().err
    assert "skipping" in err and cks[-1].name in err


def test_walltime_limit_checkpoints_before_the_limit(tmp_path):
    f = tmp_path / "long.yaml"
    f.write_text(LONG)
    run = tmp_path / "run"
    t0 = time.monotonic()
    code = _cli("run", f, "--out", run, "--quiet", "--walltime", "00:00:06",
                "--set", "stop.walltime_margin=4")
    assert code == 4                            # documented: wall-clock limit reached
    assert time.monotonic() - t0 < 6.0
    newest = read_checkpoint(_checkpoints(run / "checkpoints")[-1])
    assert newest["extra"]["reason"] == "wall-clock limit"


def test_non_finite_state_stops_with_a_crash_dump(tmp_path):
    # fault injection: after the 5th step one cell's energy becomes NaN (as a bug or an
    # unstable setup would make it); the driver must stop, dump, and write no snapshot
    import h5py
    from wind2d.problem import build_simulation, load
    from wind2d.run import Driver
    f = tmp_path / "p.yaml"
    f.write_text(MHD_TUBE)
    res = load(f)
    sim = build_simulation(res)
    step = sim.integrator.step

    def faulty(st, dt):
        step(st, dt)
        if sim.nstep == 4:
            st.U[4, 20, 3] = np.nan
    sim.integrator.step = faulty
    code = Driver(res, sim, tmp_path / "run", quiet=True).run(fresh=True)
    assert code == 5                                   # documented: non-finite state
    dumps = list((tmp_path / "run").glob("crash_*.h5"))
    assert len(dumps) == 1
    with h5py.File(dumps[0], "r") as d:
        assert "not finite" in d.attrs["message"]
        assert (18, 1) in list(zip(d["bad_cells_j"][:], d["bad_cells_i"][:]))
    snaps = sorted(p.name for p in (tmp_path / "run" / "snapshots").glob("snapshot_*.h5"))
    assert snaps == ["snapshot_00000.h5"]              # the initial one only
    assert "crashed" in (tmp_path / "run" / "status.json").read_text()
