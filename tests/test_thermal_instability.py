"""Field (1965, ApJ 142, 531) thermal instability with the ``cooling`` module.

A periodic box of uniform gas where power-law cooling n_H^2 Lambda0 (T/T0)^a
is balanced by a heating rate per hydrogen atom (n_H Gamma, Gamma = n_H0
Lambda0), seeded with a small sinusoidal perturbation of Field's condensation
mode.

Linear theory (derived here, as in Field 1965 without conduction; methods notes
item 9).  With L(rho, T) = (n_H^2 Lambda - n_H Gamma) / rho the net loss per
unit mass, c^2 = p/rho, and perturbations ~ exp(n t + i k x), the linearised
continuity, momentum, energy and state equations

    n drho + i k rho dv = 0,   rho n dv = -i k dp,   dp/p = drho/rho + dT/T,
    n dp / (gamma - 1) - gamma c^2 n drho / (gamma - 1) = -rho (L_rho drho + L_T dT)

give dp = -(n^2/k^2) drho and Field's cubic

    n^3 + (gamma - 1) (rho T / p) L_T n^2 + gamma c^2 k^2 n
        + (gamma - 1) k^2 (T L_T - rho L_rho) = 0,

solved with numpy.roots; the condensation mode is the real root.  For k -> oo
it tends to the isobaric rate n = -((gamma-1)/gamma)(T/c^2)(dL/dT)_p, which for
this heating is (1 - a) / (gamma t_cool): unstable for a < 1 (the isobaric
criterion), t_cool = e / (n_H^2 Lambda).  Here L_T = n_H^2 a Lambda / (rho T)
and L_rho = n_H^2 Lambda / rho^2 at the equilibrium.

The measured growth rate of the density Fourier amplitude must match the root
within 10 % (methods notes expect 2-5 % at >= 32 cells per wavelength); a case
with a = 2 (above the criterion) must decay instead.
"""
import math

import numpy as np

from wind2d import Simulation
from wind2d.physics.cooling import Cooling
from wind2d.problem.units import K_B_CGS, M_H_CGS, UnitSystem

UNITS = UnitSystem("pc", "Myr", "Msun", mu=0.6)
GAMMA, MU, X = 5.0 / 3.0, 0.6, 0.7
N_H, T0, LAM0 = 0.01, 1.0e6, 1.0e-22          # cm^-3, K, erg cm^3 s^-1


def field_rates(a, k_cgs):
    """Roots of Field's cubic [1/s] for Lambda = LAM0 (T/T0)^a at n_H = N_H, T = T0."""
    rho = N_H * M_H_CGS / X
    p = rho * K_B_CGS * T0 / (MU * M_H_CGS)
    L_T = N_H ** 2 * a * LAM0 / (rho * T0)
    L_rho = N_H ** 2 * LAM0 / rho ** 2
    return np.roots([1.0, (GAMMA - 1.0) * rho * T0 / p * L_T, GAMMA * p / rho * k_cgs ** 2,
                     (GAMMA - 1.0) * k_cgs ** 2 * (T0 * L_T - rho * L_rho)])


def run(a, cells=128, eps=1e-4, t_end_cool=3.0):
    rho_cgs = N_H * M_H_CGS / X
    c = math.sqrt(K_B_CGS * T0 / (MU * M_H_CGS))
    t_cool = rho_cgs * K_B_CGS * T0 / ((GAMMA - 1.0) * MU * M_H_CGS) / (N_H ** 2 * LAM0)
    lam_cgs = c * t_cool                            # one wavelength: c t_cool (k c t_cool = 2 pi)
    k_cgs = 2.0 * math.pi / lam_cgs
    roots = field_rates(a, k_cgs)
    n_cgs = float(roots[np.argmax(roots.real)].real)
    mode = float(roots[np.abs(roots.imag) < 1e-12 * np.abs(roots).max()].real[0])
    # the root is close to the isobaric limit (1 - a) / (gamma t_cool) at this k
    assert abs(mode * t_cool * GAMMA / (1.0 - a) - 1.0) < 0.02

    L = lam_cgs / UNITS.to_cgs("length")
    dx = L / cells
    mod = Cooling.from_keys({"curve": {"kind": "power_law", "Lambda0": f"{LAM0} erg cm3 s-1",
                                       "T0": f"{T0} K", "alpha": a, "T_min": "1e3 K"},
                             "heating": {"per_atom": f"{N_H * LAM0} erg s-1"}},
                            UNITS, mean_molecular_weight=MU)
    per = {k: "periodic" for k in ("x_low", "x_high", "y_low", "y_high")}
    sim = Simulation("cartesian", (0.0, L, cells), (0.0, 4 * dx, 4), per, gamma=GAMMA,
                     riemann="hllc", modules=[mod])
    rho0 = rho_cgs / UNITS.to_cgs("density")
    p0 = rho0 * T0 / mod.T_u
    k = 2.0 * math.pi / L
    n = mode * UNITS.to_cgs("time")                 # the condensation mode's eigenvector
    sim.set_primitive(rho=lambda x, y: rho0 * (1.0 + eps * np.cos(k * x)),
                      vx=lambda x, y: -(n / k) * eps * np.sin(k * x),
                      p=lambda x, y: p0 - (n / k) ** 2 * rho0 * eps * np.cos(k * x))
    x = sim.mesh.centres()[0][0]
    phase = np.exp(-1j * k * x)

    def amplitude():
        drho = sim.field("rho").mean(axis=0) - rho0
        return abs(np.sum(drho * phase)) * 2.0 / cells / rho0

    tc = t_cool / UNITS.to_cgs("time")
    ts, amps = [0.0], [amplitude()]
    while sim.t < t_end_cool * tc:
        sim.step(min(sim.max_dt(), t_end_cool * tc - sim.t))
        ts.append(sim.t)
        amps.append(amplitude())
    ts, amps = np.array(ts) / tc, np.array(amps)
    fit = ts > 0.3
    rate = np.polyfit(ts[fit], np.log(amps[fit]), 1)[0]      # per cooling time
    return rate, n_cgs * t_cool, mode * t_cool, amps


def test_isobaric_condensation_mode_grows_at_fields_rate():
    # a = -0.65: the slope of the Rosen & Bregman curve above 1e5 K (hot wind gas)
    rate, n_max, mode, amps = run(-0.65)
    assert n_max == mode > 0                          # the fastest mode is the condensation mode
    # measured (128 cells): 0.98513 per t_cool against Field's root 0.98506 (+7e-5)
    assert abs(rate / mode - 1.0) < 0.10, (rate, mode)
    assert amps[-1] / amps[0] > math.exp(0.9 * 2.7 * mode)


def test_stable_exponent_does_not_grow():
    # a = 2 > 1: isobarically stable (Field's criterion); all roots have Re n < 0
    rate, n_max, mode, amps = run(2.0)
    assert n_max < 0 and mode < 0
    assert amps[-1] < amps[0] and np.all(amps <= amps[0] * (1.0 + 1e-3))
    # the condensation mode decays at its rate (measured: -0.607823 vs -0.607817)
    assert abs(rate / mode - 1.0) < 0.10, (rate, mode)
