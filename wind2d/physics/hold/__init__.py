"""Held regions: cells reset to a given state every step (a wind base)."""
from .module import Hold  # noqa: F401
