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


_COMPONENTS = ("R", "z", "phi", "x", "y")


def state_kind(name: str) -> str:
    """Unit kind of a state variable: rho, p, T, velocity and field components;
    anything else (a passive scalar) is dimensionless."""
    if name in ("rho", "p", "T"):
        return {"rho": "density", "p": "pressure", "T": "temperature"}[name]
    if name[:1] in ("v", "B") and name[1:] in _COMPONENTS:
        return "velocity" if name[0] == "v" else "magnetic_field"
    return "dimensionless"


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
            out[k] = self.units.code_value(v, state_kind(k), f"{where}.{k}")
        if "rho" not in out:
            raise ParameterError(f"{where}: the state needs 'rho'")
        for k in ("rho", "p", "T"):
            if k in out and out[k] <= 0:
                raise ParameterError(f"{where}.{k} = {values[k]!r}: must be positive")
        if "T" in out:
            if "p" in out:
                raise ParameterError(f"{where}: give either 'p' or 'T', not both")
            out["p"] = out.pop("T") * out["rho"]
        return out


def apply_state(sim, state: dict) -> None:
    """Put a state (numbers, arrays or callables per field) into the simulation:
    the poloidal field components go to the faces (:meth:`Simulation.set_field`),
    the rest to the cells (:meth:`Simulation.set_primitive`)."""
    state = dict(state)
    if sim.varmap.mhd:
        n1, n2 = sim.field_names[5], sim.field_names[6]
        if n1 in state or n2 in state:
            sim.set_field(b1=state.pop(n1, 0.0), b2=state.pop(n2, 0.0))
    sim.set_primitive(**state)


def get(name: str):
    if name not in SETUPS:
        from difflib import get_close_matches
        near = get_close_matches(name, sorted(SETUPS), n=1)
        hint = f" (did you mean '{near[0]}'?)" if near else ""
        raise ParameterError(f"setup.kind = {name!r}: unknown setup{hint}; available: "
                             + ", ".join(sorted(SETUPS)))
    return SETUPS[name]


# the built-in setups register themselves on import: every file of this folder
import importlib as _importlib  # noqa: E402
import pkgutil as _pkgutil  # noqa: E402

for _info in sorted(_pkgutil.iter_modules(__path__), key=lambda m: m.name):
    _importlib.import_module(f"{__name__}.{_info.name}")
