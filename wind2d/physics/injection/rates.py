"""Star-formation histories of the ``injection`` module, with exact integrals.

Each history gives the rate ``SFR(t)`` (code mass per code time, the whole
galaxy) and the mass of stars formed in ``[a, b]``, ``int_a^b SFR dt``,
computed exactly (to round-off) for the shape it describes, so that the
energy injected over a run does not depend on the time steps:

* ``constant``: ``SFR(t) = rate``; integral ``rate (b - a)``;
* ``table``: linear interpolation between the points ``(t_k, SFR_k)``, held
  at the first and last values outside the table; the integral is the sum of
  trapezoids between ``a``, the table times inside ``(a, b)`` and ``b``,
  which is exact for a piecewise-linear function;
* ``burst``: ``SFR(t) = base + peak exp(-(t - start)/decay_time)`` for
  ``t >= start`` and ``base`` before; the integral of the burst part is
  ``peak tau (exp(-(a' - start)/tau) - exp(-(b' - start)/tau))`` with
  ``a' = max(a, start)``, evaluated with ``expm1`` for short steps.
"""
from __future__ import annotations

import math
from typing import Literal

import numpy as np
from pydantic import Field, model_validator

from ...problem.schema import Q, Strict


class ConstantRate(Strict):
    """A constant star-formation rate."""
    kind: Literal["constant"]
    rate: Q("mass_rate", "star-formation rate of the whole galaxy") = Field(ge=0.0)

    def at(self, t: float) -> float:
        return self.rate

    def integral(self, a: float, b: float) -> float:
        return self.rate * (b - a)


class TableRate(Strict):
    """A star-formation history given as a table, linear between its points."""
    kind: Literal["table"]
    times: list[Q("time", "times of the table, increasing")] = Field(min_length=1)
    rates: list[Q("mass_rate", "star-formation rate at each time (whole galaxy)")] = \
        Field(min_length=1)

    @model_validator(mode="after")
    def _check(self):
        if len(self.times) != len(self.rates):
            raise ValueError(f"times ({len(self.times)} values) and rates "
                             f"({len(self.rates)} values) must have the same length")
        if any(b <= a for a, b in zip(self.times[:-1], self.times[1:])):
            raise ValueError("times must increase strictly")
        if any(r < 0 for r in self.rates):
            raise ValueError("rates must be >= 0")
        return self

    def at(self, t: float) -> float:
        return float(np.interp(t, self.times, self.rates))

    def integral(self, a: float, b: float) -> float:
        inner = [tk for tk in self.times if a < tk < b]
        pts = [a] + inner + [b]
        tot = 0.0
        for t0, t1 in zip(pts[:-1], pts[1:]):
            tot += 0.5 * (self.at(t0) + self.at(t1)) * (t1 - t0)
        return tot


class BurstRate(Strict):
    """A burst: a constant base plus a peak decaying exponentially after a start time."""
    kind: Literal["burst"]
    peak: Q("mass_rate", "rate of the burst at its start (whole galaxy)") = Field(ge=0.0)
    start: Q("time", "start of the burst") = 0.0
    decay_time: Q("time", "e-folding time of the burst") = Field(gt=0.0)
    base: Q("mass_rate", "constant rate before, during and after the burst") = \
        Field(0.0, ge=0.0)

    def at(self, t: float) -> float:
        if t < self.start:
            return self.base
        return self.base + self.peak * math.exp(-(t - self.start) / self.decay_time)

    def integral(self, a: float, b: float) -> float:
        tot = self.base * (b - a)
        a1 = max(a, self.start)
        if b > a1:
            tau = self.decay_time
            tot += self.peak * tau * math.exp(-(a1 - self.start) / tau) \
                * -math.expm1(-(b - a1) / tau)
        return tot
