"""Equations of state: ideal gas (any gamma > 1) and isothermal (fixed sound speed).

Kernels work in code units with Heaviside-Lorentz field (magnetic pressure
B^2/2).  Ideal gas: ``E = p/(gamma - 1) + rho v^2/2 + B^2/2``.  Isothermal:
``p = rho c_s^2`` and the energy slot is not evolved.
"""
from __future__ import annotations

import math

from numba import njit

from ..errors import ParameterError


class IdealGas:
    """Ideal gas, ``p = (gamma - 1) e`` with ``e`` the internal energy per volume."""

    isothermal = False

    def __init__(self, gamma: float = 5.0 / 3.0):
        if not (isinstance(gamma, (int, float)) and math.isfinite(gamma) and gamma > 1.0):
            raise ParameterError(f"gamma = {gamma!r}: the ideal-gas EOS needs gamma > 1")
        self.gamma = float(gamma)
        self.cs2 = 0.0

    def __repr__(self):
        return f"IdealGas(gamma={self.gamma})"


class Isothermal:
    """Isothermal gas, ``p = rho c_s^2`` with fixed sound speed ``c_s`` (code units)."""

    isothermal = True

    def __init__(self, sound_speed: float):
        if not (isinstance(sound_speed, (int, float)) and math.isfinite(sound_speed)
                and sound_speed > 0):
            raise ParameterError(
                f"sound_speed = {sound_speed!r}: the isothermal EOS needs a positive sound speed")
        self.gamma = 1.0
        self.cs2 = float(sound_speed) ** 2

    def __repr__(self):
        return f"Isothermal(sound_speed={math.sqrt(self.cs2)})"


@njit(cache=True, error_model="numpy", inline="always")
def sound_speed2(d, p, gamma, iso, cs2):
    """Square of the sound speed: gamma p / rho, or c_s^2 when isothermal."""
    if iso:
        return cs2
    return gamma * p / d


@njit(cache=True, error_model="numpy", inline="always")
def fast_speed(d, p, bn, bt1, bt2, gamma, iso, cs2):
    """Fast magnetosonic speed along the normal direction.

    c_f^2 = (a^2 + b^2 + sqrt((a^2 + b^2)^2 - 4 a^2 b_n^2)) / 2 with
    b^2 = |B|^2/rho and b_n^2 = B_n^2/rho.
    """
    a2 = sound_speed2(d, p, gamma, iso, cs2)
    bn2 = bn * bn / d
    b2 = bn2 + (bt1 * bt1 + bt2 * bt2) / d
    s = a2 + b2
    disc = s * s - 4.0 * a2 * bn2
    if disc < 0.0:
        disc = 0.0
    return math.sqrt(0.5 * (s + math.sqrt(disc)))
