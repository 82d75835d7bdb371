"""A reflecting wall is built for a magnetic field along it; the set-up advice
warns when the field crosses one.

Reference: total energy of a closed box is conserved by a conservative scheme
whose walls carry no energy flux (common practice).  With the field along the
reflecting walls the box conserves energy to round-off; with a field through
them the mirrored ghost data (normal field odd) are inconsistent with the
face field on the wall and energy drifts (measured: -1.5e-3 over 200 steps),
which is what the warning says.
"""
import numpy as np
import pytest

from wind2d import Simulation

EDGES = {"x_low": "reflecting", "x_high": "reflecting", "y_low": "periodic",
         "y_high": "periodic"}


def _box(bx, by):
    sim = Simulation("cartesian", (0, 1, 32), (0, 1, 32), EDGES, mhd=True, riemann="hlld")
    sim.set_field(b1=bx, b2=by)
    sim.set_primitive(rho=lambda x, y: 1 + 0.3 * np.sin(2 * np.pi * y) * np.cos(np.pi * x),
                      p=1.0, vx=lambda x, y: 0.2 * np.sin(np.pi * x) * np.cos(2 * np.pi * y),
                      vy=0.1, vz=lambda x, y: 0.1 * np.cos(np.pi * x))
    return sim


def _energy_drift(sim):
    e0 = sim.totals()["energy"]
    sim.advance(1.0, max_steps=200)
    return sim.totals()["energy"] / e0 - 1.0


def test_field_along_the_walls_gets_no_warning_and_conserves_energy():
    sim = _box(0.0, 0.5)
    assert sim.advice() == []
    assert abs(_energy_drift(sim)) < 1e-13


@pytest.mark.parametrize("bx, by", [(0.5, 0.0), (0.5, 0.3)])
def test_field_through_the_walls_is_warned_about(bx, by):
    sim = _box(bx, by)
    lines = sim.advice()
    assert len(lines) == 2
    assert lines[0].startswith("edges.x_low = reflecting: the magnetic field crosses")
    assert lines[1].startswith("edges.x_high = reflecting")
    share = 100 * bx / np.hypot(bx, by)
    assert f"{share:.3g} % of the largest |B|" in lines[0]
    assert abs(_energy_drift(sim)) > 1e-4          # the reason for the warning
