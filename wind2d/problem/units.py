"""Code units and physical quantities (parsed with astropy.units).

A run chooses three base units (length, time, mass); every other code unit
follows from them.  The magnetic field is in Heaviside-Lorentz code units,
so that the magnetic pressure is ``B^2/2`` in code pressure units:

    B_code = B_gauss / sqrt(4 pi P0),   P0 = M / (L T^2) in erg cm^-3.

Temperatures map to pressure with the mean molecular weight ``mu``:
``p = rho k_B T / (mu m_H)``; number densities to mass density with
``rho = mu m_H n``.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import astropy.constants as const
import astropy.units as u

from ..errors import ParameterError

M_H_CGS = const.m_p.cgs.value * 1.00782503207 / 1.007276466621   # hydrogen atom mass (g)
K_B_CGS = const.k_B.cgs.value
G_CGS = const.G.cgs.value

# kind -> (cgs unit string, powers of (length, time, mass))
KINDS = {
    "dimensionless": ("", (0, 0, 0)),
    "length": ("cm", (1, 0, 0)),
    "time": ("s", (0, 1, 0)),
    "mass": ("g", (0, 0, 1)),
    "velocity": ("cm s-1", (1, -1, 0)),
    "density": ("g cm-3", (-3, 0, 1)),
    "pressure": ("erg cm-3", (-1, -2, 1)),
    "energy": ("erg", (2, -2, 1)),
    "energy_per_length": ("erg cm-1", (1, -2, 1)),
    "energy_density": ("erg cm-3", (-1, -2, 1)),
    "momentum_density": ("g cm-2 s-1", (-2, -1, 1)),
    "magnetic_field": ("G", None),
    "temperature": ("K", None),
    "diffusivity": ("cm2 s-1", (2, -1, 0)),
    "rate": ("s-1", (0, -1, 0)),
    "power": ("erg s-1", (2, -3, 1)),
    "power_density": ("erg cm-3 s-1", (-1, -3, 1)),
    "energy_flux": ("erg cm-2 s-1", (0, -3, 1)),
    "energy_density_ev": ("eV cm-3", (-1, -2, 1)),
    "mass_rate": ("g s-1", (0, -1, 1)),
    "momentum_rate": ("g cm s-2", (1, -2, 1)),
    "acceleration": ("cm s-2", (1, -2, 0)),
    "specific_energy": ("erg g-1", (2, -2, 0)),
}


# kinds whose unit is not CGS: the unit's value in CGS (``to_cgs`` converts to that unit)
SCALED = {"energy_density_ev": float((1 * u.eV).to(u.erg).value)}


def parse_quantity(text, where: str) -> u.Quantity:
    """Parse ``"10 kpc"``-style text (or a number, taken as dimensionless)."""
    if isinstance(text, bool):
        raise ParameterError(f"{where}: expected a quantity with units, got {text!r}")
    if isinstance(text, (int, float)):
        return u.Quantity(float(text))
    try:
        q = u.Quantity(str(text))
    except (TypeError, ValueError) as exc:
        raise ParameterError(f"{where}: {text!r} is not a quantity with units "
                             f"(example: '10 kpc', '1e-3 cm**-3'): {exc}") from None
    if not q.isscalar:
        raise ParameterError(f"{where}: {text!r} must be a single value")
    return q


@dataclass(frozen=True)
class UnitSystem:
    """Code units from three base units; converts quantities both ways.

    Parameters are astropy unit strings, e.g. ``UnitSystem("kpc", "Myr", "Msun")``.
    ``mu`` is the mean molecular weight used for temperatures and number densities.
    """

    length: str = "kpc"
    time: str = "Myr"
    mass: str = "Msun"
    mu: float = 0.6

    def __post_init__(self):
        for name, want in (("length", u.m), ("time", u.s), ("mass", u.kg)):
            try:
                unit = u.Unit(getattr(self, name))
            except ValueError:
                raise ParameterError(f"units.{name} = {getattr(self, name)!r}: not a unit "
                                     "astropy knows") from None
            if not unit.is_equivalent(want):
                raise ParameterError(f"units.{name} = {getattr(self, name)!r}: must be a "
                                     f"{want.physical_type} unit")
            scale = unit.to(want)
            if not (math.isfinite(scale) and scale > 0):
                raise ParameterError(f"units.{name} = {getattr(self, name)!r}: must be a "
                                     f"positive, finite {want.physical_type} unit")

    # ------------------------------------------------------------ factors
    @property
    def base_cgs(self) -> tuple[float, float, float]:
        return (u.Unit(self.length).to(u.cm), u.Unit(self.time).to(u.s),
                u.Unit(self.mass).to(u.g))

    def to_cgs(self, kind: str) -> float:
        """Value in CGS of one code unit of ``kind``."""
        L, T, M = self.base_cgs
        if kind == "magnetic_field":
            return math.sqrt(4.0 * math.pi * self.to_cgs("pressure"))
        if kind == "temperature":
            # code temperature = p / rho in code units, times mu m_H / k_B
            return self.to_cgs("velocity") ** 2 * self.mu * M_H_CGS / K_B_CGS
        a, b, c = KINDS[kind][1]
        return L ** a * T ** b * M ** c / SCALED.get(kind, 1.0)

    @property
    def G(self) -> float:
        """Newton's constant in code units."""
        L, T, M = self.base_cgs
        return G_CGS * M * T ** 2 / L ** 3

    def code_unit(self, kind: str) -> str:
        """The code unit of ``kind`` as an astropy unit string (e.g.
        ``"Msun kpc2 Myr-2"`` for energy); CGS for field and temperature, whose
        code units have no such name."""
        powers = KINDS[kind][1]
        if powers is None:
            return KINDS[kind][0]
        parts = []
        for base, p in zip((self.length, self.time, self.mass), powers):
            if p:
                parts.append(base if p == 1 else f"{base}{p}")
        return " ".join(parts)

    def cgs_unit(self, kind: str) -> str:
        return KINDS[kind][0]

    # ------------------------------------------------------------ parsing
    def code_value(self, value, kind: str, where: str) -> float:
        """A number in code units from a quantity string of the given kind.

        Plain numbers are taken as already in code units (for dimensionless
        verification problems).  Densities accept number densities; a
        temperature is its own kind (a state's ``T`` becomes ``p`` in
        :meth:`wind2d.setups.SetupContext.state`).  Non-finite values are refused.
        """
        out = self._code_value(value, kind, where)
        if not math.isfinite(out):
            raise ParameterError(f"{where}: {value!r} is not a finite value")
        return out

    def _code_value(self, value, kind: str, where: str) -> float:
        if kind not in KINDS:
            raise KeyError(kind)
        if isinstance(value, bool):
            raise ParameterError(f"{where}: expected a number or a quantity, got {value!r}")
        if isinstance(value, (int, float)):
            try:
                return float(value)
            except OverflowError:
                return math.inf
        q = parse_quantity(value, where)
        if kind == "dimensionless":
            if q.unit.physical_type != "dimensionless":
                raise ParameterError(f"{where}: {value!r} must be a plain number")
            return float(q.decompose().value)
        if kind == "density" and q.unit.is_equivalent(u.cm ** -3):
            return float(q.to(u.cm ** -3).value) * self.mu * M_H_CGS / self.to_cgs("density")
        if kind == "magnetic_field":
            if not q.unit.is_equivalent(u.G):
                raise ParameterError(f"{where}: {value!r} is not a magnetic field "
                                     "(example: '3 uG')")
            return float(q.to(u.G).value) / self.to_cgs("magnetic_field")
        if kind == "temperature":
            if not q.unit.is_equivalent(u.K, equivalencies=u.temperature()):
                raise ParameterError(f"{where}: {value!r} is not a temperature (example: '1e4 K')")
            return float(q.to(u.K, equivalencies=u.temperature()).value) / self.to_cgs("temperature")
        target = u.Unit(KINDS[kind][0])
        if not q.unit.is_equivalent(target):
            extra = " or a number density" if kind == "density" else ""
            raise ParameterError(
                f"{where}: {value!r} has the dimension of {q.unit.physical_type}; expected "
                f"{kind.replace('_', ' ')}{extra} (in {KINDS[kind][0]} or any equivalent unit)")
        return float(q.to(target).value) / self.to_cgs(kind)

    def describe(self, value: float, kind: str) -> str:
        """A code value shown in physical units, e.g. ``'2.5 kpc'`` or
        ``'1.67e-24 g cm-3'`` (base kinds in the file's own units)."""
        if kind == "dimensionless":
            return f"{value:.6g}"
        own = {"length": self.length, "time": self.time, "mass": self.mass}
        if kind in own:
            return f"{value:.6g} {own[kind]}"
        return f"{value * self.to_cgs(kind):.6g} {KINDS[kind][0]}"
