"""Outflow rates through named surfaces and the exact budget of the domain edges
(a diagnostic module: it never changes the state)."""
from .module import OutflowRates  # noqa: F401
