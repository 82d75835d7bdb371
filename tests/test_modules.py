"""The physics-module contract: registration by entry point and by file, clear
errors, and a run that uses no module is bitwise unchanged by modules existing.

The worked example (tests/example_module, a uniform heating rate q) is checked
against the exact energy budget of a closed box: with no fluxes through the
walls, E(t) - E(0) = q V t (conservation of energy; common practice).
"""
import subprocess
import sys
import textwrap
from pathlib import Path

import numpy as np
import pytest

from wind2d.cli import main
from wind2d.io import list_checkpoints, read_checkpoint, read_history
from wind2d.problem import build_simulation, load

ROOT = Path(__file__).resolve().parent.parent
EXAMPLE = ROOT / "tests" / "example_module" / "wind2d_example_heating" / "heating.py"

BOX = """
title: closed box for module tests
units: {length: pc, time: kyr, mass: Msun}
grid:
  geometry: cylindrical
  R: {from: 0 pc, to: 10 pc, cells: 16, stretch: 1.04}
  z: {from: -10 pc, to: 10 pc, cells: 24}
edges: {R_low: axis, R_high: reflecting, z_low: reflecting, z_high: reflecting}
gas: {magnetised: true}
setup:
  kind: blast
  energy: 1e49 erg
  radius: 2 pc
  ambient: {rho: 1 cm**-3, T: 1e4 K, Bz: 3 uG}
stop: {time: 20 kyr, max_steps: 30}
outputs: {history: {every: 2 kyr}, checkpoints: {every: 10 kyr}}
"""


def _write(tmp_path, text, name="p.yaml"):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text))
    return path


def _final(run_dir):
    newest = list_checkpoints(run_dir / "checkpoints")[0][1]
    return read_checkpoint(newest)["state"]


def _installed() -> bool:
    from importlib.metadata import entry_points
    return any(ep.name == "uniform_heating" for ep in entry_points(group="wind2d.physics"))


def _heated_box(rate_text):
    return BOX + f"physics:\n  uniform_heating: {{rate: {rate_text}}}\n"


def _check_budget(run_dir, rate_code):
    h = read_history(run_dir / "history.csv")
    t, e, q = h["time"], h["energy"], h["heat_added"]
    assert len(t) >= 3
    # closed box: the energy gained is exactly the heat added, and q V t
    assert np.allclose(e - e[0], q - q[0], rtol=0, atol=1e-12 * abs(e[0]))
    sim = build_simulation(load(run_dir / "problem.resolved.yaml"), comm=None)
    vol = sim.mesh.cell_volumes().sum()
    assert np.allclose(q, rate_code * vol * t, rtol=1e-12)


def test_entry_point_module_runs(tmp_path):
    if not _installed():
        pytest.fail("the example module is not installed: pip install -e tests/example_module "
                    "(the README's install command does this)")
    src = _write(tmp_path, _heated_box("1e-24 erg cm**-3 s**-1"))
    out = tmp_path / "run"
    proc = subprocess.run([sys.executable, "-m", "wind2d", "run", str(src), "--out", str(out),
                           "--quiet"], capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    rate = load(src).modules[0][1].rate
    _check_budget(out, rate)


def test_file_loaded_module_runs(tmp_path):
    # a copy registered under its own name, so it cannot come from the installed package
    code = EXAMPLE.read_text().replace('@register("uniform_heating")',
                                       '@register("heating_from_file")')
    (tmp_path / "mods").mkdir()
    (tmp_path / "mods" / "my_heating.py").write_text(code)
    text = BOX + "load_modules: [mods/my_heating.py]\n" \
        + "physics:\n  heating_from_file: {rate: 2e-24 erg cm**-3 s**-1}\n"
    src = _write(tmp_path, text)
    out = tmp_path / "run"
    proc = subprocess.run([sys.executable, "-m", "wind2d", "run", str(src), "--out", str(out),
                           "--quiet"], capture_output=True, text=True, timeout=300, cwd="/")
    assert proc.returncode == 0, proc.stderr
    rate = load(src).modules[0][1].rate
    _check_budget(out, rate)
    # the resolved file names the module file absolutely: resume works from anywhere
    assert str((tmp_path / "mods" / "my_heating.py").resolve()) in \
        (out / "problem.resolved.yaml").read_text()
    assert main(["resume", str(out), "--quiet", "--set", "stop.max_steps=40"]) == 0


def test_module_that_does_nothing_changes_nothing(tmp_path):
    """A run with a zero heating rate (all hooks active, no effect) and a run that
    merely has modules registered are bitwise identical to the bare core."""
    bare = _write(tmp_path, BOX, "bare.yaml")
    zero = _write(tmp_path, _heated_box("0 erg cm**-3 s**-1").replace(
        "outputs:", "load_modules: [" + str(EXAMPLE) + "]\noutputs:"), "zero.yaml")
    assert main(["run", str(bare), "--out", str(tmp_path / "a"), "--quiet"]) == 0
    assert main(["run", str(zero), "--out", str(tmp_path / "b"), "--quiet"]) == 0
    a, b = _final(tmp_path / "a"), _final(tmp_path / "b")
    assert a["nstep"] == b["nstep"] == 30
    assert np.array_equal(a["U"], b["U"])
    assert np.array_equal(a["b1"], b["b1"]) and np.array_equal(a["b2"], b["b2"])


def test_unknown_module_is_a_clear_error(tmp_path, capsys):
    src = _write(tmp_path, BOX + "physics:\n  gravty: {}\n")
    assert main(["check", str(src)]) == 2
    err = capsys.readouterr().err
    assert "physics.gravty: unknown module" in err and "available modules:" in err
    assert "Traceback" not in err


def test_bad_module_file_and_bad_module_key(tmp_path, capsys):
    src = _write(tmp_path, BOX + "load_modules: [nowhere.py]\n")
    assert main(["check", str(src)]) == 2
    assert "load_modules[0]: module file" in capsys.readouterr().err
    src = _write(tmp_path, BOX + "load_modules: [" + str(EXAMPLE) + "]\n"
                 + "physics:\n  uniform_heating: {rate: 1e-24 erg cm**-3 s**-1, colour: red}\n")
    assert main(["check", str(src)]) == 2
    err = capsys.readouterr().err
    assert "physics.uniform_heating.colour: unknown key" in err and "rate" in err
    src = _write(tmp_path, BOX + "load_modules: [" + str(EXAMPLE) + "]\n"
                 + "physics:\n  uniform_heating: {rate: 3 km/s}\n")
    assert main(["check", str(src)]) == 2
    assert "physics.uniform_heating.rate" in capsys.readouterr().err


def test_bad_key_inside_a_list_of_alternatives_names_the_allowed_keys(tmp_path, capsys):
    src = _write(tmp_path, BOX + "physics:\n  gravity:\n    potentials:\n"
                 "      - {kind: nfw, virial_mass: 1e11 Msun, concentraton: 10}\n")
    assert main(["check", str(src)]) == 2
    err = capsys.readouterr().err
    assert "physics.gravity.potentials.0.concentraton: unknown key (did you mean " \
        "'concentration'?)" in err, err


def test_derived_fields_may_be_infinite_but_never_nan(tmp_path):
    """A derived diagnostic may be +inf where that is its meaning (no cooling: an
    infinite cooling time); NaN is refused and nothing is written."""
    from wind2d import NonFiniteStateError, Simulation
    from wind2d.io import read_snapshot, write_snapshot
    from wind2d.physics import Module
    from wind2d.problem.units import UnitSystem

    class Diagnostic(Module):
        value = np.inf

        def derived_fields(self, sim):
            a = np.ones((sim.mesh.n2, sim.mesh.n1))
            a[0, 0] = self.value
            return {"diagnostic": (a, "time")}

    edges = {"x_low": "periodic", "x_high": "periodic", "y_low": "periodic",
             "y_high": "periodic"}
    mod = Diagnostic(None, None)
    sim = Simulation("cartesian", (0, 1, 4), (0, 1, 4), edges, modules=[mod])
    sim.set_primitive(rho=1.0, p=1.0)
    path = write_snapshot(tmp_path / "a.h5", sim, UnitSystem(), {})
    assert np.isposinf(read_snapshot(path).fields["diagnostic"][0, 0])
    mod.value = np.nan
    with pytest.raises(NonFiniteStateError, match="diagnostic"):
        write_snapshot(tmp_path / "b.h5", sim, UnitSystem(), {})
    assert not (tmp_path / "b.h5").exists()
