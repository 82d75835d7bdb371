"""Static external gravity: analytic potentials (:mod:`.potentials`), the
``gravity`` module (:mod:`.module`) and its source kernels (:mod:`.source`)."""
from .module import Gravity, gravity_modules, total_potential  # noqa: F401
from .potentials import (NFW, FromFunction, Hernquist, Logarithmic, MiyamotoNagai,  # noqa: F401
                         PointMass, Potential, Sum, Uniform)
