"""Problem files: schema with units, loading, ``extends`` and ``--set`` overrides."""
from .build import build_simulation
from .load import ProblemError, Resolved, load, resolve
from .units import UnitSystem

__all__ = ["ProblemError", "Resolved", "load", "resolve", "UnitSystem", "build_simulation"]
