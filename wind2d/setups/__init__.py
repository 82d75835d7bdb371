"""Initial conditions, registered by name; one small file per setup.

A setup is a class with a pydantic ``Params`` model (its problem-file keys,
validated with units like the rest of the file) and ``apply(sim, params,
ctx)`` that fills the :class:`~wind2d.simulation.Simulation` through its
public API.  Register new ones with ``@register("name")``.
"""
from __future__ import annotations

from typing import Any

from ..errors import ParameterError

SETUPS: dict[str, type] = {}


def register(name: str):
    def deco(cls):
        cls.name = name
        SETUPS[name] = cls
        return cls
    return deco


class SetupContext:
    """What a setup may use: the unit system and the geometry of the run."""

    def __init__(self, units, geometry: str, field_names, axis_names):
        self.units = units
        self.geometry = geometry
        self.field_names = tuple(field_names)
        self.axis_names = tuple(axis_names)

    def state(self, values: dict[str, Any], where: str) -> dict[str, float]:
        """Convert a state mapping (``rho``, ``p`` or ``T``, velocity and field
        components by name, scalars) to code values; ``T`` becomes ``p``."""
        if not isinstance(values, dict):
            raise ParameterError(f"{where}: a state is a mapping like {{rho: 1 cm**-3, "
                                 "T: 1e4 K}}")
        allowed = set(self.field_names) | {"T"}
        out: dict[str, float] = {}
        for k, v in values.items():
            if k not in allowed:
                from difflib import get_close_matches
                near = get_close_matches(str(k), sorted(allowed), n=1)
                hint = f" (did you mean '{near[0]}'?)" if near else ""
                raise ParameterError(f"{where}.{k}: unknown state variable{hint}; allowed: "
                                     + ", ".join(sorted(allowed)))
            kind = ("density" if k == "rho" else "pressure" if k == "p" else
                    "temperature" if k == "T" else "velocity" if k.startswith("v") else
                    "magnetic_field" if k.startswith("B") else "dimensionless")
            out[k] = self.units.code_value(v, kind, f"{where}.{k}")
        if "rho" not in out:
            raise ParameterError(f"{where}: the state needs 'rho'")
        if out["rho"] <= 0:
            raise ParameterError(f"{where}.rho: must be positive")
        if "T" in out:
            if "p" in out:
                raise ParameterError(f"{where}: give either 'p' or 'T', not both")
            out["p"] = out.pop("T") * out["rho"]
        return out


def get(name: str):
    if name not in SETUPS:
        from difflib import get_close_matches
        near = get_close_matches(name, sorted(SETUPS), n=1)
        hint = f" (did you mean '{near[0]}'?)" if near else ""
        raise ParameterError(f"setup.kind = {name!r}: unknown setup{hint}; available: "
                             + ", ".join(sorted(SETUPS)))
    return SETUPS[name]


# the built-in setups register themselves on import
from . import (blast, field_loop, linear_wave, radial_equilibria, shock_tube,  # noqa: E402,F401
               uniform)
