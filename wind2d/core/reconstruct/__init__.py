"""Reconstruction methods; one file per method, selected by name."""
from .plm import LIMITERS

METHODS = ("plm",)

__all__ = ["LIMITERS", "METHODS"]
