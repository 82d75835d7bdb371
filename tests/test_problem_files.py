"""Malformed problem files: exit status 2, one clear message, never a traceback.

Each case writes a bad file (or passes a bad ``--set``) and runs
``wind2d check`` in-process.  The message must name the file and the key path
(and the allowed values where they form a closed set), and be one block: a
header line ``wind2d check: FILE: invalid problem file`` followed by ``  - ``
items.  A few cases also go through a real ``python -m wind2d`` process to
prove the exit status and the absence of a traceback end to end.
"""
import copy
import random
import subprocess
import sys
from pathlib import Path

import pytest
import yaml

from wind2d.boundaries import KINDS as EDGE_KINDS
from wind2d.cli import main
from wind2d.core.reconstruct import LIMITERS
from wind2d.core.riemann import SOLVERS
from wind2d.setups import SETUPS

ROOT = Path(__file__).resolve().parents[1]

# Valid bases, small enough that `check` builds them in a blink.
SHOCK_TUBE = yaml.safe_load("""
title: small shock tube
grid:
  geometry: cartesian
  x: {from: 0, to: 1, cells: 32}
  y: {from: 0, to: 0.125, cells: 4}
edges: {x_low: outflow, x_high: outflow, y_low: periodic, y_high: periodic}
gas: {gamma: 1.4}
scheme: {riemann: hllc, limiter: mc, courant: 0.4}
setup:
  kind: shock_tube
  along: x
  at: 0.5
  left: {rho: 1.0, p: 1.0}
  right: {rho: 0.125, p: 0.1}
stop: {time: 0.2}
outputs:
  snapshots: {every: 0.05}
  checkpoints: {keep: 2}
""")

BLAST = yaml.safe_load("""
title: blast on the axis
units: {length: pc, time: kyr, mass: Msun}
grid:
  geometry: cylindrical
  R: {from: 0 pc, to: 40 pc, cells: 16}
  z: {from: -40 pc, to: 40 pc, cells: 32}
edges: {R_low: axis, R_high: outflow, z_low: outflow, z_high: outflow}
gas: {gamma: 5/3, mean_molecular_weight: 1.0}
setup:
  kind: blast
  energy: 1e51 erg
  radius: 6 pc
  ambient: {rho: 1 cm**-3, T: 100 K}
stop: {time: 20 kyr, walltime: "01:00:00"}
""")

FIELD_LOOP = yaml.safe_load("""
title: field loop
grid:
  geometry: cartesian
  x: {from: -1, to: 1, cells: 16}
  y: {from: -0.5, to: 0.5, cells: 8}
edges: {x_low: periodic, x_high: periodic, y_low: periodic, y_high: periodic}
gas: {magnetised: true}
setup:
  kind: field_loop
  amplitude: 1.0e-3
  radius: 0.3
  state: {rho: 1.0, p: 1.0, vx: 2.0, vy: 1.0}
stop: {time: 1.0}
""")

BASES = {"tube": SHOCK_TUBE, "blast": BLAST, "loop": FIELD_LOOP}
DELETE = object()


def mutate(base: dict, changes: dict) -> dict:
    """Copy of ``base`` with ``{"a.b.c": value}`` set (``DELETE`` removes the key)."""
    data = copy.deepcopy(base)
    for path, value in changes.items():
        *parents, last = path.split(".")
        node = data
        for p in parents:
            node = node.setdefault(p, {})
        if value is DELETE:
            del node[last]
        else:
            node[last] = value
    return data


def check(capsys, path, *extra):
    code = main(["check", str(path), *extra])
    captured = capsys.readouterr()
    return code, captured.err


def assert_refused(code, err, path, words):
    """Exit 2; one block naming the file; every word of ``words`` present."""
    assert code == 2, err
    assert "Traceback" not in err
    lines = err.rstrip("\n").split("\n")
    assert lines[0] == f"wind2d check: {path}: invalid problem file", err
    assert len(lines) >= 2 and all(line.startswith("  - ") for line in lines[1:]), err
    assert len(lines) <= 12, err
    for w in words:
        assert w in err, (w, err)


def listing(names):
    return ", ".join(names)


# (id, base, changes, words that must appear in the message)
CASES = [
    # ------------------------------------------------------------ wrong types
    ("cells-text", "tube", {"grid.x.cells": "many"}, ["grid.x.cells", "integer", "'many'"]),
    ("cells-fraction", "tube", {"grid.x.cells": 2.5}, ["grid.x.cells", "integer"]),
    ("courant-text", "tube", {"scheme.courant": "fast"}, ["scheme.courant", "number", "'fast'"]),
    ("gamma-list", "tube", {"gas.gamma": [1]}, ["gas.gamma", "number"]),
    ("gamma-text", "tube", {"gas.gamma": "five thirds"}, ["gas.gamma", "fraction"]),
    ("magnetised-text", "tube", {"gas.magnetised": "maybe"}, ["gas.magnetised", "boolean"]),
    ("title-number", "tube", {"title": 3}, ["title", "string"]),
    ("section-is-text", "tube", {"gas": "hot"}, ["gas", "section", "eos", "gamma"]),
    ("section-is-null", "tube", {"stop": None}, ["stop", "section", "time"]),
    ("edges-list", "tube", {"edges": ["outflow"]}, ["edges", "mapping"]),
    ("state-not-mapping", "tube", {"setup.left": "dense"}, ["setup.left", "mapping"]),
    ("scalars-text", "tube", {"gas.scalars": "dye"}, ["gas.scalars", "list"]),
    ("quantity-list", "tube", {"grid.x.from": [0, 1]}, ["grid.x.from", "single value"]),
    ("quantity-bool", "tube", {"grid.x.to": True}, ["grid.x.to", "True"]),
    # ------------------------------------------------------------ wrong units
    ("from-in-kg", "tube", {"grid.x.from": "3 kg"}, ["grid.x.from", "'3 kg'", "mass", "length"]),
    ("stop-time-in-kpc", "tube", {"stop.time": "5 kpc"}, ["stop.time", "'5 kpc'", "time"]),
    ("density-in-km/s", "tube", {"setup.left.rho": "1 km/s"},
     ["setup.left.rho", "'1 km/s'", "density"]),
    ("floor-in-km/s", "tube", {"gas.floors.density": "1 km/s"}, ["gas.floors.density", "density"]),
    ("snapshot-every-in-kg", "tube", {"outputs.snapshots.every": "1 kg"},
     ["outputs.snapshots.every", "mass", "time"]),
    ("temperature-in-km/s", "blast", {"setup.ambient.T": "5 km/s"},
     ["setup.ambient.T", "temperature"]),
    ("energy-in-pc", "blast", {"setup.energy": "3 pc"}, ["setup.energy", "length", "energy"]),
    ("field-in-km/s", "loop", {"setup.amplitude": "3 km/s"},
     ["setup.amplitude", "magnetic field"]),
    ("not-a-quantity", "tube", {"gas.floors.pressure": "lots"},
     ["gas.floors.pressure", "'lots'", "not a quantity"]),
    ("unit-not-astropy", "tube", {"units.length": "parsecs-ish"},
     ["units.length", "'parsecs-ish'", "not a unit"]),
    ("unit-wrong-dimension", "tube", {"units.time": "kpc"}, ["units.time", "time unit"]),
    ("unit-negative", "tube", {"units.mass": "-1 Msun"}, ["units.mass", "positive"]),
    ("length-not-finite", "tube", {"grid.x.to": float("nan")}, ["grid.x.to", "finite"]),
    ("time-infinite", "tube", {"stop.time": "inf s"}, ["stop.time", "finite"]),
    ("velocity-overflows", "tube", {"setup.left.vx": "1e400 km/s"},
     ["setup.left.vx", "finite"]),
    # ------------------------------------------------------------ unknown keys
    ("typo-top-level", "tube", {"gird": {"geometry": "cartesian"}},
     ["gird", "did you mean 'grid'", "allowed keys here"]),
    ("typo-axis-key", "tube", {"grid.x.cels": 32}, ["grid.x.cels", "did you mean 'cells'"]),
    ("typo-scheme-key", "tube", {"scheme.limitter": "mc"},
     ["scheme.limitter", "did you mean 'limiter'"]),
    ("typo-stop-key", "tube", {"stop.tme": 1}, ["stop.tme", "did you mean 'time'"]),
    ("typo-units-key", "tube", {"units.lenght": "pc"}, ["units.lenght", "did you mean 'length'"]),
    ("typo-floors-key", "tube", {"gas.floors.densty": 0}, ["gas.floors.densty",
                                                           "did you mean 'density'"]),
    ("typo-checkpoints-key", "tube", {"outputs.checkpoints.evry": 1},
     ["outputs.checkpoints.evry", "did you mean 'every'"]),
    ("typo-setup-key", "tube", {"setup.att": 0.5}, ["setup.att", "did you mean 'at'",
                                                    "along, at, left, right"]),
    ("junk-key-like-a-bracket", "tube", {"[": "x"}, ["[: unknown key", "allowed keys here"]),
    ("junk-key-named-str", "tube", {"scheme.str": 1}, ["scheme.str: unknown key"]),
    ("typo-fixed-edge-key", "tube", {"edges.x_low": {"kind": "fixed", "stat": {"rho": 1}}},
     ["edges.x_low", "stat", "{kind: fixed, state: {...}}"]),
    # ------------------------------------------------------------ closed sets
    ("riemann-typo", "tube", {"scheme.riemann": "hlcc"},
     ["scheme.riemann", "'hlcc'", "did you mean 'hllc'", listing(["auto", *SOLVERS])]),
    ("geometry-unknown", "tube", {"grid.geometry": "spherical"},
     ["grid.geometry", "'spherical'", "cylindrical, cartesian"]),
    ("limiter-unknown", "tube", {"scheme.limiter": "superbee"},
     ["scheme.limiter", "'superbee'", listing(LIMITERS)]),
    ("eos-unknown", "tube", {"gas.eos": "adiabatic"}, ["gas.eos", "ideal, isothermal"]),
    ("reconstruction-unknown", "tube", {"scheme.reconstruction": "weno"},
     ["scheme.reconstruction", "plm"]),
    ("wave-typo", "loop", {"setup": {"kind": "linear_wave", "wave": "fats"}},
     ["setup.wave", "did you mean 'fast'", "fast, alfven, slow, entropy, sound"]),
    # ------------------------------------------------------------ missing
    ("no-grid", "tube", {"grid": DELETE}, ["grid", "required key is missing"]),
    ("no-setup", "tube", {"setup": DELETE}, ["setup", "required key is missing"]),
    ("no-stop", "tube", {"stop": DELETE}, ["stop", "required key is missing"]),
    ("no-edges", "tube", {"edges": DELETE}, ["edges", "required key is missing"]),
    ("no-title", "tube", {"title": DELETE}, ["title", "required key is missing"]),
    ("no-cells", "tube", {"grid.x.cells": DELETE}, ["grid.x.cells", "required key is missing"]),
    ("no-setup-kind", "tube", {"setup.kind": DELETE}, ["setup.kind", "required key is missing"]),
    ("no-setup-parameter", "tube", {"setup.at": DELETE}, ["setup.at", "required key is missing"]),
    ("no-stop-time", "tube", {"stop.time": DELETE}, ["stop.time", "required key is missing"]),
    # ------------------------------------------------------------ out of range
    ("cells-zero", "tube", {"grid.x.cells": 0}, ["grid.x.cells", "greater than or equal to 2"]),
    ("cells-one-beside-the-axis", "blast", {"grid.R.cells": 1},
     ["grid.R.cells", "greater than or equal to 2"]),
    ("cells-absurd", "tube", {"grid.x.cells": 10 ** 30}, ["grid.x.cells",
                                                          "less than or equal to"]),
    ("grid-too-many-cells", "tube", {"grid.x.cells": 2 ** 20, "grid.y.cells": 2 ** 20},
     ["grid", "1048576 x 1048576 cells"]),
    ("courant-above-one", "tube", {"scheme.courant": 1.5},
     ["scheme.courant", "less than or equal to 1", "1.5"]),
    ("courant-zero", "tube", {"scheme.courant": 0}, ["scheme.courant", "greater than 0"]),
    ("gamma-one", "tube", {"gas.gamma": 1.0}, ["gas.gamma", "greater than 1"]),
    ("gamma-divide-by-zero", "tube", {"gas.gamma": "5/0"}, ["gas.gamma", "'5/0'"]),
    ("stretch-negative", "tube", {"grid.x.stretch": -1}, ["grid.x.stretch", "greater than 0"]),
    ("stretch-extreme", "tube", {"grid.x.stretch": 1e10}, ["grid.x", "stretch", "narrowest"]),
    ("keep-zero", "tube", {"outputs.checkpoints.keep": 0},
     ["outputs.checkpoints.keep", "greater than or equal to 1"]),
    ("mu-negative", "tube", {"gas.mean_molecular_weight": -1},
     ["gas.mean_molecular_weight", "greater than 0"]),
    ("floor-negative", "tube", {"gas.floors.pressure": -1e-20},
     ["gas.floors.pressure", "greater than or equal to 0"]),
    ("max-steps-zero", "tube", {"stop.max_steps": 0}, ["stop.max_steps", "greater than 0"]),
    ("stop-time-negative", "tube", {"stop.time": -1}, ["stop.time", "greater than 0"]),
    ("snapshot-every-zero", "tube", {"outputs.snapshots.every": 0},
     ["outputs.snapshots.every", "greater than 0"]),
    ("sound-speed-negative", "tube", {"gas.eos": "isothermal", "gas.sound_speed": "-1 km/s"},
     ["gas.sound_speed", "greater than 0"]),
    ("title-blank", "tube", {"title": "   "}, ["title", "must not be empty"]),
    # ------------------------------------------------------------ inconsistent grids
    ("cartesian-with-R", "tube", {"grid.R": {"from": 0, "to": 1, "cells": 4}},
     ["grid", "axis 'R'", "cartesian", "x, y"]),
    ("cylindrical-with-x", "blast", {"grid.x": {"from": 0, "to": 1, "cells": 4}},
     ["grid", "axis 'x'", "R, z"]),
    ("cylindrical-without-z", "blast", {"grid.z": DELETE}, ["grid", "needs the axis 'z'"]),
    ("from-equals-to", "tube", {"grid.x.to": 0}, ["grid.x", "'from'", "smaller than 'to'"]),
    ("from-above-to", "blast", {"grid.z.from": "50 pc", "grid.z.to": "-50 pc"},
     ["grid.z", "smaller than 'to'"]),
    ("negative-radius", "blast", {"grid.R.from": "-1 pc"}, ["grid.R.from", "cylindrical"]),
    # ------------------------------------------------------------ gas and scheme
    ("isothermal-without-sound-speed", "tube", {"gas.eos": "isothermal"},
     ["gas", "'sound_speed'"]),
    ("sound-speed-with-ideal-gas", "tube", {"gas.sound_speed": "10 km/s"},
     ["gas", "'sound_speed'", "isothermal"]),
    ("scalar-named-rho", "tube", {"gas.scalars": ["rho"]}, ["gas.scalars", "'rho'"]),
    ("scalar-twice", "tube", {"gas.scalars": ["dye", "dye"]}, ["gas.scalars", "dye", "twice"]),
    ("hlld-without-field", "tube", {"scheme.riemann": "hlld"},
     ["scheme.riemann", "'hlld'", "magnetic field"]),
    ("hllc-with-field", "loop", {"scheme.riemann": "hllc"}, ["scheme.riemann", "'hllc'"]),
    # ------------------------------------------------------------ edges
    ("edge-name-unknown", "tube", {"edges.x_lw": "outflow"},
     ["edges", "'x_lw'", "x_low, x_high, y_low, y_high"]),
    ("edge-name-of-other-geometry", "tube", {"edges.R_low": "outflow"},
     ["edges", "'R_low'", "x_low, x_high, y_low, y_high"]),
    ("edge-kind-unknown", "tube", {"edges.x_low": "wall"},
     ["edges.x_low", "'wall'", listing(EDGE_KINDS)]),
    ("edge-kind-number", "tube", {"edges.x_low": 3}, ["edges.x_low", listing(EDGE_KINDS)]),
    ("periodic-one-side", "tube", {"edges.x_low": "periodic"},
     ["edges", "x_low", "x_high", "both be periodic"]),
    ("edge-missing", "tube", {"edges.x_high": DELETE}, ["edges", "x_high", "no kind given"]),
    ("fixed-without-state", "tube", {"edges.x_low": {"kind": "fixed"}},
     ["edges.x_low", "'state'"]),
    ("fixed-state-unknown-variable", "tube",
     {"edges.x_low": {"kind": "fixed", "state": {"rho": 1, "pp": 1}}},
     ["edges.x_low.state.pp", "did you mean 'p'"]),
    ("axis-not-at-zero", "blast", {"grid.R.from": "1 pc"}, ["edges.R_low", "'axis'", "R = 0"]),
    ("axis-on-cartesian", "tube", {"edges.x_low": "axis"}, ["edges.x_low", "'axis'"]),
    ("axis-edge-not-axis", "blast", {"edges.R_low": "reflecting"},
     ["edges.R_low", "must be 'axis'"]),
    ("periodic-radius", "blast", {"edges.R_low": "periodic", "edges.R_high": "periodic"},
     ["edges.R_low", "periodic", "cylindrical"]),
    # ------------------------------------------------------------ setups
    ("setup-kind-typo", "tube", {"setup.kind": "shocktube"},
     ["setup.kind", "'shocktube'", "did you mean 'shock_tube'", listing(sorted(SETUPS))]),
    ("setup-kind-number", "tube", {"setup.kind": 3}, ["setup.kind", "string"]),
    ("state-variable-unknown", "tube", {"setup.left.pp": 1},
     ["setup.left.pp", "did you mean 'p'", "rho"]),
    ("state-field-without-mhd", "blast", {"setup.ambient.Bz": "1 uG"},
     ["setup.ambient.Bz", "unknown state variable", "vphi"]),
    ("state-without-rho", "tube", {"setup.left": {"p": 1.0}}, ["setup.left", "'rho'"]),
    ("state-with-p-and-T", "blast", {"setup.ambient": {"rho": "1 cm**-3", "p": 1, "T": "1e4 K"}},
     ["setup.ambient", "either 'p' or 'T'"]),
    ("state-rho-negative", "tube", {"setup.left.rho": -1}, ["setup.left.rho", "positive"]),
    ("state-T-negative", "blast", {"setup.ambient.T": "-5 K"}, ["setup.ambient.T", "positive"]),
    ("state-p-not-finite", "tube", {"setup.right.p": float("inf")},
     ["setup.right.p", "finite"]),
    ("shock-along-missing-axis", "tube", {"setup.along": "R"}, ["setup.along", "x, y"]),
    ("setup-needs-cylinder", "tube",
     {"setup": {"kind": "rotating_equilibrium", "rho": 1, "p0": 1, "v0": 1, "a": 0.1}},
     ["setup.kind", "'rotating_equilibrium'", "cylindrical"]),
    ("setup-length-zero", "blast",
     {"setup": {"kind": "rotating_equilibrium", "rho": 1, "p0": 1, "v0": 1, "a": 0}},
     ["setup.a", "greater than 0"]),
    ("blast-off-axis", "blast", {"setup.centre": ["5 pc", "0 pc"]}, ["setup.centre", "R = 0"]),
    ("blast-radius-below-a-cell", "blast", {"setup.radius": "1e-3 pc"},
     ["setup.radius", "cell"]),
    ("blast-energy-negative", "blast", {"setup.energy": "-1e51 erg"},
     ["setup.energy", "positive"]),
    ("loop-without-field", "loop", {"gas.magnetised": False},
     ["setup.kind", "'field_loop'", "magnetised"]),
    ("loop-state-with-in-plane-field", "loop", {"setup.state.Bx": 1.0},
     ["setup.state", "in-plane field", "Bx"]),
    # ------------------------------------------------------------ wall-clock
    ("walltime-four-fields", "blast", {"stop.walltime": "1:2:3:4"},
     ["stop.walltime", "'1:2:3:4'", "HH:MM:SS"]),
    ("walltime-minutes-60", "blast", {"stop.walltime": "1:60:00"},
     ["stop.walltime", "HH:MM:SS"]),
    ("walltime-length", "blast", {"stop.walltime": "3 kpc"}, ["stop.walltime", "HH:MM:SS"]),
    ("walltime-negative", "blast", {"stop.walltime": "-5 min"}, ["stop.walltime", "HH:MM:SS"]),
    ("walltime-zero", "blast", {"stop.walltime": 0}, ["stop.walltime", "greater than 0"]),
    ("walltime-margin-text", "blast", {"stop.walltime_margin": "soon"},
     ["stop.walltime_margin", "HH:MM:SS"]),
    ("checkpoint-wallclock-text", "blast", {"outputs": {"checkpoints": {"every_wallclock": "often"}}},
     ["outputs.checkpoints.every_wallclock", "HH:MM:SS"]),
    # ------------------------------------------------------------ extends
    ("extends-not-a-path", "tube", {"extends": 3}, ["extends", "path"]),
    ("extends-missing-file", "tube", {"extends": "no_such_base.yaml"},
     ["extends", "'no_such_base.yaml'", "not found"]),
]


def test_the_bases_are_valid(tmp_path, capsys):
    for name, base in BASES.items():
        path = tmp_path / f"{name}.yaml"
        path.write_text(yaml.safe_dump(base))
        code, err = check(capsys, path)
        assert code == 0, err


def test_there_are_many_cases():
    assert len(CASES) >= 30
    assert len({c[0] for c in CASES}) == len(CASES)


@pytest.mark.parametrize("name,base,changes,words", CASES, ids=[c[0] for c in CASES])
def test_malformed_problem(tmp_path, capsys, name, base, changes, words):
    path = tmp_path / "problem.yaml"
    path.write_text(yaml.safe_dump(mutate(BASES[base], changes), sort_keys=False))
    code, err = check(capsys, path)
    assert_refused(code, err, path, words)


# ------------------------------------------------------------ files that are not YAML mappings
def _junk_bytes() -> bytes:
    # 0xff never occurs in UTF-8, so the file cannot decode whatever follows
    return b"\xff" + random.Random(20261201).randbytes(400)


RAW = [
    ("yaml-unclosed-brace", "title: x\ngrid: {geometry: cartesian\nstop: 1\n",
     ["YAML syntax error", "line 3"]),
    ("yaml-unclosed-quote", 'title: x\nstop: {time: 1}\ndescription: "never closed\n',
     ["YAML syntax error", "line"]),
    ("yaml-tab-indent", "title: x\n\tgrid: 1\n", ["YAML syntax error", "line 2"]),
    ("yaml-bad-indent", "title: x\ngrid:\n  geometry: cartesian\n x: 1\n",
     ["YAML syntax error", "line 4"]),
    ("yaml-control-character", "title: a\x07b\n", ["YAML syntax error", "line 1"]),
    ("duplicate-key", "title: one\nstop: {time: 1}\ntitle: two\n",
     ["duplicate key 'title'", "line 3", "line 1"]),
    ("empty-file", "", ["empty"]),
    ("only-comments", "# nothing here\n\n", ["empty"]),
    ("only-a-list", "- title\n- grid\n", ["mapping", "list"]),
    ("only-a-scalar", "just some words\n", ["mapping", "str"]),
    ("binary-junk", _junk_bytes(), ["not UTF-8"]),
    ("latin-1-text", "title: caf\xe9 au lait\n".encode("latin-1"), ["not UTF-8"]),
    ("non-string-key", "title: x\n3: three\n", ["3", "string"]),
]


@pytest.mark.parametrize("name,content,words", RAW, ids=[c[0] for c in RAW])
def test_malformed_file_content(tmp_path, capsys, name, content, words):
    path = tmp_path / "problem.yaml"
    if isinstance(content, bytes):
        path.write_bytes(content)
    else:
        path.write_text(content, encoding="utf-8")
    code, err = check(capsys, path)
    assert_refused(code, err, path, words)


def test_missing_file(tmp_path, capsys):
    path = tmp_path / "nowhere.yaml"
    code, err = check(capsys, path)
    assert_refused(code, err, path, ["cannot read"])


def test_directory_instead_of_file(tmp_path, capsys):
    code, err = check(capsys, tmp_path)
    assert_refused(code, err, tmp_path, ["cannot read"])


# ------------------------------------------------------------ extends chains
def test_extends_cycle_of_two(tmp_path, capsys):
    (tmp_path / "a.yaml").write_text("extends: b.yaml\ntitle: a\n")
    (tmp_path / "b.yaml").write_text("extends: a.yaml\ntitle: b\n")
    code, err = check(capsys, tmp_path / "a.yaml")
    assert code == 2 and "Traceback" not in err
    assert "extends" in err and "cycle" in err and "a.yaml -> b.yaml -> a.yaml" in err


def test_extends_itself(tmp_path, capsys):
    path = tmp_path / "self.yaml"
    path.write_text("extends: self.yaml\n")
    code, err = check(capsys, path)
    assert_refused(code, err, path, ["extends", "cycle"])


def test_extends_a_broken_base_names_the_base(tmp_path, capsys):
    base = tmp_path / "base.yaml"
    base.write_text("title: [unclosed\n")
    child = tmp_path / "child.yaml"
    child.write_text("extends: base.yaml\nstop: {time: 1}\n")
    code, err = check(capsys, child)
    assert code == 2 and "Traceback" not in err
    assert str(base) in err and "YAML syntax error" in err and "line" in err


def test_extends_chain_too_deep(tmp_path, capsys):
    for k in range(12):
        (tmp_path / f"level{k}.yaml").write_text(f"extends: level{k + 1}.yaml\n")
    code, err = check(capsys, tmp_path / "level0.yaml")
    assert code == 2 and "Traceback" not in err
    assert "extends" in err and "levels" in err


# ------------------------------------------------------------ --set
SETS = [
    ("set-without-equals", ["--set", "grid.x.cells"], ["--set 'grid.x.cells'", "key.path=value"]),
    ("set-typo", ["--set", "grid.x.cels=64"], ["grid.x.cels", "did you mean 'cells'"]),
    ("set-unknown-section", ["--set", "gird.x.cells=64"], ["gird", "did you mean 'grid'"]),
    ("set-into-a-value", ["--set", "title.x=1"], ["--set 'title.x=1'", "'title' is not a section"]),
    ("set-empty-key", ["--set", "grid..cells=4"], ["--set", "empty key"]),
    ("set-unparsable", ["--set", "grid.x.cells=[1"], ["--set", "cannot parse"]),
    ("set-wrong-type", ["--set", "grid.x.cells=many"], ["grid.x.cells", "integer"]),
    ("set-wrong-unit", ["--set", "stop.time=5 kg"], ["stop.time", "mass", "time"]),
    ("set-one-bad-of-two", ["--set", "grid.x.cells=64", "--set", "scheme.limiter=superbee"],
     ["scheme.limiter", "'superbee'", listing(LIMITERS)]),
]


@pytest.mark.parametrize("name,extra,words", SETS, ids=[c[0] for c in SETS])
def test_bad_set(tmp_path, capsys, name, extra, words):
    path = tmp_path / "problem.yaml"
    path.write_text(yaml.safe_dump(SHOCK_TUBE, sort_keys=False))
    code, err = check(capsys, path, *extra)
    assert_refused(code, err, path, words)


# ------------------------------------------------------------ a real process
PROCESS_CASES = [
    ("typo", yaml.safe_dump(mutate(SHOCK_TUBE, {"scheme.limitter": "mc"})).encode(),
     ["scheme.limitter", "did you mean 'limiter'"], []),
    ("enum", yaml.safe_dump(mutate(SHOCK_TUBE, {"scheme.riemann": "hlcc"})).encode(),
     ["did you mean 'hllc'"], []),
    ("binary", _junk_bytes(), ["not UTF-8"], []),
    ("syntax", b"title: x\ngrid: {geometry: cartesian\n", ["YAML syntax error", "line"], []),
    ("unit", yaml.safe_dump(mutate(BLAST, {"stop.time": "5 kpc"})).encode(),
     ["stop.time", "length"], []),
    ("set", yaml.safe_dump(SHOCK_TUBE).encode(), ["grid.x.cels", "did you mean 'cells'"],
     ["--set", "grid.x.cels=64"]),
    ("state", yaml.safe_dump(mutate(BLAST, {"setup.ambient.T": "-1 K"})).encode(),
     ["setup.ambient.T", "positive"], []),
]


@pytest.mark.parametrize("name,content,words,extra", PROCESS_CASES,
                         ids=[c[0] for c in PROCESS_CASES])
def test_real_process_exit_status_2_without_traceback(tmp_path, name, content, words, extra):
    path = tmp_path / "problem.yaml"
    path.write_bytes(content)
    proc = subprocess.run([sys.executable, "-m", "wind2d", "check", str(path), *extra],
                          capture_output=True, text=True, cwd=ROOT, timeout=300)
    assert proc.returncode == 2, proc.stderr
    assert "Traceback" not in proc.stderr
    assert proc.stdout == ""
    assert proc.stderr.startswith(f"wind2d check: {path}: invalid problem file")
    for w in words:
        assert w in proc.stderr, (w, proc.stderr)
