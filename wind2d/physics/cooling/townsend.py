"""Exact integration of radiative cooling (Townsend 2009, ApJS 181, 391) and
its extension to cooling with heating.

At fixed density the gas temperature obeys

    dT/dt = K (h - Lambda(T)),     K = T_u (gamma - 1) rho,  h = H / rho^2,

in code units where the cooling per volume is ``rho^2 Lambda(T)`` (the curve
scaled once by ``X^2 (rho_u / m_H)^2 t_u / P_u``), ``H`` is the heating per
volume and ``T_u = mu m_H v_u^2 / k_B`` converts ``p / rho`` to kelvin.
``Lambda`` is a piecewise power law (``curves.py``): on segment ``k``,
``Lambda = L_k (T / T_k)^a_k``.

Cooling only (h = 0): Townsend's exact integration
---------------------------------------------------
With the reference node ``T_r`` (the top node) and ``L_r = Lambda(T_r)``, the
temporal evolution function

    Y(T) = (L_r / T_r) int_T^{T_r} dT' / Lambda(T')

is, on segment k (``x = ln(T / T_k)``, ``pw(c, x) = (e^{c x} - 1) / c``),

    Y(T) = Y_k - (L_r / T_r) (T_k / L_k) pw(1 - a_k, x),

with ``Y_k`` summed down from ``Y_{top} = 0``.  The step is exact for any
``dt``:  ``Y(T^{n+1}) = Y(T^n) + K L_r dt / T_r``, inverted segment by
segment (``x = log1p(c s) / c``).  A step that ends in the segment where it
starts is evaluated relative to ``T^n`` (the same formula, written without
``Y``, which saturates for ``a > 1`` far above the reference node and would
cost digits).  Cooling stops at ``T_lo`` (the larger of the curve's first node
and the floor); a power law with exponent below 1 reaches it in finite time.
No sub-steps and no time-step limit.

Cooling with heating: exact solution of the scalar ODE
------------------------------------------------------
Townsend's method covers cooling alone.  With heating, ``h`` is still
constant during a step (it depends on density only), so the step is the flow
of an autonomous scalar ODE: ``T`` moves monotonically and never crosses an
equilibrium ``Lambda(T) = h``.  :func:`net_exact` walks through the pieces
between barriers (segment nodes, the heating switch-off temperature, the
floor, the ceiling), using on each the time to traverse it, and solves for the
end point inside the piece where the time runs out.  On a segment with
``a != 0`` (``q_k = L_k / h``, ``u = ln q_k + a x``, pole ``x_* = -ln(q_k)/a``
where ``Lambda = h``):

    t = (T_k / (K h)) int e^x dx / (1 - e^u),

evaluated to round-off with three representations chosen by ``|u|``:

* far from equilibrium (``|u| >= 4``): the geometric series of
  ``1/(1 - e^u)`` (ratio ``<= e^-4``), integrated term by term;
* near it (``|u| < min(1, |a|)``): with ``d = x - x_*``,
  ``e^x / (1 - e^u) = -e^{x_*} e^d B(a d) / (a d)``, ``B(z) = z / (e^z - 1)``
  expanded with Bernoulli numbers, so ``t`` is ``-(e^{x_*}/a)[ln|d| + P(d)]``
  with a convergent power series ``P`` (40 terms): the logarithmic approach
  to the equilibrium is exact and the end point is found by Newton's method
  in ``ln|d|``;
* in between, and on any interval shorter than half the distance to the
  pole: Gauss-Legendre panels in ``x`` with as many points (up to 10) as the
  distance of the nearest singularity requires for 1e-17.

End points away from the near regime come from a safeguarded Newton iteration
in ``x`` that carries the integral along.  Segments with ``a = 0``,
cooling-free ranges and heating-free pieces are integrated in closed form
(the last by the Townsend formula of the segment).  When the net rate changes
sign across a barrier (heating switched off above ``T_off``, the ceiling, the
floor, a jump of a discontinuous curve) the gas stays at the barrier; the
heating recorded there is the rate that balances cooling, ``min(h, Lambda)``.
A short step inside one segment uses the 4th-order Taylor series of the
solution instead, when its remainder (about ``T delta E^4 / 120``, ``delta``
the fractional change and ``E`` the step over the relaxation time plus
``delta (|a| + 3)``) is below round-off.  tests/test_cooling_exact.py checks
all of this against scipy's solve_ivp.

Energy bookkeeping: the heating added is ``rho^2 int h_eff dt`` (exact, ``h``
is constant on every piece); the energy radiated is that heating minus the
change of the internal energy, so the budget closes to round-off.
"""
from __future__ import annotations

import math

import numpy as np
from numba import njit


NB = 40                      # terms of the series near an equilibrium
GL_MAX = 10                  # Gauss-Legendre rules of 1 to 10 points, row n = n points
GL_X = np.zeros((GL_MAX + 1, GL_MAX))
GL_W = np.zeros((GL_MAX + 1, GL_MAX))
for _n in range(1, GL_MAX + 1):
    GL_X[_n, :_n], GL_W[_n, :_n] = np.polynomial.legendre.leggauss(_n)
PANEL = 0.5                  # widest Gauss-Legendre panel in ln T
S_MIN = math.log(1e-18)      # |ln T - ln T_eq| below which T is T_eq to round-off
U_FAR = 4.0                  # |ln(Lambda/h)| from which the geometric series is used


def bernoulli_products(alpha: np.ndarray) -> np.ndarray:
    """Coefficients ``c[k, n]`` of ``e^d B(a_k d) = sum_n c[k, n] d^n`` with
    ``B(z) = z / (e^z - 1) = sum_j B_j z^j / j!`` (Bernoulli numbers, B_1 = -1/2)."""
    from scipy.special import bernoulli
    Bj = bernoulli(NB - 1)[:NB]
    fact = np.array([math.factorial(n) for n in range(NB)], dtype=np.float64)
    out = np.zeros((len(alpha), NB))
    for k, a in enumerate(np.asarray(alpha, dtype=np.float64)):
        b = Bj * a ** np.arange(NB) / fact
        for n in range(NB):
            out[k, n] = np.sum(b[:n + 1] / fact[n::-1])
    return out


def y_nodes(T: np.ndarray, L: np.ndarray, A: np.ndarray) -> np.ndarray:
    """Townsend's ``Y_k`` at the nodes (``Y`` of the top node is 0)."""
    n = len(T)
    Y = np.zeros(n)
    Tr, Lr = T[-1], L[-1]
    for k in range(n - 2, -1, -1):
        Y[k] = Y[k + 1] + (Lr / Tr) * (T[k] / L[k]) * pw(1.0 - A[k], math.log(T[k + 1] / T[k]))
    return Y


# ----------------------------------------------------------------------- helpers
@njit(cache=True, error_model="numpy")
def pw(c, x):
    """``(e^{c x} - 1) / c`` (``x`` at ``c = 0``): the integral of e^{c s} on [0, x]."""
    if c == 0.0:
        return x
    return math.expm1(c * x) / c


@njit(cache=True, error_model="numpy")
def inv_pw(c, s):
    """``x`` with ``pw(c, x) = s``; -inf or +inf when no finite ``x`` exists."""
    if c == 0.0:
        return s
    a = c * s
    if a <= -1.0:
        return -math.inf if c > 0.0 else math.inf
    return math.log1p(a) / c


@njit(cache=True, error_model="numpy")
def segment(Tn, T):
    """Largest k with ``Tn[k] <= T`` (-1 below the first node)."""
    lo, hi = 0, len(Tn)
    while lo < hi:
        mid = (lo + hi) // 2
        if Tn[mid] <= T:
            lo = mid + 1
        else:
            hi = mid
    return lo - 1


@njit(cache=True, error_model="numpy")
def segment_below(Tn, T):
    """Largest k with ``Tn[k] < T`` (-1 at or below the first node)."""
    lo, hi = 0, len(Tn)
    while lo < hi:
        mid = (lo + hi) // 2
        if Tn[mid] < T:
            lo = mid + 1
        else:
            hi = mid
    return lo - 1


@njit(cache=True, error_model="numpy")
def lam_at(Tn, Ln, An, T):
    """Lambda(T) (zero below the first node)."""
    k = segment(Tn, T)
    if k < 0:
        return 0.0
    return Ln[k] * (T / Tn[k]) ** An[k]


# ----------------------------------------------------------------------- Townsend
@njit(cache=True, error_model="numpy")
def y_of_t(T, Tn, Ln, An, Yn):
    """Townsend's temporal evolution function Y(T) (+inf below the first node)."""
    k = segment(Tn, T)
    if k < 0:
        return math.inf
    n = len(Tn)
    Tr, Lr = Tn[n - 1], Ln[n - 1]
    return Yn[k] - (Lr / Tr) * (Tn[k] / Ln[k]) * pw(1.0 - An[k], math.log(T / Tn[k]))


@njit(cache=True, error_model="numpy")
def t_of_y(Y, Tn, Ln, An, Yn):
    """Inverse of :func:`y_of_t` (the first node for Y above its value there)."""
    n = len(Tn)
    if Y >= Yn[0]:
        return Tn[0]
    # Yn decreases with k: largest k with Yn[k] >= Y
    lo, hi = 0, n
    while lo < hi:
        mid = (lo + hi) // 2
        if Yn[mid] >= Y:
            lo = mid + 1
        else:
            hi = mid
    k = lo - 1
    Tr, Lr = Tn[n - 1], Ln[n - 1]
    s = (Yn[k] - Y) * (Tr / Lr) * (Ln[k] / Tn[k])
    x = inv_pw(1.0 - An[k], s)
    return Tn[k] * math.exp(x)


@njit(cache=True, error_model="numpy")
def cool_exact(T, dY, T_lo, Y_lo, Tn, Ln, An, Yn):
    """One exact cooling step: ``Y(T_new) = Y(T) + dY`` with ``dY = K L_r dt / T_r``;
    cooling stops at ``T_lo`` (``Y_lo = Y(T_lo)``).

    A step that ends in the segment of ``T`` is evaluated relative to ``T``:
    with ``d = dt / t_cool(T)`` and ``c = 1 - a``, ``ln(T / T_new) = -log1p(-c d)
    / c``, the same exact solution without the round-off of ``Y`` where ``Y``
    saturates (``a > 1`` far above the reference node)."""
    if T <= T_lo:
        return T
    n = len(Tn)
    Tr, Lr = Tn[n - 1], Ln[n - 1]
    k = segment(Tn, T)
    c = 1.0 - An[k]
    L = Ln[k] * (T / Tn[k]) ** An[k]
    d = dY * (Tr / Lr) * L / T
    base = Tn[k] if Tn[k] > T_lo else T_lo
    if d < -pw(c, -math.log(T / base)):
        T1 = T * math.exp(inv_pw(c, -d))
        return T1 if T1 > base else base
    if base == T_lo:
        return T_lo
    Y = y_of_t(T, Tn, Ln, An, Yn) + dY
    if Y >= Y_lo:
        return T_lo
    T1 = t_of_y(Y, Tn, Ln, An, Yn)
    return T1 if T1 > T_lo else T_lo


# ----------------------------------------------------------------------- with heating
@njit(cache=True, error_model="numpy")
def _f(x, lq, al):
    # e^x / (1 - e^u), u = ln q_k + a x
    return -math.exp(x) / math.expm1(lq + al * x)


@njit(cache=True, error_model="numpy")
def _far_time(xa, xb, lq, al):
    """int_xa^xb e^x/(1 - e^u) dx for |u| >= U_FAR on the path (geometric series
    of ratio e^-|u| <= e^-4, integrated term by term)."""
    if math.isinf(xb):
        return math.inf
    ua = lq + al * xa
    ub = lq + al * xb
    dx = xb - xa
    if ua < 0.0:        # heating dominates: 1/(1-Q) = sum_{m>=0} Q^m
        sign, step, m0 = 1.0, al, 0
        Fa, Fb = math.exp(xa), math.exp(xb)
        ra, rb = math.exp(ua), math.exp(ub)
    else:               # cooling dominates: 1/(1-Q) = -sum_{m>=1} Q^-m
        sign, step, m0 = -1.0, -al, 1
        Fa, Fb = math.exp(xa - ua), math.exp(xb - ub)
        ra, rb = math.exp(-ua), math.exp(-ub)
    s = 0.0
    for m in range(m0, m0 + 60):
        c = 1.0 + m * step
        if abs(c * dx) < 0.5:
            term = Fa * pw(c, dx)
        else:
            term = (Fb - Fa) / c
        s += term
        if abs(term) <= 1e-17 * abs(s):
            break
        Fa *= ra
        Fb *= rb
    return sign * s


@njit(cache=True, error_model="numpy")
def _near_terms(d, al):
    """Terms of the pole expansion needed at |d| for 1e-17: the coefficients are
    below 120 r0^-n with r0 = 4 / max(1, |a|) (Cauchy's estimate inside the
    radius 2 pi / |a|, with e^d bounded on the circle)."""
    r = abs(d) * max(1.0, abs(al)) / 4.0
    if r <= 0.0:
        return 2
    n = int(math.ceil(43.8 / -math.log(r))) + 1 if r < 0.5 else NB
    return min(max(n, 2), NB)


@njit(cache=True, error_model="numpy")
def _near_series(d, cn, nt):
    # P(d) = sum_{n>=1} c_n d^n / n  and  S(d) = sum_{n>=0} c_n d^n, nt terms
    P = 0.0
    S = 0.0
    for n in range(nt - 1, 0, -1):
        P = (P + cn[n] / n) * d
        S = S * d + cn[n]
    S = S * d + cn[0]
    return P, S


@njit(cache=True, error_model="numpy")
def _near_time(xa, xb, lq, al, cn):
    """Same integral for |u| < min(1, |a|), by the pole expansion (inf at the pole)."""
    da = (lq + al * xa) / al
    db = (lq + al * xb) / al
    if db == 0.0 or da * db <= 0.0:
        return math.inf
    E = math.exp(xa - da)
    nt = _near_terms(max(abs(da), abs(db)), al)
    Pa, Sa = _near_series(da, cn, nt)
    Pb, Sb = _near_series(db, cn, nt)
    return E * (-1.0 / al) * (math.log(db / da) + Pb - Pa)


@njit(cache=True, error_model="numpy")
def _gl(xa, xb, lq, al, glx, glw):
    """One Gauss-Legendre panel.  The number of points follows from the distance
    ``delta`` of the nearest singularity of the integrand (the real pole at
    ``d = 0`` or the complex ones at ``|a d| = 2 pi``): the error is about
    ``rho^(-2n)`` with ``rho = A + sqrt(A^2 - 1)``, ``A = 1 + 2 delta / w``
    (Bernstein ellipse), and ``n`` is the smallest that makes it 1e-17."""
    h = 0.5 * (xb - xa)
    c = 0.5 * (xb + xa)
    w = abs(xb - xa)
    da = abs((lq + al * xa) / al)
    db = abs((lq + al * xb) / al)
    delta = min(da, db, 2.0 * math.pi / abs(al))
    n = GL_MAX
    if w > 0.0:
        A = 1.0 + 2.0 * delta / w
        lr = math.log(A + math.sqrt(A * A - 1.0))
        if lr > 0.0:
            m = int(math.ceil(19.6 / lr))
            if m < n:
                n = m if m > 1 else 2
    s = 0.0
    for q in range(n):
        s += glw[n, q] * _f(c + h * glx[n, q], lq, al)
    return s * h


@njit(cache=True, error_model="numpy")
def _panel_width(al):
    # at most half the smallest distance to the pole off the near regime
    return PANEL * min(1.0, 1.0 / abs(al))


@njit(cache=True, error_model="numpy")
def _integral(xa, xb, lq, al, far, glx, glw):
    """int_xa^xb e^x/(1 - e^u) dx away from the near regime: one Gauss-Legendre
    panel for a short interval, the series when ``far``, else panels."""
    if math.isinf(xb):
        return math.inf
    w = _panel_width(al)
    L = abs(xb - xa)
    if L <= w:
        return _gl(xa, xb, lq, al, glx, glw)
    if far:
        return _far_time(xa, xb, lq, al)
    n = int(math.ceil(L / w))
    step = (xb - xa) / n
    s = 0.0
    for p in range(n):
        s += _gl(xa + p * step, xa + (p + 1) * step if p < n - 1 else xb, lq, al, glx, glw)
    return s


@njit(cache=True, error_model="numpy")
def _solve_x(xa, hi, tau, lq, al, far, glx, glw):
    """x between ``xa`` and ``hi`` with int_xa^x f = tau (safeguarded Newton;
    the integral is carried along and extended by short panels)."""
    lo = xa
    x = xa
    Ix = 0.0
    fx = _f(x, lq, al)
    for it in range(200):
        xn = x + (tau - Ix) / fx if fx != 0.0 else 0.5 * (lo + hi)
        if abs(xn - x) <= 4e-16 * max(1.0, abs(x)):
            return xn
        if not ((xn - lo) * (xn - hi) < 0.0):
            xn = 0.5 * (lo + hi)
        In = Ix + _integral(x, xn, lq, al, far, glx, glw)
        if In < tau:
            lo = xn
        else:
            hi = xn
        x = xn
        Ix = In
        if In == tau or abs(hi - lo) <= 4e-16 * max(1.0, abs(x)):
            return x
        fx = _f(x, lq, al)
    return x


@njit(cache=True, error_model="numpy")
def _near_solve(xa, xb, lq, al, cn, tau):
    """x in the near regime where the integral from xa reaches tau (Newton in ln|d|)."""
    da = (lq + al * xa) / al
    E = math.exp(xa - da)
    xs = xa - da
    sg = 1.0 if da > 0.0 else -1.0
    sa = math.log(abs(da))
    db = (lq + al * xb) / al
    sb = math.log(abs(db)) if db * da > 0.0 else S_MIN
    if sb < S_MIN:
        sb = S_MIN
    nt = _near_terms(max(abs(da), math.exp(sb)), al)
    Pa, Sa = _near_series(da, cn, nt)
    k = -E / al
    lo, hi = sa, sb
    Pb, Sb = _near_series(sg * math.exp(sb), cn, nt)
    if k * (sb - sa + Pb - Pa) - tau < 0.0:
        # the time runs past |d| = 1e-18: at the equilibrium to round-off
        return xs + sg * math.exp(sb) if sb > S_MIN else xs
    s = sa + tau / (k * Sa)
    if not ((s - lo) * (s - hi) < 0.0):
        s = 0.5 * (lo + hi)
    for it in range(100):
        P, S = _near_series(sg * math.exp(s), cn, nt)
        g = k * (s - sa + P - Pa) - tau
        dg = k * S
        if g == 0.0:
            break
        if g < 0.0:
            lo = s
        else:
            hi = s
        sn = s - g / dg
        if abs(sn - s) <= 4e-16 * max(1.0, abs(s)):
            s = sn
            break
        if not ((sn - lo) * (sn - hi) < 0.0):
            sn = 0.5 * (lo + hi)
        s = sn
    return xs + sg * math.exp(s)


@njit(cache=True, error_model="numpy")
def combined_piece(xa, xe, lq, al, tau, cn, glx, glw):
    """Move from ``xa`` towards ``xe`` (a barrier or the pole) under
    ``dx/dt' = e^{-x} (1 - e^u)``, for at most ``tau`` (time in units of
    ``T_k / (K h)``).  Returns ``(x, time used)``; the time used is ``tau``
    unless ``xe`` was reached first.

    Regimes along the path by ``|u|``: far (``>= U_FAR``, series), middle
    (Gauss-Legendre panels), near (``< min(1, |a|)``, pole expansion).
    """
    un = min(1.0, abs(al))
    x = xa
    t = 0.0
    u = lq + al * x
    if u == 0.0:
        return x, tau
    toward = (u * al * (xe - x)) < 0.0        # |u| decreases along the path
    au = abs(u)
    # stages along the path: toward the pole far -> middle -> near, away the reverse
    if toward:
        stage = 0 if au > U_FAR else (1 if au > un else 2)
    else:
        stage = 0 if au < un else (1 if au < U_FAR else 2)
    while stage < 3:
        if toward:
            kind = (0, 2, 1)[stage]
            thr = (U_FAR, un, 0.0)[stage]
        else:
            kind = (1, 2, 0)[stage]
            thr = (un, U_FAR, math.inf)[stage]
        stage += 1
        if thr == 0.0 or math.isinf(thr):
            xb = xe
        else:
            xb = (math.copysign(thr, u) - lq) / al
            if (xb - xe) * (xe - x) >= 0.0:       # the barrier comes first
                xb = xe
            elif (xb - x) * (xe - x) <= 0.0:      # already past this threshold
                continue
        if kind == 1:
            tb = _near_time(x, xb, lq, al, cn)
        else:
            tb = _integral(x, xb, lq, al, kind == 0, glx, glw)
        left = tau - t
        if tb >= left:
            if kind == 1:
                return _near_solve(x, xb, lq, al, cn, left), tau
            hi = xb
            if math.isinf(xb):
                # heating-dominated far regime: f >= e^x bounds the end point
                hi = math.log(math.exp(x) + left) + 1e-12
            return _solve_x(x, hi, left, lq, al, kind == 0, glx, glw), tau
        t += tb
        x = xb
        if x == xe:
            return x, t
    return x, t


@njit(cache=True, error_model="numpy")
def net_exact(T, dt, K, h, Tn, Ln, An, Bc, T_lo, T_hi, T_off, glx, glw):
    """Exact step of ``dT/dt = K (h_eff(T) - Lambda(T))`` over ``dt``.

    ``h_eff = h`` for ``T < min(T_off, T_hi)``, else 0; ``Lambda = 0`` below
    ``T_lo``.  Returns ``(T_new, int h_eff dt)``.
    """
    n = len(Tn)
    # short step inside one segment: Taylor series of the solution to 4th order
    # (checked against solve_ivp in tests/test_cooling_exact.py)
    k = segment(Tn, T)
    if k >= 0 and T > T_lo and T < T_off and T < T_hi and T > Tn[k]:
        a = An[k]
        L = Ln[k] * (T / Tn[k]) ** a
        r = 1.0 / T
        # remainder / T ~ delta E^4 / 120: delta the fractional change, E the step
        # over the relaxation time plus delta (|a| + 3) (the non-linearity)
        delta = dt * K * abs(h - L) * r
        E = dt * K * abs(a) * L * r + delta * (abs(a) + 3.0)
        if E <= 1.0e-2 and delta * E * E * E * E <= 1.2e-15:
            F = K * (h - L)
            F1 = -K * a * L * r
            F2 = F1 * (a - 1.0) * r
            F3 = F2 * (a - 2.0) * r
            dT = dt * (F + dt * (0.5 * F1 * F + dt * ((F2 * F * F + F1 * F1 * F) / 6.0
                                                    + dt * (F3 * F * F * F + 4.0 * F2 * F1 * F * F
                                                            + F1 * F1 * F1 * F) / 24.0)))
            T1 = T + dT
            top = min(T_off, T_hi)
            if k + 1 < n:
                top = min(top, Tn[k + 1])
            if T1 > Tn[k] and T1 > T_lo and T1 < top:
                return T1, h * dt
    left = dt
    heat = 0.0
    for it in range(4 * n + 16):
        if left <= 0.0:
            break
        kup = segment(Tn, T)
        kdn = segment_below(Tn, T)
        lup = Ln[kup] * (T / Tn[kup]) ** An[kup] if (kup >= 0 and T >= T_lo) else 0.0
        ldn = Ln[kdn] * (T / Tn[kdn]) ** An[kdn] if (kdn >= 0 and T > T_lo) else 0.0
        hup = h if (T < T_off and T < T_hi) else 0.0
        hdn = h if (T <= T_off and T <= T_hi) else 0.0
        if hup - lup > 0.0:
            he = hup
            k = kup
            Te = min(T_off, T_hi)
            if T < T_lo:
                Te = min(Te, T_lo)
                t_end = (Te - T) / (K * he)
                if t_end >= left:
                    heat += he * left
                    T = T + K * he * left
                    break
                heat += he * t_end
                left -= t_end
                T = Te
                continue
            if k + 1 < n:
                Te = min(Te, Tn[k + 1])
        elif hdn - ldn < 0.0:
            he = hdn
            k = kdn
            Te = max(Tn[k], T_lo)
            if T > T_off:
                Te = max(Te, T_off)
        else:
            heat += min(hdn, lup) * left
            break
        Tk, lk, al = Tn[k], Ln[k], An[k]
        xa = math.log(T / Tk)
        xe = math.log(Te / Tk) if not math.isinf(Te) else math.inf
        if he == 0.0:
            # cooling only on this piece: Townsend's formula of the segment, relative
            # to T (time in units of the cooling time T / (K Lambda(T)))
            C = T / (K * lk * math.exp(al * xa))
            c = 1.0 - al
            t_end = -C * pw(c, xe - xa)
            if t_end >= left:
                T1 = T * math.exp(inv_pw(c, -left / C))
                T = T1 if T1 > Te else Te
                break
            left -= t_end
            T = Te
            continue
        if al == 0.0:
            rate = K * (he - lk)
            t_end = (Te - T) / rate
            if t_end >= left:
                heat += he * left
                T = T + rate * left
                break
            heat += he * t_end
            left -= t_end
            T = Te
            continue
        C = Tk / (K * he)
        lq = math.log(lk / he)
        xs = -lq / al
        ua = lq + al * xa
        up = xe > xa
        if ua == 0.0 or (ua < 0.0) != up:
            # at the equilibrium to round-off (direction test and pole disagree)
            heat += he * left
            break
        if (xs - xa) * (xe - xs) > 0.0 or xs == xe:
            xe = xs                                   # stops short of the equilibrium
        x, tu = combined_piece(xa, xe, lq, al, left / C, Bc[k], glx, glw)
        used = tu * C
        if used >= left or x != xe or xe == xs:
            heat += he * left
            T = Tk * math.exp(x)
            break
        heat += he * used
        left -= used
        T = Te
    return T, heat


# ----------------------------------------------------------------------- grid kernel
@njit(cache=True, error_model="numpy")
def cool_cells(U, vol, dt, gm1, Tu, hV, hA, h2, Tn, Ln, An, Yn, Bc, T_lo, Y_lo, T_floor, T_hi,
               T_off, use_floor, use_ceiling, glx, glw, mhd, js, je, is_, ie, sums):
    """Cooling and heating of the interior cells at fixed density and velocity.

    ``U[4]`` (total energy) changes by the change of the internal energy
    ``e = rho T / (T_u (gamma - 1))``.  Per cell the heating per volume is
    ``hV + hA rho + h2 rho^2`` (code units).  Cooling acts from ``T_lo`` up
    (``Y_lo = Y(T_lo)``), heating below ``min(T_off, T_hi)``; with
    ``use_floor`` (``use_ceiling``) a cell below ``T_floor`` (above ``T_hi``)
    is first reset to it.  Adds to ``sums`` (volume
    weighted): ``[0]`` heating, ``[1]`` radiated energy, ``[2]`` energy added
    by resetting temperatures to the floor or ceiling.
    """
    n = len(Tn)
    Lr, Tr = Ln[n - 1], Tn[n - 1]
    s_heat = 0.0
    s_rad = 0.0
    s_lim = 0.0
    for j in range(js, je):
        for i in range(is_, ie):
            d = U[0, j, i]
            if not d > 0.0:
                continue
            rd = 1.0 / d
            other = 0.5 * (U[1, j, i] ** 2 + U[2, j, i] ** 2 + U[3, j, i] ** 2) * rd
            if mhd:
                other += 0.5 * (U[5, j, i] ** 2 + U[6, j, i] ** 2 + U[7, j, i] ** 2)
            E0 = U[4, j, i]
            e = E0 - other
            if not e > 0.0:
                continue
            c_e = d / (gm1 * Tu)          # internal energy per kelvin
            T = e / c_e
            E1 = E0
            if use_floor and T < T_floor:
                T = T_floor
                E1 = other + c_e * T
            elif use_ceiling and T > T_hi:
                T = T_hi
                E1 = other + c_e * T
            K = Tu * gm1 * d
            H = hV + d * (hA + d * h2)
            if H > 0.0:
                h = H * rd * rd
                T1, q = net_exact(T, dt, K, h, Tn, Ln, An, Bc, T_lo, T_hi, T_off, glx, glw)
                heat = d * d * q
            else:
                T1 = cool_exact(T, K * Lr * dt / Tr, T_lo, Y_lo, Tn, Ln, An, Yn)
                heat = 0.0
            E2 = other + c_e * T1
            U[4, j, i] = E2
            v = vol[j - js, i - is_]
            s_lim += v * (E1 - E0)
            s_heat += v * heat
            s_rad += v * (heat - (E2 - E1))
    sums[0] += s_heat
    sums[1] += s_rad
    sums[2] += s_lim


@njit(cache=True, error_model="numpy")
def lambda_grid(W, Tu, Tn, Ln, An, T_lo, js, je, is_, ie, out_T, out_L):
    """Temperature [K] and Lambda (code units, zero below ``T_lo``) of the
    interior cells from the primitives ``W`` (diagnostics)."""
    for j in range(js, je):
        for i in range(is_, ie):
            T = W[4, j, i] / W[0, j, i] * Tu
            out_T[j - js, i - is_] = T
            out_L[j - js, i - is_] = lam_at(Tn, Ln, An, T) if T >= T_lo else 0.0
