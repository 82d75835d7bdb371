"""Exact integration of radiative cooling (Townsend 2009, ApJS 181, 391) and of
cooling with heating, through the ``cooling`` module.

References:
* isochoric cooling with one power law Lambda = Lambda0 (T/T0)^a has the closed
  form T(t) = T0 [1 - (1 - a) t / t_cool(T0)]^(1/(1-a)) (T0 exp(-t/t_cool) for
  a = 1), t_cool = e / (n_H^2 Lambda); for a < 1 it reaches T = 0 at
  t_cool / (1 - a) (Townsend 2009, section 2 and his test; methods notes item 7,
  [M; verified C]);
* piecewise curves and heating: scipy's solve_ivp (Radau, rtol 1e-12) on the
  same ODE, dT/dt = (gamma - 1) mu m_H / (k_B rho) (H - n_H^2 Lambda(T));
* the Rosen & Bregman (1995, ApJ 440, 634) coefficients [from memory, methods
  notes item 8] are typed in here again, independently of the module;
* Koyama & Inutsuka (2002, ApJ 564, L97) with the typo correction of
  Vazquez-Semadeni et al. (2007) [from memory]: the equilibria n Lambda(T) =
  Gamma are the roots of the formula found with scipy's brentq; methods notes
  item 8 lists them as [C]: 7492, 5006, 730, 160.5, 41.8 K for n = 0.1 ... 100.
"""
import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from wind2d import Simulation
from wind2d.physics.cooling import Cooling, curves
from wind2d.problem.units import K_B_CGS, M_H_CGS, UnitSystem

UNITS = UnitSystem("pc", "Myr", "Msun", mu=0.6)
GAMMA = 5.0 / 3.0
MU = 0.6
X = 0.7
PERIODIC = {k: "periodic" for k in ("x_low", "x_high", "y_low", "y_high")}

# Rosen & Bregman (1995) [from memory]: (T_low, coefficient, exponent)
RB95 = ((300.0, 2.2380e-32, 2.0), (2000.0, 1.0012e-30, 1.5), (8000.0, 4.6240e-36, 2.867),
        (1.0e5, 1.7800e-18, -0.65), (4.0e7, 3.2217e-27, 0.5))


def rb95(T):
    if T < 300.0:
        return 0.0
    for t, c, a in reversed(RB95):
        if T >= t:
            return c * T ** a


def ki02(T):
    return 2e-26 * (1e7 * math.exp(-1.184e5 / (T + 1000.0)) + 1.4e-2 * math.sqrt(T)
                    * math.exp(-92.0 / T))


def box(keys, n=(4, 4)):
    mod = Cooling.from_keys(keys, UNITS, mean_molecular_weight=MU)
    sim = Simulation("cartesian", (0.0, 1.0, n[0]), (0.0, 1.0, n[1]), PERIODIC,
                     gamma=GAMMA, modules=[mod], density_floor=1e-30, pressure_floor=1e-30)
    return sim, mod


def rho_code(n_H):
    """Code density of a gas with n_H [cm^-3]."""
    return n_H * M_H_CGS / X / UNITS.to_cgs("density")


def temperatures(sim, mod):
    m = sim.mesh
    U = sim.state.U[:, m.js:m.je, m.is_:m.ie]
    e = U[4] - 0.5 * (U[1] ** 2 + U[2] ** 2 + U[3] ** 2) / U[0]
    return e * (GAMMA - 1.0) / U[0] * mod.T_u


def ode_rate_coefficient(n_H):
    """dT/dt = C (H/n_H^2 - Lambda) in K/s, from the definitions (CGS)."""
    rho = n_H * M_H_CGS / X
    return (GAMMA - 1.0) * MU * M_H_CGS * n_H ** 2 / (K_B_CGS * rho)


@pytest.mark.parametrize("a", [0.5, -0.65, 0.0, 1.0, 2.0])
def test_single_power_law_matches_closed_form_with_any_step(a):
    n_H, T0, lam0 = 0.01, 1.0e6, 1.0e-22
    keys = {"curve": {"kind": "power_law", "Lambda0": f"{lam0} erg cm3 s-1", "T0": "1e6 K",
                      "alpha": a, "T_min": "100 K"}}
    C = ode_rate_coefficient(n_H)
    tc = T0 / (C * lam0) / UNITS.to_cgs("time")            # t_cool(T0) in code time
    times = np.array([0.05, 0.3, 0.9, 1.7, 2.5]) * tc

    def exact(t):
        if a == 1.0:
            return T0 * math.exp(-t / tc)
        base = 1.0 - (1.0 - a) * t / tc
        return T0 * base ** (1.0 / (1.0 - a)) if base > 0 else 0.0

    for nsteps in (1, 37):
        for t in times:
            sim, mod = box(keys)
            rho = rho_code(n_H)
            sim.set_primitive(rho=rho, p=rho * T0 / mod.T_u)
            e0 = float(np.sum(sim.conserved()[4] * sim.mesh.cell_volumes()))
            # unequal steps: the result must not depend on them
            w = np.linspace(1.0, 3.0, nsteps)
            for dt in w / w.sum() * t:
                sim.step(dt)
            T = temperatures(sim, mod)
            want = max(exact(t), 100.0)     # cooling stops at T_min (finite-time collapse)
            assert np.all(np.abs(T / want - 1.0) < 1e-10), (a, nsteps, t / tc, T[0, 0], want)
            # the radiated energy is the internal energy lost (closed, static box)
            e1 = float(np.sum(sim.conserved()[4] * sim.mesh.cell_volumes()))
            assert abs(mod.tallies["radiated_energy"] - (e0 - e1)) <= 1e-12 * e0
    if a < 1.0:
        assert times[-1] > tc / (1.0 - a)     # the checks include the finite-time collapse


def test_magnetised_gas_cools_by_the_same_law():
    # a strong uniform field (plasma beta 0.1) and a uniform flow change nothing: the
    # temperature follows the closed form (a = 0.5), the field and momenta stay put
    n_H, T0, lam0, a = 0.01, 1.0e6, 1.0e-22, 0.5
    keys = {"curve": {"kind": "power_law", "Lambda0": f"{lam0} erg cm3 s-1", "T0": "1e6 K",
                      "alpha": a}}
    mod = Cooling.from_keys(keys, UNITS, mean_molecular_weight=MU)
    sim = Simulation("cartesian", (0.0, 1.0, 4), (0.0, 1.0, 4), PERIODIC, gamma=GAMMA, mhd=True,
                     riemann="hlld", modules=[mod])
    rho = rho_code(n_H)
    p = rho * T0 / mod.T_u
    B = math.sqrt(2.0 * p / 0.1)
    sim.set_field(b1=0.6 * B, b2=0.8 * B)
    sim.set_primitive(rho=rho, p=p, vx=5.0, vy=-3.0, vz=1.0, Bz=0.0)
    U0 = sim.conserved()
    tc = T0 / (ode_rate_coefficient(n_H) * lam0) / UNITS.to_cgs("time")
    sim.step(0.8 * tc)
    m = sim.mesh
    U = sim.state.U[:, m.js:m.je, m.is_:m.ie]
    e = U[4] - 0.5 * (U[1] ** 2 + U[2] ** 2 + U[3] ** 2) / U[0] - 0.5 * (
        U[5] ** 2 + U[6] ** 2 + U[7] ** 2)
    T = e * (GAMMA - 1.0) / U[0] * mod.T_u
    want = T0 * (1.0 - (1.0 - a) * 0.8) ** (1.0 / (1.0 - a))
    assert np.all(np.abs(T / want - 1.0) < 1e-10), (T[0, 0], want)
    assert np.array_equal(U[:4], U0[:4]) and np.array_equal(U[5:], U0[5:])


def _split_once(keys, n_H, T0s, dt):
    """One split-source step of cells at temperatures T0s (no hydrodynamics)."""
    sim, mod = box(keys, n=(len(T0s), 1))
    rho = rho_code(n_H)
    sim.set_primitive(rho=rho, p=rho * np.asarray(T0s)[None, :] / mod.T_u)
    mod.split_source(sim, dt)
    return temperatures(sim, mod)[0], mod, sim


def _ode(lam, n_H, T0, t_s, H=0.0, T_floor=0.0, method="Radau"):
    """solve_ivp reference; pure cooling stops at ``T_floor`` (terminal event)."""
    C = ode_rate_coefficient(n_H)
    h = H / n_H ** 2

    def rhs(_t, y):
        return [C * (h - lam(y[0]))]
    floor = lambda _t, y: y[0] - T_floor * (1.0 + 1e-12)     # noqa: E731
    floor.terminal = True
    sol = solve_ivp(rhs, (0.0, t_s), [T0], method=method, rtol=1e-12, atol=1e-12 * T0,
                    events=floor if H == 0.0 and T_floor > 0 else None)
    assert sol.success
    return T_floor if sol.status == 1 else sol.y[0, -1]


@pytest.mark.parametrize("low", ["rosen_bregman", "koyama_inutsuka"])
def test_piecewise_curve_one_step_matches_ode(low):
    keys = {"curve": {"kind": "solar_cie", "low_temperature": low}}
    n_H = 1.0
    cur = Cooling.from_keys(keys, UNITS).curve
    if low == "rosen_bregman":
        lam = rb95                           # re-typed above, independent of the module
        T0s = (3.0e7, 2.0e5, 1.2e4, 800.0)
    else:
        # the module's own nodes of the Koyama-Inutsuka fit (their deviation from the
        # formula is tested below); above the join the curve is RB95
        Tn, Ln, An = cur.T, cur.lam, cur.alpha

        def lam(T):
            k = int(np.searchsorted(Tn, T, side="right")) - 1
            return Ln[k] * (T / Tn[k]) ** An[k] if k >= 0 else 0.0
        for T in (9e3, 1e4, 3e5, 5e7):
            assert abs(lam(T) / rb95(T) - 1) < 1e-12
        # not 3e7 K: three steps of its cooling time end near 14 K, where Lambda goes as
        # exp(-92/T) and solve_ivp's methods disagree with each other by 3e-6
        T0s = (2.0e6, 2.0e5, 1.2e4, 800.0)
    C = ode_rate_coefficient(n_H)
    for T0 in T0s:
        for f in (0.01, 0.3, 3.0, 30.0):
            # one step of f cooling times: from f = 3 on the gas crosses many segments
            dt_s = f * T0 / (C * lam(T0))
            got = _split_once(keys, n_H, [T0], dt_s / UNITS.to_cgs("time"))[0][0]
            want = _ode(lam, n_H, T0, dt_s, T_floor=cur.T[0], method="LSODA")
            # measured: largest difference 8e-11 (RB95) and 7e-9 (with KI02)
            assert abs(got / want - 1.0) < 1e-6, (low, f, T0, got, want)


def test_koyama_inutsuka_fit_and_equilibria():
    cur = curves.solar_cie("koyama_inutsuka")
    T_join = curves.ki02_rb95_crossing()
    # the fit's nodes follow the formula within its tolerance (1e-4 relative)
    T = np.geomspace(10.0, T_join, 20001)
    dev = np.abs(cur(T) / np.array([ki02(t) for t in T]) - 1.0)
    assert dev.max() < 1.1e-4
    assert abs(cur(T_join * (1 + 1e-9)) / rb95(T_join) - 1.0) < 1e-6   # continuous join
    # equilibria n Lambda(T) = Gamma (heating per H atom 2e-26 erg/s): a cell started
    # there stays, one started at twice the temperature relaxes to it
    methods_C = {0.1: 7492.0, 1.0: 5006.0, 3.0: 730.0, 10.0: 160.5, 100.0: 41.8}
    keys = {"curve": {"kind": "solar_cie", "low_temperature": "koyama_inutsuka"},
            "heating": {"per_atom": "2e-26 erg s-1"}}
    for n_H, T_c in methods_C.items():
        T_eq = brentq(lambda t: n_H * ki02(t) - 2e-26, 10.0, 1e4, xtol=1e-12)
        assert abs(T_eq / T_c - 1.0) < 2e-3            # methods notes [C], 4 digits
        t_long = 1e3 * T_eq / (ode_rate_coefficient(n_H) * 2e-26 / n_H)
        T1, mod, sim = _split_once(keys, n_H, [T_eq, 2.0 * T_eq], t_long / UNITS.to_cgs("time"))
        assert np.all(np.abs(T1 / T_eq - 1.0) < 2e-4), (n_H, T1, T_eq)
        # heating is on all the time: n_H Gamma t per volume, exactly
        heat = n_H * 2e-26 * t_long / UNITS.to_cgs("energy_density") * float(
            np.sum(sim.mesh.cell_volumes()))
        assert abs(mod.tallies["heating_energy"] / heat - 1.0) < 1e-12


CASES = [  # (T0 [K], n_H [cm^-3], heating per atom [erg/s], step in cooling times, T_off)
    (3.0e6, 1.0, 1e-24, 0.3, math.inf), (3.0e6, 1.0, 1e-24, 30.0, math.inf),
    (2.0e4, 0.1, 1e-25, 0.2, math.inf), (2.0e4, 0.1, 1e-25, 200.0, math.inf),
    (500.0, 1.0, 2e-26, 5.0, math.inf), (5.0e3, 1.0, 1e-21, 0.5, 1e6),
    (5.0e3, 1.0, 1e-21, 500.0, 1e6), (4.0e5, 1.0, 1e-23, 100.0, 3.0e4),
    (1.5e5, 0.3, 3e-22, 2.0, math.inf), (9.0e7, 0.01, 1e-20, 5.0, math.inf),
]


@pytest.mark.parametrize("T0,n_H,gamma_h,f,T_off", CASES)
def test_cooling_with_heating_matches_ode_and_is_step_independent(T0, n_H, gamma_h, f, T_off):
    keys = {"curve": {"kind": "solar_cie"}, "heating": {"per_atom": f"{gamma_h} erg s-1"}}
    if math.isfinite(T_off):
        keys["heating"]["off_above"] = f"{T_off} K"
    C = ode_rate_coefficient(n_H)
    H = n_H * gamma_h
    dt_s = f * T0 / (C * max(rb95(T0), H / n_H ** 2))
    T1, mod, sim = _split_once(keys, n_H, [T0], dt_s / UNITS.to_cgs("time"))
    if math.isfinite(T_off):
        # the ODE with a switch has a sliding state at T_off; integrate up to it by events
        C_h = H / n_H ** 2

        def rhs(_t, y):
            return [C * ((C_h if y[0] < T_off else 0.0) - rb95(y[0]))]
        ev = lambda _t, y: y[0] - T_off               # noqa: E731
        ev.terminal = True
        sol = solve_ivp(rhs, (0.0, dt_s), [T0], method="Radau", rtol=1e-12,
                        atol=1e-12 * T0, events=ev)
        if sol.status != 1:
            ref = sol.y[0, -1]
        elif C_h > rb95(T_off):
            ref = T_off                  # heating wins below, cooling above: it stays
        else:
            t1 = sol.t_events[0][0]      # cooled through T_off: on with heating
            ref = solve_ivp(rhs, (t1, dt_s), [T_off * (1 - 1e-15)], method="Radau",
                            rtol=1e-12, atol=1e-12 * T0).y[0, -1]
    else:
        ref = _ode(rb95, n_H, T0, dt_s, H)
    assert abs(T1[0] / ref - 1.0) < 1e-8, (T1[0], ref)
    # seven unequal steps land on the same state (the flow of an exact solution)
    sim2, mod2 = box(keys, n=(1, 1))
    rho = rho_code(n_H)
    sim2.set_primitive(rho=rho, p=rho * T0 / mod2.T_u)
    w = np.arange(1.0, 8.0)
    for dt in w / w.sum() * dt_s / UNITS.to_cgs("time"):
        mod2.split_source(sim2, dt)
    assert abs(temperatures(sim2, mod2)[0, 0] / T1[0] - 1.0) < 1e-10
    for k in ("heating_energy", "radiated_energy"):
        assert abs(mod2.tallies[k] - mod.tallies[k]) <= 1e-9 * abs(mod.tallies[k]) + 1e-12 * \
            float(np.sum(sim.conserved()[4] * sim.mesh.cell_volumes()))


@pytest.mark.parametrize("T0,n_H,gamma_h", [(3.0e6, 1.0, 1e-24), (2.0e4, 0.1, 1e-25),
                                            (500.0, 1.0, 2e-26), (1.5e5, 0.3, 3e-22)])
def test_short_steps_with_heating_match_ode(T0, n_H, gamma_h):
    # steps of 1e-6 to 1e-3 of the local time scale (the Taylor branch of the solver):
    # the change of T matches solve_ivp (DOP853, rtol 1e-13) to 1e-8 of itself
    keys = {"curve": {"kind": "solar_cie"}, "heating": {"per_atom": f"{gamma_h} erg s-1"}}
    C = ode_rate_coefficient(n_H)
    H = n_H * gamma_h
    h = H / n_H ** 2
    for f in (1e-6, 1e-5, 1e-4, 1e-3):
        dt_s = f * T0 / (C * max(rb95(T0), h) * 6.0)
        T1 = _split_once(keys, n_H, [T0], dt_s / UNITS.to_cgs("time"))[0][0]
        sol = solve_ivp(lambda _t, y: [C * (h - rb95(T0 + y[0]))], (0.0, dt_s), [0.0],
                        method="DOP853", rtol=1e-13, atol=1e-30)
        dT = sol.y[0, -1]
        assert abs((T1 - T0) / dT - 1.0) < 1e-8, (f, T1 - T0, dT)


def test_floor_and_ceiling():
    # floor: cooling stops there; a colder cell is raised to it (the energy is recorded)
    keys = {"curve": {"kind": "solar_cie"}, "floor": "1e4 K", "ceiling": "1e7 K",
            "heating": {"per_atom": "1e-20 erg s-1"}}
    n_H = 1.0
    T0s = [2.0e3, 5.0e4, 2.0e6, 5.0e7]
    T1, mod, sim = _split_once({**keys, "heating": {}}, n_H, T0s, 100.0)
    assert np.all(T1 == pytest.approx(1e4, rel=1e-14))
    # the reset energy: the 2e3 K cell raised to 1e4 K, the 5e7 K cell lowered to 1e7 K
    de = (1e4 - 2e3 + 1e7 - 5e7) * rho_code(n_H) / ((GAMMA - 1.0) * mod.T_u) * \
        float(sim.mesh.cell_volumes()[0, 0])
    assert mod.tallies["temperature_limit_energy"] == pytest.approx(de, rel=1e-12)
    # ceiling: strong heating drives the gas up to the ceiling and no further
    T1, mod, _ = _split_once(keys, n_H, T0s, 100.0)
    assert np.all(T1 == pytest.approx(1e7, rel=1e-14))
