"""Radiative cooling and heating: the ``cooling`` module (:mod:`.module`), its
exact integrator (:mod:`.townsend`) and cooling curves (:mod:`.curves`)."""
from .module import Cooling, CoolingParams  # noqa: F401
