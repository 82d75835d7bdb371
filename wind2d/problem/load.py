"""Loading problem files: YAML, ``extends``, ``--set`` overrides, validation.

Everything is checked before any computation starts.  Problems are reported
as :class:`ProblemError`, whose message names the file, the key path and the
allowed values; the command line turns it into exit status 2 without a
traceback.
"""
from __future__ import annotations

import copy
import difflib
import re
import typing
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import yaml
from pydantic import BaseModel, ValidationError

from ..errors import ParameterError
from .schema import Problem
from .units import UnitSystem

MAX_EXTENDS = 8


class _Loader(yaml.SafeLoader):
    """Safe YAML loader that rejects duplicate keys and reads ``1e-3`` as a number.

    PyYAML follows YAML 1.1, where a float needs a dot (``1.0e-3``); ``1e-3``
    would otherwise arrive as the text '1e-3'.
    """


def _no_duplicates(loader, node, deep=False):
    seen: dict = {}
    for knode, _ in node.value:
        if knode.tag == "tag:yaml.org,2002:merge":
            continue
        key = loader.construct_object(knode, deep=True)
        try:
            first = seen.get(key)
        except TypeError:
            continue            # unhashable key: construct_mapping reports it
        if first is not None:
            raise yaml.constructor.ConstructorError(
                None, None, f"duplicate key {key!r} (first given on line {first + 1})",
                knode.start_mark)
        seen[key] = knode.start_mark.line
    return loader.construct_mapping(node, deep)


_Loader.add_constructor(yaml.resolver.BaseResolver.DEFAULT_MAPPING_TAG, _no_duplicates)
_Loader.add_implicit_resolver(
    "tag:yaml.org,2002:float",
    re.compile(r"^[-+]?(?:[0-9][0-9_]*)(?:\.[0-9_]*)?[eE][-+]?[0-9]+$"),
    list("-+0123456789"))


def yaml_load(text: str):
    """Parse YAML text as problem files are parsed (see :class:`_Loader`)."""
    return yaml.load(text, Loader=_Loader)


class ProblemError(ValueError):
    """An invalid problem file; ``str()`` is the message for the user."""

    def __init__(self, source: str, messages: list[str]):
        self.source = source
        self.messages = messages
        super().__init__(f"{source}: invalid problem file\n" + "\n".join(f"  - {m}" for m in messages))


def _yaml_message(exc: yaml.YAMLError, text: str) -> str:
    """'YAML syntax error at line L, column C: what' from any PyYAML error."""
    if isinstance(exc, yaml.reader.ReaderError):
        before = text[:exc.position]
        line, column = before.count("\n") + 1, len(before) - before.rfind("\n")
        ch = exc.character
        code = ord(ch) if isinstance(ch, str) else int(ch)
        return (f"YAML syntax error at line {line}, column {column}: the character "
                f"U+{code:04X} is not allowed in YAML text")
    mark = getattr(exc, "problem_mark", None)
    where = f" at line {mark.line + 1}, column {mark.column + 1}" if mark else ""
    what = getattr(exc, "problem", None) or str(exc).splitlines()[0]
    return f"YAML syntax error{where}: {what}"


def _read_yaml(path: Path) -> dict:
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise ProblemError(str(path), [f"cannot read the file: {exc.strerror}"]) from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise ProblemError(str(path), ["the file is not UTF-8 text (binary file?)"]) from None
    try:
        data = yaml_load(text)
    except yaml.YAMLError as exc:
        raise ProblemError(str(path), [_yaml_message(exc, text)]) from None
    if data is None:
        raise ProblemError(str(path), ["the file is empty; a problem file is a YAML mapping "
                                       "with at least title, grid, edges, setup and stop"])
    if not isinstance(data, dict):
        raise ProblemError(str(path), [f"the top level must be a mapping of keys, not a "
                                       f"{type(data).__name__}"])
    return data


def merge(base: dict, over: dict) -> dict:
    """Deep merge: mappings merge key by key, anything else in ``over`` replaces."""
    out = copy.deepcopy(base)
    for k, v in over.items():
        if isinstance(v, dict) and isinstance(out.get(k), dict):
            out[k] = merge(out[k], v)
        else:
            out[k] = copy.deepcopy(v)
    return out


def read_with_bases(path: Path, depth: int = 0, seen: tuple = ()) -> dict:
    """Read a file and the chain of files it ``extends`` (paths relative to it)."""
    path = Path(path)
    if path.resolve() in seen:
        chain = " -> ".join(p.name for p in seen + (path.resolve(),))
        raise ProblemError(str(path), [f"extends: the files extend each other in a cycle "
                                       f"({chain})"])
    if depth > MAX_EXTENDS:
        raise ProblemError(str(path), [f"extends: more than {MAX_EXTENDS} levels of base "
                                       "files"])
    data = _read_yaml(path)
    base = data.pop("extends", None)
    if base is None:
        return data
    if not isinstance(base, str):
        raise ProblemError(str(path), ["extends: must be the path of a base problem file"])
    bpath = (path.parent / base)
    if not bpath.is_file():
        raise ProblemError(str(path), [f"extends: base file {base!r} not found "
                                       f"(looked for {bpath})"])
    return merge(read_with_bases(bpath, depth + 1, seen + (path.resolve(),)), data)


def apply_overrides(data: dict, overrides: list[str], source: str) -> dict:
    """``key.path=value`` settings (value parsed as a YAML scalar or flow collection)."""
    data = copy.deepcopy(data)
    for item in overrides:
        if "=" not in item:
            raise ProblemError(source, [f"--set {item!r}: expected key.path=value"])
        key, _, text = item.partition("=")
        parts = [p for p in key.strip().split(".")]
        if not all(parts):
            raise ProblemError(source, [f"--set {item!r}: empty key in {key!r}"])
        try:
            value = yaml_load(text) if text.strip() else ""
        except yaml.YAMLError:
            raise ProblemError(source, [f"--set {item!r}: cannot parse the value"]) from None
        node = data
        for p in parts[:-1]:
            if not isinstance(node.get(p, {}), dict):
                raise ProblemError(source, [f"--set {item!r}: {p!r} is not a section"])
            node = node.setdefault(p, {})
        node[parts[-1]] = value
    return data


def _unwrap(tp):
    origin = typing.get_origin(tp)
    if origin in (typing.Union, getattr(__import__("types"), "UnionType", None)):
        args = [a for a in typing.get_args(tp) if a is not type(None)]
        return _unwrap(args[0]) if len(args) == 1 else tp
    if origin is typing.Annotated:
        return _unwrap(typing.get_args(tp)[0])
    return tp


def _union_member(tp, part):
    """The member of a union that pydantic names ``part`` in an error location: by
    its discriminator value (e.g. 'plane') or its class name."""
    for arg in typing.get_args(tp):
        arg = _unwrap(arg)
        if not (isinstance(arg, type) and issubclass(arg, BaseModel)):
            continue
        if arg.__name__ == part:
            return arg
        for f in arg.model_fields.values():
            lit = _unwrap(f.annotation)
            if typing.get_origin(lit) is typing.Literal and part in typing.get_args(lit):
                return arg
    return None


def _model_at(model: type[BaseModel], loc: tuple) -> type[BaseModel] | None:
    tp = model
    for part in loc:
        tp = _unwrap(tp)
        origin = typing.get_origin(tp)
        if origin in (list, tuple) and isinstance(part, int) and typing.get_args(tp):
            tp = typing.get_args(tp)[0]
            continue
        if origin in (typing.Union, getattr(__import__("types"), "UnionType", None)):
            tp = _union_member(tp, part)
            if tp is None:
                return None
            continue
        if not (isinstance(tp, type) and issubclass(tp, BaseModel)):
            return None
        field = None
        for name, f in tp.model_fields.items():
            if part in (name, f.alias):
                field = f
        if field is None:
            return None
        tp = field.annotation
    tp = _unwrap(tp)
    return tp if isinstance(tp, type) and issubclass(tp, BaseModel) else None


def _keys_of(model: type[BaseModel]) -> list[str]:
    return [f.alias or n for n, f in model.model_fields.items()]


_TYPE_TAG = re.compile(r"(str|int|float|bool|none|[a-z_-]+\[.*\])")


def _key_path(loc: tuple, data) -> tuple:
    """``loc`` without the names pydantic gives to the members of a union
    ('str', 'dict[any,any]'); a part that is a key of the input is always kept."""
    out, node = [], data
    for part in loc:
        if isinstance(node, dict) and part in node:
            node = node[part]
        elif isinstance(node, list) and isinstance(part, int) and 0 <= part < len(node):
            node = node[part]
        elif isinstance(part, str) and _TYPE_TAG.fullmatch(part):
            continue
        elif isinstance(node, dict) and isinstance(part, str) and \
                part in [v for v in node.values() if isinstance(v, str)]:
            continue            # the tag of a discriminated union: the value of its key
        else:
            node = None
        out.append(part)
    return tuple(out)


def describe_errors(exc: ValidationError, root: type[BaseModel], prefix: str = "",
                    data: Any = None) -> list[str]:
    """Readable messages from a pydantic error: key path, what is wrong, what is allowed.

    ``data`` is the validated input; it tells the file's keys from the names
    pydantic gives to union members.
    """
    out = []
    union_paths = set()
    for e in exc.errors():
        # a union reports every member; one message per key path is enough
        loc = _key_path(tuple(e["loc"]), data)
        path = prefix + ".".join(str(p) for p in loc) if loc else (prefix.rstrip(".") or "(top)")
        if len(loc) != len(e["loc"]):
            if path in union_paths:
                continue
            union_paths.add(path)
        kind = e["type"]
        if kind == "extra_forbidden" and loc:
            parent = _model_at(root, tuple(e["loc"])[:-1])
            allowed = _keys_of(parent) if parent else []
            near = difflib.get_close_matches(str(loc[-1]), allowed, n=1)
            hint = f" (did you mean '{near[0]}'?)" if near else ""
            out.append(f"{path}: unknown key{hint}; allowed keys here: {', '.join(allowed)}")
        elif kind == "missing":
            out.append(f"{path}: required key is missing")
        elif kind in ("model_type", "model_attributes_type", "dict_type"):
            sub = _model_at(root, tuple(e["loc"]))
            keys = f" (keys: {', '.join(_keys_of(sub))})" if sub else ""
            got = e.get("input")
            out.append(f"{path}: must be a section, a mapping of keys{keys}; got "
                       f"{_shown(got)}")
        elif kind == "literal_error":
            allowed = re.findall(r"'([^']*)'", str((e.get("ctx") or {}).get("expected", "")))
            got = e.get("input")
            near = difflib.get_close_matches(str(got), allowed, n=1) if allowed else []
            hint = f" (did you mean '{near[0]}'?)" if near else ""
            out.append(f"{path} = {_shown(got)}: not an allowed value{hint}; allowed values: "
                       + ", ".join(allowed))
        else:
            msg = e["msg"]
            if msg.startswith("Value error, "):
                msg = msg[len("Value error, "):]
            got = e.get("input")
            shown = "" if isinstance(got, (dict, list)) or got is None else f" (got {got!r})"
            if shown and (msg.startswith(repr(got)) or (isinstance(got, str) and
                                                         repr(got) in msg)):
                shown = ""
            # a check on a whole section may name the key inside it itself
            inner = msg.startswith(path + ".") or msg.startswith(path + " ")
            out.append(f"{msg}{shown}" if inner else f"{path}: {msg}{shown}")
    return out


def _shown(value) -> str:
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


@dataclass
class Resolved:
    """A validated problem: the schema model, setup parameters, units and the
    resolved YAML text (after ``extends`` and overrides)."""
    problem: Problem
    setup_params: Any
    units: UnitSystem
    text: str
    source: str
    raw: dict
    modules: list = None        # [(module class, validated params)] in file order


def resolve(data: dict, source: str) -> Resolved:
    """Validate a merged problem mapping completely."""
    from .. import setups

    errors: list[str] = []
    units_raw = data.get("units", {}) or {}
    gas_raw = data.get("gas", {}) or {}
    mu = gas_raw.get("mean_molecular_weight", 0.6) if isinstance(gas_raw, dict) else 0.6
    try:
        from .schema import UnitsSpec
        uspec = UnitsSpec.model_validate(units_raw)
        mu = float(mu) if isinstance(mu, (int, float)) and not isinstance(mu, bool) and mu > 0 \
            else 0.6
        units = UnitSystem(uspec.length, uspec.time, uspec.mass, mu)
    except ValidationError as exc:
        raise ProblemError(source, describe_errors(exc, UnitsSpec, "units.",
                                                   units_raw)) from None
    except ParameterError as exc:
        raise ProblemError(source, [str(exc)]) from None
    try:
        problem = Problem.model_validate(data, context={"units": units})
    except ValidationError as exc:
        errors = describe_errors(exc, Problem, data=data)
        raise ProblemError(source, errors) from None
    try:
        cls = setups.get(problem.setup.kind)
    except ParameterError as exc:
        raise ProblemError(source, [str(exc)]) from None
    params_raw = {k: v for k, v in (problem.setup.model_extra or {}).items()}
    try:
        params = cls.Params.model_validate(params_raw, context={"units": units})
    except ValidationError as exc:
        raise ProblemError(source, describe_errors(exc, cls.Params, "setup.",
                                                   params_raw)) from None
    data, modules = _resolve_modules(data, problem, units, source)
    text = yaml.safe_dump(data, sort_keys=False)
    return Resolved(problem, params, units, text, source, data, modules)


def _resolve_modules(data: dict, problem: Problem, units, source: str):
    """Load ``load_modules`` files and validate each ``physics`` section.

    Module files are named relative to the problem file; the resolved text
    records absolute paths, so a run directory resumes from anywhere.
    """
    from .. import physics
    base = Path(source).parent if Path(source).is_file() else Path(".")
    paths = []
    for k, name in enumerate(problem.load_modules):
        path = (base / name).resolve()
        try:
            physics.load_file(path, f"load_modules[{k}]")
        except ParameterError as exc:
            raise ProblemError(source, [str(exc)]) from None
        paths.append(str(path))
    if paths:
        data = {**data, "load_modules": paths}
    modules, errors = [], []
    for name, raw in problem.physics.items():
        try:
            cls = physics.get(name)
        except ParameterError as exc:
            errors.append(str(exc))
            continue
        raw = raw or {}
        try:
            modules.append((cls, cls.Params.model_validate(raw, context={"units": units})))
        except ValidationError as exc:
            errors.extend(describe_errors(exc, cls.Params, f"physics.{name}.", raw))
    if errors:
        raise ProblemError(source, errors)
    return data, modules


def load(path, overrides: list[str] | None = None) -> Resolved:
    """Read, merge, override and validate a problem file."""
    path = Path(path)
    data = read_with_bases(path)
    data = apply_overrides(data, overrides or [], str(path))
    return resolve(data, str(path))
