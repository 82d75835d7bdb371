"""docs/problem-files.md is what tools/make_problem_docs.py writes from the code.

If this fails after a change of the schema or of a setup, regenerate the
reference with ``python tools/make_problem_docs.py`` and commit it.
"""
import importlib.util
import typing
from pathlib import Path

from pydantic import BaseModel

from wind2d.boundaries import KINDS
from wind2d.problem.schema import Problem
from wind2d.setups import SETUPS

ROOT = Path(__file__).resolve().parents[1]
DOC = ROOT / "docs" / "problem-files.md"


def _tool():
    spec = importlib.util.spec_from_file_location("make_problem_docs",
                                                  ROOT / "tools" / "make_problem_docs.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def _models(model, prefix=""):
    """(key path, model) of every section below ``model``."""
    yield prefix, model
    for name, f in model.model_fields.items():
        tp = f.annotation
        if typing.get_origin(tp) is typing.Union:
            tp = next(a for a in typing.get_args(tp) if a is not type(None))
        if isinstance(tp, type) and issubclass(tp, BaseModel):
            yield from _models(tp, f"{prefix}{f.alias or name}.")


def test_committed_reference_is_current():
    assert DOC.read_text(encoding="utf-8") == _tool().render(), (
        "docs/problem-files.md is out of date: run python tools/make_problem_docs.py")


def test_check_mode_agrees():
    assert _tool().main(["--check"]) == 0


def test_every_key_and_section_is_documented():
    text = DOC.read_text(encoding="utf-8")
    seen = 0
    for prefix, model in _models(Problem):
        if prefix:
            assert f"`{prefix.rstrip('.')}`" in text, prefix
        for name, f in model.model_fields.items():
            assert f"| `{f.alias or name}` |" in text, prefix + name
            seen += 1
    assert seen > 30


def test_every_setup_and_its_keys_are_documented():
    text = DOC.read_text(encoding="utf-8")
    for name, cls in SETUPS.items():
        section = text.split(f"### `setup.kind: {name}`", 1)
        assert len(section) == 2, name
        body = section[1].split("\n### ", 1)[0]
        for key, f in cls.Params.model_fields.items():
            assert f"| `{f.alias or key}` |" in body, (name, key)


def test_closed_sets_are_listed():
    text = DOC.read_text(encoding="utf-8")
    for kind in KINDS:
        assert f"`{kind}`" in text
    for value in ("`hllc`", "`hlld`", "`vanleer`", "`cylindrical`", "`isothermal`"):
        assert value in text
    assert "exits with status 2" in text and "--set" in text and "extends" in text
