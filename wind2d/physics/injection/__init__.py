"""Star-formation driven injection of thermal energy, cosmic-ray energy and mass."""
from .module import Injection  # noqa: F401
