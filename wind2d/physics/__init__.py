"""Registrable physics modules: the contract (:mod:`.base`), the registry
(:mod:`.registry`) and the built-in modules, one folder each.

Every sub-package of this folder is imported here, so a built-in module
registers itself by existing; the core (``wind2d.core``) imports none of them.
"""
from __future__ import annotations

import importlib
import pkgutil

from .base import (ORDER_COUPLING, ORDER_FORCES, ORDER_HOLD, ORDER_INJECTION,  # noqa: F401
                   ORDER_TRANSPORT, Module, NoParams, Variable)
from .registry import MODULES, available, get, load_file, register  # noqa: F401

for _info in sorted(pkgutil.iter_modules(__path__), key=lambda m: m.name):
    if _info.ispkg:
        importlib.import_module(f"{__name__}.{_info.name}")
