"""Symmetry axis R = 0 of cylindrical geometry.

Ghost cells mirror the interior with the R and phi components of velocity
and field negated (v_R, v_phi, B_R, B_phi are odd in R); the axis face has
zero area and carries B_R = 0.  The corner electric field on the axis is set
to zero by the constrained-transport kernel.
"""
from .reflecting import mirror  # noqa: F401  (the axis is a mirror with more flips)
