"""Worked example of an external wind2d physics module (docs/plugins.md)."""
from .heating import UniformHeating  # noqa: F401
