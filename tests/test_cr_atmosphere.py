"""An atmosphere held jointly by gas and cosmic-ray pressure against uniform gravity.

Reference: hydrostatic balance d(P + P_c)/dy = -rho g (common practice).  With
P = rho c^2 and P_c = alpha P the isothermal atmosphere rho = rho0 exp(-y/H),
H = (1 + alpha) c^2 / g, is an exact steady state of the tightly coupled
two-fluid equations; with a small diffusivity kappa it drifts only on the
time H^2/kappa (here 2.5e4, the run lasts 2).  In the two-moment method the
gas feels -grad P_c through the implicit exchange (Jiang & Oh 2018, ApJ
854, 5), so the discrete balance holds to truncation error, like the
purely thermal atmosphere of the same scale height.

Measured (64 cells, t = 2, about 3.5 crossings at the composite sound speed
sqrt(3); kappa = 1e-5, V_m = 20): max |v| = 4.5e-3 in the wall cells
(4.2e-3 for the gas-only atmosphere of the same H), 2.4e-4 away from the
walls; density within 0.21 %, E_c within 0.43 %.  The same to t = 8: 5.1e-3,
1.5e-4, 0.27 %, 0.88 % (no growth of the wall error).
"""
import numpy as np

from wind2d import Simulation
from wind2d.physics.cosmic_rays import CosmicRays
from wind2d.physics.gravity import Gravity, Uniform

EDGES = {"x_low": "periodic", "x_high": "periodic", "y_low": "reflecting",
         "y_high": "reflecting"}


def _atmosphere(n, alpha, g, t=2.0, **cr_keys):
    H = (1.0 + alpha) / g                     # c^2 = P / rho = 1
    mods = [Gravity(potential=Uniform(g))]
    if alpha > 0:
        mods.append(CosmicRays.from_keys("cartesian", **cr_keys))
    sim = Simulation("cartesian", (0.0, 4.0 / n, 4), (0.0, 1.0, n), EDGES, modules=mods)
    yf = sim.mesh.x2f[sim.mesh.js:sim.mesh.je + 1]
    rho = H * (np.exp(-yf[:-1] / H) - np.exp(-yf[1:] / H)) / np.diff(yf)   # cell means
    rho = np.broadcast_to(rho[:, None], (n, 4))
    fields = dict(rho=rho, p=rho)
    if alpha > 0:
        fields["Ec"] = alpha * rho / (1.0 / 3.0)
    sim.set_primitive(**fields)
    sim.advance(t)
    return sim


def test_gas_and_cosmic_ray_supported_atmosphere_stays_at_rest():
    sim = _atmosphere(64, 1.0, 4.0, max_speed=20.0, diffusion={"isotropic": 1e-5})
    c_eff = np.sqrt(5.0 / 3.0 + 4.0 / 3.0)
    v = np.abs(sim.field("vy")[:, 0])
    gas = _atmosphere(64, 0.0, 2.0)
    vgas = np.abs(gas.field("vy")[:, 0])
    # stated bounds: largest speed (in the cells next to the walls, as for the
    # purely thermal atmosphere of the same scale height) below 3e-3 c_eff and
    # within 1.5 times the thermal atmosphere's; away from the walls below 5e-4
    assert v.max() < 3e-3 * c_eff, v.max()
    assert v.max() < 1.5 * vgas.max(), (v.max(), vgas.max())
    assert v[4:-4].max() < 5e-4, v[4:-4].max()
    # density and cosmic-ray energy stay put (relative change below 0.5 % and 1 %)
    rho0 = _initial_rho(sim)
    assert np.abs(sim.field("rho") / rho0 - 1.0).max() < 5e-3
    assert np.abs(sim.field("Ec") / (3.0 * rho0) - 1.0).max() < 1e-2


def _initial_rho(sim, H=0.5):
    yf = sim.mesh.x2f[sim.mesh.js:sim.mesh.je + 1]
    rho = H * (np.exp(-yf[:-1] / H) - np.exp(-yf[1:] / H)) / np.diff(yf)
    return np.broadcast_to(rho[:, None], sim.field("rho").shape)
