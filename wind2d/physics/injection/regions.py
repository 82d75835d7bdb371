"""Regions of the ``injection`` module and their weights.

A region is centred on the axis at ``z = centre_z``.  Its weight ``w(R, z)``
(evaluated at cell centres, R the volume centroid) sets how the injected
energy is shared: cell ``k`` receives the fraction ``w_k V_k / sum(w V)``,
the sum over every cell of the global grid.  With distances beyond the edge

* disk (cylinder ``R <= radius``, ``|z - centre_z| <= half_height``):
  ``d_R = R - radius``, ``d_z = |z - centre_z| - half_height``;
* sphere: ``d = r - radius``, ``r^2 = R^2 + (z - centre_z)^2``,

the edge kinds are

* ``sharp``: ``w = 1`` where the cell centre is inside (``d <= 0``), else 0;
* ``tanh``: ``w = (1 - tanh(d / width))/2`` (a product of the R and z factors
  for the disk): one half at the nominal edge;
* ``gaussian``: ``w = 1`` inside and ``exp(-d^2 / (2 width^2))`` outside (the
  disk uses ``d^2 = max(d_R, 0)^2 + max(d_z, 0)^2``), cut to zero beyond
  ``6 width`` (``w < 2e-8``) so that the region stays compact.
"""
from __future__ import annotations

from typing import Literal, Optional

import numpy as np
from pydantic import Field, model_validator

from ...problem.schema import Q, Strict

GAUSS_CUT = 6.0


class _Region(Strict):
    centre_z: Q("length", "height of the centre on the axis") = 0.0
    edge: Literal["sharp", "tanh", "gaussian"] = Field("sharp", description="edge profile: "
                                                       "sharp, tanh or gaussian")
    edge_width: Optional[Q("length", "width of a smooth edge")] = Field(None, gt=0.0)

    @model_validator(mode="after")
    def _edge(self):
        if self.edge == "sharp" and self.edge_width is not None:
            raise ValueError("edge_width is only used with edge: tanh or gaussian")
        if self.edge != "sharp" and self.edge_width is None:
            raise ValueError(f"edge: {self.edge} needs edge_width (e.g. '50 pc')")
        return self

    def _tanh(self, d):
        return 0.5 * (1.0 - np.tanh(d / self.edge_width))

    def _gauss(self, d2):
        w2 = self.edge_width ** 2
        return np.where(d2 <= (GAUSS_CUT ** 2) * w2, np.exp(-0.5 * d2 / w2), 0.0)


class DiskRegion(_Region):
    """A cylinder around the axis: R <= radius, |z - centre_z| <= half_height."""
    shape: Literal["disk"]
    radius: Q("length", "radius") = Field(gt=0.0)
    half_height: Q("length", "half thickness") = Field(gt=0.0)

    def weight(self, R, z):
        dR = np.abs(R) - self.radius
        dz = np.abs(z - self.centre_z) - self.half_height
        if self.edge == "sharp":
            return ((dR <= 0.0) & (dz <= 0.0)).astype(np.float64)
        if self.edge == "tanh":
            return self._tanh(dR) * self._tanh(dz)
        d2 = np.maximum(dR, 0.0) ** 2 + np.maximum(dz, 0.0) ** 2
        return self._gauss(d2)


class SphereRegion(_Region):
    """A sphere of the given radius centred on the axis at centre_z."""
    shape: Literal["sphere"]
    radius: Q("length", "radius") = Field(gt=0.0)

    def weight(self, R, z):
        d = np.hypot(R, z - self.centre_z) - self.radius
        if self.edge == "sharp":
            return (d <= 0.0).astype(np.float64)
        if self.edge == "tanh":
            return self._tanh(d)
        return self._gauss(np.maximum(d, 0.0) ** 2)
