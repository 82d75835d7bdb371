"""Exact solution of the Riemann problem for the 1D Euler equations (ideal gas).

Method: Toro, *Riemann Solvers and Numerical Methods for Fluid Dynamics*,
3rd ed., Springer 2009, chapter 4 (written here from the equations of that
chapter, as summarised from memory in the project's methods notes):

* the pressure function f(p) = f_L(p) + f_R(p) + (u_R - u_L), with
  f_K the shock (Rankine-Hugoniot) branch for p > p_K and the rarefaction
  (isentropic) branch for p <= p_K (Toro eqs. 4.6-4.8);
* its root p* by Newton iteration from the two-rarefaction guess, polished
  (and bracketed if Newton stalls) with scipy.optimize.brentq;
* u* = (u_L + u_R)/2 + (f_R(p*) - f_L(p*))/2 (Toro eq. 4.9);
* the star densities from the shock adiabat or the isentrope, and sampling of
  the self-similar solution W(x/t) through shocks, fans and the contact
  (Toro sec. 4.5).

Only vacuum-free data are handled (the pressure positivity condition
2(c_L + c_R)/(gamma - 1) > u_R - u_L, Toro eq. 4.40, is checked).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq


@dataclass(frozen=True)
class StarState:
    """Star region of a Riemann problem and the type of each outer wave."""

    p: float
    u: float
    rho_l: float
    rho_r: float
    left_wave: str     # "shock" or "rarefaction"
    right_wave: str


def _f_k(p, rho, pk, gamma):
    """f_K(p) and its derivative (Toro eqs. 4.6, 4.7, 4.37)."""
    c = math.sqrt(gamma * pk / rho)
    if p > pk:
        a = 2.0 / ((gamma + 1.0) * rho)
        b = (gamma - 1.0) / (gamma + 1.0) * pk
        q = math.sqrt(a / (p + b))
        return (p - pk) * q, q * (1.0 - 0.5 * (p - pk) / (p + b))
    e = (gamma - 1.0) / (2.0 * gamma)
    return (2.0 * c / (gamma - 1.0)) * ((p / pk) ** e - 1.0), \
        (p / pk) ** (-(gamma + 1.0) / (2.0 * gamma)) / (rho * c)


def star_state(left, right, gamma: float = 1.4, tol: float = 1e-14) -> StarState:
    """Star state for primitive states ``left = (rho, u, p)`` and ``right``."""
    rl, ul, pl = map(float, left)
    rr, ur, pr = map(float, right)
    if min(rl, rr, pl, pr) <= 0:
        raise ValueError("densities and pressures must be positive")
    cl, cr = math.sqrt(gamma * pl / rl), math.sqrt(gamma * pr / rr)
    if 2.0 * (cl + cr) / (gamma - 1.0) <= ur - ul:
        raise ValueError("the initial data generate vacuum (Toro eq. 4.40 violated)")

    def f(p):
        return _f_k(p, rl, pl, gamma)[0] + _f_k(p, rr, pr, gamma)[0] + ur - ul

    # Two-rarefaction approximation as the starting guess (Toro eq. 4.46).
    e = (gamma - 1.0) / (2.0 * gamma)
    p = ((cl + cr - 0.5 * (gamma - 1.0) * (ur - ul))
         / (cl / pl ** e + cr / pr ** e)) ** (1.0 / e)
    p = max(p, 1e-12 * min(pl, pr))
    for _ in range(100):
        fl, dl = _f_k(p, rl, pl, gamma)
        fr, dr = _f_k(p, rr, pr, gamma)
        pn = p - (fl + fr + ur - ul) / (dl + dr)
        if pn <= 0:
            pn = 0.5 * p
        if abs(pn - p) <= tol * 0.5 * (pn + p):
            p = pn
            break
        p = pn
    # f is monotone increasing in p; bracket the root and polish with brentq.
    lo, hi = p * (1 - 1e-8), p * (1 + 1e-8)
    while f(lo) > 0:
        lo *= 0.5
    while f(hi) < 0:
        hi *= 2.0
    p = brentq(f, lo, hi, xtol=1e-300, rtol=4 * np.finfo(float).eps, maxiter=500)

    fl = _f_k(p, rl, pl, gamma)[0]
    fr = _f_k(p, rr, pr, gamma)[0]
    u = 0.5 * (ul + ur) + 0.5 * (fr - fl)
    g = (gamma - 1.0) / (gamma + 1.0)

    def rho_star(rk, pk):
        if p > pk:                       # shock adiabat (Toro eqs. 4.50, 4.57)
            return rk * (p / pk + g) / (g * p / pk + 1.0)
        return rk * (p / pk) ** (1.0 / gamma)   # isentrope (Toro eqs. 4.53, 4.60)

    return StarState(p, u, rho_star(rl, pl), rho_star(rr, pr),
                     "shock" if p > pl else "rarefaction",
                     "shock" if p > pr else "rarefaction")


def wave_speeds(left, right, gamma: float = 1.4) -> dict:
    """Speeds of the wave edges: shock speeds, fan head/tail, contact."""
    st = star_state(left, right, gamma)
    rl, ul, pl = map(float, left)
    rr, ur, pr = map(float, right)
    cl, cr = math.sqrt(gamma * pl / rl), math.sqrt(gamma * pr / rr)
    out = {"contact": st.u}
    if st.left_wave == "shock":      # Toro eq. 4.52
        out["left_shock"] = ul - cl * math.sqrt((gamma + 1) / (2 * gamma) * st.p / pl
                                                + (gamma - 1) / (2 * gamma))
    else:                            # Toro eqs. 4.55, 4.56
        out["left_head"] = ul - cl
        out["left_tail"] = st.u - cl * (st.p / pl) ** ((gamma - 1) / (2 * gamma))
    if st.right_wave == "shock":     # Toro eq. 4.59
        out["right_shock"] = ur + cr * math.sqrt((gamma + 1) / (2 * gamma) * st.p / pr
                                                 + (gamma - 1) / (2 * gamma))
    else:                            # Toro eqs. 4.62, 4.63
        out["right_head"] = ur + cr
        out["right_tail"] = st.u + cr * (st.p / pr) ** ((gamma - 1) / (2 * gamma))
    return out


def sample(left, right, s, gamma: float = 1.4):
    """Exact solution (rho, u, p) at similarity coordinates ``s = (x - x0)/t``.

    ``s`` may be any array; the three returned arrays have its shape.
    Follows the sampling procedure of Toro sec. 4.5 (Fig. 4.14).
    """
    st = star_state(left, right, gamma)
    rl, ul, pl = map(float, left)
    rr, ur, pr = map(float, right)
    cl, cr = math.sqrt(gamma * pl / rl), math.sqrt(gamma * pr / rr)
    sp = wave_speeds(left, right, gamma)
    s = np.asarray(s, dtype=np.float64)
    rho, u, p = np.empty_like(s), np.empty_like(s), np.empty_like(s)
    gm1, gp1 = gamma - 1.0, gamma + 1.0

    left_side = s <= st.u
    # ---- left of the contact
    if st.left_wave == "shock":
        outer = left_side & (s < sp["left_shock"])
        star = left_side & ~outer
        fan = np.zeros_like(s, dtype=bool)
    else:
        outer = left_side & (s < sp["left_head"])
        star = left_side & (s > sp["left_tail"])
        fan = left_side & ~outer & ~star
    rho[outer], u[outer], p[outer] = rl, ul, pl
    rho[star], u[star], p[star] = st.rho_l, st.u, st.p
    if fan.any():                    # inside the left fan (Toro eq. 4.56)
        q = 2.0 / gp1 + gm1 / (gp1 * cl) * (ul - s[fan])
        rho[fan] = rl * q ** (2.0 / gm1)
        u[fan] = 2.0 / gp1 * (cl + 0.5 * gm1 * ul + s[fan])
        p[fan] = pl * q ** (2.0 * gamma / gm1)

    right_side = ~left_side
    # ---- right of the contact
    if st.right_wave == "shock":
        outer = right_side & (s > sp["right_shock"])
        star = right_side & ~outer
        fan = np.zeros_like(s, dtype=bool)
    else:
        outer = right_side & (s > sp["right_head"])
        star = right_side & (s < sp["right_tail"])
        fan = right_side & ~outer & ~star
    rho[outer], u[outer], p[outer] = rr, ur, pr
    rho[star], u[star], p[star] = st.rho_r, st.u, st.p
    if fan.any():                    # inside the right fan (Toro eq. 4.63)
        q = 2.0 / gp1 - gm1 / (gp1 * cr) * (ur - s[fan])
        rho[fan] = rr * q ** (2.0 / gm1)
        u[fan] = 2.0 / gp1 * (-cr + 0.5 * gm1 * ur + s[fan])
        p[fan] = pr * q ** (2.0 * gamma / gm1)
    return rho, u, p


def solution(left, right, x, t, x0: float = 0.5, gamma: float = 1.4):
    """Exact (rho, u, p) at positions ``x`` and time ``t > 0``."""
    return sample(left, right, (np.asarray(x, dtype=np.float64) - x0) / t, gamma)


def cell_average(left, right, edges, t, x0: float = 0.5, gamma: float = 1.4,
                 sub: int = 16):
    """Cell averages of (rho, u, p) over cells with the given ``edges`` (midpoint
    rule on ``sub`` sub-cells; primitive u and p are averaged, not conserved)."""
    edges = np.asarray(edges, dtype=np.float64)
    frac = (np.arange(sub) + 0.5) / sub
    xs = edges[:-1, None] + np.diff(edges)[:, None] * frac[None, :]
    r, u, p = solution(left, right, xs, t, x0, gamma)
    return r.mean(axis=1), u.mean(axis=1), p.mean(axis=1)
