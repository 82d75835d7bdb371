"""Registry of physics modules: built-in, entry points, local files.

* Built-in modules register themselves with ``@register("name")`` when
  :mod:`wind2d.physics` is imported.
* Installed packages add modules through the ``wind2d.physics`` entry-point
  group; each entry point names a :class:`~wind2d.physics.base.Module`
  subclass, registered under the entry point's name.
* A problem file may load modules from local Python files (``load_modules``);
  the file registers its classes with ``@register``.
"""
from __future__ import annotations

import hashlib
import importlib.util
import sys
from pathlib import Path

from ..errors import ParameterError
from .base import Module

MODULES: dict[str, type[Module]] = {}
ENTRY_POINT_GROUP = "wind2d.physics"
_entry_points_loaded = False


def register(name: str):
    """Class decorator: register a :class:`Module` subclass under ``name``."""
    if not name.isidentifier():
        raise ValueError(f"module name {name!r}: use letters, digits and '_'")

    def deco(cls):
        if not (isinstance(cls, type) and issubclass(cls, Module)):
            raise TypeError(f"@register({name!r}): {cls!r} is not a wind2d.physics.Module")
        old = MODULES.get(name)
        if old is not None and old is not cls and not _same_code(old, cls):
            raise ValueError(f"physics module {name!r} is registered twice "
                             f"({old.__module__}.{old.__qualname__} and "
                             f"{cls.__module__}.{cls.__qualname__})")
        cls.name = name
        MODULES[name] = cls
        return cls
    return deco


def _same_code(a: type, b: type) -> bool:
    """Two class objects made from the same source (a file both installed and named
    in ``load_modules``, or imported twice)."""
    import inspect
    if a.__qualname__ != b.__qualname__:
        return False
    if a.__module__ == b.__module__:
        return True
    try:
        return Path(inspect.getfile(a)).resolve() == Path(inspect.getfile(b)).resolve()
    except (TypeError, OSError):
        return False


def load_entry_points() -> None:
    """Register the modules of installed packages (once per process)."""
    global _entry_points_loaded
    if _entry_points_loaded:
        return
    _entry_points_loaded = True
    from importlib.metadata import entry_points
    for ep in entry_points(group=ENTRY_POINT_GROUP):
        if ep.name in MODULES:
            continue
        try:
            cls = ep.load()
        except Exception as exc:        # a broken plug-in must not hide the others
            raise ParameterError(f"physics: the installed module {ep.name!r} ({ep.value}) "
                                 f"failed to import: {type(exc).__name__}: {exc}") from None
        register(ep.name)(cls)


def load_file(path, where: str = "load_modules") -> list[str]:
    """Import a local Python file that registers modules; returns their names."""
    path = Path(path)
    if not path.is_file():
        raise ParameterError(f"{where}: module file {str(path)!r} not found")
    before = dict(MODULES)
    tag = hashlib.sha1(str(path.resolve()).encode()).hexdigest()[:10]
    spec = importlib.util.spec_from_file_location(f"wind2d_local_{path.stem}_{tag}", path)
    mod = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = mod          # so that pickling and inspect find it
    try:
        spec.loader.exec_module(mod)
    except Exception as exc:
        sys.modules.pop(spec.name, None)
        raise ParameterError(f"{where}: {path} failed to import: {type(exc).__name__}: "
                             f"{exc}") from None
    new = [n for n, c in MODULES.items() if before.get(n) is not c]
    if not new:
        raise ParameterError(f"{where}: {path} registers no module (decorate a "
                             "wind2d.physics.Module subclass with @register('name'))")
    return new


def available() -> list[str]:
    load_entry_points()
    return sorted(MODULES)


def get(name: str) -> type[Module]:
    """The module class registered as ``name``; a clear error lists the others."""
    load_entry_points()
    if name not in MODULES:
        from difflib import get_close_matches
        near = get_close_matches(name, sorted(MODULES), n=1)
        hint = f" (did you mean '{near[0]}'?)" if near else ""
        raise ParameterError(f"physics.{name}: unknown module{hint}; available modules: "
                             + ", ".join(sorted(MODULES)))
    return MODULES[name]
