"""The ``cooling`` module: optically thin radiative cooling and heating.

Problem file::

    physics:
      cooling:
        curve: {kind: solar_cie, low_temperature: koyama_inutsuka}
        heating: {per_atom: 2e-26 erg/s, off_above: 2e4 K}
        floor: 10 K
        ceiling: 1e9 K
        hydrogen_fraction: 0.7

Once per step (an operator-split source, after the hydrodynamic stages) the
internal energy of every cell changes at fixed density and velocity by

    de/dt = H(rho, T) - n_H^2 Lambda(T),    n_H = X rho / m_H,

with the heating per volume ``H = per_volume + n_H per_atom + n_H^2
per_atom_per_nH`` (switched off at and above ``heating.off_above``), the
cooling curve ``Lambda`` [erg cm^3 s^-1] of ``curve`` (``curves.py``) and
``T = mu m_H p / (k_B rho)`` with ``mu`` from ``gas.mean_molecular_weight``.
The step is integrated exactly for any ``dt`` (``townsend.py``: Townsend 2009
for cooling alone, an exact solution of the scalar ODE with heating), so the
module sets no time-step limit.  Cooling stops at ``floor`` (and at the first
temperature of the curve); heating stops at ``ceiling``; a cell that arrives
from the hydrodynamic step outside [floor, ceiling] is first reset to the
limit.  Needs the ideal-gas EOS.

Tallies (running totals since the start, per radian in cylindrical geometry,
code energy): ``radiated_energy`` (sum of V times the energy density lost to
radiation), ``heating_energy`` (added by heating) and
``temperature_limit_energy`` (added by the floor and ceiling resets).  In a
closed box the total energy changes by ``heating_energy +
temperature_limit_energy - radiated_energy``.  The energy of one history
interval is the difference of two rows.  History columns ``cooling_power`` and
``heating_power`` give the instantaneous volume-integrated rates; the snapshot
field ``cooling_time`` is ``e / (n_H^2 Lambda)`` (infinite where the curve
gives no cooling).

Units: ``Lambda`` and ``per_atom_per_nH`` accept quantities in erg cm^3 s^-1
(or any equivalent unit); a plain number is in code units, ``M L^5 T^-3`` of
the run's base units.  They are converted once, when the module is attached.
"""
from __future__ import annotations

import math
from pathlib import Path
from types import SimpleNamespace
from typing import Annotated, Any, Literal, Optional

import numpy as np
from pydantic import BeforeValidator, Field, ValidationInfo, field_validator, model_validator

from ...errors import ParameterError
from ...problem.schema import Q, Strict
from ...problem.units import K_B_CGS, M_H_CGS, parse_quantity
from ..base import ORDER_COUPLING, Module
from ..registry import register
from . import curves
from .townsend import (GL_W, GL_X, bernoulli_products, cool_cells, lambda_grid, y_nodes,
                       y_of_t)

LAMBDA_CGS = "erg cm3 s-1"


def _lambda_code_unit(units) -> float:
    """Value in erg cm^3 s^-1 of one code unit of a cooling function (M L^5 T^-3)."""
    L, T, M = units.base_cgs
    return M * L ** 5 / T ** 3


def _to_lambda(value: Any, info: ValidationInfo) -> float:
    """A cooling-function quantity (erg cm^3 s^-1 or equivalent) in code units."""
    import astropy.units as u
    units = (info.context or {}).get("units")
    if units is None:
        raise ValueError("internal: no unit system in the validation context")
    if isinstance(value, bool):
        raise ValueError(f"expected a number or a quantity in {LAMBDA_CGS}, got {value!r}")
    if isinstance(value, (int, float)):
        out = float(value)
    else:
        try:
            q = parse_quantity(value, "")
        except ParameterError as exc:
            raise ValueError(str(exc).lstrip(": ")) from None
        target = u.Unit(LAMBDA_CGS)
        if not q.unit.is_equivalent(target):
            raise ValueError(f"{value!r} is not a cooling function; expected a quantity in "
                             f"{LAMBDA_CGS} (e.g. '1e-22 erg cm3 s-1')")
        out = float(q.to(target).value) / _lambda_code_unit(units)
    if not math.isfinite(out):
        raise ValueError(f"{value!r} is not a finite value")
    return out


def LambdaQ(doc: str):
    return Annotated[float, BeforeValidator(_to_lambda),
                     Field(description=f"{doc}; a quantity in {LAMBDA_CGS} or a number in "
                                       "code units (M L^5 T^-3)")]


def _kelvin(value: float, info: ValidationInfo) -> float:
    units = (info.context or {}).get("units")
    return value * units.to_cgs("temperature") if units is not None else value


# the keys each curve kind takes (others must not be given)
_CURVE_KEYS = {"solar_cie": {"low_temperature", "tolerance"},
               "power_law": {"Lambda0", "T0", "alpha", "T_min"},
               "table": {"file"}}


class CurveSpec(Strict):
    """The cooling curve Lambda(T), in erg cm^3 s^-1 multiplying n_H^2.  Kinds:
    ``solar_cie`` (collisional ionisation equilibrium at solar metallicity above
    1e4 K, Rosen & Bregman 1995 with coefficients from memory; keys
    ``low_temperature``, ``tolerance``), ``power_law`` (``Lambda0 (T/T0)^alpha``
    from ``T_min`` up; keys ``Lambda0``, ``T0``, ``alpha``, ``T_min``) and
    ``table`` (``file``: two columns log10 T [K], log10 Lambda [erg cm^3 s^-1])."""
    kind: Literal["solar_cie", "power_law", "table"] = Field(
        "solar_cie", description="which curve")
    low_temperature: Literal["rosen_bregman", "koyama_inutsuka", "none"] = Field(
        "rosen_bregman", description="solar_cie below 1e4 K: Rosen & Bregman (1995) down to "
        "300 K, Koyama & Inutsuka (2002) down to 10 K, or no cooling")
    tolerance: float = Field(1.0e-4, gt=0.0, lt=0.1, description="solar_cie with "
                             "koyama_inutsuka: largest relative deviation of the piecewise "
                             "power law from the Koyama & Inutsuka formula")
    Lambda0: Optional[LambdaQ("power_law: Lambda at T0")] = None
    T0: Optional[Q("temperature", "power_law: reference temperature")] = None
    alpha: Optional[float] = Field(None, description="power_law: exponent")
    T_min: Optional[Q("temperature", "power_law: lowest temperature with cooling (none: "
                      "10 K)")] = None
    file: Optional[str] = Field(None, description="table: path of the two-column text file "
                                "(relative to the problem file)")

    @field_validator("Lambda0")
    @classmethod
    def _lambda0(cls, v):
        if v is not None and not v > 0.0:
            raise ValueError("Lambda0 must be positive")
        return v

    @field_validator("T0", "T_min")
    @classmethod
    def _temperature(cls, v):
        if v is not None and not v > 0.0:
            raise ValueError("must be a positive temperature")
        return v

    @field_validator("alpha")
    @classmethod
    def _alpha(cls, v):
        if v is not None and not math.isfinite(v):
            raise ValueError("alpha must be a finite number")
        return v

    @model_validator(mode="after")
    def _kind_keys(self):
        given = self.model_fields_set - {"kind"}
        wrong = sorted(given - _CURVE_KEYS[self.kind])
        if wrong:
            raise ValueError(f"key(s) {', '.join(wrong)} do not apply to kind "
                             f"{self.kind!r}; its keys: "
                             f"{', '.join(sorted(_CURVE_KEYS[self.kind])) or '(none)'}")
        if self.kind == "power_law":
            missing = [k for k in ("Lambda0", "T0", "alpha") if getattr(self, k) is None]
            if missing:
                raise ValueError(f"kind 'power_law' needs {', '.join(missing)} "
                                 "(Lambda = Lambda0 (T/T0)^alpha)")
        if self.kind == "table" and not self.file:
            raise ValueError("kind 'table' needs file (two columns: log10 T [K], "
                             "log10 Lambda [erg cm^3 s^-1])")
        return self


class HeatingSpec(Strict):
    """Heating per volume ``per_volume + n_H per_atom + n_H^2 per_atom_per_nH``,
    switched off at and above ``off_above``."""
    per_atom: Q("power", "uniform heating rate per hydrogen atom (per volume: n_H times "
                "this)") = Field(0.0)
    per_atom_per_nH: LambdaQ("heating per hydrogen atom proportional to density: per "
                             "volume n_H^2 times this") = Field(0.0)
    per_volume: Q("power_density", "heating per volume, independent of density") = \
        Field(0.0)
    off_above: Optional[Q("temperature", "no heating at and above this temperature")] = None

    @field_validator("per_atom", "per_atom_per_nH", "per_volume")
    @classmethod
    def _non_negative(cls, v, info: ValidationInfo):
        if not v >= 0.0:
            raise ValueError("a heating rate must be >= 0 (net cooling belongs in the "
                             "curve)")
        return v

    @field_validator("off_above")
    @classmethod
    def _positive_t(cls, v, info: ValidationInfo):
        if v is not None and not v > 0.0:
            raise ValueError("must be a positive temperature")
        return v


class CoolingParams(Strict):
    """Radiative cooling and heating, integrated exactly once per step."""
    curve: CurveSpec = Field(default_factory=CurveSpec)
    heating: HeatingSpec = Field(default_factory=HeatingSpec)
    floor: Optional[Q("temperature", "temperature floor: no cooling below; colder cells "
                      "are raised to it")] = None
    ceiling: Optional[Q("temperature", "temperature ceiling: no heating above; hotter "
                        "cells are lowered to it")] = None
    hydrogen_fraction: float = Field(0.7, description="hydrogen mass fraction X in "
                                     "n_H = X rho / m_H, 0 < X <= 1")

    @field_validator("floor")
    @classmethod
    def _floor(cls, v, info: ValidationInfo):
        if v is not None and not v >= 0.0:
            raise ValueError("a temperature floor must be >= 0 K")
        return v

    @field_validator("ceiling")
    @classmethod
    def _ceiling(cls, v, info: ValidationInfo):
        if v is not None and not v > 0.0:
            raise ValueError("a temperature ceiling must be positive")
        return v

    @field_validator("hydrogen_fraction")
    @classmethod
    def _x(cls, v):
        if not (math.isfinite(v) and 0.0 < v <= 1.0):
            raise ValueError("not a hydrogen mass fraction: allowed 0 < X <= 1 (solar "
                             "about 0.7)")
        return v

    @model_validator(mode="after")
    def _limits(self, info: ValidationInfo):
        if self.floor is not None and self.ceiling is not None and \
                not self.floor < self.ceiling:
            raise ValueError(f"floor ({_kelvin(self.floor, info):g} K) must be below "
                             f"ceiling ({_kelvin(self.ceiling, info):g} K)")
        return self


def build_curve(spec: CurveSpec, units, source=None, where="physics.cooling.curve"):
    """The :class:`~.curves.CoolingCurve` of a validated ``curve`` section
    (``Lambda`` in erg cm^3 s^-1, temperatures in K)."""
    tK = units.to_cgs("temperature")
    if spec.kind == "solar_cie":
        return curves.solar_cie(spec.low_temperature, spec.tolerance)
    if spec.kind == "power_law":
        T_min = spec.T_min * tK if spec.T_min is not None else 10.0
        return curves.power_law(spec.Lambda0 * _lambda_code_unit(units), spec.T0 * tK,
                                spec.alpha, T_min)
    path = Path(spec.file)
    if not path.is_absolute():
        base = Path(source).parent if source and Path(source).is_file() else Path(".")
        path = base / path
    return curves.read_table(path, f"{where}.file")


@register("cooling")
class Cooling(Module):
    """Optically thin radiative cooling and heating at fixed density,
    ``de/dt = H - n_H^2 Lambda(T)``, integrated exactly once per step for any
    step (Townsend 2009, ApJS 181, 391, for cooling alone; the exact solution
    of the scalar equation with heating), so it sets no time-step limit.
    Tallies ``radiated_energy``, ``heating_energy`` and
    ``temperature_limit_energy`` (running totals, per radian in (R, z)); history
    columns ``cooling_power`` and ``heating_power``; snapshot field
    ``cooling_time``.  Needs ``gas.eos: ideal``.
    """

    Params = CoolingParams
    order = ORDER_COUPLING
    tally_kinds = {"radiated_energy": "energy", "heating_energy": "energy",
                   "temperature_limit_energy": "energy"}

    def __init__(self, params, context):
        """``params``: the validated ``physics.cooling`` section (code units);
        ``context``: ``units``, ``gas`` (``mean_molecular_weight``, ``eos``) and
        ``source`` (the problem file, for relative table paths).  From Python,
        :meth:`from_keys` validates a mapping of problem-file keys.

        After :meth:`attach`: ``curve`` (CGS), ``T_u`` (kelvin per code unit of
        ``p / rho``) and ``lambda_scale`` (code Lambda per erg cm^3 s^-1, with
        ``X^2 / m_H^2``: the cooling per volume is ``rho^2 Lambda_code``)."""
        super().__init__(params, context)
        gas = getattr(context, "gas", None)
        if gas is not None and getattr(gas, "eos", "ideal") == "isothermal":
            raise ParameterError("physics.cooling: needs gas.eos: ideal (the isothermal gas "
                                 "has no energy equation to cool)")
        if self.units is None:
            raise ParameterError("physics.cooling: needs the run's unit system")
        self.mu = float(getattr(gas, "mean_molecular_weight", self.units.mu)) \
            if gas is not None else float(self.units.mu)
        self.curve = build_curve(params.curve, self.units, getattr(context, "source", None))
        tK = self.units.to_cgs("temperature")
        self.T_floor = params.floor * tK if params.floor is not None else 0.0
        self.T_ceiling = params.ceiling * tK if params.ceiling is not None else math.inf
        off = params.heating.off_above
        self.T_off = off * tK if off is not None else math.inf
        self.tallies = {k: 0.0 for k in self.tally_kinds}

    @classmethod
    def from_keys(cls, keys: dict | None = None, units=None, *, mean_molecular_weight=0.6,
                  source=None) -> "Cooling":
        """Build from a mapping of problem-file keys (Python API); quantities may
        carry units.  ``units`` defaults to ``UnitSystem(mu=mean_molecular_weight)``."""
        from pydantic import ValidationError

        from ...problem.load import describe_errors
        from ...problem.units import UnitSystem
        units = units or UnitSystem(mu=mean_molecular_weight)
        try:
            params = cls.Params.model_validate(keys or {}, context={"units": units})
        except ValidationError as exc:
            raise ParameterError("; ".join(describe_errors(exc, cls.Params, "physics.cooling.",
                                                           keys))) from None
        gas = SimpleNamespace(eos="ideal", mean_molecular_weight=mean_molecular_weight)
        return cls(params, SimpleNamespace(units=units, gas=gas, source=source))

    # ---------------------------------------------------------------- set-up
    def attach(self, sim) -> None:
        super().attach(sim)
        if sim.eos.isothermal:
            raise ParameterError("physics.cooling: needs gas.eos: ideal (the isothermal gas "
                                 "has no energy equation to cool)")
        p, un = self.params, self.units
        L, T, M = un.base_cgs
        rho_u, P_u, v_u = M / L ** 3, M / (L * T * T), L / T
        X = p.hydrogen_fraction
        self.gm1 = sim.eos.gamma - 1.0
        self.T_u = self.mu * M_H_CGS * v_u * v_u / K_B_CGS
        # cooling per volume (code) = rho_code^2 * Lambda_cgs * lambda_scale
        self.lambda_scale = (X * rho_u / M_H_CGS) ** 2 * T / P_u
        heat = p.heating
        self.hV = heat.per_volume
        self.hA = heat.per_atom * un.to_cgs("power") * X * rho_u / M_H_CGS * T / P_u
        self.h2 = heat.per_atom_per_nH * _lambda_code_unit(un) * self.lambda_scale
        c = self.curve
        self.Tn = c.T.copy()
        self.Ln = c.lam * self.lambda_scale
        self.An = c.alpha.copy()
        if not (np.all(np.isfinite(self.Ln)) and np.all(self.Ln > 0)):
            raise ParameterError("physics.cooling: the cooling curve is not representable in "
                                 "these code units (under- or overflow); choose other units")
        self.Yn = y_nodes(self.Tn, self.Ln, self.An)
        self.Bc = bernoulli_products(self.An)
        self.T_lo = max(float(self.Tn[0]), self.T_floor)
        self.Y_lo = float(y_of_t(self.T_lo, self.Tn, self.Ln, self.An, self.Yn))
        m = sim.mesh
        self.vol = np.ascontiguousarray(m.cell_volumes())
        self._sums = np.zeros(3)
        self._T = np.zeros((m.n2, m.n1))
        self._L = np.zeros((m.n2, m.n1))

    # ---------------------------------------------------------------- the step
    def split_source(self, sim, dt: float) -> None:
        """Exact cooling and heating over ``dt`` at fixed density and velocity."""
        m = sim.mesh
        s = self._sums
        s[:] = 0.0
        cool_cells(sim.state.U, self.vol, float(dt), self.gm1, self.T_u, self.hV, self.hA,
                   self.h2, self.Tn, self.Ln, self.An, self.Yn, self.Bc, self.T_lo, self.Y_lo,
                   self.T_floor, self.T_ceiling, self.T_off, self.params.floor is not None,
                   self.params.ceiling is not None, GL_X, GL_W, sim.varmap.mhd,
                   m.js, m.je, m.is_, m.ie, s)
        self.tallies["heating_energy"] += float(s[0])
        self.tallies["radiated_energy"] += float(s[1])
        self.tallies["temperature_limit_energy"] += float(s[2])

    # ---------------------------------------------------------------- output
    def _rates(self, sim):
        """Temperature [K], cooling and heating per volume (code) of the interior."""
        m = sim.mesh
        W = sim.integrator.W
        lambda_grid(W, self.T_u, self.Tn, self.Ln, self.An, self.T_lo, m.js, m.je, m.is_,
                    m.ie, self._T, self._L)
        rho = W[0, m.js:m.je, m.is_:m.ie]
        cool = rho * rho * self._L
        heat = self.hV + rho * (self.hA + rho * self.h2)
        heat = np.where(self._T < min(self.T_off, self.T_ceiling), heat, 0.0)
        return rho, cool, heat

    def derived_fields(self, sim):
        m = sim.mesh
        rho, cool, _ = self._rates(sim)
        e = sim.integrator.W[4, m.js:m.je, m.is_:m.ie] / self.gm1
        with np.errstate(divide="ignore"):
            tc = np.where(cool > 0.0, e / np.where(cool > 0.0, cool, 1.0), np.inf)
        return {"cooling_time": (tc, "time")}

    def history(self, sim):
        _, cool, heat = self._rates(sim)
        tot = sim.global_sum(np.array([float(np.sum(self.vol * cool)),
                                       float(np.sum(self.vol * heat))]))
        return {"cooling_power": (float(tot[0]), "power"),
                "heating_power": (float(tot[1]), "power")}
