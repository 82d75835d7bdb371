"""Outputs and restarts: snapshots with units, XDMF sidecars and series, checkpoints
(bitwise restart, corruption detection, pruning), history files and provenance."""
import datetime as dt
import json
import xml.etree.ElementTree as ET
from pathlib import Path

import astropy.constants as const
import astropy.units as u
import h5py
import numpy as np
import pytest

from wind2d import NonFiniteStateError, Simulation
from wind2d.io import (CheckpointError, History, find_latest_valid, provenance, prune,
                       read_checkpoint, read_history, read_history_units, read_snapshot,
                       restore, write_checkpoint, write_series, write_snapshot)
from wind2d.io.checkpoint import checkpoint_name, list_checkpoints
from wind2d.problem.units import UnitSystem

CYL_EDGES = {"R_low": "axis", "R_high": "outflow", "z_low": "outflow", "z_high": "outflow"}
# hydrogen atom mass: 1.00782503207 u (atomic mass evaluation, NIST)
M_H = 1.00782503207 * const.u


def make_sim(mhd: bool) -> Simulation:
    if mhd:
        return Simulation("cylindrical", (0.0, 1.0, 16), (-1.0, 1.0, 24), CYL_EDGES,
                          mhd=True, riemann="hlld")
    return Simulation("cylindrical", (0.0, 1.0, 16), (-1.0, 1.0, 24), CYL_EDGES)


def setup(sim: Simulation) -> Simulation:
    if sim.varmap.mhd:
        sim.set_field(lambda R, z: 0.1 * R * np.exp(-(R**2 + z**2) / 0.1))
    sim.set_primitive(rho=lambda R, z: 1.0 + np.exp(-(R**2 + z**2) / 0.05), p=1.0,
                      vphi=lambda R, z: 0.3 * R)
    return sim


def h5_refs(xdmf_path: Path):
    """(file, dataset, Dimensions) of every HDF5 DataItem of an XDMF file."""
    root = ET.parse(xdmf_path).getroot()
    assert root.tag == "Xdmf"
    out = []
    for item in root.iter("DataItem"):
        assert item.get("Format") == "HDF"
        fname, dset = item.text.strip().split(":", 1)
        dims = tuple(int(d) for d in item.get("Dimensions").split())
        out.append((xdmf_path.parent / fname, dset, dims))
    return root, out


# ------------------------------------------------------------------ snapshots
def test_snapshot_round_trip_in_code_units(tmp_path):
    sim = setup(make_sim(mhd=True))
    sim.step()
    units = UnitSystem("kpc", "Myr", "Msun")
    prov = provenance("demo:\n  rho: 1\n", nranks=1)
    extra = {"cr_pressure": (np.full((24, 16), 0.25), "pressure")}
    path = write_snapshot(tmp_path / "snapshot_0001.h5", sim, units, prov, extra_fields=extra)
    snap = read_snapshot(path)
    assert snap.time == sim.t and snap.step == 1 and snap.dt_last == sim.dt_last
    assert snap.geometry == "cylindrical" and snap.axis_names == ("R", "z")
    for got, want in zip(snap.edges, sim.mesh.edges()):
        assert np.array_equal(got, want)
    R, z = sim.mesh.centres()
    assert np.array_equal(snap.centres[0], R[0]) and np.array_equal(snap.centres[1], z[:, 0])
    for name in sim.field_names:
        assert np.array_equal(snap.field(name), sim.field(name)), name
    # derived fields: T = p/rho, p_B = B^2/2 (Heaviside-Lorentz), beta = p/p_B (common practice)
    B2 = sum(sim.field(n) ** 2 for n in ("BR", "Bz", "Bphi"))
    assert np.allclose(snap.field("temperature"), sim.field("p") / sim.field("rho"), rtol=1e-15)
    assert np.allclose(snap.field("magnetic_pressure"), 0.5 * B2, rtol=1e-15)
    beta = snap.field("plasma_beta")
    nz = B2 > 0
    assert np.allclose(beta[nz], sim.field("p")[nz] / (0.5 * B2[nz]), rtol=1e-14)
    assert np.all(np.isposinf(beta[~nz]))
    assert np.array_equal(snap.field("cr_pressure"), extra["cr_pressure"][0])
    assert snap.units["rho"] == "g cm-3" and snap.units["vR"] == "cm s-1"
    assert snap.units["Bphi"] == "G" and snap.units["temperature"] == "K"
    assert snap.units["cr_pressure"] == "erg cm-3" and snap.kinds["cr_pressure"] == "pressure"
    for name, unit in snap.units.items():       # every unit string parses with astropy
        u.Unit(unit) if unit else None
    assert snap.counters == sim.counters
    assert snap.provenance["problem_text"] == "demo:\n  rho: 1\n"
    assert snap.provenance["nranks"] == 1
    assert snap.provenance["wind2d_version"] == prov["wind2d_version"]
    assert snap.code_units == {"length": "kpc", "time": "Myr", "mass": "Msun", "mu": 0.6}
    # time and edges in physical units: 1 Myr = 3.15576e13 s (Julian year, IAU)
    assert np.isclose(snap.time_quantity().to_value(u.Myr), sim.t, rtol=1e-12)
    assert np.allclose(snap.edges_quantity()[0].to_value(u.kpc), sim.mesh.edges()[0],
                       rtol=1e-12)
    # no temporary file left behind
    assert sorted(p.name for p in tmp_path.iterdir()) == ["snapshot_0001.h5",
                                                          "snapshot_0001.xdmf"]


def test_physical_units_against_astropy(tmp_path):
    # n = 1 cm^-3, T = 1e4 K, B_z = 1 uG, B_phi = 2 uG set from unit strings in pc/kyr/Msun;
    # expected values from astropy constants: rho = mu m_H n, p = n k_B T,
    # p_B = B^2 / (8 pi) in Gaussian units (common practice)
    units = UnitSystem("pc", "kyr", "Msun", mu=0.6)
    rho = units.code_value("1 cm**-3", "density", "test")
    p = units.code_value(f"{(1 * u.cm**-3 * const.k_B * 1e4 * u.K).cgs.value} erg cm-3",
                         "pressure", "test")
    bz = units.code_value("1 uG", "magnetic_field", "test")
    bphi = units.code_value("2 uG", "magnetic_field", "test")
    sim = make_sim(mhd=True)
    sim.set_field(b2=bz)
    sim.set_primitive(rho=rho, p=p, Bphi=bphi)
    path = write_snapshot(tmp_path / "s.h5", sim, units, provenance())
    snap = read_snapshot(path, physical=True)
    want_rho = (0.6 * M_H * u.cm**-3).to(u.g / u.cm**3)
    got_rho = snap.fields["rho"]
    assert got_rho.unit.is_equivalent(u.g / u.cm**3)
    assert np.allclose(got_rho.to_value(u.g / u.cm**3), want_rho.value, rtol=1e-10)
    assert np.allclose(snap.fields["temperature"].to_value(u.K), 1e4, rtol=1e-10)
    assert np.allclose(snap.fields["Bz"].to_value(u.G), 1e-6, rtol=1e-10)
    assert np.allclose(snap.fields["Bphi"].to_value(u.G), 2e-6, rtol=1e-10)
    pB = (5e-12 / (8 * np.pi))
    assert np.allclose(snap.fields["magnetic_pressure"].to_value(u.erg / u.cm**3), pB,
                       rtol=1e-10)
    assert np.allclose(snap.fields["plasma_beta"].value,
                       (const.k_B * 1e4 * u.K / u.cm**3).cgs.value / pB, rtol=1e-10)
    # the code-unit view of the same file and the physical field() accessor agree
    code = read_snapshot(path)
    assert np.allclose(code.field("rho", physical=True).to_value(u.g / u.cm**3),
                       want_rho.value, rtol=1e-10)
    assert np.array_equal(snap.field("rho"), code.field("rho"))


def test_snapshot_refuses_a_non_finite_state(tmp_path):
    sim = setup(make_sim(mhd=False))
    rho = sim.field("rho")
    rho[5, 7] = np.nan
    sim.set_primitive(rho=rho)
    assert not np.all(np.isfinite(sim.field("rho")))
    with pytest.raises(NonFiniteStateError, match="rho"):
        write_snapshot(tmp_path / "bad.h5", sim, UnitSystem(), provenance())
    with pytest.raises(NonFiniteStateError):
        write_checkpoint(tmp_path / checkpoint_name(0), sim, {})
    assert list(tmp_path.iterdir()) == []        # nothing written, no temporary left


def test_snapshot_replaces_atomically_and_keeps_old_file_on_failure(tmp_path):
    sim = setup(make_sim(mhd=False))
    path = write_snapshot(tmp_path / "s.h5", sim, UnitSystem(), provenance())
    before = path.read_bytes()
    with pytest.raises(Exception):
        write_snapshot(path, sim, UnitSystem(), provenance(),
                       extra_fields={"bad": (np.zeros(3), "pressure")})
    assert path.read_bytes() == before


# ------------------------------------------------------------------ XDMF
def check_xdmf(xdmf_path: Path, n1: int, n2: int, axes=("R", "z")) -> ET.Element:
    # XDMF 3 model (xdmf.org): 2DRectMesh topology dimensions are node counts,
    # slowest axis first; VXVY geometry lists x then y node coordinates; cell-centred
    # attributes have one value per cell
    root, refs = h5_refs(xdmf_path)
    assert refs
    for fname, dset, dims in refs:
        with h5py.File(fname, "r") as f:
            assert dset in f, (fname, dset)
            assert f[dset].shape == dims
    for grid in root.iter("Grid"):
        if grid.get("GridType") == "Collection":
            continue
        topo = grid.find("Topology")
        assert topo.get("TopologyType") == "2DRectMesh"
        assert tuple(int(d) for d in topo.get("Dimensions").split()) == (n2 + 1, n1 + 1)
        geo = grid.find("Geometry")
        assert geo.get("GeometryType") == "VXVY"
        vx, vy = geo.findall("DataItem")
        assert vx.get("Dimensions") == str(n1 + 1) and vy.get("Dimensions") == str(n2 + 1)
        assert vx.text.endswith(f"/grid/{axes[0]}_edges")
        assert vy.text.endswith(f"/grid/{axes[1]}_edges")
        atts = grid.findall("Attribute")
        assert atts
        for att in atts:
            assert att.get("Center") == "Cell"
            assert att.find("DataItem").get("Dimensions") == f"{n2} {n1}"
    return root


def test_xdmf_sidecar_and_series_point_at_existing_datasets(tmp_path):
    sim = setup(make_sim(mhd=True))
    out = tmp_path / "out"
    out.mkdir()
    paths, times = [], []
    for k in range(3):
        paths.append(write_snapshot(out / f"snapshot_{k:04d}.h5", sim, UnitSystem(),
                                    provenance()))
        times.append(sim.t)
        sim.step()
    for p in paths:
        root = check_xdmf(p.with_suffix(".xdmf"), 16, 24)
        names = {a.get("Name") for a in root.iter("Attribute")}
        with h5py.File(p, "r") as f:
            assert names == set(f["fields"])
    # the series lives one folder up: paths must be relative to it
    series = write_series(tmp_path, list(reversed(paths)))
    root = check_xdmf(series, 16, 24)
    coll = root.find("Domain/Grid")
    assert coll.get("GridType") == "Collection" and coll.get("CollectionType") == "Temporal"
    grids = coll.findall("Grid")
    assert [float(g.find("Time").get("Value")) for g in grids] == times
    assert all(not Path(it.text.split(":")[0]).is_absolute() for it in root.iter("DataItem"))
    assert grids[0].find("Attribute/DataItem").text.startswith("out/snapshot_0000.h5:/fields/")


def test_cartesian_isothermal_snapshot_with_scalar(tmp_path):
    from wind2d import Isothermal
    sim = Simulation("cartesian", (0.0, 2.0, 12), (0.0, 1.0, 6),
                     {"x_low": "periodic", "x_high": "periodic", "y_low": "periodic",
                      "y_high": "periodic"}, eos=Isothermal(0.5), scalars=("dye",))
    sim.set_primitive(rho=lambda x, y: 1.0 + 0.1 * np.sin(np.pi * x), vx=0.2,
                      dye=lambda x, y: (x < 1.0).astype(float))
    sim.step()
    path = write_snapshot(tmp_path / "c.h5", sim, UnitSystem(), provenance())
    snap = read_snapshot(path)
    assert snap.axis_names == ("x", "y") and "magnetic_pressure" not in snap.fields
    assert list(snap.fields)[:6] == ["rho", "vx", "vy", "vz", "p", "dye"]
    assert snap.units["dye"] == "" and snap.field("dye", physical=True).unit == u.one
    # isothermal: p / rho = c_s^2 everywhere (definition)
    assert np.allclose(snap.field("temperature"), 0.25, rtol=1e-12)
    check_xdmf(path.with_suffix(".xdmf"), 12, 6, axes=("x", "y"))


# ------------------------------------------------------------------ checkpoints
@pytest.mark.parametrize("mhd", [False, True])
def test_checkpoint_restart_is_bitwise(tmp_path, mhd):
    # a restart must reproduce the uninterrupted run exactly (common practice)
    ref = setup(make_sim(mhd))
    for _ in range(8):
        ref.step()
    run = setup(make_sim(mhd))
    for _ in range(3):
        run.step()
    extra = {"next_snapshot_time": 0.5, "snapshot_counter": 2, "problem_text": "x: 1\n",
             "wall": {"started": "2025-01-01T00:00:00+00:00"}}
    path = write_checkpoint(tmp_path / checkpoint_name(run.nstep), run, extra)
    del run
    data = read_checkpoint(path)
    assert data["extra"] == extra
    fresh = make_sim(mhd)              # built bare: the state comes from the file only
    restore(fresh, data)
    assert fresh.nstep == 3
    for _ in range(5):
        fresh.step()
    a, b = ref.export_state(), fresh.export_state()
    keys = ["U", "b1", "b2"] if mhd else ["U"]
    for k in keys:
        assert np.array_equal(a[k], b[k]), k
    assert a["t"] == b["t"] and a["nstep"] == b["nstep"] and a["dt_last"] == b["dt_last"]
    assert np.array_equal(a["counters"], b["counters"])


def test_restore_refuses_a_different_grid(tmp_path):
    sim = setup(make_sim(mhd=False))
    data = read_checkpoint(write_checkpoint(tmp_path / checkpoint_name(0), sim, {}))
    other = Simulation("cylindrical", (0.0, 2.0, 16), (-1.0, 1.0, 24), CYL_EDGES)
    with pytest.raises(CheckpointError, match="edges"):
        restore(other, data)
    with pytest.raises(CheckpointError, match="mhd"):
        restore(make_sim(mhd=True), data)


def _write_series_of_checkpoints(folder: Path, steps):
    sim = setup(make_sim(mhd=True))
    paths = []
    for s in steps:
        while sim.nstep < s:
            sim.step()
        paths.append(write_checkpoint(folder / checkpoint_name(s), sim, {"step": s}))
    return paths


def test_corrupted_checkpoints_are_detected_and_skipped(tmp_path):
    p1, p2, p3 = _write_series_of_checkpoints(tmp_path, [1, 2, 3])
    # truncated newest
    raw = p3.read_bytes()
    p3.write_bytes(raw[: len(raw) // 2])
    with pytest.raises(CheckpointError, match=p3.name):
        read_checkpoint(p3)
    # one flipped byte inside the conserved-variable array of the second
    with h5py.File(p2, "r") as f:
        off = f["arrays/U"].id.get_offset()
    raw = bytearray(p2.read_bytes())
    raw[off + 1000] ^= 0x01
    p2.write_bytes(bytes(raw))
    with pytest.raises(CheckpointError, match=p2.name):
        read_checkpoint(p2)
    path, data, skipped = find_latest_valid(tmp_path)
    assert path == p1 and data["extra"] == {"step": 1} and data["state"]["nstep"] == 1
    assert len(skipped) == 2 and p3.name in skipped[0] and p2.name in skipped[1]
    # an unrelated file and a non-checkpoint name are not considered
    (tmp_path / "checkpoint_00000009.h5").write_bytes(b"not hdf5")
    (tmp_path / "notes.txt").write_text("x")
    path, _, skipped = find_latest_valid(tmp_path)
    assert path == p1 and len(skipped) == 3
    p1.unlink()
    with pytest.raises(CheckpointError, match="no valid checkpoint"):
        find_latest_valid(tmp_path)


def test_any_single_flipped_byte_is_caught_or_harmless(tmp_path):
    # a restart must never use silently altered data: for flips spread over the whole
    # file, reading either fails with CheckpointError or returns the original content
    (p,) = _write_series_of_checkpoints(tmp_path, [2])
    good = read_checkpoint(p)
    raw = p.read_bytes()
    rng = np.random.default_rng(7)
    positions = np.unique(np.concatenate([np.arange(0, 600, 7),
                                          rng.integers(0, len(raw), 150)]))
    caught = 0
    for pos in positions:
        bad = bytearray(raw)
        bad[pos] ^= 0x10
        p.write_bytes(bytes(bad))
        try:
            data = read_checkpoint(p)
        except CheckpointError:
            caught += 1
            continue
        for k in ("U", "b1", "b2", "counters"):
            assert np.array_equal(data["state"][k], good["state"][k])
        assert data["extra"] == good["extra"] and data["state"]["t"] == good["state"]["t"]
    assert caught > len(positions) // 2


def test_prune_keeps_the_newest_valid(tmp_path):
    paths = _write_series_of_checkpoints(tmp_path, [1, 2, 3, 4, 5])
    removed = prune(tmp_path, keep=2)
    assert sorted(removed) == paths[:3]
    assert [p for _, p in list_checkpoints(tmp_path)] == [paths[4], paths[3]]
    # an invalid newest file is left alone and does not count as one of the kept
    raw = paths[4].read_bytes()
    paths[4].write_bytes(raw[:-100])
    assert prune(tmp_path, keep=1) == []
    assert paths[3].exists() and paths[4].exists()
    assert prune(tmp_path, keep=5) == []          # fewer valid than keep: nothing deleted
    with pytest.raises(ValueError):
        prune(tmp_path, keep=0)


# ------------------------------------------------------------------ history
def test_history_resume_drops_rows_after_restart(tmp_path):
    path = tmp_path / "history.csv"
    cols = [("time", "Myr"), ("mass", "Msun"), ("step", "")]
    with History(path, cols) as h:
        for k in range(6):
            h.append({"time": 0.1 * k, "mass": 1e6 + k, "step": 10 * k})
    with pytest.raises(FileExistsError):
        History(path, cols)
    # a crash left half a row
    with open(path, "a") as fh:
        fh.write("0.6000000000000001,1000")
    t_restart = 0.1 * 3
    with History.resume(path, cols, t_restart) as h:
        h.append({"time": 0.1 * 4, "mass": -1.0, "step": 40})
    data = read_history(path)
    assert np.array_equal(data["time"], [0.0, 0.1, 0.2, 0.1 * 3, 0.1 * 4])
    assert np.array_equal(data["mass"], [1e6, 1e6 + 1, 1e6 + 2, 1e6 + 3, -1.0])
    assert data["step"].dtype == np.int64 and list(data["step"]) == [0, 10, 20, 30, 40]
    assert read_history_units(path) == {"time": "Myr", "mass": "Msun", "step": ""}
    # readable by numpy's generic CSV reader with the documented options
    arr = np.genfromtxt(path, delimiter=",", skip_header=2)
    assert arr.shape == (5, 3) and np.array_equal(arr[:, 1], data["mass"])
    with pytest.raises(ValueError):
        History.resume(path, [("time", "Myr"), ("energy", "erg")], 1.0)
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]


# ------------------------------------------------------------------ provenance
def test_provenance_record():
    prov = provenance("a: 1\n", nranks=4)
    assert prov["problem_text"] == "a: 1\n" and prov["nranks"] == 4
    import wind2d
    assert prov["wind2d_version"] == wind2d.__version__
    assert prov["numpy"] == np.__version__ and prov["h5py"] == h5py.__version__
    started = dt.datetime.fromisoformat(prov["started"])    # ISO 8601
    assert started.utcoffset() == dt.timedelta(0)
    commit = prov["git_commit"]
    assert commit is None or (len(commit) == 40 and int(commit, 16) >= 0)
    json.dumps(prov)
    assert provenance(started="2025-01-01T00:00:00+00:00")["started"] == \
        "2025-01-01T00:00:00+00:00"
