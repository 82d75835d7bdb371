"""Quantities in problem files convert to code units as astropy says; ``extends``
and ``--set`` change exactly the keys they name.

Reference values come from astropy.units and astropy.constants (CODATA; common
practice).  The hydrogen-atom mass is taken as m_p + m_e: the 13.6 eV binding
energy changes it by 1.5e-8, hence the relative tolerance 1e-7 wherever m_H
enters.
"""
import math

import astropy.constants as const
import astropy.units as u
import pytest
import yaml

from wind2d.cli import main
from wind2d.problem import UnitSystem, load
from wind2d.problem.load import yaml_load
from wind2d.setups import SetupContext
from wind2d.state import VariableMap

from .test_problem_files import BLAST, FIELD_LOOP, SHOCK_TUBE, mutate

M_H = (const.m_p + const.m_e).cgs.value           # g, hydrogen atom without binding energy
K_B = const.k_B.cgs.value                         # erg/K
P0_KPC = (1 * u.Msun / (u.kpc * u.Myr ** 2)).to(u.erg / u.cm ** 3).value


def write(tmp_path, data, name="problem.yaml"):
    path = tmp_path / name
    path.write_text(yaml.safe_dump(data, sort_keys=False))
    return path


# ------------------------------------------------------------------ conversions
def test_length_in_parsec_code_units():
    # 1 kpc = 1000 pc (SI prefix)
    us = UnitSystem("pc", "Myr", "Msun")
    assert us.code_value("10 kpc", "length", "t") == pytest.approx(1e4, rel=1e-12)
    assert us.code_value("3.0856775814913673e18 cm", "length", "t") == pytest.approx(1.0, rel=1e-12)


def test_time_and_velocity_against_astropy():
    us = UnitSystem("kpc", "Myr", "Msun")
    assert us.code_value("20 kyr", "time", "t") == pytest.approx(0.02, rel=1e-12)
    want = (300 * u.km / u.s).to(u.kpc / u.Myr).value
    assert us.code_value("300 km/s", "velocity", "t") == pytest.approx(want, rel=1e-12)


def test_number_density_becomes_mass_density_with_mu():
    # rho = mu m_H n (common practice)
    us = UnitSystem("kpc", "Myr", "Msun", mu=0.6)
    rho_cgs = 0.6 * M_H * 1e-3
    rho0 = (1 * u.Msun / u.kpc ** 3).to(u.g / u.cm ** 3).value
    code = us.code_value("1e-3 cm**-3", "density", "t")
    assert code == pytest.approx(rho_cgs / rho0, rel=1e-7)
    assert code * us.to_cgs("density") == pytest.approx(rho_cgs, rel=1e-7)
    # a mass density does not involve mu
    assert us.code_value("1e-24 g/cm**3", "density", "t") == pytest.approx(1e-24 / rho0,
                                                                           rel=1e-12)


def test_microgauss_in_heaviside_lorentz_code_units():
    # B_code = B_G / sqrt(4 pi P0), P0 = Msun / (kpc Myr^2) in erg/cm^3
    us = UnitSystem("kpc", "Myr", "Msun")
    b = us.code_value("1 uG", "magnetic_field", "t")
    assert b == pytest.approx(1e-6 / math.sqrt(4 * math.pi * P0_KPC), rel=1e-12)
    # so B^2/2 in code pressure is the Gaussian magnetic pressure B^2/(8 pi)
    assert 0.5 * b ** 2 * P0_KPC == pytest.approx((1e-6) ** 2 / (8 * math.pi), rel=1e-12)
    assert us.code_value("1e-10 T", "magnetic_field", "t") == pytest.approx(b, rel=1e-12)


def test_temperature_in_code_units():
    # code temperature is p/rho = k_B T / (mu m_H) in code velocity^2
    us = UnitSystem("kpc", "Myr", "Msun", mu=0.6)
    want = (const.k_B * 1e4 * u.K / (0.6 * (const.m_p + const.m_e))).to(
        u.kpc ** 2 / u.Myr ** 2).value
    assert us.code_value("1e4 K", "temperature", "t") == pytest.approx(want, rel=1e-7)


def test_state_temperature_gives_n_k_T():
    # ideal gas p = n k_B T (common practice); mu and m_H cancel
    us = UnitSystem("pc", "kyr", "Msun", mu=0.6)
    ctx = SetupContext(us, "cylindrical", VariableMap("cylindrical", False).primitive_names,
                       ("R", "z"))
    st = ctx.state({"rho": "1 cm**-3", "T": "1e4 K", "vz": "100 km/s"}, "setup.ambient")
    assert set(st) == {"rho", "p", "vz"}
    assert st["p"] * us.to_cgs("pressure") == pytest.approx(1.0 * K_B * 1e4, rel=1e-12)
    assert st["vz"] == pytest.approx((100 * u.km / u.s).to(u.pc / u.kyr).value, rel=1e-12)


def test_energy_and_gravity_constant():
    us = UnitSystem("pc", "kyr", "Msun")
    e0 = (1 * u.Msun * u.pc ** 2 / u.kyr ** 2).to(u.erg).value
    assert us.code_value("1e51 erg", "energy", "t") == pytest.approx(1e51 / e0, rel=1e-12)
    g = const.G.to(u.pc ** 3 / (u.Msun * u.kyr ** 2)).value
    assert us.G == pytest.approx(g, rel=1e-12)


def test_plain_numbers_are_code_units():
    us = UnitSystem("pc", "kyr", "Msun")
    for kind in ("length", "time", "density", "pressure", "magnetic_field", "temperature"):
        assert us.code_value(2.5, kind, "t") == 2.5


def test_quantities_through_a_problem_file(tmp_path):
    data = mutate(BLAST, {"units.length": "pc", "grid.R.to": "10 kpc",
                          "grid.z.from": "-0.01 kpc", "grid.z.to": 10.0,
                          "gas.floors.density": "1e-6 cm**-3", "stop.time": "0.02 Myr"})
    res = load(write(tmp_path, data))
    p, us = res.problem, res.units
    assert (us.length, us.time, us.mu) == ("pc", "kyr", 1.0)
    assert p.grid.R.hi == pytest.approx(1e4, rel=1e-12)
    assert p.grid.z.lo == pytest.approx(-10.0, rel=1e-12)
    assert p.grid.z.hi == 10.0                                 # plain number: code units
    assert p.stop.time == pytest.approx(20.0, rel=1e-12)
    rho0 = (1 * u.Msun / u.pc ** 3).to(u.g / u.cm ** 3).value
    assert p.gas.floors.density == pytest.approx(1.0 * M_H * 1e-6 / rho0, rel=1e-7)
    assert res.setup_params.radius == pytest.approx(6.0)


def test_exponent_without_a_dot_is_a_number(tmp_path):
    # YAML 1.2 reads 1e-3 as a float; PyYAML (YAML 1.1) alone would give the text '1e-3'
    path = tmp_path / "loop.yaml"
    text = yaml.safe_dump(FIELD_LOOP, sort_keys=False).replace("amplitude: 0.001",
                                                               "amplitude: 1e-3")
    assert "amplitude: 1e-3" in text
    path.write_text(text + "scheme: {courant: 4e-1}\n")
    res = load(path)
    assert res.setup_params.amplitude == pytest.approx(1e-3, rel=1e-15)
    assert res.problem.scheme.courant == pytest.approx(0.4, rel=1e-15)
    assert yaml_load("a: 1e5\nb: '1e5'\nc: 1.5\nd: 12\n") == {"a": 1e5, "b": "1e5", "c": 1.5,
                                                              "d": 12}


# ------------------------------------------------------------------ extends
def test_child_overrides_one_key_of_its_base(tmp_path):
    write(tmp_path, SHOCK_TUBE, "base.yaml")
    child = write(tmp_path, {"extends": "base.yaml", "scheme": {"courant": 0.3}}, "child.yaml")
    res = load(child)
    assert res.problem.scheme.courant == 0.3
    assert res.problem.scheme.limiter == "mc" and res.problem.scheme.riemann == "hllc"
    assert res.problem.grid.x.cells == 32 and res.problem.title == "small shock tube"
    assert "extends" not in res.raw


def test_extends_merges_mappings_and_replaces_the_rest(tmp_path):
    base = mutate(SHOCK_TUBE, {"gas.scalars": ["dye", "ink"]})
    write(tmp_path, base, "base.yaml")
    (tmp_path / "runs").mkdir()
    child = write(tmp_path, {"extends": "../base.yaml", "grid": {"x": {"cells": 64}},
                             "setup": {"left": {"rho": 2.0}}, "gas": {"scalars": ["dye"]}},
                  "runs/child.yaml")
    p = load(child).problem
    assert p.grid.x.cells == 64 and p.grid.x.hi == 1.0 and p.grid.y.cells == 4
    assert p.setup.model_extra["left"] == {"rho": 2.0, "p": 1.0}
    assert p.gas.scalars == ["dye"]


def test_chain_of_three_files(tmp_path):
    write(tmp_path, SHOCK_TUBE, "a.yaml")
    write(tmp_path, {"extends": "a.yaml", "stop": {"time": 0.1}, "title": "b"}, "b.yaml")
    c = write(tmp_path, {"extends": "b.yaml", "title": "c"}, "c.yaml")
    p = load(c).problem
    assert (p.title, p.stop.time, p.grid.x.cells) == ("c", 0.1, 32)


# ------------------------------------------------------------------ --set
def test_set_changes_the_cell_count(tmp_path, capsys):
    path = write(tmp_path, SHOCK_TUBE)
    assert load(path, ["grid.x.cells=64"]).problem.grid.x.cells == 64
    assert load(path).problem.grid.x.cells == 32                # the file is untouched
    assert main(["check", str(path), "--set", "grid.x.cells=64"]) == 0
    assert "64 cells" in capsys.readouterr().out


def test_set_values_are_yaml_and_the_last_one_wins(tmp_path):
    path = write(tmp_path, SHOCK_TUBE)
    res = load(path, ["grid.x.cells=64", "grid.x.cells=48", "gas.scalars=[dye]",
                      "stop.time=0.1 Myr", "gas.floors.density=1e-3",
                      "setup.left.vx=-0.5"])
    p = res.problem
    assert p.grid.x.cells == 48
    assert p.gas.scalars == ["dye"]
    assert p.stop.time == pytest.approx(0.1)                  # Myr is the code time unit
    assert p.gas.floors.density == 1e-3
    assert p.setup.model_extra["left"] == {"rho": 1.0, "p": 1.0, "vx": -0.5}


def test_set_applies_after_extends(tmp_path):
    write(tmp_path, SHOCK_TUBE, "base.yaml")
    child = write(tmp_path, {"extends": "base.yaml", "scheme": {"courant": 0.3}}, "child.yaml")
    assert load(child, ["scheme.courant=0.2"]).problem.scheme.courant == 0.2


def test_set_on_a_typo_key_fails_with_a_suggestion(tmp_path, capsys):
    path = write(tmp_path, SHOCK_TUBE)
    assert main(["check", str(path), "--set", "grid.x.cels=64"]) == 2
    err = capsys.readouterr().err
    assert str(path) in err and "grid.x.cels" in err and "did you mean 'cells'" in err
    assert "Traceback" not in err


def test_resolved_text_reproduces_the_problem(tmp_path):
    # the run directory keeps res.text; reading it back must give the same problem
    write(tmp_path, BLAST, "base.yaml")
    child = write(tmp_path, {"extends": "base.yaml", "grid": {"z": {"cells": 16}}}, "c.yaml")
    res = load(child, ["setup.radius=8 pc"])
    again = tmp_path / "resolved.yaml"
    again.write_text(res.text)
    res2 = load(again)
    assert res2.problem.model_dump() == res.problem.model_dump()
    assert res2.setup_params.model_dump() == res.setup_params.model_dump()
    assert res2.problem.grid.z.cells == 16 and res2.setup_params.radius == pytest.approx(8.0)
