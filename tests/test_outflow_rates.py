"""Outflow rates through surfaces, the exact budget of the domain edges, and the
analysis subcommands (summary, compare, profile).

References
----------
* Flux densities of ideal MHD (Heaviside-Lorentz field): mass rho v, normal
  momentum rho v_n^2, kinetic (1/2) rho v^2 v, enthalpy gamma/(gamma-1) p v and
  Poynting |B|^2 v - (v.B) B (common practice; e.g. the conservative form of
  the ideal-MHD equations in any MHD text).
* Steady spherical outflow at constant speed: continuity gives rho r^2 v =
  const, so the mass rate through every sphere is 4 pi r^2 rho v (common
  practice); the area of a sphere 4 pi r0^2 (per radian 2 r0^2).
* Mass (and energy) conservation of a finite-volume scheme: the change of the
  content equals minus the net flux through the boundary (common practice).
"""
import json
import math
import textwrap

import numpy as np
import pytest

from wind2d import Simulation
from wind2d.analysis.loading import loading_factors, time_mean
from wind2d.analysis.outflow import snap_to_face
from wind2d.cli import main
from wind2d.errors import ParameterError
from wind2d.io import list_checkpoints, read_checkpoint, read_history, read_snapshot
from wind2d.physics import Module, Variable
from wind2d.physics.hold import Hold
from wind2d.physics.outflow_rates import OutflowRates

GAMMA = 5.0 / 3.0
OPEN = {"R_low": "axis", "R_high": "outflow", "z_low": "outflow", "z_high": "outflow"}


def _rates(mod, sim):
    r = mod.rates(sim)
    return {name: {c: (r[k, 0, ci], r[k, 1, ci]) for c, ci in zip(mod.components, mod.cidx)}
            for k, name in enumerate(mod.names)}


# ---------------------------------------------------------------- uniform flow
def test_uniform_flow_through_planes_cylindrical():
    """A uniform flow along z with B = (0, Bz, Bphi): every component through the
    planes z = +-h (and a plane limited to R < R_max) is exact."""
    mod = OutflowRates(surfaces=[{"shape": "plane", "height": 0.33, "name": "both"},
                                 {"shape": "plane", "height": 0.5, "sides": "upper",
                                  "R_max": 0.52, "name": "inner"}])
    sim = Simulation("cylindrical", (0.0, 1.0, 16, 1.05), (-1.0, 1.0, 32), OPEN, mhd=True, riemann="hlld",
                     modules=[mod])
    rho, p, v, bz, bphi = 1.3, 0.7, 0.4, 0.6, 0.25
    sim.set_primitive(rho=rho, p=p, vz=v, Bphi=bphi)
    sim.set_field(b2=bz)
    r = _rates(mod, sim)
    R_out = sim.mesh.x1f[sim.mesh.ie]
    k = snap_to_face(sim.global_mesh.x1f[2:-2], 0.52)
    R_in = sim.global_mesh.x1f[2 + k]
    for name, area, two in (("both", R_out ** 2 / 2, True), ("inner", R_in ** 2 / 2, False)):
        # outward part: the upper plane (v_n = +v); net: upper - lower (v_n = -v)
        out = {"mass": rho * v, "momentum": rho * v * v, "kinetic": 0.5 * rho * v ** 3,
               "thermal": GAMMA / (GAMMA - 1) * p * v,
               "magnetic": (bz ** 2 + bphi ** 2) * v - v * bz * bz}
        out["energy"] = out["kinetic"] + out["thermal"] + out["magnetic"]
        for c, f in out.items():
            net = (2 * f if c == "momentum" else 0.0) if two else f
            assert r[name][c][1] == pytest.approx(f * area, rel=1e-13), (name, c)
            assert r[name][c][0] == pytest.approx(net * area, rel=1e-13,
                                                  abs=1e-14 * f * area), (name, c)
    assert "cr" not in r["both"]


class _CosmicRayFields(Module):
    """A stand-in owning E_c and the three flux components (no transport)."""
    variables = (Variable("Ec", "energy_density"), Variable("FcR", "energy_flux", 1),
                 Variable("Fcz", "energy_flux", 2), Variable("Fcphi", "energy_flux", 3))


def test_cosmic_ray_flux_through_a_plane_and_a_sphere():
    """The cr component is F_c . n: a uniform F_c = (0, F) through the planes
    (outward on the upper one only) and through a sphere (outward on the upper
    hemisphere: F pi r0^2, per radian F r0^2 / 2)."""
    mod = OutflowRates(surfaces=[{"shape": "plane", "height": 0.4},
                                 {"shape": "sphere", "radius": 0.5}])
    sim = Simulation("cylindrical", (0.0, 1.0, 32), (-1.0, 1.0, 64), OPEN,
                     modules=[_CosmicRayFields(None, None), mod])
    sim.set_primitive(rho=1.0, p=1.0, Ec=2.0, Fcz=0.3)
    r = _rates(mod, sim)
    assert "cr" in mod.components and "cr_energy_left_domain" in mod.tallies
    assert r["plane0"]["cr"][1] == pytest.approx(0.3 * 0.5, rel=1e-13)
    assert r["plane0"]["cr"][0] == pytest.approx(0.0, abs=1e-15)
    assert r["sphere1"]["cr"][1] == pytest.approx(0.3 * 0.25 / 2, rel=2e-3)
    assert r["sphere1"]["energy"][1] == pytest.approx(r["sphere1"]["cr"][1], rel=1e-13)


def test_uniform_flow_cartesian_plane_and_lines():
    """Cartesian (x, y): the lines y = +-h and x = +-a, per unit length along z."""
    mod = OutflowRates(surfaces=[{"shape": "plane", "height": 0.25},
                                 {"shape": "cylinder", "radius": 0.5, "half_height": 0.3}])
    sim = Simulation("cartesian", (-1.0, 1.0, 20), (-1.0, 1.0, 24),
                     {"x_low": "outflow", "x_high": "outflow", "y_low": "outflow",
                      "y_high": "outflow"}, modules=[mod])
    sim.set_primitive(rho=2.0, p=1.0, vx=0.3, vy=-0.5)
    r = _rates(mod, sim)
    # planes y = +-0.25 (length 2): outward only on the lower one (v_y < 0)
    assert r["plane0"]["mass"][1] == pytest.approx(2.0 * 0.5 * 2.0, rel=1e-13)
    assert r["plane0"]["mass"][0] == pytest.approx(0.0, abs=1e-14)
    # lines x = +-0.5 over the rows with |y| <= 0.3
    yc = sim.mesh.x2c[2:-2]
    length = np.sum(sim.mesh.dx2[2:-2][np.abs(yc) <= 0.3])
    assert r["cylinder1"]["mass"][1] == pytest.approx(2.0 * 0.3 * length, rel=1e-13)
    assert r["cylinder1"]["thermal"][1] == pytest.approx(2.5 * 1.0 * 0.3 * length, rel=1e-13)


def test_radial_flow_through_a_cylinder_converges():
    """Incompressible radial flow v_R = c/R: the mass rate through R = R0 is
    rho c H per radian for every R0 (continuity); second order in the cell size."""
    errs = []
    for n in (16, 32, 64):
        mod = OutflowRates(surfaces=[{"shape": "cylinder", "radius": 0.55,
                                      "half_height": 0.5}])
        sim = Simulation("cylindrical", (0.0, 1.0, n), (-1.0, 1.0, 2 * n), OPEN,
                         modules=[mod])
        sim.set_primitive(rho=1.0, p=1.0, vR=lambda R, z: 0.1 / R)
        gm = sim.global_mesh
        zc = gm.x2c[2:-2]
        H = np.sum(gm.dx2[2:-2][np.abs(zc) <= 0.5])
        errs.append(abs(mod.rates(sim)[0, 0, 0] / (0.1 * H) - 1.0))
    assert errs[-1] < 2e-3
    assert math.log2(errs[0] / errs[1]) > 1.8 and math.log2(errs[1] / errs[2]) > 1.8


# ---------------------------------------------------------------- spherical flow
def _spherical(sim, v0=0.7, rho0=0.2, r0=0.6, cold=1.0):
    r = lambda R, z: np.hypot(R, z)
    sim.set_primitive(rho=lambda R, z: rho0 * (r0 / r(R, z)) ** 2,
                      p=lambda R, z: cold * 0.1 * (r0 / r(R, z)) ** 3,
                      vR=lambda R, z: v0 * R / r(R, z), vz=lambda R, z: v0 * z / r(R, z))


def test_steady_spherical_flow_through_a_sphere():
    """rho = rho0 (r0/r)^2, v = v0 r-hat: every rate through r = r0 (whole 4 pi)
    within discretisation error, converging at second order."""
    r0, v0, rho0 = 0.6, 0.7, 0.2
    p0 = 0.1
    exact = {"mass": rho0 * v0, "momentum": rho0 * v0 ** 2, "kinetic": 0.5 * rho0 * v0 ** 3,
             "thermal": GAMMA / (GAMMA - 1) * p0 * v0}
    errs = []
    for n in (16, 32, 64):
        mod = OutflowRates(surfaces=[{"shape": "sphere", "radius": r0}])
        sim = Simulation("cylindrical", (0.0, 1.0, n), (-1.0, 1.0, 2 * n), OPEN,
                         modules=[mod])
        _spherical(sim, v0, rho0, r0)
        area = sum(p.area.sum() for p in mod.parts[0])
        assert area == pytest.approx(2 * r0 ** 2, rel=1e-14)     # per radian: 4 pi r0^2 / 2 pi
        r = _rates(mod, sim)["sphere0"]
        e = max(abs(r[c][0] / (f * 2 * r0 ** 2) - 1) for c, f in exact.items())
        assert all(r[c][0] == r[c][1] for c in exact)           # all outward
        errs.append(e)
    assert errs[-1] < 1e-3
    assert math.log2(errs[0] / errs[1]) > 1.5 and math.log2(errs[1] / errs[2]) > 1.8


def test_steady_circular_flow_cartesian():
    """On a Cartesian grid the 'sphere' is a circle: rho = rho0 r0/r, v = v0 r-hat
    carries 2 pi r0 rho0 v0 per unit length through every circle."""
    mod = OutflowRates(surfaces=[{"shape": "sphere", "radius": 0.5}])
    sim = Simulation("cartesian", (-1.0, 1.0, 64), (-1.0, 1.0, 64),
                     {"x_low": "outflow", "x_high": "outflow", "y_low": "outflow",
                      "y_high": "outflow"}, modules=[mod])
    r = lambda x, y: np.hypot(x, y)
    sim.set_primitive(rho=lambda x, y: 0.3 * 0.5 / r(x, y), p=1.0,
                      vx=lambda x, y: 0.8 * x / r(x, y), vy=lambda x, y: 0.8 * y / r(x, y))
    assert sum(p.area.sum() for p in mod.parts[0]) == pytest.approx(2 * math.pi * 0.5,
                                                                     rel=1e-14)
    assert mod.rates(sim)[0, 0, 0] == pytest.approx(2 * math.pi * 0.5 * 0.3 * 0.8, rel=2e-3)


def test_spherical_wind_fed_by_a_held_region():
    """A cold constant-speed wind fed by a held sphere, run for a while: the rate
    through r0 stays at the analytic 4 pi r0^2 rho v within a few per cent (first
    order near the held region's staircase edge) and nothing flows inward."""
    r0, v0, rho0 = 0.6, 1.0, 0.2
    hold = Hold(regions=[{"shape": "sphere", "radius": 0.2, "state": "initial"}])
    mod = OutflowRates(surfaces=[{"shape": "sphere", "radius": r0},
                                 {"shape": "sphere", "radius": 0.8}])
    sim = Simulation("cylindrical", (0.0, 1.0, 32), (-1.0, 1.0, 64), OPEN,
                     modules=[hold, mod])
    _spherical(sim, v0, rho0, r0, cold=1e-3)
    hold.initialise(sim)
    sim.advance(0.5)
    r = mod.rates(sim)
    for k in range(2):              # spheres r = r0 and r = 0.8
        ref = rho0 * r0 ** 2 * v0 * 2          # per radian, the same through every sphere
        assert r[k, 0, 0] == pytest.approx(ref, rel=0.03)
        assert r[k, 0, 0] == pytest.approx(r[k, 1, 0], rel=1e-3)


# ---------------------------------------------------------------- edge budget
CHANNEL = """
title: magnetised blast blown out of a channel with an inflow
grid:
  geometry: cylindrical
  R: {from: 0, to: 1, cells: 20, stretch: 1.03}
  z: {from: -1, to: 1, cells: 36}
edges:
  R_low: axis
  R_high: outflow
  z_low: {kind: fixed, state: {rho: 1.0, p: 0.2, vz: 0.8, Bz: 0.3}}
  z_high: outflow
gas: {magnetised: true}
setup: {kind: blast, energy: 2.0, radius: 0.2, ambient: {rho: 1.0, p: 0.2, vz: 0.8, Bz: 0.3}}
stop: {time: 0.6, max_steps: 400}
outputs: {history: {every: 0.05}, checkpoints: {every: 0.3}}
"""


def test_mass_and_energy_close_through_the_edges(tmp_path):
    """Change of mass (energy) in the domain = -(net amount through the edges),
    summed from the second-stage face fluxes, to 1e-10 relative."""
    src = tmp_path / "p.yaml"
    src.write_text(textwrap.dedent(CHANNEL) + "physics:\n  outflow_rates: {}\n")
    out = tmp_path / "run"
    assert main(["run", str(src), "--out", str(out), "--quiet"]) == 0
    h = read_history(out / "history.csv")
    assert h["step"][-1] > 30
    assert h["fallback_cells"][-1] == h["density_floor_cells"][-1] == \
        h["pressure_floor_cells"][-1] == 0          # no floor changed the content
    dm = h["mass"] - h["mass"][0]
    de = h["energy"] - h["energy"][0]
    left_m, left_e = h["mass_left_domain"], h["energy_left_domain"]
    assert abs(dm[-1]) > 0.05 * h["mass"][0]       # a real exchange through the edges
    assert np.allclose(dm, -left_m, rtol=0, atol=1e-10 * np.abs(left_m).max())
    assert np.allclose(de, -left_e, rtol=0, atol=1e-10 * np.abs(left_e).max())


def test_the_module_changes_nothing(tmp_path):
    """A run with the diagnostic is bitwise identical to one without it."""
    bare = tmp_path / "bare.yaml"
    bare.write_text(textwrap.dedent(CHANNEL).replace("max_steps: 400", "max_steps: 25"))
    diag = tmp_path / "diag.yaml"
    diag.write_text(bare.read_text() + "physics:\n  outflow_rates: {surfaces: [{shape: sphere, "
                    "radius: 0.5}, {shape: plane, height: 0.7}, {shape: cylinder, "
                    "radius: 0.6}]}\n")
    for f, d in ((bare, "a"), (diag, "b")):
        assert main(["run", str(f), "--out", str(tmp_path / d), "--quiet"]) == 0
    a, b = (read_checkpoint(list_checkpoints(tmp_path / d / "checkpoints")[0][1])["state"]
            for d in ("a", "b"))
    assert a["nstep"] == b["nstep"] == 25
    assert np.array_equal(a["U"], b["U"]) and np.array_equal(a["b1"], b["b1"])


def test_bad_surfaces_are_clear_errors():
    def build(surfaces):
        mod = OutflowRates(surfaces=surfaces)
        Simulation("cylindrical", (0.0, 1.0, 8), (-1.0, 1.0, 8), OPEN, modules=[mod])
    with pytest.raises(ParameterError, match="outside the grid"):
        build([{"shape": "plane", "height": 3.0}])
    with pytest.raises(ParameterError, match="does not cross the grid"):
        build([{"shape": "sphere", "radius": 5.0}])
    with pytest.raises(ParameterError, match="used by another surface"):
        build([{"shape": "sphere", "radius": 0.5, "name": "a"},
               {"shape": "plane", "height": 0.5, "name": "a"}])
    with pytest.raises(ValueError, match="sides"):
        build([{"shape": "plane", "height": 0.0}])


# ---------------------------------------------------------------- subcommands
WIND = """
title: small star-forming disk for the analysis commands
units: {length: pc, time: kyr, mass: Msun}
grid:
  geometry: cylindrical
  R: {from: 0 pc, to: 300 pc, cells: 12}
  z: {from: -300 pc, to: 300 pc, cells: 24}
edges: {R_low: axis, R_high: outflow, z_low: outflow, z_high: outflow}
setup: {kind: uniform, state: {rho: 1 cm**-3, T: 1e4 K}}
physics:
  injection:
    region: {shape: disk, radius: 60 pc, half_height: 40 pc}
    star_formation: {kind: constant, rate: RATE}
    cr_fraction: 0
    mass_return: 0.1
  outflow_rates:
    surfaces: [{shape: plane, height: 150 pc, name: z150}, {shape: sphere, radius: 200 pc,
               name: r200}]
stop: {time: 60 kyr}
outputs: {history: {every: 5 kyr}, snapshots: {every: 30 kyr}}
"""


@pytest.fixture(scope="module")
def two_runs(tmp_path_factory):
    base = tmp_path_factory.mktemp("wind")
    runs = []
    for k, rate in enumerate(("0.05 Msun/yr", "0.1 Msun/yr")):
        src = base / f"w{k}.yaml"
        src.write_text(textwrap.dedent(WIND).replace("RATE", rate))
        out = base / f"run{k}"
        assert main(["run", str(src), "--out", str(out), "--quiet"]) == 0
        runs.append(out)
    return runs


def test_summary_loading_factors(two_runs, capsys):
    run = two_runs[1]
    assert main(["summary", str(run), "--from", "20 kyr", "--to", "0.06 Myr", "--json"]) == 0
    res = json.loads(capsys.readouterr().out)
    h = read_history(run / "history.csv")
    sel = (h["time"] >= 20.0 - 1e-9) & (h["time"] <= 60.0 + 1e-9)
    t = h["time"][sel]
    assert res["window"] == [pytest.approx(20.0), pytest.approx(60.0)]
    assert res["star_formation_rate"] == pytest.approx(0.1, rel=1e-10)       # Msun/yr
    # injected power: 1e51 erg per 100 Msun x 0.1 Msun/yr (thermal share 1), erg/s
    power = 1e49 * 0.1 / 3.15576e7
    assert res["injected_power"] == pytest.approx(power, rel=1e-3)
    # mass loading through the sphere: 2 pi x time-mean of the per-radian rate / SFR
    mdot = 2 * math.pi * time_mean(t, h["r200_mass_out"][sel]) * 1e3     # Msun/kyr -> /yr
    row = res["surfaces"]["r200"]["mass"]
    assert row["out"] == pytest.approx(mdot / 1e6, rel=1e-9)
    assert row["loading_out"] == pytest.approx(row["out"] / 0.1, rel=1e-9)
    assert res["surfaces"]["z150"]["thermal"]["loading_out"] == pytest.approx(
        res["surfaces"]["z150"]["thermal"]["out"] / res["injected_power"], rel=1e-12)
    assert res["surfaces"]["r200"]["energy"]["out"] > 0
    # the table
    assert main(["summary", str(run)]) == 0
    text = capsys.readouterr().out
    assert "loading out" in text and "Msun / yr" in text and "erg / s" in text and "r200" in text
    assert loading_factors(run)["rows"] == len(h["time"])


def test_compare_and_profile(two_runs, tmp_path, capsys):
    fig = tmp_path / "cmp.png"
    assert main(["compare", *map(str, two_runs), "--column", "injected_thermal_energy",
                 "--column", "z150_energy_out", "--profile", "p", "--along", "r",
                 "--cone", "40", "--out", str(fig)]) == 0
    assert fig.stat().st_size > 10000 and fig.read_bytes()[:4] == b"\x89PNG"
    png, csv = tmp_path / "prof.png", tmp_path / "prof.csv"
    assert main(["profile", str(two_runs[0]), "--field", "rho", "--along", "z",
                 "--cylinder", "50 pc", "--out", str(png), "--csv", str(csv)]) == 0
    assert png.stat().st_size > 5000
    data = np.genfromtxt(csv, delimiter=",", skip_header=1)
    assert csv.read_text().splitlines()[0] == "z [pc],rho [g cm-3]"
    # the same average computed here: volume-weighted over R <= 50 pc, row by row
    snap = read_snapshot(sorted((two_runs[0] / "snapshots").glob("*.h5"))[-1])
    e1, e2 = snap.edges
    cols = snap.centres[0] <= 50.0
    V = np.outer(np.diff(e2), 0.5 * (e1[1:] ** 2 - e1[:-1] ** 2))[:, cols]
    rho = snap.field("rho")[:, cols] * snap.to_cgs["rho"]
    assert np.allclose(data[:, 0], snap.centres[1], rtol=1e-12)
    assert np.allclose(data[:, 1], np.sum(V * rho, axis=1) / np.sum(V, axis=1), rtol=1e-12)
    capsys.readouterr()
    # clear errors
    assert main(["compare", str(two_runs[0]), "--column", "mass", "--out",
                 str(tmp_path / "x.png")]) == 2
    assert "two or more" in capsys.readouterr().err
    assert main(["compare", *map(str, two_runs), "--column", "nonsense"]) == 2
    assert "--column 'nonsense'" in capsys.readouterr().err
    assert main(["profile", str(two_runs[0]), "--field", "rho", "--along", "r",
                 "--cylinder", "1 kpc"]) == 2
    assert "--cone" in capsys.readouterr().err
