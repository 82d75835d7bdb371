"""Bad parameters raise ParameterError naming the parameter and what is allowed."""
import pytest

from wind2d import IdealGas, Isothermal, ParameterError, Simulation

PERIODIC = {"x_low": "periodic", "x_high": "periodic", "y_low": "periodic",
            "y_high": "periodic"}


def make(**kw):
    args = dict(geometry="cartesian", x1=(0.0, 1.0, 8), x2=(0.0, 1.0, 8), boundaries=PERIODIC)
    args.update(kw)
    return Simulation(**args)


@pytest.mark.parametrize("kw,words", [
    (dict(x1=(0.0, 1.0, 0)), ["x.cells", "positive integer"]),
    (dict(x2=(0.0, 1.0, -4)), ["y.cells", "positive integer"]),
    (dict(x1=(0.0, 1.0, 2.5)), ["x.cells", "positive integer"]),
    (dict(x1=(1.0, 1.0, 8)), ["x", "lo", "smaller than hi"]),
    (dict(x2=(2.0, 1.0, 8)), ["y", "lo", "smaller than hi"]),
    (dict(x1=(0.0, 1.0, 8, 0.0)), ["x.stretch", "positive"]),
    (dict(riemann="roe"), ["riemann", "hlle", "hllc", "hlld"]),
    (dict(limiter="superbee"), ["limiter", "mc", "vanleer"]),
    (dict(reconstruction="weno"), ["reconstruction", "plm"]),
    (dict(geometry="spherical"), ["geometry", "cylindrical", "cartesian"]),
    (dict(gamma=1.0), ["gamma", "> 1"]),
    (dict(gamma=0.5), ["gamma", "> 1"]),
    (dict(courant=1.5), ["courant", "0 < courant <= 1"]),
    (dict(riemann="hlld"), ["hlld", "magnetic field"]),
    (dict(riemann="hllc", mhd=True), ["hllc", "without field"]),
    (dict(riemann="hlld", mhd=True, eos=Isothermal(1.0)), ["hlld", "isothermal"]),
    (dict(boundaries={"x_low": "periodic", "x_high": "outflow", "y_low": "periodic",
                      "y_high": "periodic"}), ["both be periodic"]),
    (dict(boundaries={"x_low": "wall", "x_high": "outflow", "y_low": "periodic",
                      "y_high": "periodic"}), ["x_low", "allowed kinds", "reflecting"]),
    (dict(boundaries={"x_low": "outflow", "y_low": "periodic", "y_high": "periodic"}),
     ["x_high", "no kind"]),
    (dict(boundaries={**PERIODIC, "z_low": "outflow"}), ["unknown edge", "z_low"]),
    (dict(boundaries={"x_low": "axis", "x_high": "outflow", "y_low": "periodic",
                      "y_high": "periodic"}), ["axis", "R = 0"]),
])
def test_bad_parameter_is_named(kw, words):
    with pytest.raises(ParameterError) as err:
        make(**kw)
    msg = str(err.value)
    for w in words:
        assert w in msg, (w, msg)


def test_cylindrical_grid_rules():
    b = {"R_low": "axis", "R_high": "outflow", "z_low": "outflow", "z_high": "outflow"}
    with pytest.raises(ParameterError, match="R.lo"):
        Simulation("cylindrical", (-1.0, 1.0, 8), (0.0, 1.0, 8), b)
    with pytest.raises(ParameterError, match="must be 'axis'"):
        Simulation("cylindrical", (0.0, 1.0, 8), (0.0, 1.0, 8), {**b, "R_low": "reflecting"})
    with pytest.raises(ParameterError, match="sound speed"):
        Isothermal(-1.0)
    with pytest.raises(ParameterError, match="gamma"):
        IdealGas(1.0)


def test_unknown_field_names():
    sim = make()
    with pytest.raises(ParameterError, match="allowed: rho, vx"):
        sim.set_primitive(density=1.0)
    with pytest.raises(ParameterError, match="mhd=False"):
        sim.set_field(b1=1.0)
