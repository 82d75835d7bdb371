"""Held regions (physics module ``hold``): cells reset to a fixed state every step.

Checks: the held cells carry exactly the requested state after every step
(with magnetic energy from the untouched face fields inside the total
energy); variables the state leaves out keep their values; ``state: initial``
restores the set-up state; the mass and energy the resets add are tallied
exactly (mass and energy conservation of the closed box: the only sources are
the resets, common practice); clear errors for bad regions and states.
"""
import numpy as np
import pytest

from wind2d import Simulation
from wind2d.errors import ParameterError
from wind2d.physics.hold import Hold

# no energy or mass crosses these edges (the field does not thread a wall)
CLOSED = {"R_low": "axis", "R_high": "reflecting", "z_low": "periodic", "z_high": "periodic"}


def _mhd_sim(regions):
    sim = Simulation("cylindrical", (0, 1, 20, 1.03), (-1, 1, 32), CLOSED, mhd=True,
                     riemann="hlld", scalars=("tag",), modules=[Hold(regions=regions)])
    # a uniform vertical field (bent by the blast), a toroidal field, a blast
    sim.set_field(b1=0.0, b2=0.6)
    R, z = sim.mesh.centres()
    sim.set_primitive(rho=1.0, p=lambda R, z: 0.1 + 5 * np.exp(-(R**2 + z**2) / 0.02),
                      Bphi=lambda R, z: 0.2 * R, tag=0.5)
    for mod in sim.modules:
        mod.initialise(sim)
    return sim


def test_held_state_is_exact_and_budgets_close():
    regions = [{"shape": "slab", "z_min": 0.6, "R_max": 0.5,
                "state": {"rho": 2.0, "p": 0.3, "vz": 0.1, "tag": 1.0}},
               {"shape": "cylinder", "radius": 0.3, "z_min": -1.0, "z_max": -0.7,
                "state": "initial"}]
    sim = _mhd_sim(regions)
    hold = sim.modules[0]
    w_init = {k: sim.field(k) for k in ("rho", "p", "vR", "vz", "Bphi", "tag")}
    tot0 = sim.totals()
    R, z = sim.mesh.centres()
    slab = (z >= 0.6) & (R <= 0.5)
    cyl = (R <= 0.3) & (z <= -0.7)
    assert np.array_equal(hold.held_cells(sim), slab | cyl)
    for _ in range(30):
        sim.step()
        f = {k: sim.field(k) for k in ("rho", "p", "vR", "vz", "vphi", "tag", "Bphi")}
        assert np.allclose(f["rho"][slab], 2.0, rtol=1e-14)
        assert np.allclose(f["p"][slab], 0.3, rtol=1e-12)       # E includes the current B^2/2
        assert np.allclose(f["vz"][slab], 0.1, rtol=1e-14)
        assert np.all(f["vR"][slab] == 0.0) and np.all(f["vphi"][slab] == 0.0)
        assert np.allclose(f["tag"][slab], 1.0, rtol=1e-14)
        for k in ("rho", "p", "vR", "vz", "tag", "Bphi"):
            assert np.allclose(f[k][cyl], w_init[k][cyl], rtol=1e-12, atol=1e-14)
    # B_phi was not part of the slab's state: it evolves (the blast compresses it)
    assert not np.allclose(sim.field("Bphi")[slab], w_init["Bphi"][slab], rtol=1e-6)
    # face fields untouched: still divergence-free
    assert np.abs(sim.divergence()).max() < 1e-11
    # closed box: the change of mass and total energy is what the resets added
    h = sim.module_history()
    tot = sim.totals()
    assert tot["mass"] - tot0["mass"] == pytest.approx(h["held_mass"][0], abs=1e-13)
    assert tot["energy"] - tot0["energy"] == pytest.approx(h["held_energy"][0],
                                                           abs=1e-12 * tot0["energy"])
    assert abs(h["held_mass"][0]) > 1e-3


def test_bad_regions_and_states():
    with pytest.raises(ParameterError, match=r"regions\[0\]: no cell centre"):
        _mhd_sim([{"shape": "sphere", "radius": 0.1, "centre_z": 5.0, "state": "initial"}])
    with pytest.raises(ParameterError, match=r"state.BR: the poloidal field"):
        _mhd_sim([{"shape": "sphere", "radius": 0.3, "state": {"rho": 1, "p": 1, "BR": 0.1}}])
    with pytest.raises(ParameterError, match="give 'p' or 'T'"):
        _mhd_sim([{"shape": "sphere", "radius": 0.3, "state": {"rho": 1}}])
    with pytest.raises(ParameterError, match="unknown state variable"):
        _mhd_sim([{"shape": "sphere", "radius": 0.3, "state": {"rho": 1, "p": 1, "q": 2}}])
    import pydantic
    with pytest.raises(pydantic.ValidationError, match="z_min"):
        Hold(regions=[{"shape": "slab", "z_min": 1.0, "z_max": 0.5, "state": "initial"}])
    with pytest.raises(pydantic.ValidationError, match="sphere"):
        Hold(regions=[{"shape": "cube", "state": "initial"}])
    # state: initial needs initialise(sim) before the first step
    sim = Simulation("cartesian", (0, 1, 8), (0, 1, 8),
                     {"x_low": "periodic", "x_high": "periodic", "y_low": "periodic",
                      "y_high": "periodic"},
                     modules=[Hold(regions=[{"shape": "slab", "z_max": 0.3,
                                             "state": "initial"}])])
    sim.set_primitive(rho=1.0, p=1.0)
    with pytest.raises(ParameterError, match="initialise"):
        sim.step()
