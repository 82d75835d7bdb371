"""Advice on the reduced speed V_m of the cosmic-ray module.

Reference: the two-moment method needs the reduced maximum speed V_m well
above the gas signal speeds and the diffusion speed kappa / L, about ten
times (Jiang & Oh 2018, ApJ 854, 5; the factor is their recommendation as
remembered).  The speeds are worked out here by hand for uniform states: an
ideal gas at rest with rho = 1, p = 1, gamma = 5/3 and field B has the fast
speed sqrt((gamma p + B^2) / rho) (Heaviside-Lorentz units, common practice).
"""
import math
from types import SimpleNamespace

import pytest

from wind2d import Simulation
from wind2d.cli import main
from wind2d.physics.cosmic_rays import CosmicRays
from wind2d.problem.units import UnitSystem

PERIODIC = {"x_low": "periodic", "x_high": "periodic", "y_low": "periodic",
            "y_high": "periodic"}
UNITS = UnitSystem("kpc", "Myr", "Msun")


def _advice(vm, kappa, bx=0.0, vx=0.0, extent=2.0):
    cr = CosmicRays(CosmicRays.Params.model_validate(
        {"max_speed": vm, "diffusion": {"parallel": kappa}}, context={"units": UNITS}),
        SimpleNamespace(units=UNITS, geometry="cartesian"))
    sim = Simulation("cartesian", (0, extent, 16), (0, 2 * extent, 16), PERIODIC, mhd=True,
                     riemann="hlld", modules=[cr])
    sim.set_field(b1=bx, b2=0.0)
    sim.set_primitive(rho=1.0, p=1.0, vx=vx, Ec=1.0)
    return sim.advice()


def test_no_advice_when_v_m_is_ample():
    assert _advice(vm=100.0, kappa=1.0) == []


def test_advice_names_the_key_and_the_ratio_to_the_gas_signal_speed():
    c_fast = math.sqrt(5.0 / 3.0 + 0.5 ** 2)
    lines = _advice(vm=5.0, kappa=1e-3, bx=0.5, vx=0.7)
    assert len(lines) == 1
    assert "physics.cosmic_rays.max_speed" in lines[0]
    assert f"{5.0 / (0.7 + c_fast):.3g} times the largest gas signal speed" in lines[0]


def test_advice_on_the_diffusion_speed_uses_the_smaller_extent():
    # kappa / L = 4 / 2 = 2 (code units): V_m = 15 is 7.5 times that
    lines = _advice(vm=15.0, kappa=4.0, extent=2.0)
    assert len(lines) == 1 and "7.5 times the diffusion speed kappa / L" in lines[0]


def test_check_prints_the_advice(capsys):
    rc = main(["check", "problems/wind/streaming_lowres.yaml",
               "--set", "physics.cosmic_rays.max_speed=30 km/s"])
    out = capsys.readouterr().out
    assert rc == 0
    assert "warning: physics.cosmic_rays.max_speed = 30 km/s is only" in out
    rc = main(["check", "problems/wind/streaming_lowres.yaml"])
    assert rc == 0 and "warning" not in capsys.readouterr().out


@pytest.fixture(autouse=True)
def _in_repo(monkeypatch):
    from pathlib import Path
    monkeypatch.chdir(Path(__file__).resolve().parent.parent)
