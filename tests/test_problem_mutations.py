"""Random mutations of valid problem files never give a traceback.

A mutation drops a key, renames one, replaces a value by random text, a
number or a list, or inserts a junk key at any depth.  ``wind2d check`` must
then either accept the file (exit 0) or refuse it with exit status 2 and a
message that names the file; any exception escaping ``main`` fails the test.
Numbers are kept small so that a mutated cell count never builds a huge grid.
"""
import contextlib
import copy
import io

import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from wind2d.cli import main

from .test_problem_files import BASES

SAMPLES = ["", " ", "1e-3", "3 kg", "5 kpc", "1 km/s", "1e4 K", "3 uG", "1 cm**-3", "inf",
           "nan", "-1", "0", "5/3", "00:10:00", "yes", "null", "[", "{a: 1}", "hllc", "axis",
           "periodic", "fixed", "cylindrical", "cartesian", "rho", "p", "T", "x", "R", "z",
           "1e400 erg", "-1e51 erg", "1:60:00", "\x00", "\u00e9t\u00e9", "kpc"]

# text without decimal digits (so it never parses as a large cell count) ...
_text = st.text(alphabet=st.characters(blacklist_categories=("Nd", "Cs")), max_size=8)
scalars = st.one_of(
    st.sampled_from(SAMPLES), _text,
    st.integers(min_value=-300, max_value=300),
    st.floats(min_value=-300, max_value=300),
    st.sampled_from([float("nan"), float("inf"), -float("inf"), 1e300, -1e300, 1e-300]),
    st.booleans(), st.none())
values = st.one_of(scalars, st.lists(scalars, max_size=3),
                   st.dictionaries(st.sampled_from(["kind", "rho", "p", "from", "x", "junk"]),
                                   scalars, max_size=2))


def _paths(node, prefix=()):
    """Key paths of every mapping entry (not into lists)."""
    out = []
    if isinstance(node, dict):
        for k, v in node.items():
            out.append(prefix + (k,))
            out += _paths(v, prefix + (k,))
    return out


def _sections(node, prefix=()):
    out = [prefix] if isinstance(node, dict) else []
    if isinstance(node, dict):
        for k, v in node.items():
            out += _sections(v, prefix + (k,))
    return out


def _get(data, path):
    for k in path:
        data = data[k]
    return data


@st.composite
def mutated(draw):
    base = draw(st.sampled_from(sorted(BASES)))
    data = copy.deepcopy(BASES[base])
    for _ in range(draw(st.integers(min_value=1, max_value=3))):
        op = draw(st.sampled_from(["drop", "rename", "replace", "insert"]))
        paths = _paths(data)
        if op == "insert" or not paths:
            section = draw(st.sampled_from(_sections(data)))
            key = draw(st.one_of(_text, st.sampled_from(["extends", "kind", "cells", "gird",
                                                         "R", "x_low", "T", "every"])))
            _get(data, section)[key] = draw(values)
            continue
        path = draw(st.sampled_from(paths))
        parent, key = _get(data, path[:-1]), path[-1]
        if op == "drop":
            del parent[key]
        elif op == "rename":
            new = draw(st.one_of(_text, st.just(str(key)[:-1]), st.just(str(key) + "s"),
                                 st.just(str(key).upper())))
            parent[new] = parent.pop(key)
        else:
            parent[key] = draw(values)
    return data


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(data=mutated())
def test_mutated_file_is_accepted_or_refused_cleanly(tmp_path_factory, data):
    path = tmp_path_factory.mktemp("mutation") / "problem.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False, allow_unicode=True),
                    encoding="utf-8")
    err, out = io.StringIO(), io.StringIO()
    with contextlib.redirect_stderr(err), contextlib.redirect_stdout(out):
        code = main(["check", str(path)])
    text = err.getvalue()
    assert code in (0, 2), text
    assert "Traceback" not in text
    if code == 2:
        assert text.startswith(f"wind2d check: {path}: invalid problem file\n  - "), text
    else:
        assert out.getvalue().startswith(f"{path}: valid."), out.getvalue()


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(raw=st.one_of(st.binary(max_size=200),
                     st.text(max_size=200).map(lambda t: t.encode("utf-8", "surrogatepass"))))
def test_arbitrary_bytes_never_give_a_traceback(tmp_path_factory, raw):
    path = tmp_path_factory.mktemp("bytes") / "problem.yaml"
    path.write_bytes(raw)
    err = io.StringIO()
    with contextlib.redirect_stderr(err), contextlib.redirect_stdout(io.StringIO()):
        code = main(["check", str(path)])
    assert code == 2, err.getvalue()
    assert err.getvalue().startswith(f"wind2d check: {path}: invalid problem file\n  - ")


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(key=st.lists(st.sampled_from(["grid", "x", "cells", "scheme", "gird", "stop", "time",
                                     "setup", "left", "rho", "", "edges", "x_low"]),
                    min_size=1, max_size=4).map(".".join),
       value=st.one_of(st.sampled_from(SAMPLES), _text))
def test_random_set_never_gives_a_traceback(tmp_path_factory, key, value):
    path = tmp_path_factory.mktemp("set") / "problem.yaml"
    path.write_text(yaml.safe_dump(BASES["tube"], sort_keys=False))
    err = io.StringIO()
    with contextlib.redirect_stderr(err), contextlib.redirect_stdout(io.StringIO()):
        code = main(["check", str(path), "--set", f"{key}={value}"])
    assert code in (0, 2), err.getvalue()
    if code == 2:
        assert err.getvalue().startswith(f"wind2d check: {path}: invalid problem file\n  - ")
