"""Parallel runs with mpiexec: results independent of the rank count.

Reference: the serial run of the same problem (the decomposition must not
change a single bit: tiles compute the same arithmetic on the same numbers).
Each case is a problem file text; add a module's case to CASES to cover it.
"""
import os
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from wind2d.io import list_checkpoints, read_checkpoint, read_snapshot

pytest.importorskip("mpi4py")
MPIEXEC = shutil.which("mpiexec", path=str(Path(sys.executable).parent)) or \
    shutil.which("mpiexec")
if MPIEXEC is None:
    pytest.skip("no mpiexec", allow_module_level=True)

CASES = {
    "mhd_cylindrical_stretched_axis": """
title: MHD blast on a stretched (R, z) grid with the axis
grid:
  geometry: cylindrical
  R: {from: 0, to: 1, cells: 30, stretch: 1.03}
  z: {from: -1, to: 1, cells: 37}
edges: {R_low: axis, R_high: outflow, z_low: outflow, z_high: outflow}
gas: {magnetised: true}
setup: {kind: blast, energy: 1.0, radius: 0.15, ambient: {rho: 1.0, p: 0.1, Bz: 0.5}}
stop: {time: 10.0, max_steps: 24}
outputs: {snapshots: {every: 0.02}, history: {every: 0.005}}
""",
    "gas_cylindrical_rotating": """
title: rotating gas cylinder, reflecting outer wall, periodic z
grid:
  geometry: cylindrical
  R: {from: 0, to: 1, cells: 33, stretch: 1.02}
  z: {from: 0, to: 0.5, cells: 18}
edges: {R_low: axis, R_high: reflecting, z_low: periodic, z_high: periodic}
setup: {kind: rotating_equilibrium, rho: 1.0, p0: 1.0, v0: 0.5, a: 0.3}
stop: {time: 10.0, max_steps: 24}
outputs: {snapshots: {every: 0.05}, history: {every: 0.01}}
""",
    "mhd_cartesian_periodic": """
title: field loop in a periodic box
grid:
  geometry: cartesian
  x: {from: -1, to: 1, cells: 40}
  y: {from: -0.5, to: 0.5, cells: 22}
edges: {x_low: periodic, x_high: periodic, y_low: periodic, y_high: periodic}
gas: {magnetised: true}
setup: {kind: field_loop, amplitude: 1e-3, radius: 0.3, state: {rho: 1, p: 1, vx: 2, vy: 1, vz: 0.5}}
stop: {time: 10.0, max_steps: 24}
outputs: {snapshots: {every: 0.05}, history: {every: 0.01}}
""",
    "cosmic_rays_diffusion_streaming": """
title: cosmic-ray blast on the axis with field-aligned diffusion and streaming
grid:
  geometry: cylindrical
  R: {from: 0, to: 1, cells: 30, stretch: 1.03}
  z: {from: -1, to: 1, cells: 37}
edges: {R_low: axis, R_high: outflow, z_low: outflow, z_high: outflow}
gas: {magnetised: true}
setup: {kind: blast, energy: 1.0, radius: 0.15, ambient: {rho: 1.0, p: 0.1, Bz: 0.5, BR: 0.2}}
physics:
  cosmic_rays:
    max_speed: 30
    diffusion: {parallel: 0.02, perpendicular: 0.002}
    streaming: {ionised_fraction: 0.5}
    initial: {pressure_ratio: 0.5}
stop: {time: 10.0, max_steps: 24}
outputs: {snapshots: {every: 0.002}, history: {every: 0.0005}}
""",
    "galaxy_modules": """
title: rotating disk in a halo with gravity, cooling, injection, a held slab and outflow rates
units: {length: kpc, time: Myr, mass: Msun}
grid:
  geometry: cylindrical
  R: {from: 0 kpc, to: 8 kpc, cells: 26, stretch: 1.04}
  z: {from: -8 kpc, to: 8 kpc, cells: 34}
edges: {R_low: axis, R_high: outflow, z_low: outflow, z_high: outflow}
gas: {magnetised: true}
setup: {kind: disk_in_halo, rho_disk: 1 cm**-3, T_disk: 1e4 K, rotation: 0.9,
        rho_halo: 1e-3 cm**-3, T_halo: 1e6 K, field: {kind: toroidal, beta: 30, core_radius: 0.5 kpc}}
physics:
  gravity:
    potentials: [{kind: nfw, virial_mass: 1e11 Msun, concentration: 10},
                 {kind: miyamoto_nagai, mass: 3e9 Msun, a: 1 kpc, b: 0.2 kpc}]
  injection:
    region: {shape: disk, radius: 1 kpc, half_height: 0.3 kpc}
    star_formation: {kind: constant, rate: 2 Msun/yr}
    cr_fraction: 0.0
  hold:
    regions: [{shape: slab, z_min: 7.5 kpc, z_max: 8 kpc, R_max: 1 kpc, state: initial}]
  outflow_rates:
    surfaces: [{shape: plane, height: 2 kpc}, {shape: sphere, radius: 5 kpc}]
  cooling:
    curve: {kind: solar_cie}
    floor: 1e4 K
stop: {time: 1000 Myr, max_steps: 24}
outputs: {snapshots: {every: 0.5 Myr}, history: {every: 0.1 Myr}}
""",
    "fallback_at_tile_edges": """
title: streams receding next to the tile edge at x = 0.5 (first-order fallback there)
grid:
  geometry: cartesian
  x: {from: 0, to: 1, cells: 100}
  y: {from: 0, to: 0.08, cells: 8}
edges: {x_low: periodic, x_high: periodic, y_low: periodic, y_high: periodic}
gas: {gamma: 1.4, floors: {density: 1e-12, pressure: 1e-14}}
setup: {kind: shock_tube, along: x, at: 0.52, left: {rho: 1, p: 0.4, vx: -5.6},
        right: {rho: 1, p: 0.4, vx: 5.6}}
stop: {time: 10.0, max_steps: 40}
outputs: {history: {every: 0.01}}
""",
}
RANKS = {"fallback_at_tile_edges": (2, 4), "mhd_cylindrical_stretched_axis": (2, 3, 4), "gas_cylindrical_rotating": (2, 4),
         "mhd_cartesian_periodic": (2, 3), "cosmic_rays_diffusion_streaming": (2, 3, 4),
         "galaxy_modules": (2, 4)}


def _launch(n, args, cwd, env=None, timeout=240):
    cmd = [sys.executable, "-m", "wind2d", *map(str, args)]
    if n > 1:
        cmd = [MPIEXEC, "-n", str(n), *cmd]
    e = dict(os.environ, **(env or {}))
    return subprocess.run(cmd, cwd=cwd, capture_output=True, text=True, timeout=timeout,
                          env=e)


def _state(run):
    return read_checkpoint(list_checkpoints(Path(run) / "checkpoints")[0][1])["state"]


def _same(a, b):
    keys = [k for k in ("U", "b1", "b2", "counters") if k in a]
    return a["t"] == b["t"] and a["nstep"] == b["nstep"] and \
        all(np.array_equal(a[k], b[k]) for k in keys)


@pytest.fixture(scope="module")
def serial_runs(tmp_path_factory):
    root = tmp_path_factory.mktemp("serial")
    for name, text in CASES.items():
        (root / f"{name}.yaml").write_text(text)
        r = _launch(1, ["run", f"{name}.yaml", "--out", name, "--quiet"], root)
        assert r.returncode == 0, r.stderr
    return root


@pytest.mark.parametrize("case,n", [(c, n) for c, ns in RANKS.items() for n in ns])
def test_state_is_bitwise_identical_on_any_rank_count(serial_runs, tmp_path, case, n):
    (tmp_path / "p.yaml").write_text(CASES[case])
    r = _launch(n, ["run", "p.yaml", "--out", "run", "--quiet"], tmp_path)
    assert r.returncode == 0, r.stderr
    assert _same(_state(tmp_path / "run"), _state(serial_runs / case))
    if n == 2:
        # snapshots read back as single global arrays equal to the serial run's
        for snap in sorted((serial_runs / case / "snapshots").glob("snapshot_*.h5")):
            a = read_snapshot(snap)
            b = read_snapshot(tmp_path / "run" / "snapshots" / snap.name)
            assert a.time == b.time
            for k in a.fields:
                assert np.array_equal(a.fields[k], b.fields[k]), (snap.name, k)
            assert set(a.faces) == set(b.faces)
            assert bool(a.faces) == ("Bz" in a.fields or "By" in a.fields)
            for k in a.faces:           # face fields: virtual over tiles, no gaps
                assert np.array_equal(a.faces[k], b.faces[k]), (snap.name, k)
        # every rank wrote its own tile; the global file holds virtual datasets over them
        import h5py
        last = sorted((tmp_path / "run" / "snapshots").glob("snapshot_*.h5"))[-1]
        with h5py.File(last, "r") as f:
            assert f["fields/rho"].is_virtual
            assert len({s.file_name for s in f["fields/rho"].virtual_sources()}) == n


@pytest.mark.parametrize("case,first,second", [
    ("mhd_cylindrical_stretched_axis", 4, 1), ("mhd_cylindrical_stretched_axis", 4, 2),
    ("mhd_cylindrical_stretched_axis", 1, 2), ("cosmic_rays_diffusion_streaming", 4, 1),
    ("galaxy_modules", 2, 1)])
def test_checkpoint_resumes_on_another_rank_count(serial_runs, tmp_path, case, first, second):
    (tmp_path / "p.yaml").write_text(CASES[case])
    r = _launch(first, ["run", "p.yaml", "--out", "run", "--quiet", "--set",
                        "stop.max_steps=11"], tmp_path)
    assert r.returncode == 0, r.stderr
    r = _launch(second, ["resume", "run", "--quiet", "--set", "stop.max_steps=24"], tmp_path)
    assert r.returncode == 0, r.stderr
    assert _same(_state(tmp_path / "run"), _state(serial_runs / case))


def test_failure_on_one_rank_ends_the_job_with_its_message(tmp_path):
    (tmp_path / "p.yaml").write_text(CASES["mhd_cartesian_periodic"])
    r = _launch(2, ["run", "p.yaml", "--out", "run", "--quiet"], tmp_path,
                env={"WIND2D_FAULT_RANK": "1", "WIND2D_FAULT_STEP": "3"}, timeout=60)
    assert r.returncode != 0
    assert "rank 1 failed" in r.stderr and "injected fault" in r.stderr


def test_a_rank_count_that_leaves_a_tile_empty_is_refused(tmp_path):
    (tmp_path / "p.yaml").write_text(CASES["mhd_cartesian_periodic"].replace(
        "cells: 22", "cells: 2").replace("cells: 40", "cells: 3"))
    r = _launch(4, ["run", "p.yaml", "--out", "run", "--quiet"], tmp_path, timeout=60)
    assert r.returncode == 2, r.stderr
    assert "ranks" in r.stderr and "Traceback" not in r.stderr
