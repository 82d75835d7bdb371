"""Cosmic rays by the two-moment method (Jiang & Oh 2018): the module
(:mod:`.module`), HLL transport (:mod:`.transport`), implicit gas coupling
(:mod:`.coupling`), the sweep of a stage that fuses them (:mod:`.stage`) and
collisional losses (:mod:`.losses`).
"""
from ... import core  # noqa: F401  (its import drops stale numba caches here too)
from .module import CosmicRayParams, CosmicRays  # noqa: F401
