"""The star-formation injection module: exact budgets and the configured split.

References
----------
* Energy released per unit stellar mass: 1e51 erg per 100 Msun (one
  core-collapse supernova of ~1e51 erg per ~100 Msun of stars formed; common
  practice), converted with astropy.
* Budget of a closed box (reflecting walls, no fluxes through them): the
  total energy changes only by what a source adds, E(t) - E(0) = injected
  (conservation of energy; common practice); likewise the mass.
* Integrals of the star-formation histories are checked against
  scipy.integrate.quad (piecewise-linear table, exponential burst).
"""
import math
import shutil
import subprocess
import sys
import textwrap
from pathlib import Path
from types import SimpleNamespace

import astropy.units as u
import numpy as np
import pytest
from scipy.integrate import quad

from wind2d import Simulation
from wind2d.cli import main
from wind2d.errors import ParameterError
from wind2d.io import list_checkpoints, read_checkpoint, read_history
from wind2d.physics import Module, Variable, available
from wind2d.physics.injection import Injection
from wind2d.problem.units import UnitSystem

US = UnitSystem("pc", "kyr", "Msun")
EPS_DEFAULT = (1e51 * u.erg / (100 * u.Msun)).to(u.pc ** 2 / u.kyr ** 2).value  # code units
SFR_CODE = (0.02 * u.Msun / u.yr).to(u.Msun / u.kyr).value

BOX = """
title: closed box with star formation
units: {length: pc, time: kyr, mass: Msun}
grid:
  geometry: cylindrical
  R: {from: 0 pc, to: 400 pc, cells: 16, stretch: 1.03}
  z: {from: -400 pc, to: 400 pc, cells: 24}
edges: {R_low: axis, R_high: reflecting, z_low: reflecting, z_high: reflecting}
gas: {gamma: 5/3}
setup:
  kind: uniform
  state: {rho: 1 cm**-3, T: 1e4 K, vphi: 20 km/s, vz: 5 km/s}
stop: {time: 40 kyr, max_steps: 400}
outputs: {history: {every: 4 kyr}, checkpoints: {every: 20 kyr}}
"""


def _write(tmp_path, text, name="p.yaml"):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text))
    return path


def _physics(injection: str, extra: str = "") -> str:
    return BOX + "physics:\n  injection:\n" + textwrap.indent(textwrap.dedent(injection), "    ") \
        + extra


def _params(mapping):
    return Injection.Params.model_validate(mapping, context={"units": US})


def _context(geometry="cylindrical"):
    return SimpleNamespace(units=US, geometry=geometry)


def _box_sim(modules, n1=12, n2=16):
    sim = Simulation("cylindrical", (0.0, 400.0, n1), (-400.0, 400.0, n2),
                     {"R_low": "axis", "R_high": "reflecting", "z_low": "reflecting",
                      "z_high": "reflecting"}, modules=modules)
    rho = US.code_value("1 cm**-3", "density", "rho")
    p = rho * US.code_value("1e4 K", "temperature", "T")
    sim.set_primitive(rho=rho, p=p, vphi=US.code_value("20 km/s", "velocity", "v"))
    for mod in sim.modules:
        mod.initialise(sim)
    return sim


# ---------------------------------------------------------------- constant rate
def test_constant_rate_budget_closes(tmp_path):
    """Thermal share and returned mass of a constant rate over a run: the tallies
    equal SFR x epsilon x t exactly, and the gas gained exactly that."""
    src = _write(tmp_path, _physics("""
        region: {shape: disk, radius: 100 pc, half_height: 60 pc, edge: tanh, edge_width: 20 pc}
        star_formation: {kind: constant, rate: 0.02 Msun/yr}
        cr_fraction: 0
        thermal_fraction: 0.7
        mass_return: 0.2
        """))
    out = tmp_path / "run"
    assert main(["run", str(src), "--out", str(out), "--quiet"]) == 0
    h = read_history(out / "history.csv")
    t = h["time"]
    assert len(t) >= 10 and t[-1] == pytest.approx(40.0)
    stars = SFR_CODE * t                                   # whole galaxy
    per = 1.0 / (2.0 * math.pi)                            # history: per radian
    # default energy per stellar mass, and the configured 70 % thermal share
    assert np.allclose(h["injected_thermal_energy"], 0.7 * EPS_DEFAULT * stars * per,
                       rtol=1e-10, atol=0)
    assert np.allclose(h["stars_formed"], stars * per, rtol=1e-10, atol=0)
    assert np.allclose(h["injected_mass"], 0.2 * stars * per, rtol=1e-10, atol=0)
    assert np.all(h["injected_cr_energy"] == 0.0)
    assert np.allclose(h["star_formation_rate"], SFR_CODE, rtol=1e-12)
    # the returned mass moves with the gas: its kinetic energy is counted
    assert h["injected_kinetic_energy"][-1] > 0
    # closed box: what the gas gained is exactly what was injected (round-off of the totals)
    de = h["energy"] - h["energy"][0]
    dm = h["mass"] - h["mass"][0]
    assert np.allclose(de, h["injected_thermal_energy"] + h["injected_kinetic_energy"],
                       rtol=0, atol=1e-13 * h["energy"][0])
    assert np.allclose(dm, h["injected_mass"], rtol=0, atol=1e-14 * h["mass"][0])
    assert h["injected_thermal_energy"][-1] > 1e-3 * h["energy"][0]     # not a trivial change
    # resumed from the middle: the budget continues (tallies are checkpointed)
    assert main(["resume", str(out), "--quiet", "--set", "stop.time=48 kyr"]) == 0
    h2 = read_history(out / "history.csv")
    assert h2["time"][-1] == pytest.approx(48.0)
    assert h2["injected_thermal_energy"][-1] == pytest.approx(
        0.7 * EPS_DEFAULT * SFR_CODE * 48.0 * per, rel=1e-10)


def test_returned_mass_keeps_the_gas_velocity():
    """Mass returned at the local velocity: momentum per mass unchanged in every cell,
    and the total energy rises by the thermal share plus the kinetic energy of the
    returned mass (cell by cell)."""
    inj = Injection(_params({"region": {"shape": "sphere", "radius": 150.0, "edge": "gaussian",
                                        "edge_width": 40.0},
                             "star_formation": {"kind": "constant", "rate": "200 Msun/yr"},
                             "cr_fraction": 0.0, "mass_return": 0.3}), _context())
    sim = _box_sim([inj])
    sim.set_primitive(vR=lambda R, z: 1e-3 * R, vz=lambda R, z: 2e-3 * z, vphi=0.02)
    m = sim.mesh
    U0 = sim.conserved()
    dt = 0.3
    inj.split_source(sim, dt)
    U1 = sim.conserved()
    for k in (1, 2, 3):
        assert np.allclose(U1[k] / U1[0], U0[k] / U0[0], rtol=1e-13, atol=1e-300)
    drho = U1[0] - U0[0]
    v2 = (U0[1] ** 2 + U0[2] ** 2 + U0[3] ** 2) / U0[0] ** 2
    _, e_th, _, dm = inj.step_amounts(0.0, dt)
    w = inj.wgt[m.js:m.je, m.is_:m.ie]
    # differences of the stored totals: round-off relative to the totals
    assert np.allclose(drho, dm * w, rtol=1e-12, atol=1e-15 * U0[0].max())
    assert drho.max() > 1e-3 * U0[0].max()
    assert np.allclose(U1[4] - U0[4], 0.5 * drho * v2 + e_th * w, rtol=1e-12,
                       atol=1e-15 * U0[4].max())
    V = m.cell_volumes()
    assert np.sum(V * drho) == pytest.approx(inj.tallies["injected_mass"], rel=1e-13)


# ---------------------------------------------------------------- cosmic-ray share
class _CosmicRayEnergy(Module):
    """A stand-in owning only an ``Ec`` density (no transport): receives the share."""
    variables = (Variable("Ec", "energy_density"),)


def test_cosmic_ray_share_goes_to_Ec():
    inj = Injection(_params({"region": {"shape": "disk", "radius": 80.0, "half_height": 40.0},
                             "star_formation": {"kind": "constant", "rate": "0.1 Msun/yr"}}),
                    _context())
    sim = _box_sim([inj, _CosmicRayEnergy(None, _context())])
    sim.advance(6.0)
    m = sim.mesh
    iE = sim.varmap.index["Ec"]
    per = 1.0 / (2.0 * math.pi)
    total = EPS_DEFAULT * (0.1 * u.Msun / u.yr).to(u.Msun / u.kyr).value * 6.0 * per
    # defaults: 10 % to cosmic rays, the rest (90 %) to the gas
    assert inj.tallies["injected_cr_energy"] == pytest.approx(0.1 * total, rel=1e-10)
    assert inj.tallies["injected_thermal_energy"] == pytest.approx(0.9 * total, rel=1e-10)
    ec = sim.state.U[iE, m.js:m.je, m.is_:m.ie]
    assert np.sum(ec * m.cell_volumes()) == pytest.approx(0.1 * total, rel=1e-12)
    # only inside the (sharp) disk
    R, z = m.centres()
    assert np.all(ec[(R > 80.0) | (np.abs(z) > 40.0)] == 0.0)
    assert np.all(ec[(R < 80.0) & (np.abs(z) < 40.0)] > 0.0)


@pytest.mark.skipif("cosmic_rays" not in available(), reason="the cosmic_rays module is "
                    "not in this build")
def test_cosmic_ray_share_with_the_cosmic_rays_module(tmp_path):
    """With the real cosmic_rays module (tightly coupled, no losses): the cosmic-ray
    tally is exact and gas + cosmic-ray energy grows by exactly what was injected."""
    src = _write(tmp_path, _physics("""
        region: {shape: sphere, radius: 120 pc, edge: tanh, edge_width: 30 pc}
        star_formation: {kind: constant, rate: 0.02 Msun/yr}
        cr_fraction: 0.25
        """, "  cosmic_rays: {max_speed: 3000 km/s, initial: {pressure_ratio: 0.5}}\n")
        .replace("max_steps: 400", "max_steps: 60"))
    out = tmp_path / "run"
    assert main(["run", str(src), "--out", str(out), "--quiet"]) == 0
    h = read_history(out / "history.csv")
    stars = 2.0 * math.pi * h["stars_formed"]
    t = h["time"]
    assert np.allclose(stars, SFR_CODE * t, rtol=1e-10, atol=0)
    per = 1.0 / (2.0 * math.pi)
    assert np.allclose(h["injected_cr_energy"], 0.25 * EPS_DEFAULT * stars * per, rtol=1e-10,
                       atol=0)
    assert np.allclose(h["injected_thermal_energy"], 0.75 * EPS_DEFAULT * stars * per,
                       rtol=1e-10, atol=0)
    tot = h["energy"] + h["cr_energy"]
    gained = h["injected_thermal_energy"] + h["injected_cr_energy"] \
        + h["injected_kinetic_energy"] + h["cr_floor_energy"]
    assert np.allclose(tot - tot[0], gained, rtol=0, atol=1e-11 * tot[0])


# ---------------------------------------------------------------- time profiles
TABLE = {"kind": "table", "times": ["0 kyr", "2 kyr", "3.5 kyr", "7 kyr"],
         "rates": ["0 Msun/yr", "0.3 Msun/yr", "0.05 Msun/yr", "0.2 Msun/yr"]}
BURST = {"kind": "burst", "peak": "0.4 Msun/yr", "start": "1.5 kyr", "decay_time": "2 kyr",
         "base": "0.01 Msun/yr"}


def _reference(spec, a, b):
    """int_a^b SFR dt by adaptive quadrature (scipy), code units."""
    tab = {"table": lambda t: np.interp(t, [0, 2, 3.5, 7], np.array([0, 0.3, 0.05, 0.2])),
           "burst": lambda t: 0.01 + (0.4 * math.exp(-(t - 1.5) / 2.0) if t >= 1.5 else 0.0)}
    f = tab[spec["kind"]]
    pts = [p for p in (0.0, 2.0, 3.5, 7.0, 1.5) if a < p < b]
    val, _ = quad(lambda t: f(t), a, b, points=pts or None, epsabs=0, epsrel=1e-13, limit=200)
    return val * (u.Msun / u.yr).to(u.Msun / u.kyr)


@pytest.mark.parametrize("spec", [TABLE, BURST], ids=["table", "burst"])
def test_time_profiles_integrate_exactly(spec):
    """Uneven steps that straddle the table points and the burst start: the stars
    formed (and so the energy) equal the exact integral at every step."""
    inj = Injection(_params({"region": {"shape": "disk", "radius": 100.0, "half_height": 50.0},
                             "star_formation": spec, "cr_fraction": 0.0}), _context())
    sim = _box_sim([inj], 8, 8)
    rng = np.random.default_rng(7)
    per = 1.0 / (2.0 * math.pi)
    while sim.t < 9.0:
        dt = min(float(rng.uniform(0.05, 0.6)), 0.9 * sim.max_dt())
        sim.step(dt)
        ref = _reference(spec, 0.0, sim.t)
        assert 2.0 * math.pi * inj.tallies["stars_formed"] == pytest.approx(ref, rel=1e-10)
        assert inj.tallies["injected_thermal_energy"] == pytest.approx(
            EPS_DEFAULT * ref * per, rel=1e-10)
    # the instantaneous rate of the history
    assert inj.history(sim)["star_formation_rate"][0] == pytest.approx(
        _reference(spec, sim.t - 1e-6, sim.t + 1e-6) / 2e-6, rel=1e-5)


# ---------------------------------------------------------------- bad input
@pytest.mark.parametrize("block, words", [
    ("region: {shape: disk, radius: 100 pc, half_height: 50 pc}\n"
     "star_formation: {kind: constant, rate: 1 Msun/yr}\n",
     ["physics.injection.cr_fraction = 0.1", "add the cosmic_rays module", "cr_fraction: 0"]),
    ("region: {shape: disk, radius: 100 pc, half_height: 50 pc}\n"
     "star_formation: {kind: constant, rate: 1 Msun/yr}\ncr_fraction: 0.3\n"
     "thermal_fraction: 0.8\n", ["exceeds 1"]),
    ("region: {shape: sphere, radius: 1 pc, centre_z: 5 kpc}\ncr_fraction: 0\n"
     "star_formation: {kind: constant, rate: 1 Msun/yr}\n",
     ["physics.injection.region", "no cell centre"]),
    ("region: {shape: disk, radius: 100 pc, half_height: 50 pc, edge: tanh}\n"
     "star_formation: {kind: constant, rate: 1 Msun/yr}\n", ["edge_width"]),
    ("region: {shape: disk, radius: 100 pc, half_height: 50 pc}\ncr_fraction: 0\n"
     "star_formation: {kind: table, times: [0 Myr, 1 Myr], rates: [1 Msun/yr]}\n",
     ["same length"]),
    ("region: {shape: disk, radius: 100 pc, half_height: 50 pc}\ncr_fraction: 0\n"
     "star_formation: {kind: constant, rate: 1 erg}\n", ["star_formation", "rate"]),
])
def test_bad_input_is_a_clear_error(tmp_path, capsys, block, words):
    src = _write(tmp_path, _physics(block))
    assert main(["check", str(src)]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err
    for w in words:
        assert w in err, err


def test_cartesian_grid_is_refused():
    with pytest.raises(ParameterError, match="cylindrical"):
        Injection(_params({"region": {"shape": "sphere", "radius": 1.0},
                           "star_formation": {"kind": "constant", "rate": 1.0},
                           "cr_fraction": 0.0}), _context("cartesian"))


# ---------------------------------------------------------------- parallel runs
MPIEXEC = shutil.which("mpiexec", path=str(Path(sys.executable).parent)) or \
    shutil.which("mpiexec")


@pytest.mark.skipif(MPIEXEC is None, reason="no mpiexec")
def test_same_state_on_any_rank_count(tmp_path):
    """The weights are normalised on the global grid: 1, 3 and 4 ranks give the same
    bits; the tallies and outflow rates (sums over ranks, diagnostics) agree to
    round-off, also for surfaces on the tile boundaries (the planes z = 0 and
    z = +-133 pc, the cylinder's face near R = 170 pc)."""
    pytest.importorskip("mpi4py")
    text = _physics("""
        region: {shape: disk, radius: 150 pc, half_height: 50 pc, edge: gaussian, edge_width: 30 pc}
        star_formation: {kind: burst, peak: 0.05 Msun/yr, start: 2 kyr, decay_time: 5 kyr}
        cr_fraction: 0
        mass_return: 0.1
        """, "  outflow_rates: {surfaces: [{shape: plane, height: 200 pc}, "
             "{shape: sphere, radius: 250 pc}, {shape: plane, height: 0 pc, sides: upper}, "
             "{shape: plane, height: 133 pc}, {shape: cylinder, radius: 170 pc}]}\n"
             ).replace("max_steps: 400", "max_steps: 20")
    src = _write(tmp_path, text)
    states, hists = [], []
    for n in (1, 3, 4):
        out = tmp_path / f"run{n}"
        cmd = [sys.executable, "-m", "wind2d", "run", str(src), "--out", str(out), "--quiet"]
        if n > 1:
            cmd = [MPIEXEC, "-n", str(n), *cmd]
        proc = subprocess.run(cmd, capture_output=True, text=True, timeout=240)
        assert proc.returncode == 0, proc.stderr
        states.append(read_checkpoint(list_checkpoints(out / "checkpoints")[0][1])["state"])
        hists.append(read_history(out / "history.csv"))
    a = states[0]
    for b, h in zip(states[1:], hists[1:]):
        assert a["nstep"] == b["nstep"] >= 10
        assert np.array_equal(a["U"], b["U"])
        for k in hists[0]:
            # a net rate cancels inflow against outflow: round-off relative to the
            # outflow; the amounts through the (reflecting) edges are round-off
            # relative to the content
            ref = hists[0][k.replace("_net", "_out") if k.endswith("_net") else k]
            if k.endswith("_left_domain"):
                ref = hists[0]["energy" if "energy" in k else "mass"]
            assert np.allclose(hists[0][k], h[k], rtol=1e-12,
                               atol=1e-12 * np.abs(ref).max()), k
