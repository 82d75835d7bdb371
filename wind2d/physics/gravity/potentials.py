"""Static gravitational potentials Phi(R, z), each from its published formula.

Every potential is a small object with vectorised numpy methods

* ``phi(R, z)``   -- the potential (code units: velocity^2);
* ``accel(R, z)`` -- the acceleration ``(g_R, g_z) = -grad Phi`` from the
  analytic gradient;

plus, where the source gives them, ``enclosed_mass(r)`` and
``circular_velocity(r)`` (spherical) or ``circular_velocity(R)`` in the plane
z = 0 (axisymmetric).  ``R`` is the cylindrical radius (>= 0) and ``z`` the
height, in code units; ``G`` is Newton's constant in the same units
(``UnitSystem.G``).  Axisymmetric potentials may be moved along the axis by
``centre_z``.  Potentials add: ``a + b`` (or :class:`Sum`).

A user potential only needs ``phi``: subclass :class:`Potential` (the default
``accel`` is a centred finite difference) or wrap a function with
:class:`FromFunction`.
"""
from __future__ import annotations

import math

import numpy as np


def _arr(x):
    return np.asarray(x, dtype=np.float64)


def _split_radial(R, z, g_over_r):
    """(g_R, g_z) of a central force with ``g_r / r`` given (``g_r`` < 0: inward)."""
    return g_over_r * R, g_over_r * z


class Potential:
    """Base class of a static potential.  Subclasses define :meth:`phi` and
    preferably an analytic :meth:`accel`.

    ``cartesian`` tells whether the potential is meaningful in planar (x, y)
    geometry (only the uniform field and user potentials are)."""

    cartesian = False

    def phi(self, R, z):
        raise NotImplementedError

    def accel(self, R, z):
        """-grad Phi by centred differences with the step 6e-6 max(r, 1e-6)
        (r = sqrt(R^2 + z^2) in code units), a relative accuracy of about 1e-10
        where Phi varies on the scale r; override with the analytic gradient."""
        R, z = _arr(R), _arr(z)
        h = 6e-6 * np.maximum(np.hypot(R, z), 1e-6)
        gR = -(self.phi(R + h, z) - self.phi(R - h, z)) / (2.0 * h)
        gz = -(self.phi(R, z + h) - self.phi(R, z - h)) / (2.0 * h)
        return gR, gz

    def __add__(self, other: "Potential") -> "Sum":
        return Sum([self, other])


class Sum(Potential):
    """Sum of potentials: Phi = sum_k Phi_k, g = sum_k g_k."""

    def __init__(self, parts):
        flat = []
        for p in parts:
            flat.extend(p.parts if isinstance(p, Sum) else [p])
        if not flat:
            raise ValueError("Sum: at least one potential is needed")
        self.parts = flat
        self.cartesian = all(p.cartesian for p in flat)

    def phi(self, R, z):
        out = self.parts[0].phi(R, z)
        for p in self.parts[1:]:
            out = out + p.phi(R, z)
        return out

    def accel(self, R, z):
        gR, gz = self.parts[0].accel(R, z)
        for p in self.parts[1:]:
            a, b = p.accel(R, z)
            gR, gz = gR + a, gz + b
        return gR, gz

    def __repr__(self):
        return " + ".join(repr(p) for p in self.parts)


class FromFunction(Potential):
    """A user potential from a function ``phi(R, z)`` (vectorised, code units)."""

    cartesian = True

    def __init__(self, func, name: str = "user"):
        self.func, self.name = func, name

    def phi(self, R, z):
        return _arr(self.func(_arr(R), _arr(z))) * np.ones(np.broadcast(_arr(R), _arr(z)).shape)

    def __repr__(self):
        return f"FromFunction({self.name})"


class PointMass(Potential):
    """Point mass with Plummer softening (Plummer 1911, MNRAS 71, 460):

        Phi = -G M / sqrt(r^2 + eps^2),   g = -G M r_vec / (r^2 + eps^2)^(3/2),

    r^2 = R^2 + (z - z0)^2.  ``eps = 0`` is the bare point mass (infinite at
    r = 0; the acceleration is set to 0 there).  The enclosed mass is that of
    the Plummer sphere, M r^3 / (r^2 + eps^2)^(3/2).
    """

    def __init__(self, mass: float, G: float, softening: float = 0.0, centre_z: float = 0.0):
        self.M, self.G, self.eps, self.z0 = float(mass), float(G), float(softening), \
            float(centre_z)

    def phi(self, R, z):
        R, z = _arr(R), _arr(z) - self.z0
        with np.errstate(divide="ignore"):
            return -self.G * self.M / np.sqrt(R * R + z * z + self.eps ** 2)

    def accel(self, R, z):
        R, z = _arr(R), _arr(z) - self.z0
        s2 = R * R + z * z + self.eps ** 2
        with np.errstate(divide="ignore", invalid="ignore"):
            f = np.where(s2 > 0, -self.G * self.M / (s2 * np.sqrt(s2)), 0.0)
        return _split_radial(R, z, f)

    def enclosed_mass(self, r):
        r = _arr(r)
        return self.M * r ** 3 / (r * r + self.eps ** 2) ** 1.5

    def circular_velocity(self, r):
        r = _arr(r)
        return np.sqrt(self.G * self.enclosed_mass(r) / r)

    def __repr__(self):
        return f"PointMass(M={self.M:g}, eps={self.eps:g}, z0={self.z0:g})"


def _nfw_m(x):
    """m(x) = ln(1 + x) - x/(1 + x), with its Taylor series for x < 0.1
    (sum_{n>=2} (-1)^n (n-1)/n x^n) against the cancellation at small x."""
    x = _arr(x)
    direct = np.log1p(x) - x / (1.0 + x)
    xs = np.minimum(x, 0.1)
    series = np.zeros_like(xs)
    for n in range(22, 1, -1):          # Horner: sum_{n=2}^{22} c_n xs^(n-2), times xs^2
        series = series * xs + (-1) ** n * (n - 1) / n
    series = series * xs * xs
    return np.where(x < 0.1, series, direct)


class NFW(Potential):
    """Navarro, Frenk & White (1996, ApJ 462, 563) halo, x = r / r_s:

        rho = rho_s / [x (1 + x)^2],
        M(r) = 4 pi rho_s r_s^3 m(x),  m(x) = ln(1 + x) - x/(1 + x),
        Phi = -4 pi G rho_s r_s^3 ln(1 + x) / r,   v_c^2 = G M(r) / r.

    Set by ``scale_radius`` r_s and ``scale_density`` rho_s, or with
    :meth:`from_virial` by the virial mass and concentration c = r_vir/r_s
    (Navarro, Frenk & White 1997, ApJ 490, 493).
    """

    def __init__(self, scale_radius: float, scale_density: float, G: float,
                 centre_z: float = 0.0):
        self.rs, self.rho_s, self.G, self.z0 = float(scale_radius), float(scale_density), \
            float(G), float(centre_z)
        self.A = 4.0 * math.pi * self.G * self.rho_s * self.rs ** 3     # 4 pi G rho_s r_s^3
        self.r_vir = None
        self.M_vir = None

    @classmethod
    def from_virial(cls, virial_mass: float, concentration: float, G: float,
                    hubble_constant: float, overdensity: float = 200.0,
                    centre_z: float = 0.0) -> "NFW":
        """NFW halo of virial mass M_vir and concentration c.

        The virial radius encloses a mean density ``overdensity`` times the
        critical density rho_crit = 3 H^2 / (8 pi G) (common practice, Delta =
        200): r_vir = [3 M_vir / (4 pi Delta rho_crit)]^(1/3); then r_s =
        r_vir / c and rho_s = M_vir / (4 pi r_s^3 m(c)).  ``hubble_constant``
        in code units (1 / code time).
        """
        rho_crit = 3.0 * hubble_constant ** 2 / (8.0 * math.pi * G)
        r_vir = (3.0 * virial_mass / (4.0 * math.pi * overdensity * rho_crit)) ** (1.0 / 3.0)
        rs = r_vir / concentration
        rho_s = virial_mass / (4.0 * math.pi * rs ** 3 * float(_nfw_m(concentration)))
        out = cls(rs, rho_s, G, centre_z)
        out.r_vir, out.M_vir = r_vir, float(virial_mass)
        return out

    def _r(self, R, z):
        R, z = _arr(R), _arr(z) - self.z0
        return R, z, np.sqrt(R * R + z * z)

    def phi(self, R, z):
        R, z, r = self._r(R, z)
        x = r / self.rs
        with np.errstate(divide="ignore", invalid="ignore"):
            f = np.where(x > 0, np.log1p(x) / x, 1.0)
        return -self.A / self.rs * f

    def accel(self, R, z):
        # dPhi/dr = G M(r) / r^2 = A m(x) / r^2, so g_r / r = -A m(x) / r^3
        R, z, r = self._r(R, z)
        x = r / self.rs
        with np.errstate(divide="ignore", invalid="ignore"):
            f = np.where(r > 0, -self.A * _nfw_m(x) / r ** 3, 0.0)
        return _split_radial(R, z, f)

    def density(self, r):
        x = _arr(r) / self.rs
        return self.rho_s / (x * (1.0 + x) ** 2)

    def enclosed_mass(self, r):
        return 4.0 * math.pi * self.rho_s * self.rs ** 3 * _nfw_m(_arr(r) / self.rs)

    def circular_velocity(self, r):
        r = _arr(r)
        return np.sqrt(self.G * self.enclosed_mass(r) / r)

    def __repr__(self):
        return f"NFW(r_s={self.rs:g}, rho_s={self.rho_s:g}, z0={self.z0:g})"


class MiyamotoNagai(Potential):
    """Miyamoto & Nagai (1975, PASJ 27, 533) disk, zeta = sqrt((z - z0)^2 + b^2):

        Phi = -G M / sqrt(R^2 + (a + zeta)^2),
        g_R = -G M R / D^3,  g_z = -G M (z - z0) (a + zeta) / (zeta D^3),
        D^2 = R^2 + (a + zeta)^2;
        in the plane z = z0:  v_c^2 = G M R^2 / [R^2 + (a + b)^2]^(3/2).
    """

    def __init__(self, mass: float, a: float, b: float, G: float, centre_z: float = 0.0):
        self.M, self.a, self.b, self.G, self.z0 = float(mass), float(a), float(b), float(G), \
            float(centre_z)

    def phi(self, R, z):
        R, z = _arr(R), _arr(z) - self.z0
        zeta = np.sqrt(z * z + self.b ** 2)
        return -self.G * self.M / np.sqrt(R * R + (self.a + zeta) ** 2)

    def accel(self, R, z):
        R, z = _arr(R), _arr(z) - self.z0
        zeta = np.sqrt(z * z + self.b ** 2)
        D2 = R * R + (self.a + zeta) ** 2
        c = -self.G * self.M / (D2 * np.sqrt(D2))
        with np.errstate(divide="ignore", invalid="ignore"):
            gz = np.where(zeta > 0, c * z * (self.a + zeta) / zeta, 0.0)
        return c * R, gz

    def circular_velocity(self, R):
        R = _arr(R)
        return np.sqrt(self.G * self.M * R * R / (R * R + (self.a + self.b) ** 2) ** 1.5)

    def __repr__(self):
        return f"MiyamotoNagai(M={self.M:g}, a={self.a:g}, b={self.b:g}, z0={self.z0:g})"


class Hernquist(Potential):
    """Hernquist (1990, ApJ 356, 359) bulge:

        Phi = -G M / (r + a),  M(r) = M r^2 / (r + a)^2,  v_c^2 = G M r / (r + a)^2.
    """

    def __init__(self, mass: float, a: float, G: float, centre_z: float = 0.0):
        self.M, self.a, self.G, self.z0 = float(mass), float(a), float(G), float(centre_z)

    def phi(self, R, z):
        R, z = _arr(R), _arr(z) - self.z0
        return -self.G * self.M / (np.sqrt(R * R + z * z) + self.a)

    def accel(self, R, z):
        R, z = _arr(R), _arr(z) - self.z0
        r = np.sqrt(R * R + z * z)
        with np.errstate(divide="ignore", invalid="ignore"):
            f = np.where(r > 0, -self.G * self.M / ((r + self.a) ** 2 * r), 0.0)
        return _split_radial(R, z, f)

    def enclosed_mass(self, r):
        r = _arr(r)
        return self.M * r * r / (r + self.a) ** 2

    def circular_velocity(self, r):
        r = _arr(r)
        return np.sqrt(self.G * self.M * r) / (r + self.a)

    def __repr__(self):
        return f"Hernquist(M={self.M:g}, a={self.a:g}, z0={self.z0:g})"


class Logarithmic(Potential):
    """Flattened logarithmic halo (Binney & Tremaine 2008, Galactic Dynamics,
    2nd ed., eq. 2.71, from memory):

        Phi = (v0^2 / 2) ln(R_c^2 + R^2 + z^2/q^2),
        in the plane: v_c^2 = v0^2 R^2 / (R_c^2 + R^2)  (flat v_c = v0 for R >> R_c).
    """

    def __init__(self, v0: float, core_radius: float, q: float = 1.0, centre_z: float = 0.0):
        self.v0, self.Rc, self.q, self.z0 = float(v0), float(core_radius), float(q), \
            float(centre_z)

    def _s(self, R, z):
        return self.Rc ** 2 + R * R + z * z / self.q ** 2

    def phi(self, R, z):
        R, z = _arr(R), _arr(z) - self.z0
        return 0.5 * self.v0 ** 2 * np.log(self._s(R, z))

    def accel(self, R, z):
        R, z = _arr(R), _arr(z) - self.z0
        c = -self.v0 ** 2 / self._s(R, z)
        return c * R, c * z / self.q ** 2

    def circular_velocity(self, R):
        R = _arr(R)
        return self.v0 * R / np.sqrt(self.Rc ** 2 + R * R)

    def __repr__(self):
        return f"Logarithmic(v0={self.v0:g}, Rc={self.Rc:g}, q={self.q:g}, z0={self.z0:g})"


class Uniform(Potential):
    """Uniform field along axis 2 (z or y): Phi = g * x2, acceleration -g along
    axis 2 (g > 0 pulls towards decreasing x2).  Meaningful in both geometries."""

    cartesian = True

    def __init__(self, g: float):
        self.g = float(g)

    def phi(self, R, z):
        R, z = _arr(R), _arr(z)
        return self.g * z + 0.0 * R

    def accel(self, R, z):
        R, z = _arr(R), _arr(z)
        shape = np.broadcast(R, z).shape
        return np.zeros(shape), np.full(shape, -self.g)

    def __repr__(self):
        return f"Uniform(g={self.g:g})"
