"""Cooling curves as piecewise power laws Lambda(T) [erg cm^3 s^-1].

A curve is a list of segments: segment ``k`` covers ``T_k <= T < T_{k+1}`` and
there ``Lambda(T) = Lambda_k (T / T_k)^alpha_k``; the last segment continues
its power law to arbitrarily high temperature (use ``physics.cooling.ceiling``
to bound it), and ``Lambda = 0`` below the first node.  The rate of energy loss
per volume is ``n_H^2 Lambda(T)`` with ``n_H = X rho / m_H`` (the module,
``module.py``).  Segments need not join continuously (the exact integration
of ``townsend.py`` only needs each segment's own power law).

Built-in curves (sources named; tags as in the project's methods notes):

* ``rosen_bregman``: Rosen & Bregman (1995, ApJ 440, 634), five power laws
  from 300 K up.  The coefficients are **from memory** (not checked against
  the paper; they join to 0.1 % at every break, which supports them), and so
  is the density normalisation (taken here as ``n_H^2``).
* ``solar_cie``: the part of the same curve above 1e4 K, a collisional
  ionisation equilibrium curve of solar metallicity; below 1e4 K one of
  ``none`` (no cooling), ``rosen_bregman`` (its low-temperature segments) or
  ``koyama_inutsuka``.
* ``koyama_inutsuka``: the fit of Koyama & Inutsuka (2002, ApJ 564, L97) as
  corrected by Vazquez-Semadeni et al. (2007, ApJ 657, 870) (**from memory**):
  ``Lambda / Gamma = 1e7 exp(-1.184e5 / (T + 1000)) + 1.4e-2 sqrt(T)
  exp(-92 / T)`` with ``Gamma = 2e-26 erg s^-1`` (their net loss per volume
  is ``n (n Lambda - Gamma)``, ``n`` taken as ``n_H``).  It is not a power
  law: it becomes a piecewise power law through nodes of the formula, placed
  so that the relative deviation between nodes stays below ``tolerance``
  (default 1e-4, about 290 nodes; checked in tests/test_cooling_exact.py).
  As the low-temperature part of ``solar_cie`` it runs from 10 K up to the
  temperature where it crosses the Rosen & Bregman curve (near 8.6e3 K), so
  the joined curve is continuous.
* ``power_law``: ``Lambda = Lambda0 (T / T0)^alpha`` for ``T >= T_min``.
* ``table``: a two-column text file ``log10 T [K]  log10 Lambda [erg cm^3
  s^-1]``, power laws between the rows (:func:`read_table`).
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ...errors import ParameterError

# Rosen & Bregman (1995), ApJ 440, 634 [from memory]: (T_low [K], coefficient, exponent),
# Lambda = coefficient * T^exponent [erg cm^3 s^-1] from T_low to the next T_low
RB95 = ((300.0, 2.2380e-32, 2.0),
        (2000.0, 1.0012e-30, 1.5),
        (8000.0, 4.6240e-36, 2.867),
        (1.0e5, 1.7800e-18, -0.65),
        (4.0e7, 3.2217e-27, 0.5))

# Koyama & Inutsuka (2002) heating rate per hydrogen atom [erg s^-1] [from memory]
KI02_GAMMA = 2.0e-26

# plausible range of table entries (catches linear values given instead of log10)
LOG_T_RANGE = (0.0, 11.0)
LOG_LAMBDA_RANGE = (-60.0, -5.0)


@dataclass(frozen=True)
class CoolingCurve:
    """A piecewise power law.

    Attributes
    ----------
    T : ndarray
        Lower temperatures of the segments [K], strictly increasing, at least 1.
    lam : ndarray
        Lambda at the lower end of each segment [erg cm^3 s^-1], positive.
    alpha : ndarray
        Exponent of each segment; the last one continues to infinity.
    name : str
        What it is and where it comes from (for logs and docs).
    """
    T: np.ndarray
    lam: np.ndarray
    alpha: np.ndarray
    name: str = ""

    def __post_init__(self):
        T, lam, a = (np.asarray(v, dtype=np.float64) for v in (self.T, self.lam, self.alpha))
        if not (T.ndim == lam.ndim == a.ndim == 1 and len(T) == len(lam) == len(a) >= 1):
            raise ValueError("a cooling curve needs equal-length 1-D arrays T, lam, alpha")
        if not (np.all(np.isfinite(T)) and np.all(np.isfinite(lam)) and np.all(np.isfinite(a))):
            raise ValueError("a cooling curve must be finite")
        if not (np.all(T > 0) and np.all(lam > 0) and np.all(np.diff(T) > 0)):
            raise ValueError("a cooling curve needs positive, increasing T and positive Lambda")
        object.__setattr__(self, "T", T)
        object.__setattr__(self, "lam", lam)
        object.__setattr__(self, "alpha", a)

    def __call__(self, T) -> np.ndarray:
        """Lambda(T) [erg cm^3 s^-1]; zero below the first node."""
        T = np.asarray(T, dtype=np.float64)
        k = np.searchsorted(self.T, T, side="right") - 1
        kk = np.clip(k, 0, len(self.T) - 1)
        with np.errstate(divide="ignore", invalid="ignore"):
            val = self.lam[kk] * (T / self.T[kk]) ** self.alpha[kk]
        return np.where(k >= 0, val, 0.0)

    @property
    def T_min(self) -> float:
        return float(self.T[0])

    @classmethod
    def through_nodes(cls, T, lam, name: str = "") -> "CoolingCurve":
        """The continuous piecewise power law through nodes ``(T_i, Lambda_i)``;
        the last segment continues with the slope of the one before it."""
        T = np.asarray(T, dtype=np.float64)
        lam = np.asarray(lam, dtype=np.float64)
        if len(T) < 2:
            raise ValueError("at least two nodes are needed")
        a = np.diff(np.log(lam)) / np.diff(np.log(T))
        return cls(T, lam, np.append(a, a[-1]), name)

    def joined_above(self, other: "CoolingCurve", T_join: float, name: str = "") -> "CoolingCurve":
        """This curve below ``T_join`` and ``other`` from ``T_join`` up."""
        lo = self.T < T_join
        T = np.concatenate([self.T[lo], [T_join], other.T[other.T > T_join]])
        k = max(int(np.searchsorted(other.T, T_join, side="right")) - 1, 0)
        lam_j = float(other.lam[k] * (T_join / other.T[k]) ** other.alpha[k])
        up = other.T > T_join
        lam = np.concatenate([self.lam[lo], [lam_j], other.lam[up]])
        alpha = np.concatenate([self.alpha[lo], [other.alpha[k]], other.alpha[up]])
        return CoolingCurve(T, lam, alpha, name)

    def above(self, T_cut: float, name: str = "") -> "CoolingCurve":
        """The curve restricted to ``T >= T_cut`` (no cooling below)."""
        k = max(int(np.searchsorted(self.T, T_cut, side="right")) - 1, 0)
        lam_c = float(self.lam[k] * (T_cut / self.T[k]) ** self.alpha[k])
        up = self.T > T_cut
        return CoolingCurve(np.concatenate([[T_cut], self.T[up]]),
                            np.concatenate([[lam_c], self.lam[up]]),
                            np.concatenate([[self.alpha[k]], self.alpha[up]]), name)


# ---------------------------------------------------------------------- built-in
def rosen_bregman() -> CoolingCurve:
    """Rosen & Bregman (1995, ApJ 440, 634) piecewise power law, 300 K up
    (coefficients from memory, see the module docstring)."""
    T = np.array([s[0] for s in RB95])
    lam = np.array([c * t ** a for t, c, a in RB95])
    alpha = np.array([s[2] for s in RB95])
    return CoolingCurve(T, lam, alpha, "Rosen & Bregman (1995) [coefficients from memory]")


def ki02_lambda(T):
    """Koyama & Inutsuka (2002) cooling function [erg cm^3 s^-1], with the typo
    correction of Vazquez-Semadeni et al. (2007) (from memory)."""
    T = np.asarray(T, dtype=np.float64)
    return KI02_GAMMA * (1.0e7 * np.exp(-1.184e5 / (T + 1000.0))
                         + 1.4e-2 * np.sqrt(T) * np.exp(-92.0 / T))


def koyama_inutsuka(T_min: float = 10.0, T_max: float = 1.0e4,
                    tolerance: float = 1.0e-4) -> CoolingCurve:
    """Koyama & Inutsuka (2002) on ``[T_min, T_max]`` as a piecewise power law
    through nodes of the formula: each node is placed as far from the previous
    one as keeps ``|ln Lambda_fit - ln Lambda|`` below ``tolerance`` at 15
    points in between (about 290 nodes from 10 K to 8.7e3 K for 1e-4)."""
    if not (0 < T_min < T_max and 0 < tolerance < 1):
        raise ValueError("koyama_inutsuka needs 0 < T_min < T_max and 0 < tolerance < 1")

    def lnlam(x):
        return np.log(ki02_lambda(np.exp(x)))

    s = np.linspace(0.0, 1.0, 17)[1:-1]
    xe = math.log(T_max)
    xs = [math.log(T_min)]
    while xs[-1] < xe:
        a = xs[-1]
        fa = lnlam(a)

        def err(d):
            xx = a + s * d
            return float(np.max(np.abs(lnlam(xx) - (fa + (lnlam(a + d) - fa) * s))))

        lo, hi = 0.0, xe - a
        if err(hi) <= tolerance:
            xs.append(xe)
            break
        for _ in range(50):
            mid = 0.5 * (lo + hi)
            if err(mid) <= tolerance:
                lo = mid
            else:
                hi = mid
        xs.append(a + lo)
    T = np.exp(np.array(xs))
    T[0], T[-1] = T_min, T_max
    return CoolingCurve.through_nodes(T, ki02_lambda(T), "Koyama & Inutsuka (2002) "
                                      "[from memory], piecewise power law")


def ki02_rb95_crossing() -> float:
    """Temperature in [8e3, 1e4] K where the Koyama & Inutsuka fit meets the
    Rosen & Bregman curve (about 8.57e3 K)."""
    from scipy.optimize import brentq
    rb = rosen_bregman()
    return float(brentq(lambda t: math.log(ki02_lambda(t) / rb(t)), 8.0e3, 1.0e4,
                        xtol=1e-12, rtol=1e-15))


def solar_cie(low_temperature: str = "rosen_bregman", tolerance: float = 1.0e-4) -> CoolingCurve:
    """Solar-metallicity collisional-ionisation-equilibrium cooling above 1e4 K
    (Rosen & Bregman 1995, from memory) with a choice of low-temperature part:
    ``none``, ``rosen_bregman`` or ``koyama_inutsuka``."""
    rb = rosen_bregman()
    if low_temperature == "rosen_bregman":
        return rb
    if low_temperature == "none":
        return rb.above(1.0e4, "solar CIE above 1e4 K: Rosen & Bregman (1995) "
                        "[from memory]; no cooling below 1e4 K")
    if low_temperature == "koyama_inutsuka":
        tj = ki02_rb95_crossing()
        ki = koyama_inutsuka(10.0, tj, tolerance)
        return ki.joined_above(rb, tj, f"Koyama & Inutsuka (2002) below {tj:.6g} K, "
                               "Rosen & Bregman (1995) above [both from memory]")
    raise ValueError(f"low_temperature {low_temperature!r}: allowed values are none, "
                     "rosen_bregman, koyama_inutsuka")


def power_law(Lambda0: float, T0: float, alpha: float, T_min: float) -> CoolingCurve:
    """A single power law ``Lambda0 (T / T0)^alpha`` for ``T >= T_min``."""
    return CoolingCurve(np.array([T_min]), np.array([Lambda0 * (T_min / T0) ** alpha]),
                        np.array([alpha]), f"power law Lambda0 (T/T0)^{alpha:g}")


# ---------------------------------------------------------------------- tables
def read_table(path, where: str = "table") -> CoolingCurve:
    """A user cooling table: two columns per line, ``log10 T [K]`` and
    ``log10 Lambda [erg cm^3 s^-1]``; ``#`` starts a comment, blank lines are
    skipped.  Power laws join the rows; the last one continues to higher T.

    Raises :class:`~wind2d.errors.ParameterError` naming ``where``, the file,
    the line and what is wrong (missing file, not two numbers, non-finite or
    implausible values, temperatures not strictly increasing, fewer than two
    rows).
    """
    path = Path(path)
    head = f"{where}: cooling table {str(path)!r}"
    if not path.is_file():
        raise ParameterError(f"{head} not found")
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise ParameterError(f"{head} cannot be read: {exc}") from None
    logT: list[float] = []
    logL: list[float] = []
    lines: list[int] = []
    for n, raw in enumerate(text.splitlines(), start=1):
        line = raw.split("#", 1)[0].strip()
        if not line:
            continue
        at = f"{head}, line {n}"
        parts = line.replace(",", " ").split()
        if len(parts) != 2:
            raise ParameterError(f"{at}: expected two numbers (log10 T, log10 Lambda), "
                                 f"found {len(parts)} entries: {raw.strip()!r}")
        try:
            t, lam = float(parts[0]), float(parts[1])
        except ValueError:
            raise ParameterError(f"{at}: {raw.strip()!r} is not two numbers") from None
        for label, text, v, (lo, hi) in (("log10 T", parts[0], t, LOG_T_RANGE),
                                         ("log10 Lambda", parts[1], lam, LOG_LAMBDA_RANGE)):
            if not math.isfinite(v):
                raise ParameterError(f"{at}: {label} = {text} is not a finite number")
            if not lo <= v <= hi:
                hint = " (negative: T below 1 K)" if label == "log10 T" and v < 0 else ""
                raise ParameterError(
                    f"{at}: {label} = {v:g} is outside the accepted range [{lo:g}, {hi:g}]"
                    f"{hint}; the columns are log10 T [K] and log10 Lambda [erg cm^3 s^-1] "
                    "(was a value given without the log10?)")
        if logT and not t > logT[-1]:
            raise ParameterError(f"{at}: log10 T = {t:g} is not larger than {logT[-1]:g} on "
                                 f"line {lines[-1]}; temperatures must increase strictly")
        logT.append(t)
        logL.append(lam)
        lines.append(n)
    if len(logT) < 2:
        raise ParameterError(f"{head}: {len(logT)} data row(s); a table needs at least two "
                             "rows (log10 T, log10 Lambda)")
    T = 10.0 ** np.array(logT)
    lam = 10.0 ** np.array(logL)
    return CoolingCurve.through_nodes(T, lam, f"table {path.name}")
