"""Cosmic-ray streaming at the Alfven speed through a fixed density profile.

References:
* steady streaming with v = 0 and v_s = v_A ∝ rho^(-1/2) along a uniform field:
  div(4 P_c v_s) = v_s . grad P_c gives P_c ∝ v_A^(-gamma_c) = rho^(gamma_c/2),
  rho^(2/3) where the cosmic rays stream down the density gradient (common result
  of streaming transport, from memory; derivation in methods.md item 5 [C]);
* where they would have to stream up a density gradient they cannot (the
  streaming "bottleneck", Jiang & Oh 2018, ApJ 854, 5, from memory): the
  pressure stays flat from the source across a density minimum up to the next
  density maximum, and only beyond it falls again as rho^(2/3).

Set-up: a source of fixed E_c = 1 at x = 0 (density 1), field B_x = 1, gas
frozen at rest with uniform pressure.  Density falls from 1 to 0.2 at
x = 0.3, rises back to 1 at x = 0.6 (the bottleneck) and then falls
exponentially to 0.1 at x = 1.6.

Measured (96 cells on [0, 1.5], V_m = 20, t = 2): plateau x < 0.55 within
0.5 % of 1; d ln P_c / d ln rho = 0.666 on [0.7, 1.2]; the same at V_m = 40
(profiles within 0.5 % of each other).
"""
import numpy as np

from wind2d import Simulation
from wind2d.physics.cosmic_rays import CosmicRays

GC = 4.0 / 3.0


def _density(x):
    dip = 0.2 + 0.8 * 0.5 * (1.0 + np.cos(2.0 * np.pi * x / 0.6))
    fall = np.exp(-(x - 0.6) * np.log(10.0))
    return np.where(x < 0.6, dip, fall)


def _run(n=96, vm=20.0, t_end=2.0, length=1.5):
    e0 = 1.0
    edges = {"x_low": {"kind": "fixed",
                       "state": {"rho": 1.0, "p": 1.0, "Bx": 1.0, "Ec": e0, "Fcx": GC * e0}},
             "x_high": "outflow", "y_low": "periodic", "y_high": "periodic"}
    cr = CosmicRays.from_keys("cartesian", max_speed=vm, streaming={}, gas_feedback=False)
    sim = Simulation("cartesian", (0.0, length, n), (0.0, 4 * length / n, 4), edges,
                     mhd=True, riemann="hlld", modules=[cr])
    sim.set_field(b1=1.0, b2=0.0)
    sim.set_primitive(rho=lambda x, y: _density(x), p=1.0, Ec=1e-3 * e0)
    sim.advance(t_end)
    x = sim.mesh.centres()[0][0]
    return x, sim.field("rho")[0], sim.field("Ec")[0], sim, cr


def test_streaming_steady_state_follows_rho_two_thirds_and_plateaus_behind_a_minimum():
    x, rho, E, sim, cr = _run()
    # the gas is frozen: the density profile is exactly the one set up
    assert np.array_equal(rho, _density(x))
    # bottleneck: flat from the source across the density minimum (x = 0.3) to the
    # density maximum at x = 0.6, at the source level
    plateau = E[x < 0.55]
    assert plateau.max() / plateau.min() - 1.0 < 0.01, (plateau.min(), plateau.max())
    assert abs(plateau.mean() - 1.0) < 0.01
    # without the bottleneck the same stretch would fall as rho^(2/3) to 0.2^(2/3) = 0.34
    assert E[np.argmin(np.where(x < 0.6, rho, 9.0))] > 0.95
    # beyond the maximum the density falls along the flux: P_c ∝ rho^(gamma_c/2)
    k = (x > 0.7) & (x < 1.2)
    slope = np.polyfit(np.log(rho[k]), np.log(E[k]), 1)[0]
    assert abs(slope - GC / 2.0) < 0.02, slope
    # streaming heats the gas: energy taken from the cosmic rays (tallied) is positive
    assert cr.tallies["cr_streaming_heating"] > 0.0
    # the derived streaming speed is the Alfven speed B / sqrt(rho) where P_c falls
    d = sim.derived_fields()
    vs = d["cr_streaming_speed"][0][0]
    assert np.allclose(vs[k], 1.0 / np.sqrt(rho[k]), rtol=1e-12)


def test_streaming_result_does_not_depend_on_the_maximum_speed():
    # Jiang & Oh 2018: results converge once V_m >> v_A (here v_A <= 3.2)
    x, _, E20, _, _ = _run(vm=20.0)
    _, _, E40, _, _ = _run(vm=40.0)
    k = x < 1.2
    assert np.max(np.abs(E20[k] / E40[k] - 1.0)) < 0.01
