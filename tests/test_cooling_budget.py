"""Energy budget of the ``cooling`` module and refusal of bad input.

* Closed boxes (periodic Cartesian; reflecting cylindrical with the axis) with
  moving gas spanning 1e2-1e7 K: the total energy changes by exactly
  ``heating_energy + temperature_limit_energy - radiated_energy`` (conservation
  of energy: the hydrodynamic update conserves the total energy of a closed
  box to round-off, common practice for a finite-volume scheme), checked to
  1e-10 of the radiated energy, through the Python API and through a command
  line run and its history file.
* Malformed cooling tables and unphysical parameters are refused by
  ``wind2d check`` with exit status 2, no traceback, and a message naming the
  file (and line) or the key path (the project's rules for bad input).
"""
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
import yaml

from wind2d import Simulation
from wind2d.cli import main
from wind2d.io import read_history, read_snapshot
from wind2d.physics.cooling import Cooling
from wind2d.problem.units import UnitSystem

ROOT = Path(__file__).resolve().parents[1]
UNITS = UnitSystem("pc", "Myr", "Msun", mu=0.6)
KEYS = {"curve": {"kind": "solar_cie", "low_temperature": "koyama_inutsuka"},
        "heating": {"per_atom": "2e-26 erg s-1", "per_volume": "1e-27 erg cm-3 s-1",
                    "per_atom_per_nH": "1e-27 erg cm3 s-1", "off_above": "3e4 K"},
        "floor": "50 K", "ceiling": "3e7 K"}


def _state(sim, mod):
    x, y = sim.mesh.centres()
    L = sim.mesh.x1f[sim.mesh.ie] - sim.mesh.x1f[sim.mesh.is_]
    H = sim.mesh.x2f[sim.mesh.je] - sim.mesh.x2f[sim.mesh.js]
    s = np.sin(2 * np.pi * x / L) * np.cos(2 * np.pi * y / H)
    n_H = 10.0 ** (-0.5 + s)                                    # 0.03 ... 3 cm^-3
    rho = n_H * 1.6735575e-24 / 0.7 / UNITS.to_cgs("density")
    T = 10.0 ** (4.5 - 1.5 * s)                                 # 1e3 ... 1e6 K
    T[0, :] = 20.0                                              # below the floor: reset
    T[-1, :] = 1e8                                              # above the ceiling: reset
    a, b = sim.mesh.axis_names
    # gentle enough that the core's first-order fallback and floors never act in 60 steps
    sim.set_primitive(rho=rho, p=rho * T / mod.T_u, **{f"v{a}": 3.0 * np.cos(2 * np.pi * y / H),
                                                      f"v{b}": 2.0 * np.sin(2 * np.pi * x / L)})


@pytest.mark.parametrize("geometry,mhd", [("cartesian", False), ("cylindrical", False),
                                          ("cartesian", True)])
def test_closed_box_energy_budget(geometry, mhd):
    mod = Cooling.from_keys(KEYS, UNITS)
    if geometry == "cartesian":
        edges = {k: "periodic" for k in ("x_low", "x_high", "y_low", "y_high")}
    else:
        edges = {"R_low": "axis", "R_high": "reflecting", "z_low": "reflecting",
                 "z_high": "reflecting"}
    sim = Simulation(geometry, (0.0, 100.0, 32), (0.0, 100.0, 32), edges, modules=[mod],
                     mhd=mhd, riemann="hlld" if mhd else "hllc", density_floor=1e-20,
                     pressure_floor=1e-20)
    if mhd:
        # the magnetic energy is part of the total: cooling must change only the thermal part
        sim.set_field(b1=0.05, b2=0.03)
    _state(sim, mod)
    E0 = sim.totals()["energy"]
    t = mod.tallies
    for _ in range(60):
        sim.step()
        dE = sim.totals()["energy"] - E0
        budget = t["heating_energy"] + t["temperature_limit_energy"] - t["radiated_energy"]
        assert abs(dE - budget) <= 1e-10 * t["radiated_energy"], (dE, budget)
    # every part of the budget is at work and the core's floors never acted
    assert t["radiated_energy"] > 0.01 * E0 and t["heating_energy"] > 0
    assert t["temperature_limit_energy"] != 0
    assert all(v == 0 for v in sim.counters.values()), sim.counters


BOX = """
title: closed cooling box for the budget test
units: {length: pc, time: Myr, mass: Msun}
grid:
  geometry: cylindrical
  R: {from: 0 pc, to: 50 pc, cells: 16}
  z: {from: 0 pc, to: 50 pc, cells: 16}
edges: {R_low: axis, R_high: reflecting, z_low: reflecting, z_high: reflecting}
gas:
  gamma: 5/3
  mean_molecular_weight: 0.6
  floors: {density: 1e-8 cm**-3, pressure: 1e-20 erg/cm**3}
physics:
  cooling:
    curve: {kind: solar_cie}
    heating: {per_atom: 1e-25 erg/s}
    floor: 1e3 K
setup:
  kind: blast
  energy: 1e50 erg
  radius: 8 pc
  ambient: {rho: 3 cm**-3, T: 8000 K}
stop: {time: 0.3 Myr}
outputs:
  snapshots: {every: 0.1 Myr}
  history: {every: 0.01 Myr}
"""


def test_budget_closes_in_the_history_of_a_run(tmp_path):
    f = tmp_path / "box.yaml"
    f.write_text(BOX)
    assert main(["run", str(f), "--out", str(tmp_path / "run"), "--quiet"]) == 0
    h = read_history(tmp_path / "run" / "history.csv")
    budget = h["heating_energy"] + h["temperature_limit_energy"] - h["radiated_energy"]
    dE = h["energy"] - h["energy"][0]
    assert h["radiated_energy"][-1] > 0.05 * h["energy"][0]
    assert np.all(np.abs(dE - budget) <= 1e-10 * h["radiated_energy"][-1])
    # instantaneous rates: the cooling power is positive, heating of the ambient gas too
    assert np.all(h["cooling_power"] > 0) and np.all(h["heating_power"] > 0)
    snap = read_snapshot(sorted((tmp_path / "run" / "snapshots").glob("*.h5"))[-1])
    tc = snap.fields["cooling_time"]
    assert tc.shape == snap.fields["rho"].shape and np.all(tc > 0)


def test_resume_continues_bitwise_with_the_tallies(tmp_path):
    # common practice for restart files: a resumed run equals the uninterrupted one
    from wind2d.io import list_checkpoints, read_checkpoint
    f = tmp_path / "box.yaml"
    f.write_text(BOX.replace("stop: {time: 0.3 Myr}", "stop: {time: 0.3 Myr, max_steps: 40}")
                 .replace("snapshots: {every: 0.1 Myr}", "checkpoints: {every: 0.02 Myr}"))
    assert main(["run", str(f), "--out", str(tmp_path / "a"), "--quiet"]) == 0
    assert main(["run", str(f), "--out", str(tmp_path / "b"), "--quiet",
                 "--set", "stop.max_steps=17"]) == 0
    assert main(["resume", str(tmp_path / "b"), "--quiet", "--set", "stop.max_steps=40"]) == 0

    def last(run):
        return read_checkpoint([p for _, p in list_checkpoints(run / "checkpoints")][0])

    a, b = last(tmp_path / "a"), last(tmp_path / "b")
    assert a["state"]["nstep"] == b["state"]["nstep"] == 40
    assert np.array_equal(a["state"]["U"], b["state"]["U"])
    ha, hb = read_history(tmp_path / "a" / "history.csv"), read_history(tmp_path / "b" /
                                                                          "history.csv")
    for k in ("radiated_energy", "heating_energy"):
        assert ha[k][-1] > 0 and abs(ha[k][-1] - hb[k][-1]) <= 1e-12 * ha[k][-1]


# ---------------------------------------------------------------------- bad input
BASE = yaml.safe_load(BOX)


def _check(capsys, tmp_path, cooling, table=None):
    data = dict(BASE)
    data["physics"] = {"cooling": cooling}
    path = tmp_path / "p.yaml"
    if table is not None:
        (tmp_path / "lambda.dat").write_text(table)
    path.write_text(yaml.safe_dump(data))
    code = main(["check", str(path)])
    err = capsys.readouterr().err
    return code, err, path


GOOD_TABLE = "# log10 T  log10 Lambda\n4.0 -23.0\n5.0 -21.0\n6.0 -21.7\n7.0 -22.6\n8.0 -22.6\n"

TABLES = [  # (what, text, words in the message)
    ("not-increasing", GOOD_TABLE.replace("6.0 -21.7", "4.5 -21.7"),
     ["lambda.dat", "line 4", "log10 T = 4.5", "increase strictly"]),
    ("duplicate-T", GOOD_TABLE.replace("6.0 -21.7", "5.0 -21.7"),
     ["line 4", "not larger", "increase strictly"]),
    ("nan", GOOD_TABLE.replace("-21.7", "nan"), ["line 4", "log10 Lambda", "finite"]),
    ("inf", GOOD_TABLE.replace("7.0", "inf"), ["line 5", "log10 T", "finite"]),
    ("negative-T", "-1.0 -25\n4.0 -23.0\n", ["line 1", "log10 T = -1", "below 1 K"]),
    ("linear-lambda", GOOD_TABLE.replace("-21.0", "1e-21"),
     ["line 3", "log10 Lambda = 1e-21", "without the log10"]),
    ("negative-linear", GOOD_TABLE.replace("-21.0", "-1e-21"),
     ["line 3", "log10 Lambda"]),
    ("one-row", "4.0 -23.0\n", ["lambda.dat", "1 data row", "at least two rows"]),
    ("empty", "# nothing\n", ["0 data row", "at least two rows"]),
    ("three-columns", "4.0 -23.0 1.0\n5.0 -21.0 1.0\n", ["line 1", "two numbers", "3 entries"]),
    ("text", "4.0 -23.0\nfive -21.0\n", ["line 2", "not two numbers"]),
]


@pytest.mark.parametrize("what,text,words", TABLES, ids=[t[0] for t in TABLES])
def test_malformed_tables_are_refused(capsys, tmp_path, what, text, words):
    code, err, path = _check(capsys, tmp_path, {"curve": {"kind": "table",
                                                          "file": "lambda.dat"}}, text)
    assert code == 2 and "Traceback" not in err, err
    assert err.startswith(f"wind2d check: {path}: invalid problem file")
    assert "physics.cooling.curve.file" in err
    for w in words:
        assert w in err, (w, err)


def test_a_good_table_is_accepted_relative_to_the_problem_file(capsys, tmp_path):
    code, err, _ = _check(capsys, tmp_path, {"curve": {"kind": "table", "file": "lambda.dat"}},
                          GOOD_TABLE)
    assert code == 0, err
    mod = Cooling.from_keys({"curve": {"kind": "table", "file": str(tmp_path / "lambda.dat")}})
    # power laws through the rows: exact at the rows, the last slope continues
    assert mod.curve(1e5) == pytest.approx(1e-21, rel=1e-12)
    assert mod.curve(10 ** 5.5) == pytest.approx(10 ** -21.35, rel=1e-12)
    assert mod.curve(1e9) == pytest.approx(10 ** -22.6, rel=1e-12)
    assert mod.curve(9e3) == 0.0


PARAMS = [  # (what, cooling section, words in the message)
    ("negative-floor", {"floor": "-10 K"}, ["physics.cooling.floor", ">= 0"]),
    ("floor-above-ceiling", {"floor": "1e6 K", "ceiling": "1e5 K"},
     ["physics.cooling", "floor", "must be below", "ceiling"]),
    ("zero-ceiling", {"ceiling": "0 K"}, ["physics.cooling.ceiling", "positive"]),
    ("X-above-1", {"hydrogen_fraction": 1.3}, ["physics.cooling.hydrogen_fraction", "0 < X <= 1"]),
    ("X-zero", {"hydrogen_fraction": 0}, ["physics.cooling.hydrogen_fraction", "0 < X <= 1"]),
    ("negative-heating", {"heating": {"per_atom": "-1e-26 erg/s"}},
     ["physics.cooling.heating.per_atom", ">= 0"]),
    ("heating-units", {"heating": {"per_atom": "1e-26 erg cm-3 s-1"}},
     ["physics.cooling.heating.per_atom", "power"]),
    ("negative-off", {"heating": {"per_atom": "1e-26 erg/s", "off_above": "-1e4 K"}},
     ["physics.cooling.heating.off_above", "positive"]),
    ("lambda-units", {"curve": {"kind": "power_law", "Lambda0": "1e-22 erg/s", "T0": "1e6 K",
                                "alpha": 0.5}}, ["physics.cooling.curve.Lambda0", "erg cm3 s-1"]),
    ("lambda-negative", {"curve": {"kind": "power_law", "Lambda0": "-1e-22 erg cm3/s",
                                   "T0": "1e6 K", "alpha": 0.5}},
     ["physics.cooling.curve.Lambda0", "positive"]),
    ("power-law-incomplete", {"curve": {"kind": "power_law", "T0": "1e6 K"}},
     ["physics.cooling.curve", "Lambda0", "alpha"]),
    ("key-of-other-kind", {"curve": {"kind": "solar_cie", "alpha": 0.5}},
     ["physics.cooling.curve", "alpha", "solar_cie"]),
    ("unknown-curve", {"curve": {"kind": "sutherland"}},
     ["physics.cooling.curve.kind", "solar_cie", "power_law", "table"]),
    ("table-missing", {"curve": {"kind": "table", "file": "nowhere.dat"}},
     ["physics.cooling.curve.file", "nowhere.dat", "not found"]),
    ("unknown-key", {"flor": "10 K"}, ["physics.cooling.flor", "floor"]),
]


@pytest.mark.parametrize("what,cooling,words", PARAMS, ids=[p[0] for p in PARAMS])
def test_unphysical_parameters_are_refused(capsys, tmp_path, what, cooling, words):
    code, err, path = _check(capsys, tmp_path, cooling)
    assert code == 2 and "Traceback" not in err, err
    assert err.startswith(f"wind2d check: {path}: invalid problem file")
    for w in words:
        assert w in err, (w, err)


def test_isothermal_gas_is_refused(capsys, tmp_path):
    data = dict(BASE)
    data["gas"] = {"eos": "isothermal", "sound_speed": "10 km/s"}
    data["setup"] = {"kind": "uniform", "state": {"rho": "1 cm**-3"}}
    path = tmp_path / "iso.yaml"
    path.write_text(yaml.safe_dump(data))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "physics.cooling" in err and "gas.eos: ideal" in err


def test_command_line_refusal_end_to_end(tmp_path):
    data = dict(BASE)
    data["physics"] = {"cooling": {"curve": {"kind": "table", "file": "lambda.dat"}}}
    (tmp_path / "lambda.dat").write_text(GOOD_TABLE.replace("6.0 -21.7", "4.5 -21.7"))
    path = tmp_path / "p.yaml"
    path.write_text(yaml.safe_dump(data))
    r = subprocess.run([sys.executable, "-m", "wind2d", "check", str(path)], cwd=tmp_path,
                       capture_output=True, text=True, timeout=120)
    assert r.returncode == 2 and "Traceback" not in r.stderr, r.stderr
    assert "lambda.dat" in r.stderr and "line 4" in r.stderr


def test_ready_problem_file_is_valid(capsys):
    path = ROOT / "problems" / "cooling" / "radiative_bubble.yaml"
    assert main(["check", str(path)]) == 0, capsys.readouterr().err
