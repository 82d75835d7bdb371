"""Gravity source terms from a static potential (kernels of the gravity module).

Notation for cell (j, i): centre potential Phi_c, R-face areas A_-, A_+,
volume per unit z V (in Cartesian geometry A = 1, V = dx), width dz; the
core's pressure force on R-momentum is ``-[A_+ (P_+ - P_c) - A_- (P_- - P_c)]/V``
(see core/geometry.py).

* Plain source (:func:`add_gravity`, exact face potentials Phi_f):

      S_R = -rho [A_+ (Phi_+ - Phi_c) - A_- (Phi_- - Phi_c)] / V,
      S_z = -rho (Phi_t - Phi_b) / dz,

  the core's pressure stencil applied to Phi (in Cartesian geometry
  -rho (Phi_+ - Phi_-)/dx).  Next to the axis, where the R centre is the
  volume centroid, this is consistent with the pressure term, unlike
  (Phi_+ - Phi_-)/dR.

* Well-balanced source (:func:`add_gravity_balanced`): the negative of the
  core's pressure force on the local isothermal hydrostatic state of the cell,
  p_hat_k = p_c exp(-(Phi_k - Phi_c)/theta_c), theta_c = p_c/rho_c, on the cells
  k of the reconstruction stencil, reconstructed exactly as the core
  reconstructs the pressure (same limiter per stage, ghosts filled like the
  pressure, face value = mean of the two one-sided values, as the Riemann
  solvers return for a fluid at rest).  A discrete isothermal hydrostatic
  state is then balanced to round-off in momentum for solvers whose rest-state
  pressure flux is the mean of the face pressures (HLLE), and up to a term
  quadratic in the face jumps for HLLC/HLLD.  What remains is the Riemann
  solvers' dissipation of mass and energy across reconstructed jumps (first
  order in the predictor stage and in limiter-clipped cells at walls, the
  axis and symmetric extrema): the gravity source cannot see it.  Where the
  scale height is unresolved (|Phi_k - Phi_c| > theta_c on the stencil) the
  source blends into the linear form with the reconstructed face potentials.

* Energy, both forms, with the stage mass fluxes F (outward normal n_f):

      dE = -dt sum_f A_f (F_f . n_f) (Phi_f - Phi_c) / V,

  so that gas energy plus potential energy sum_i V_i (E_i + rho_i Phi_c,i)
  changes only through the boundary faces: the face terms of two neighbours
  cancel against the mass update rho -= dt div F, and total energy is
  conserved to round-off with a static potential.
"""
import math

from numba import njit

from ...core.indexing import ONE, TWO, u
from ...core.reconstruct.plm import (G_CL, G_CR, G_DFL, G_DFR, G_IDC, G_IDL, G_IDR,
                                     limited_slope)
from ...state import IDN, IEN, IM1, IM2, IPR


@njit(cache=True, error_model="numpy")
def add_gravity(U, W, F1, F2, phic, phi1, phi2, dt, area1, vol1, dx2, iso,
                js, je, is_, ie):
    """Add ``dt`` times the gravity sources to the interior of ``U``."""
    for j in range(u(js), u(je)):
        rdz = 1.0 / dx2[j]
        for i in range(u(is_), u(ie)):
            d = W[IDN, j, i]
            pc = phic[j, i]
            a0 = area1[i]
            a1 = area1[i + ONE]
            rv = 1.0 / vol1[i]
            dm = phi1[j, i] - pc
            dp = phi1[j, i + ONE] - pc
            db = phi2[j, i] - pc
            dt_ = phi2[j + ONE, i] - pc
            U[IM1, j, i] -= dt * d * (a1 * dp - a0 * dm) * rv
            U[IM2, j, i] -= dt * d * (dt_ - db) * rdz
            if not iso:
                U[IEN, j, i] -= dt * ((a1 * F1[IDN, j, i + ONE] * dp
                                       - a0 * F1[IDN, j, i] * dm) * rv
                                      + (F2[IDN, j + ONE, i] * dt_ - F2[IDN, j, i] * db) * rdz)


@njit(cache=True, error_model="numpy")
def potential_energy(U, phic, vol1, dx2, js, je, is_, ie):
    """sum over interior cells of V rho Phi_c (per radian in cylindrical geometry)."""
    s = 0.0
    for j in range(u(js), u(je)):
        row = 0.0
        for i in range(u(is_), u(ie)):
            row += vol1[i] * U[IDN, j, i] * phic[j, i]
        s += row * dx2[j]
    return s


@njit(cache=True, error_model="numpy")
def face_potentials(phi, g1, g2, limiter, out1, out2, js, je, is_, ie):
    """Face potentials as the core's reconstruction sees a cell field.

    ``phi[j, i]`` holds the potential at cell centres with ghosts filled as the
    boundaries fill the pressure.  Each face gets the mean of the two
    reconstructed values (limited piecewise-linear with ``limiter`` and the
    core's coefficient tables ``g1``, ``g2``; 0 = first order, the cell values):
    ``out1`` on the R-faces ``is_ <= i <= ie`` of rows ``js <= j < je``,
    ``out2`` on the z-faces ``js <= j <= je`` of columns ``is_ <= i < ie``.
    """
    for j in range(js, je):
        for i in range(is_, ie + 1):
            # left cell i-1 at its upper face, right cell i at its lower face
            sl = limited_slope(phi[j, i - 2], phi[j, i - 1], phi[j, i],
                               g1[G_IDL, i - 1], g1[G_IDR, i - 1], g1[G_IDC, i - 1],
                               g1[G_CL, i - 1], g1[G_CR, i - 1], limiter)
            sr = limited_slope(phi[j, i - 1], phi[j, i], phi[j, i + 1],
                               g1[G_IDL, i], g1[G_IDR, i], g1[G_IDC, i],
                               g1[G_CL, i], g1[G_CR, i], limiter)
            out1[j, i] = 0.5 * ((phi[j, i - 1] + sl * g1[G_DFR, i - 1])
                                + (phi[j, i] + sr * g1[G_DFL, i]))
    for j in range(js, je + 1):
        for i in range(is_, ie):
            sl = limited_slope(phi[j - 2, i], phi[j - 1, i], phi[j, i],
                               g2[G_IDL, j - 1], g2[G_IDR, j - 1], g2[G_IDC, j - 1],
                               g2[G_CL, j - 1], g2[G_CR, j - 1], limiter)
            sr = limited_slope(phi[j - 1, i], phi[j, i], phi[j + 1, i],
                               g2[G_IDL, j], g2[G_IDR, j], g2[G_IDC, j],
                               g2[G_CL, j], g2[G_CR, j], limiter)
            out2[j, i] = 0.5 * ((phi[j - 1, i] + sl * g2[G_DFR, j - 1])
                                + (phi[j, i] + sr * g2[G_DFL, j]))


@njit(cache=True, error_model="numpy", inline="always")
def _pair(m0, m1, m3, m4, g, k, limiter):
    """Reconstructed values of the hydrostatic deviation m = p_hat/p_c - 1 on the
    lower and upper faces of cell ``k`` (m = 0 in the cell itself); each face
    value is the mean of the two one-sided reconstructions, as the core's
    Riemann solvers see a fluid at rest."""
    km = k - ONE
    kp = k + ONE
    s_m = limited_slope(m0, m1, 0.0, g[G_IDL, km], g[G_IDR, km], g[G_IDC, km],
                        g[G_CL, km], g[G_CR, km], limiter)
    s_0 = limited_slope(m1, 0.0, m3, g[G_IDL, k], g[G_IDR, k], g[G_IDC, k],
                        g[G_CL, k], g[G_CR, k], limiter)
    s_p = limited_slope(0.0, m3, m4, g[G_IDL, kp], g[G_IDR, kp], g[G_IDC, kp],
                        g[G_CL, kp], g[G_CR, kp], limiter)
    lo = 0.5 * ((m1 + s_m * g[G_DFR, km]) + s_0 * g[G_DFL, k])
    hi = 0.5 * (s_0 * g[G_DFR, k] + (m3 + s_p * g[G_DFL, kp]))
    return lo, hi


@njit(cache=True, error_model="numpy")
def add_gravity_balanced(U, W, F1, F2, phic, phig, f1, f2, g1, g2, limiter, dt, area1,
                         vol1, dx2, iso, js, je, is_, ie):
    """Add ``dt`` times the well-balanced gravity sources to the interior of ``U``.

    Momentum: the pressure force of the local isothermal hydrostatic state of
    each cell, p_hat_k = p_c exp(-(Phi_k - Phi_c)/theta_c) with theta_c = p_c/rho_c
    on the cells k of the reconstruction stencil (``phig``: centre potentials,
    ghosts filled as the boundaries fill the pressure), reconstructed exactly as
    the core reconstructs the pressure (``limiter``, coefficient tables ``g1``,
    ``g2``) and written with the core's stencil:

        S_R = +[A_+ (p_hat_+ - p_c) - A_- (p_hat_- - p_c)] / V,
        S_z = +(p_hat_t - p_hat_b) / dz,

    i.e. the negative of the core's pressure force on that local equilibrium.
    Where the potential changes by more than theta_c across the stencil (scale
    height below about one cell), with x_max = max |Phi_k - Phi_c|/theta_c, the
    hydrostatic part gets the weight 2 - x_max on 1 < x_max < 2 (0 beyond) and
    the rest goes to the linear form
    -rho_c [A_+ (Phi*_+ - Phi_c) - A_- (Phi*_- - Phi_c)]/V with the reconstructed
    face potentials ``f1``, ``f2``.  Energy: as :func:`add_gravity`.
    """
    for j in range(u(js), u(je)):
        rdz = 1.0 / dx2[j]
        for i in range(u(is_), u(ie)):
            d = W[IDN, j, i]
            p = W[IPR, j, i]
            th = p / d
            pg = phig[j, i]
            r0 = (phig[j, i - TWO] - pg) / th
            r1 = (phig[j, i - ONE] - pg) / th
            r3 = (phig[j, i + ONE] - pg) / th
            r4 = (phig[j, i + TWO] - pg) / th
            z0 = (phig[j - TWO, i] - pg) / th
            z1 = (phig[j - ONE, i] - pg) / th
            z3 = (phig[j + ONE, i] - pg) / th
            z4 = (phig[j + TWO, i] - pg) / th
            xm = max(max(max(abs(r0), abs(r1)), max(abs(r3), abs(r4))),
                     max(max(abs(z0), abs(z1)), max(abs(z3), abs(z4))))
            if not th > 0.0:
                xm = math.inf                # no pressure: the linear form only
            a0 = area1[i]
            a1 = area1[i + ONE]
            rv = 1.0 / vol1[i]
            pc = phic[j, i]
            dm = f1[j, i] - pc
            dp = f1[j, i + ONE] - pc
            db = f2[j, i] - pc
            dt_ = f2[j + ONE, i] - pc
            sR = -d * (a1 * dp - a0 * dm) * rv
            sz = -d * (dt_ - db) * rdz
            if xm < 2.0:                     # false for nan, too
                w = min(1.0, 2.0 - xm)
                lo, hi = _pair(math.expm1(-r0), math.expm1(-r1), math.expm1(-r3),
                               math.expm1(-r4), g1, i, limiter)
                bR = p * (a1 * hi - a0 * lo) * rv
                lo, hi = _pair(math.expm1(-z0), math.expm1(-z1), math.expm1(-z3),
                               math.expm1(-z4), g2, j, limiter)
                bz = p * (hi - lo) * rdz
                sR = w * bR + (1.0 - w) * sR
                sz = w * bz + (1.0 - w) * sz
            U[IM1, j, i] += dt * sR
            U[IM2, j, i] += dt * sz
            if not iso:
                U[IEN, j, i] -= dt * ((a1 * F1[IDN, j, i + ONE] * dp
                                       - a0 * F1[IDN, j, i] * dm) * rv
                                      + (F2[IDN, j + ONE, i] * dt_ - F2[IDN, j, i] * db) * rdz)
