"""wind2d: axisymmetric (R, z) Godunov MHD for galactic-wind studies."""
from .core.eos import IdealGas, Isothermal
from .errors import NonFiniteStateError, ParameterError
from .grid.mesh import AxisSpec, Mesh
from .simulation import Simulation

__version__ = "0.1.0"

__all__ = ["Simulation", "Mesh", "AxisSpec", "IdealGas", "Isothermal", "ParameterError",
           "NonFiniteStateError", "__version__"]
