"""Turn a validated problem into a ready :class:`~wind2d.simulation.Simulation`."""
from __future__ import annotations

from types import SimpleNamespace

from ..core.eos import IdealGas, Isothermal
from ..errors import NonFiniteStateError, ParameterError
from .load import ProblemError, Resolved

# the core names its parameters as the Python API does; the file has other key paths
_FILE_NAMES = (("boundaries", "edges"), ("riemann = ", "scheme.riemann = "),
               ("courant = ", "scheme.courant = "), ("limiter = ", "scheme.limiter = "),
               ("reconstruction = ", "scheme.reconstruction = "), ("gamma = ", "gas.gamma = "),
               ("sound_speed = ", "gas.sound_speed = "),
               ("density_floor = ", "gas.floors.density = "),
               ("pressure_floor = ", "gas.floors.pressure = "), ("state: ", "setup: state: "),
               ("set_primitive: ", "setup: "), ("set_field: ", "setup: "))


def _file_message(msg: str, axis_names) -> str:
    """A core message with the key path of the problem file."""
    if msg.startswith(("grid", "edges", "gas", "scheme", "setup", "stop", "outputs", "units",
                       "physics", "load_modules")):
        return msg
    for core, key in _FILE_NAMES:
        if msg.startswith(core):
            return key + msg[len(core):]
    for a in axis_names:
        if msg.startswith((f"{a}:", f"{a}.")):
            return "grid." + msg
    return msg


def _solver(gas, scheme) -> str:
    if scheme.riemann != "auto":
        return scheme.riemann
    if gas.magnetised:
        return "hlle" if gas.eos == "isothermal" else "hlld"
    return "hllc"


def build_simulation(res: Resolved, comm="auto"):
    """Mesh, EOS, boundaries, scheme and initial state from the problem file.

    Any inconsistency found here (a boundary kind not allowed on an edge, a
    setup that needs another geometry ...) is raised as :class:`ProblemError`
    before the first step.
    """
    from ..parallel import world
    from ..setups import SetupContext, get
    from ..simulation import Simulation

    comm = world() if comm == "auto" else comm
    p = res.problem
    g = p.grid
    axes = g.axes
    names = ("R", "z") if g.geometry == "cylindrical" else ("x", "y")
    try:
        eos = IdealGas(p.gas.gamma) if p.gas.eos == "ideal" else Isothermal(p.gas.sound_speed)
        from ..state import VariableMap
        mctx = SimpleNamespace(units=res.units, geometry=g.geometry, axis_names=names,
                               gas=p.gas, source=res.source, problem=p)
        modules = [cls(params, mctx) for cls, params in (res.modules or [])]
        vm = VariableMap(g.geometry, p.gas.magnetised, tuple(p.gas.scalars),
                         tuple(v for mod in modules for v in mod.variables))
        ctx = SetupContext(res.units, g.geometry, vm.primitive_names, names)
        if g.geometry == "cylindrical":
            for k in ("R_low", "R_high"):
                if p.edges.get(k) == "periodic":
                    raise ParameterError(f"edges.{k} = 'periodic': the R axis cannot be "
                                         "periodic in cylindrical geometry")
        edges = {}
        for k, v in p.edges.items():
            if isinstance(v, dict):
                extra = set(v) - {"kind", "state"}
                if extra:
                    raise ParameterError(f"edges.{k}: unknown key(s) {', '.join(sorted(extra))}; "
                                         "a fixed edge is {kind: fixed, state: {...}}")
                st = ctx.state(v.get("state", {}), f"edges.{k}.state") if "state" in v else None
                edges[k] = {"kind": v.get("kind"), "state": st}
            else:
                edges[k] = v
        sim = Simulation(g.geometry, (axes[0].lo, axes[0].hi, axes[0].cells, axes[0].stretch),
                         (axes[1].lo, axes[1].hi, axes[1].cells, axes[1].stretch), edges,
                         eos=eos, mhd=p.gas.magnetised, riemann=_solver(p.gas, p.scheme),
                         reconstruction=p.scheme.reconstruction, limiter=p.scheme.limiter,
                         courant=p.scheme.courant, density_floor=p.gas.floors.density,
                         pressure_floor=p.gas.floors.pressure, scalars=tuple(p.gas.scalars),
                         modules=modules, comm=comm)
        get(p.setup.kind)().apply(sim, res.setup_params, ctx)
        sim.initialise_modules()
        try:
            sim.integrator.max_dt()          # finite, positive density and pressure
        except NonFiniteStateError as exc:
            raise ParameterError(f"setup: the initial state of setup.kind = "
                                 f"{p.setup.kind!r} is not usable: {exc}") from None
    except ParameterError as exc:
        raise ProblemError(res.source, [_file_message(str(exc), names)]) from None
    return sim
