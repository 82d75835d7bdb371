"""Turn a validated problem into a ready :class:`~wind2d.simulation.Simulation`."""
from __future__ import annotations

from ..core.eos import IdealGas, Isothermal
from ..errors import ParameterError
from .load import ProblemError, Resolved


def _solver(gas, scheme) -> str:
    if scheme.riemann != "auto":
        return scheme.riemann
    if gas.magnetised:
        return "hlle" if gas.eos == "isothermal" else "hlld"
    return "hllc"


def build_simulation(res: Resolved):
    """Mesh, EOS, boundaries, scheme and initial state from the problem file.

    Any inconsistency found here (a boundary kind not allowed on an edge, a
    setup that needs another geometry ...) is raised as :class:`ProblemError`
    before the first step.
    """
    from ..setups import SetupContext, get
    from ..simulation import Simulation

    p = res.problem
    g = p.grid
    axes = g.axes
    names = ("R", "z") if g.geometry == "cylindrical" else ("x", "y")
    try:
        eos = IdealGas(p.gas.gamma) if p.gas.eos == "ideal" else Isothermal(p.gas.sound_speed)
        from ..state import VariableMap
        vm = VariableMap(g.geometry, p.gas.magnetised, tuple(p.gas.scalars))
        ctx = SetupContext(res.units, g.geometry, vm.primitive_names, names)
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
                         pressure_floor=p.gas.floors.pressure, scalars=tuple(p.gas.scalars))
        get(p.setup.kind)().apply(sim, res.setup_params, ctx)
    except ParameterError as exc:
        msg = str(exc)
        if not msg.startswith(("grid", "edges", "gas", "scheme", "setup", "stop", "outputs",
                               "boundaries", "units")):
            msg = f"{msg}"
        raise ProblemError(res.source, [msg]) from None
    return sim
