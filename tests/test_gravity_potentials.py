"""Static potentials of the gravity module against their published formulas.

Sources (each check names its own):
* Navarro, Frenk & White (1996, ApJ 462, 563): rho = rho_s / [x (1+x)^2],
  M(r) = 4 pi rho_s r_s^3 [ln(1+x) - x/(1+x)] (from memory; M(r) is also
  integrated from rho here with scipy);
* Hernquist (1990, ApJ 356, 359): rho = M a / [2 pi r (r+a)^3],
  M(r) = M r^2/(r+a)^2, half-mass radius (1 + sqrt 2) a (from memory);
* Miyamoto & Nagai (1975, PASJ 27, 533): midplane v_c^2 = G M R^2/[R^2 + (a+b)^2]^(3/2)
  and the density of their eq. (from memory), checked through Poisson's equation;
* Plummer (1911, MNRAS 71, 460) softened point mass;
* Binney & Tremaine (2008, Galactic Dynamics, eq. 2.71, from memory) logarithmic halo.
The acceleration is compared with the enclosed mass or circular velocity to
1e-10 relative, and with -grad Phi by centred finite differences.
"""
import math

import numpy as np
import pytest
from scipy import integrate, optimize

from wind2d.errors import ParameterError
from wind2d.physics.gravity import (NFW, Gravity, Hernquist, Logarithmic, MiyamotoNagai,
                                    PointMass, Sum, Uniform)
from wind2d.problem.units import UnitSystem

G = 1.0
RNG = np.random.default_rng(7)
R_PTS = np.concatenate(([1e-3, 0.05, 0.3, 1.0, 2.5, 7.0, 30.0], RNG.uniform(0.01, 20, 20)))
Z_PTS = np.concatenate(([0.0, 0.02, -0.4, 1.3, -3.0, 10.0, 0.5], RNG.uniform(-15, 15, 20)))


def _radial_accel(pot, r, angle):
    """|g| and the angle between g and -r_vec at radius r, polar angle ``angle``."""
    R, z = r * np.sin(angle), r * np.cos(angle)
    gR, gz = pot.accel(R, z)
    g = np.hypot(gR, gz)
    cosang = -(gR * R + gz * z) / (g * r)
    return g, cosang


@pytest.mark.parametrize("angle", [0.0, 0.7, np.pi / 2])
def test_nfw_acceleration_matches_enclosed_mass(angle):
    rs, rho_s = 2.0, 0.3
    pot = NFW(rs, rho_s, G)
    r = np.array([0.19, 0.21, 0.5, 2.0, 5.0, 40.0])
    x = r / rs
    # NFW (1996): M(r) = 4 pi rho_s r_s^3 [ln(1+x) - x/(1+x)], g = G M(r)/r^2
    M = 4 * math.pi * rho_s * rs ** 3 * (np.log(1 + x) - x / (1 + x))
    g, cosang = _radial_accel(pot, r, angle)
    assert np.allclose(g, G * M / r ** 2, rtol=1e-10, atol=0)
    assert np.allclose(cosang, 1.0, rtol=0, atol=1e-12)          # points to the centre
    # near the centre the bracket cancels; its Taylor series x^2/2 - 2x^3/3 + 3x^4/4
    # - 4x^5/5 is exact to 2x^4 relative at x = 5e-4
    rc = np.array([1e-3])
    xc = rc / rs
    Mc = 4 * math.pi * rho_s * rs ** 3 * (xc**2 / 2 - 2 * xc**3 / 3 + 3 * xc**4 / 4 - 4 * xc**5 / 5)
    gc, _ = _radial_accel(pot, rc, angle)
    assert np.allclose(gc, G * Mc / rc ** 2, rtol=1e-10, atol=0)
    # the same enclosed mass from the published density, by quadrature (scipy)
    for rk, gk in zip(r, g):
        Mq, _ = integrate.quad(lambda s: 4 * math.pi * s * s * rho_s
                               / ((s / rs) * (1 + s / rs) ** 2),
                               0, rk, epsabs=0, epsrel=1e-13, limit=200)
        assert abs(gk * rk ** 2 / G - Mq) <= 1e-10 * Mq
    assert np.allclose(pot.circular_velocity(r), np.sqrt(G * M / r), rtol=1e-12)


def test_nfw_peak_circular_velocity():
    # [C] methods.md item 10 (independent computation): v_c peaks at r = 2.16258 r_s
    # with v_max^2 = 0.216217 * 4 pi G rho_s r_s^2
    rs, rho_s = 1.5, 0.7
    pot = NFW(rs, rho_s, G)

    def minus_v2(r):
        gR, _ = pot.accel(np.array(r), np.array(0.0))
        return float(r * gR)                     # -v_c^2
    res = optimize.minimize_scalar(minus_v2, bracket=(1.0, 3.0, 6.0), tol=1e-12)
    assert res.x / rs == pytest.approx(2.16258, abs=2e-5)
    assert -res.fun / (4 * math.pi * G * rho_s * rs ** 2) == pytest.approx(0.216217, abs=2e-6)


def test_nfw_virial_mass_reproduced_from_its_parameters():
    # virial radius: mean density Delta * rho_crit, rho_crit = 3 H^2 / (8 pi G) (common practice)
    units = UnitSystem("kpc", "Myr", "Msun")
    H = units.code_value("70 km s-1 Mpc-1", "rate", "H0")
    for Mvir, c, delta in ((1e12, 10.0, 200.0), (3e10, 15.0, 200.0), (5e14, 4.0, 500.0)):
        pot = NFW.from_virial(Mvir, c, units.G, H, delta)
        rho_crit = 3 * H ** 2 / (8 * math.pi * units.G)
        # the mass inside r_vir, integrated from the published density profile
        Mq, _ = integrate.quad(lambda s: 4 * math.pi * s * s * pot.rho_s
                               / ((s / pot.rs) * (1 + s / pot.rs) ** 2), 0, pot.r_vir,
                               epsabs=0, epsrel=1e-13, limit=200)
        assert Mq == pytest.approx(Mvir, rel=1e-10)
        mean = Mvir / (4 / 3 * math.pi * pot.r_vir ** 3)
        assert mean == pytest.approx(delta * rho_crit, rel=1e-12)
        assert pot.r_vir / pot.rs == pytest.approx(c, rel=1e-12)
        # the acceleration at r_vir is G M_vir / r_vir^2
        g, _ = _radial_accel(pot, np.array([pot.r_vir]), 0.3)
        assert g[0] == pytest.approx(units.G * Mvir / pot.r_vir ** 2, rel=1e-10)
    # common value: r_200 of a 1e12 Msun halo for H0 = 70 km/s/Mpc is about 206 kpc
    assert NFW.from_virial(1e12, 10, units.G, H).r_vir == pytest.approx(206.3, abs=0.5)


@pytest.mark.parametrize("angle", [0.0, 1.1, np.pi / 2])
def test_hernquist_acceleration_matches_enclosed_mass(angle):
    M, a = 3.0, 0.7
    pot = Hernquist(M, a, G)
    r = np.array([1e-4, 0.05, 0.7, 2.0, 11.0, 300.0])
    g, cosang = _radial_accel(pot, r, angle)
    # Hernquist (1990): M(r) = M r^2/(r+a)^2, v_c^2 = G M r/(r+a)^2
    assert np.allclose(g, G * M / (r + a) ** 2, rtol=1e-10, atol=0)
    assert np.allclose(g * r, G * M * r / (r + a) ** 2, rtol=1e-10, atol=0)
    assert np.allclose(cosang, 1.0, atol=1e-12)
    for rk, gk in zip(r, g):
        Mq, _ = integrate.quad(lambda s: 4 * math.pi * s * s * M * a
                               / (2 * math.pi * s * (s + a) ** 3), 0, rk, epsabs=0,
                               epsrel=1e-13, limit=200)
        assert abs(gk * rk ** 2 / G - Mq) <= 1e-10 * Mq
    # half of the mass inside (1 + sqrt 2) a (Hernquist 1990)
    assert pot.enclosed_mass((1 + math.sqrt(2)) * a) == pytest.approx(M / 2, rel=1e-14)


def test_miyamoto_nagai_midplane_circular_velocity():
    M, a, b = 2.0, 3.0, 0.28
    pot = MiyamotoNagai(M, a, b, G)
    R = np.array([1e-3, 0.1, 1.0, 2.0, 3.5, 10.0, 80.0])
    gR, gz = pot.accel(R, np.zeros_like(R))
    # Miyamoto & Nagai (1975): v_c^2 = G M R^2 / [R^2 + (a+b)^2]^(3/2) in the plane
    vc2 = G * M * R ** 2 / (R ** 2 + (a + b) ** 2) ** 1.5
    assert np.allclose(-R * gR, vc2, rtol=1e-10, atol=0)
    assert np.all(gz == 0.0)
    # [C] methods.md item 10: a = 3, b = 0.28, G = M = 1, R = 2 gives v_c^2 = 0.070551
    unit = MiyamotoNagai(1.0, 3.0, 0.28, 1.0)
    assert float(unit.circular_velocity(2.0)) ** 2 == pytest.approx(0.070551, abs=1e-6)


def test_miyamoto_nagai_density_through_poisson():
    # Miyamoto & Nagai (1975) density; [C] methods.md: rho(R=2, z=0.3) = 5.72108e-3
    # for a = 3, b = 0.28, G = M = 1.  Here: lap Phi / (4 pi G) from the class's
    # potential by fourth-order finite differences in (R, z).
    a, b = 3.0, 0.28
    pot = MiyamotoNagai(1.0, a, b, 1.0)

    def rho_mn(R, z):
        zeta = math.sqrt(z * z + b * b)
        return (b * b / (4 * math.pi)) * (a * R * R + (a + 3 * zeta) * (a + zeta) ** 2) \
            / ((R * R + (a + zeta) ** 2) ** 2.5 * zeta ** 3)

    def lap(R, z, h=1e-3):
        c = [-1 / 12, 4 / 3, -5 / 2, 4 / 3, -1 / 12]
        off = np.arange(-2, 3) * h
        d2R = sum(ck * float(pot.phi(R + o, z)) for ck, o in zip(c, off)) / h ** 2
        d2z = sum(ck * float(pot.phi(R, z + o)) for ck, o in zip(c, off)) / h ** 2
        d1 = [1 / 12, -2 / 3, 0, 2 / 3, -1 / 12]
        dR = sum(ck * float(pot.phi(R + o, z)) for ck, o in zip(d1, off)) / h
        return d2R + dR / R + d2z

    assert rho_mn(2.0, 0.3) == pytest.approx(5.72108e-3, rel=2e-6)
    for R, z in ((2.0, 0.3), (0.5, 0.05), (5.0, -1.0), (1.0, 0.0)):
        assert lap(R, z) / (4 * math.pi) == pytest.approx(rho_mn(R, z), rel=1e-6)


def test_point_mass_and_logarithmic_formulas():
    # Plummer-softened point mass: g = -G M r_vec / (r^2 + eps^2)^(3/2) (Plummer 1911)
    M, eps = 1.7, 0.2
    pot = PointMass(M, G, eps)
    r = np.array([0.0, 0.1, 0.2, 1.0, 9.0])
    g, _ = _radial_accel(pot, np.where(r > 0, r, 1.0), 0.4)
    rr = np.where(r > 0, r, 1.0)
    assert np.allclose(g, G * M * rr / (rr ** 2 + eps ** 2) ** 1.5, rtol=1e-12)
    bare = PointMass(M, G)
    gb, _ = _radial_accel(bare, np.array([0.3, 4.0]), 1.0)
    assert np.allclose(gb, G * M / np.array([0.3, 4.0]) ** 2, rtol=1e-12)
    assert bare.accel(0.0, 0.0) == (0.0, 0.0)
    # logarithmic halo (Binney & Tremaine 2008): v_c^2 = v0^2 R^2/(Rc^2 + R^2) in the plane
    v0, Rc, q = 1.3, 0.4, 0.8
    log = Logarithmic(v0, Rc, q)
    R = np.array([0.01, 0.4, 2.0, 50.0])
    gR, gz = log.accel(R, np.zeros_like(R))
    assert np.allclose(-R * gR, v0 ** 2 * R ** 2 / (Rc ** 2 + R ** 2), rtol=1e-12)
    # uniform field: g = (0, -g0)
    gR, gz = Uniform(0.3).accel(np.array([1.0, 2.0]), np.array([-1.0, 4.0]))
    assert np.all(gR == 0.0) and np.all(gz == -0.3)


POTENTIALS = {
    "point_mass": PointMass(1.3, G, 0.05, centre_z=0.4),
    "nfw": NFW(3.0, 0.2, G, centre_z=-0.5),
    "miyamoto_nagai": MiyamotoNagai(2.0, 3.0, 0.3, G),
    "hernquist": Hernquist(0.8, 0.5, G, centre_z=1.0),
    "logarithmic": Logarithmic(1.1, 0.3, 0.7),
    "uniform": Uniform(0.25),
}


@pytest.mark.parametrize("name", sorted(POTENTIALS) + ["sum"])
def test_force_is_minus_gradient_of_potential(name):
    # g = -grad Phi: centred fourth-order finite differences of the class's own phi
    pot = Sum(list(POTENTIALS.values())) if name == "sum" else POTENTIALS[name]
    R, z = R_PTS, Z_PTS
    gR, gz = pot.accel(R, z)
    h = 1e-4 * np.maximum(1.0, np.hypot(R, z))

    def d(f):
        return (-f(2) + 8 * f(1) - 8 * f(-1) + f(-2)) / (12 * h)
    dR = d(lambda k: pot.phi(R + k * h, z))
    dz = d(lambda k: pot.phi(R, z + k * h))
    scale = np.hypot(gR, gz)
    assert np.all(np.abs(gR + dR) <= 1e-7 * scale + 1e-14)
    assert np.all(np.abs(gz + dz) <= 1e-7 * scale + 1e-14)


def test_module_parameters_and_errors():
    units = UnitSystem("kpc", "Myr", "Msun")
    ctx = type("Ctx", (), {"units": units, "geometry": "cylindrical"})()
    P = Gravity.Params
    good = P.model_validate({"potentials": [
        {"kind": "nfw", "virial_mass": "1e12 Msun", "concentration": 10},
        {"kind": "miyamoto_nagai", "mass": "5e10 Msun", "a": "3 kpc", "b": "300 pc"},
        {"kind": "hernquist", "mass": "1e10 Msun", "a": "0.5 kpc"},
        {"kind": "logarithmic", "v0": "200 km/s", "core_radius": "1 kpc", "q": 0.9},
        {"kind": "point_mass", "mass": "1e6 Msun", "softening": "10 pc"}]},
        context={"units": units})
    mod = Gravity(good, ctx)
    assert len(mod.potential.parts) == 5
    # b = 300 pc became 0.3 kpc (code units); G is the unit system's
    assert mod.potential.parts[1].b == pytest.approx(0.3)
    assert mod.potential.parts[0].G == units.G
    import pydantic
    with pytest.raises(pydantic.ValidationError, match="virial_mass and concentration"):
        P.model_validate({"potentials": [{"kind": "nfw", "virial_mass": "1e12 Msun"}]},
                         context={"units": units})
    with pytest.raises(pydantic.ValidationError, match="not both"):
        P.model_validate({"potentials": [{"kind": "nfw", "virial_mass": 1.0, "concentration": 3,
                                          "scale_radius": 1.0, "scale_density": 1.0}]},
                         context={"units": units})
    with pytest.raises(pydantic.ValidationError, match="point_mass"):
        P.model_validate({"potentials": [{"kind": "bulge", "mass": 1.0}]},
                         context={"units": units})
    cart = type("Ctx", (), {"units": units, "geometry": "cartesian"})()
    with pytest.raises(ParameterError, match="cylindrical"):
        Gravity(good, cart)
    with pytest.raises(ParameterError, match="at least one potential"):
        Gravity(P.model_validate({"potentials": []}, context={"units": units}), ctx)


USER_MODULE = '''
import numpy as np
from wind2d.physics import register
from wind2d.physics.gravity import Gravity
from wind2d.problem.schema import Q


@register("test_user_log_gravity")
class UserLogGravity(Gravity):
    class Params(Gravity.Params):
        v0: Q("velocity", "depth of the potential")

    def user_potential(self, R, z):
        return 0.5 * self.params.v0 ** 2 * np.log(0.25 + R * R + z * z)
'''

USER_PROBLEM = '''
title: user potential from a local module file
load_modules: [user_gravity.py]
grid:
  geometry: cylindrical
  R: {from: 0, to: 2, cells: 16}
  z: {from: -2, to: 2, cells: 32}
edges: {R_low: axis, R_high: reflecting, z_low: reflecting, z_high: reflecting}
physics:
  %s
setup: {kind: hydrostatic_atmosphere, rho0: 1.0, T: 0.5}
stop: {time: 1.0}
'''


def test_user_potential_from_a_module_file(tmp_path):
    # a subclass of the gravity module defining user_potential(R, z), loaded from a file,
    # must act exactly like the built-in logarithmic halo with the same formula
    # (Binney & Tremaine 2008, R_c = 0.5, q = 1)
    from wind2d.problem import build_simulation, load
    (tmp_path / "user_gravity.py").write_text(USER_MODULE)
    (tmp_path / "user.yaml").write_text(USER_PROBLEM % "test_user_log_gravity: {v0: 1.2}")
    (tmp_path / "builtin.yaml").write_text(USER_PROBLEM % (
        "gravity: {potentials: [{kind: logarithmic, v0: 1.2, core_radius: 0.5}]}"))
    sims = [build_simulation(load(tmp_path / name), comm=None)
            for name in ("user.yaml", "builtin.yaml")]
    user, builtin = sims
    assert type(user.modules[0]).__name__ == "UserLogGravity"
    R, z = user.mesh.centres()
    m = user.mesh
    assert np.allclose(user.modules[0].phic[m.js:m.je, m.is_:m.ie],
                       Logarithmic(1.2, 0.5).phi(R, z), rtol=1e-14, atol=0)
    # the setup used the user potential too: rho = exp(-(Phi - Phi(0, 0))/0.5)
    assert np.allclose(user.field("rho"), np.exp(-(Logarithmic(1.2, 0.5).phi(R, z)
                                                    - Logarithmic(1.2, 0.5).phi(0.0, 0.0)) / 0.5),
                       rtol=1e-13)
    for s in sims:
        s.advance(2.0)
    assert user.nstep == builtin.nstep > 15
    for k in ("rho", "vR", "vz", "p"):
        assert np.allclose(user.field(k), builtin.field(k), rtol=1e-10, atol=1e-12)
