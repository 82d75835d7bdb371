"""Hydrostatic atmospheres in static potentials stay at rest.

Reference: an isothermal atmosphere rho = rho0 exp(-(Phi - Phi0)/theta),
p = rho theta (theta = k_B T / mu m_H) is an exact static solution of the
Euler equations with gravity (common practice); methods.md item 10 sets the
target max|v| < 1e-3 c_s after ten sound-crossing times (a self-set tolerance).

Set-up (problems/gravity/hydrostatic_nfw.yaml): NFW halo of 1e12 Msun
(Navarro, Frenk & White 1996, concentration 10, r_s = 20.6 kpc), T = 2.5e6 K
(density falls by a factor 5.5 from the centre to the edge of the free
region), quarter meridional plane of 2 r_s with the axis, a mirror plane at
z = 0 and a stretched grid.  The halo centre (r < 4 kpc: the NFW potential has
a cusp there, Phi ~ Phi(0) + const * r, which no second-order reconstruction
resolves) and the corners beyond 36 kpc (next to the reflecting walls, whose
mirrored ghost cells are not hydrostatic) are held at the initial state with
the hold module.

Measured (max|v|/c_s after 10 crossing times, 32 -> 64 cells per axis):
well-balanced source 6.2e-4 -> 1.6e-4 (order 1.9); plain face-difference source
2.9e-3 -> 1.7e-3 (order 0.8, limited by the cells next to the axis).

Known limit (not tested here): with the isothermal core EOS the same kind of
atmosphere (softened point mass, density contrast 4.3) reaches only
3.3e-3 -> 1.3e-3: the isothermal Riemann solver diffuses density across the
reconstructed jumps of the first-order predictor stage and of limiter-clipped
cells at the axis (a first-order mass residual the gravity source cannot see),
and an isothermal atmosphere has no buoyancy to restore it.
"""
import math
from pathlib import Path

import numpy as np
import pytest

from wind2d import Simulation
from wind2d.core.eos import Isothermal
from wind2d.errors import ParameterError
from wind2d.physics.gravity import NFW, Gravity, PointMass
from wind2d.problem import build_simulation, load
from wind2d.problem.load import ProblemError

ROOT = Path(__file__).resolve().parent.parent
PROBLEM = ROOT / "problems" / "gravity" / "hydrostatic_nfw.yaml"
SIZE = 40.0            # kpc, the box edge in the problem file


def _nfw_run(n, *extra):
    stretch = 1.04 ** (32 / n)     # the same stretched mapping at every resolution
    res = load(PROBLEM, [f"grid.R.cells={n}", f"grid.z.cells={n}", f"grid.R.stretch={stretch}",
                         f"grid.z.stretch={stretch}", *extra])
    sim = build_simulation(res, comm=None)
    sim.rho_start = sim.field("rho")
    theta = sim.field("p") / sim.field("rho")
    assert np.ptp(theta) <= 1e-12 * theta.max()          # isothermal
    cs = math.sqrt(theta.max())
    t_cross = SIZE / (cs * math.sqrt(5.0 / 3.0))
    sim.advance(10 * t_cross)
    return sim, float(np.hypot(sim.field("vR"), sim.field("vz")).max() / cs)


def test_nfw_atmosphere_stays_at_rest_with_second_order_error():
    sim32, v32 = _nfw_run(32)
    sim64, v64 = _nfw_run(64)
    assert v32 < 1e-3 and v64 < 1e-3, (v32, v64)
    order = math.log2(v32 / v64)
    assert order > 1.6, (v32, v64, order)           # measured 1.93
    # the profile itself is kept (measured: max 5.2e-3 -> 1.7e-3 next to the held centre,
    # volume average 1.1e-4 -> 1.9e-5)
    for sim, bound in ((sim32, 2e-4), (sim64, 4e-5)):
        d = np.abs(sim.field("rho") / sim.rho_start - 1)
        V = sim.mesh.cell_volumes()
        assert np.sum(V * d) / np.sum(V) < bound
        assert d.max() < 1e-2
    # the plain face-difference source is several times worse at the same resolution
    _, v32_plain = _nfw_run(32, "physics.gravity.well_balanced=false")
    assert v32_plain > 3 * v32, (v32_plain, v32)


def test_gas_plus_potential_energy_conserved_to_round_off():
    # exact property of the energy source (see wind2d/physics/gravity/source.py):
    # sum V (E + rho Phi) changes only through the boundary faces; in a closed box
    # it is constant to round-off.  Start out of equilibrium (too hot near the centre).
    pot = NFW(1.0, 1.0 / (4 * math.pi), 1.0)
    grav = Gravity(potential=pot)
    sim = Simulation("cylindrical", (0, 2, 24, 1.03), (-2, 2, 40, 1.0),
                     {"R_low": "axis", "R_high": "reflecting", "z_low": "reflecting",
                      "z_high": "reflecting"}, modules=[grav])
    sim.set_primitive(rho=lambda R, z: np.exp(-(pot.phi(R, z) + 1) / 0.3),
                      p=lambda R, z: 0.3 * np.exp(-(pot.phi(R, z) + 1) / 0.3)
                      * (1 + 2 * np.exp(-(R**2 + z**2) / 0.1)))

    def budget():
        return sim.totals()["energy"] + grav.history(sim)["potential_energy"][0]
    e0, m0 = budget(), sim.totals()["mass"]
    sim.advance(1.5)
    assert sim.nstep > 50
    vmax = np.hypot(sim.field("vR"), sim.field("vz")).max()
    assert vmax > 0.05                      # the gas really moved
    assert abs(budget() - e0) <= 1e-12 * abs(e0)
    assert abs(sim.totals()["mass"] - m0) <= 1e-13 * m0
    # the gravitational energy did change: energy was exchanged, not frozen
    assert abs(grav.history(sim)["potential_energy"][0] - (e0 - sim.totals()["energy"])) \
        <= 1e-12 * abs(e0)


def test_setup_without_gravity_is_a_clear_error(tmp_path):
    text = PROBLEM.read_text().split("physics:")[0] + \
        "setup: {kind: hydrostatic_atmosphere, rho0: 1e-2 cm**-3, T: 2.5e6 K}\n" \
        "stop: {time: 1 Gyr}\n"
    path = tmp_path / "p.yaml"
    path.write_text(text)
    with pytest.raises(ProblemError, match="needs a gravitational potential"):
        build_simulation(load(path), comm=None)
    with pytest.raises(ParameterError, match="isothermal gas"):
        sim = Simulation("cylindrical", (0, 1, 8), (0, 1, 8),
                         {"R_low": "axis", "R_high": "outflow", "z_low": "outflow",
                          "z_high": "outflow"}, eos=Isothermal(1.0),
                         modules=[Gravity(potential=PointMass(1.0, 1.0, 0.1))])
        from wind2d.setups import SetupContext, get
        cls = get("hydrostatic_atmosphere")
        cls().apply(sim, cls.Params.model_construct(rho0=1.0, T=1.0, R0=0.0, z0=0.0),
                    SetupContext(None, "cylindrical", sim.field_names, ("R", "z")))


CARTESIAN = """
title: isothermal atmosphere in a uniform field
grid:
  geometry: cartesian
  x: {from: 0, to: 1, cells: 4}
  y: {from: 0, to: 2, cells: %d}
edges: {x_low: periodic, x_high: periodic, y_low: reflecting, y_high: reflecting}
gas: {gamma: 1.4}
physics:
  gravity: {potentials: [{kind: uniform, g: 1.0}]}
  hold:
    regions:
      - {shape: slab, z_max: 0.2, state: initial}
      - {shape: slab, z_min: 1.8, state: initial}
setup: {kind: hydrostatic_atmosphere, rho0: 1.0, T: 0.5}
stop: {time: 10.0}
"""


def test_uniform_field_atmosphere_in_cartesian_geometry(tmp_path):
    # rho = exp(-g y / theta): four scale heights across the box (contrast e^4 = 55);
    # the layers next to the two walls are held (their mirrored ghosts are not
    # hydrostatic).  Measured max|v|/c_s after 10 crossing times: 3.0e-4 -> 3.6e-5.
    out = []
    for n in (32, 64):
        path = tmp_path / f"c{n}.yaml"
        path.write_text(CARTESIAN % n)
        sim = build_simulation(load(path), comm=None)
        y = sim.mesh.centres()[1]
        assert np.allclose(sim.field("rho"), np.exp(-y / 0.5), rtol=1e-14)
        cs = math.sqrt(0.5)
        sim.advance(10 * 2.0 / (cs * math.sqrt(1.4)))
        out.append(np.abs(sim.field("vy")).max() / cs)
        assert np.all(sim.field("vx") == 0.0)
    assert max(out) < 1e-3 and math.log2(out[0] / out[1]) > 1.6, out
