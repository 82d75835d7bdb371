"""The ``cosmic_rays`` module: two-moment cosmic-ray transport coupled to the gas.

Method: Jiang & Oh (2018, ApJ 854, 5): the cosmic-ray energy density ``E_c``
and energy flux ``F_c`` evolve with a reduced maximum speed ``V_m``; the
interaction coefficient combines field-aligned diffusion and streaming at the
(ion) Alfven speed; transport is explicit (HLL fluxes with a signal speed
reduced by the optical depth, :mod:`.transport`) and the stiff interaction
terms are implicit cell by cell (:mod:`.coupling`), with equal and opposite
momentum and energy given to the gas.  Our additions, both documented in
:mod:`.coupling`: the advective part of the energy flux is upwinded with the
gas mass flux, and the adiabatic part of the energy equation is done in
conserved form through the cosmic-ray entropy ``E_c^(1/gamma_c)`` (correct
jumps at shocks; tightly coupled cosmic rays move exactly with the gas).
Optional Coulomb and hadronic losses in :mod:`.losses` (split, once per step).

Sign conventions and units: code units, field in Heaviside-Lorentz units
(``v_A = |B| / sqrt(chi rho)``); ``sigma = 1/(3 kappa)`` for diffusion with the
``(1/V_m^2) dF/dt`` form of the flux equation (derivation in :mod:`.transport`).

Problem file (all keys but ``max_speed`` optional)::

    physics:
      cosmic_rays:
        max_speed: 3000 km/s            # V_m, >> gas, Alfven and kappa/L speeds
        gamma: 4/3                      # P_c = (gamma - 1) E_c
        diffusion: {parallel: 3e28 cm**2/s, perpendicular: 0 cm**2/s}
                                        # or {isotropic: ...} (needed without field)
        streaming: {ionised_fraction: 1, speed_factor: 1}
        initial: {pressure_ratio: 1}    # or {energy_density: 1 eV cm**-3} or {pressure: ...}
        losses: {coulomb: true, hadronic: true}

Transport switches: without a ``diffusion`` section (or with ``enabled:
false``) there is no diffusion; without ``streaming`` no streaming; with
neither the cosmic rays are tightly coupled (``F_c = (4/3) E_c v``): they are
advected with the gas and do ``P_c dV`` work (adiabatic, conserved form).

Variables (owned, appended after the scalars): ``Ec`` (energy density) and the
flux components ``FcR, Fcz, Fcphi`` (``Fcx, Fcy, Fcz`` in Cartesian), stored
as the flux itself (erg cm^-2 s^-1 in CGS), components 1, 2, 3 (mirrored on
the axis and at walls).

Time step: transport is explicit at ``V_m``, so the module limits the global
step to ``dt <= C min(dx) / (V_m sqrt(gamma_c - 1))`` with the run's Courant
number ``C``; the gas and cosmic rays advance together in the same stages (no
sub-cycling).  Why: the exchange terms then enter the same stages as the gas
fluxes (no splitting error between the cosmic-ray force and the gas pressure
gradient or gravity: the joint hydrostatic balance is held to truncation
error), total energy is conserved at every step, and runs stay bitwise
reproducible under MPI without a nested stepping loop.  Sub-cycling would
make a wind with ``V_m`` = 20 x the gas speeds cheaper, but the force would
then act on the gas in a split step (first order) and the ``V_m``-limited
sub-steps would still dominate.  Convergence: tests/test_cr_diffusion.py
(second order in dx, independent of ``V_m``, Courant 0.4 vs 0.2).  The price
is one MHD step per cosmic-ray step; see ``tools/bench_cr.py``.  Without
diffusion and streaming (tightly coupled) ``V_m`` plays no role and the step
is set by the composite sound speed instead.
"""
from __future__ import annotations

import math
from fractions import Fraction
from typing import Annotated, Any, Optional

import numpy as np
from pydantic import BeforeValidator, Field, ValidationError, model_validator

from ...core.reconstruct.plm import G_IDC
from ...errors import ParameterError
from ...problem.schema import Q, Strict
from ...problem.units import M_H_CGS, UnitSystem
from ...state import IB1, IB2, IB3, IDN, IPR, IV1, IV2, IV3
from ..base import ORDER_TRANSPORT, Module, Variable
from ..registry import register
from .losses import apply_losses
from .stage import stage as stage_kernel
from .transport import CDPAR, CGRAD, CVS, NCOEF, interaction, tight_signal_rate

HERE = "physics.cosmic_rays"


def _fraction(value: Any) -> Any:
    if isinstance(value, str):
        try:
            return float(Fraction(value.strip()))
        except (ValueError, ZeroDivisionError):
            raise ValueError(f"{value!r} is not a number or a fraction like '4/3'") from None
    return value


class DiffusionSpec(Strict):
    """Diffusion: along and across the field, or isotropic (needed without field)."""
    enabled: bool = Field(True, description="switch diffusion on or off")
    parallel: Optional[Q("diffusivity", "kappa along the magnetic field")] = \
        Field(None, gt=0.0)
    perpendicular: Q("diffusivity", "kappa across the magnetic field (with parallel)") = \
        Field(0.0, ge=0.0)
    isotropic: Optional[Q("diffusivity", "kappa in every direction (instead of "
                          "parallel/perpendicular)")] = Field(None, gt=0.0)

    @model_validator(mode="after")
    def _one(self):
        if self.isotropic is not None and (self.parallel is not None
                                           or self.perpendicular != 0.0):
            raise ValueError("give either 'isotropic' or 'parallel' (with optional "
                             "'perpendicular'), not both")
        if self.isotropic is None and self.parallel is None:
            raise ValueError("give 'parallel' (diffusivity along the field, e.g. "
                             "'3e28 cm**2/s') or 'isotropic'")
        return self


class StreamingSpec(Strict):
    """Streaming down the cosmic-ray pressure gradient at the ion Alfven speed."""
    enabled: bool = Field(True, description="switch streaming on or off")
    ionised_fraction: float = Field(1.0, gt=0.0, le=1.0, description=(
        "chi = rho_ion / rho: the streaming speed is |B| / sqrt(4 pi chi rho)"))
    speed_factor: float = Field(1.0, gt=0.0, description=(
        "f_s: stream at f_s times the ion Alfven speed"))


class InitialSpec(Strict):
    """Initial cosmic rays (exactly one key); the flux starts as (4/3) E_c v."""
    pressure_ratio: Optional[float] = Field(None, ge=0.0, description="P_c / P_gas")
    energy_density: Optional[Q("energy_density", "E_c (e.g. '1 eV cm**-3')")] = \
        Field(None, ge=0.0)
    pressure: Optional[Q("pressure", "P_c")] = Field(None, ge=0.0)

    @model_validator(mode="after")
    def _one(self):
        given = [k for k in ("pressure_ratio", "energy_density", "pressure")
                 if getattr(self, k) is not None]
        if len(given) != 1:
            raise ValueError("give exactly one of pressure_ratio, energy_density, "
                             f"pressure (got {', '.join(given) or 'none'})")
        return self


class LossesSpec(Strict):
    """Collisional losses (see wind2d.physics.cosmic_rays.losses; rates from memory)."""
    coulomb: bool = Field(False, description="Coulomb losses (all to the gas)")
    hadronic: bool = Field(False, description="hadronic losses (a fraction to the gas)")
    coulomb_rate: float = Field(2.78e-16, gt=0.0, description=(
        "a_C in cm^3 s^-1: dE_c/dt = -a_C n_e E_c"))
    hadronic_rate: float = Field(4.73e-16, gt=0.0, description=(
        "a_h in cm^3 s^-1: dE_c/dt = -a_h n_e E_c"))
    hadronic_heating_fraction: float = Field(1.0 / 6.0, ge=0.0, le=1.0, description=(
        "share of the hadronic loss that heats the gas"))
    electron_mu: float = Field(1.18, gt=0.0, description=(
        "mass per electron in hydrogen masses: n_e = rho / (mu_e m_H)"))


class CosmicRayParams(Strict):
    """Two-moment cosmic-ray transport (Jiang & Oh 2018)."""
    max_speed: Q("velocity", "V_m, the reduced maximum propagation speed") = Field(gt=0.0)
    gamma: Annotated[float, BeforeValidator(_fraction)] = Field(
        4.0 / 3.0, gt=1.0, lt=2.0, description="cosmic-ray adiabatic index (number or '4/3')")
    diffusion: Optional[DiffusionSpec] = None
    streaming: Optional[StreamingSpec] = None
    initial: Optional[InitialSpec] = None
    losses: Optional[LossesSpec] = None
    energy_floor: Q("energy_density", "lowest E_c; energy added by it is tallied") = \
        Field(0.0, ge=0.0)
    gas_feedback: bool = Field(True, description=(
        "give the exchanged momentum and energy to the gas; false only for verification "
        "problems on a frozen background (total energy is then not conserved)"))
    thick_speed_reduction: bool = Field(True, description=(
        "reduce the HLL signal speed with the optical depth of a face (keep true; false "
        "only to show the numerical diffusion it removes)"))


def _variables(geometry: str) -> tuple[Variable, ...]:
    c = ("R", "z", "phi") if geometry == "cylindrical" else ("x", "y", "z")
    return (Variable("Ec", "energy_density", 0),
            Variable(f"Fc{c[0]}", "energy_flux", 1),
            Variable(f"Fc{c[1]}", "energy_flux", 2),
            Variable(f"Fc{c[2]}", "energy_flux", 3))


@register("cosmic_rays")
class CosmicRays(Module):
    """Cosmic-ray energy density ``Ec`` and energy flux (``FcR, Fcz, Fcphi``; ``Fcx,
    Fcy, Fcz`` in Cartesian) by the two-moment method of Jiang & Oh (2018): diffusion
    along and across the magnetic field, streaming down the pressure gradient at the
    ion Alfven speed, each switched on by its section; implicit exchange of momentum
    and energy with the gas (streaming heating included; total energy conserved);
    optional Coulomb and hadronic losses.  Without diffusion and streaming the cosmic
    rays are tightly coupled: advected with the gas and adiabatic.  ``max_speed``
    (V_m) must exceed the gas, Alfven and diffusion (kappa/L) speeds, by ~10x for
    converged results; it limits the time step to ``C dx / (V_m/sqrt(3))`` (except in
    the tightly coupled case, where the composite sound speed does)."""

    Params = CosmicRayParams
    order = ORDER_TRANSPORT
    updates_own_variables = True      # the stage kernel applies the flux divergences
    tally_kinds = {"cr_streaming_heating": "energy", "cr_loss_heating": "energy",
                   "cr_loss_escaped": "energy", "cr_floor_energy": "energy"}

    def __new__(cls, params=None, context=None):
        # Only a run with losses gets the split hook: every module with a split hook
        # costs the step one more conversion of the whole state to primitives (with
        # ghost cells), about a tenth of an MHD step, done in vain without losses.
        with_losses = cls is CosmicRays and _has_losses(params)
        return super().__new__(CosmicRaysWithLosses if with_losses else cls)

    def __init__(self, params: CosmicRayParams, context=None):
        """``params``: the validated ``physics.cosmic_rays`` section (code units);
        ``context`` needs ``geometry`` and, for losses, ``units`` (see
        :class:`~wind2d.physics.Module`).  From Python, :meth:`from_keys`
        validates keys given in code units.  After :meth:`attach`, ``C[k, j, i]``
        holds the interaction coefficients of the last stage (slots in
        :mod:`.transport`)."""
        super().__init__(params, context)
        geometry = getattr(context, "geometry", None)
        if geometry not in ("cylindrical", "cartesian"):
            raise ParameterError(f"{HERE}: the module needs the grid geometry "
                                 "(context.geometry 'cylindrical' or 'cartesian')")
        self.geometry = geometry
        self.variables = _variables(geometry)
        p = params
        self.gamma_c = float(p.gamma)
        self.vm = float(p.max_speed)
        dif = p.diffusion if (p.diffusion is not None and p.diffusion.enabled) else None
        st = p.streaming if (p.streaming is not None and p.streaming.enabled) else None
        self.isotropic = dif is not None and dif.isotropic is not None
        if dif is None:
            self.d_par = self.d_perp = 0.0
        elif self.isotropic:
            self.d_par = self.d_perp = 3.0 * float(dif.isotropic)
        else:
            self.d_par, self.d_perp = 3.0 * float(dif.parallel), 3.0 * float(dif.perpendicular)
        self.streaming = st is not None
        # transport off: tightly coupled, advected adiabatic cosmic rays
        self.tight = dif is None and st is None
        self.stream_coef = (st.speed_factor / math.sqrt(st.ionised_fraction)) if st else 0.0
        self.tallies = {k: 0.0 for k in self.tally_kinds}
        self._loss = None
        if p.losses is not None and (p.losses.coulomb or p.losses.hadronic):
            if self.units is None:
                raise ParameterError(f"{HERE}.losses: the rates need a unit system "
                                     "(give the module a context with 'units')")
            L = p.losses
            # a n_e / rho in code units: a [cm^3 s^-1] / (mu_e m_H [g]) * rho_unit * t_unit
            conv = self.units.to_cgs("density") * self.units.to_cgs("time") / \
                (L.electron_mu * M_H_CGS)
            self._loss = ((L.coulomb_rate * conv) if L.coulomb else 0.0,
                          (L.hadronic_rate * conv) if L.hadronic else 0.0,
                          float(L.hadronic_heating_fraction))

    @classmethod
    def from_keys(cls, geometry: str, units: UnitSystem | None = None, **keys):
        """Build from problem-file keys given in code units (plain numbers) or as
        quantity strings converted with ``units`` (default code units kpc, Myr, Msun).

        >>> cr = CosmicRays.from_keys("cartesian", max_speed=50.0,
        ...                           diffusion={"isotropic": 0.1})
        """
        from types import SimpleNamespace
        units = units if units is not None else UnitSystem()
        try:
            params = cls.Params.model_validate(keys, context={"units": units})
        except ValidationError as exc:
            raise ParameterError(f"{HERE}: {exc}") from None
        return cls(params, SimpleNamespace(units=units, geometry=geometry))

    # ------------------------------------------------------------ set-up
    def attach(self, sim) -> None:
        super().attach(sim)
        m, vm = sim.mesh, sim.varmap
        names = [v.name for v in self.variables]
        self.iE, self.iF1, self.iF2, self.iF3 = (vm.index[n] for n in names)
        self.mhd = vm.mhd
        p = self.params
        if self.streaming and not self.mhd:
            raise ParameterError(f"{HERE}.streaming: streaming runs along the magnetic field "
                                 "and needs gas.magnetised: true; without a field use "
                                 "diffusion: {isotropic: ...} only")
        dif = p.diffusion
        if dif is not None and dif.enabled and not self.mhd and not self.isotropic:
            raise ParameterError(f"{HERE}.diffusion: without a magnetic field diffusion is "
                                 "isotropic: give 'isotropic' instead of 'parallel'/"
                                 "'perpendicular'")
        # work arrays, allocated once (the step allocates nothing): the coefficients
        # of the derived fields, and the row buffers of a stage (see .stage)
        self.C = np.zeros((NCOEF, m.nt2, m.nt1))
        # 1 / (x_{k+1} - x_{k-1}) of the centres (mirrored behind walls) for gradients,
        # from the integrator's reconstruction tables
        self.rdx1c = np.ascontiguousarray(sim.integrator.g1[G_IDC])
        self.rdx2c = np.ascontiguousarray(sim.integrator.g2[G_IDC])
        self.rvol1 = 1.0 / m.vol1
        CV = np.zeros((3, 4, m.nt1))            # per-cell values of three rows
        TB = np.zeros((2, 8, m.nt1))            # coefficients of two rows
        FB1 = np.zeros((2, 3, m.nt1 + 1))       # face fluxes of two rows (axis 1)
        FB2 = np.zeros((2, 3, m.nt1))           # and of two rows of axis-2 faces
        S1 = np.zeros((5, m.nt1))               # slopes along a row
        S2 = np.zeros((2, 5, m.nt1))            # slopes across rows, two rows
        R = np.zeros((5, m.nt1))                # intermediate values of the update
        acc = np.zeros((2, m.nt1))              # per-column sums of the tallies
        # the rows of the module's variables in the face-flux arrays are not used (the
        # module updates its variables itself) except F1[iE], F2[iE], which it writes;
        # zero, for whoever reads face fluxes
        F1, F2 = sim.integrator.F1, sim.integrator.F2
        for k in (self.iF1, self.iF2, self.iF3):
            F1[k] = 0.0
            F2[k] = 0.0
        # the arguments of the stage kernel after (W, U0, U, F1, F2, dt, limiter)
        if (self.iF1, self.iF2, self.iF3) != (self.iE + 1, self.iE + 2, self.iE + 3):
            raise AssertionError("the flux components must follow Ec")    # (_variables)
        it = sim.integrator
        self._stage_args = (CV, TB, FB1, FB2, S1, S2, R, acc, self.iE, self.iF1, self.iF2,
                            self.iF3, self.mhd, self.gamma_c, self.vm, self.d_par,
                            self.d_perp, self.streaming, self.stream_coef,
                            bool(p.thick_speed_reduction), bool(p.gas_feedback),
                            bool(sim.eos.isothermal), float(p.energy_floor), self.tight,
                            self.rdx1c, self.rdx2c, m.dx1, m.dx2, it.g1, it.g2, m.area1,
                            self.rvol1, m.vol1, m.js, m.je, m.is_, m.ie)
        dx = min(float(m.dx1[m.is_:m.ie].min()), float(m.dx2[m.js:m.je].min()))
        self._dt = sim.integrator.courant * dx / (self.vm * math.sqrt(self.gamma_c - 1.0))

    def initialise(self, sim) -> None:
        ini = self.params.initial
        if ini is None:
            return
        if ini.pressure_ratio is not None:
            ec = ini.pressure_ratio * sim.field("p") / (self.gamma_c - 1.0)
        elif ini.energy_density is not None:
            ec = np.full((sim.mesh.n2, sim.mesh.n1), float(ini.energy_density))
        else:
            ec = np.full((sim.mesh.n2, sim.mesh.n1), ini.pressure / (self.gamma_c - 1.0))
        vm = sim.varmap
        v = [sim.field(vm.primitive_names[k]) for k in (IV1, IV2, IV3)]
        names = [x.name for x in self.variables]
        sim.set_primitive(**{names[0]: ec},
                          **{names[k + 1]: self.gamma_c * ec * v[k] for k in range(3)})

    # ------------------------------------------------------------ the step
    def max_dt(self, sim) -> float:
        if not self.tight:
            return self._dt
        # tightly coupled: no V_m transport; the composite sound speed limits the step
        m, it = sim.mesh, sim.integrator
        g, iso, cs2 = it.gas
        s = tight_signal_rate(it.W, self.iE, g, iso, cs2, self.gamma_c, self.mhd, m.dx1,
                              m.dx2, m.js, m.je, m.is_, m.ie)
        return it.courant / s if s > 0.0 else math.inf

    def _coefficients(self, sim, W, ring: int) -> None:
        m = sim.mesh
        interaction(W, self.C, self.iE, self.mhd, self.gamma_c, self.d_par, self.d_perp,
                    self.streaming, self.stream_coef, self.rdx1c, self.rdx2c,
                    m.js - ring, m.je + ring, m.is_ - ring, m.ie + ring)

    def stage_source(self, sim, W, U_out, F1, F2, dt, stage) -> None:
        # fluxes and update in one sweep (see .stage), from the state at the start of
        # the step (sim.state: both stages start from it); first order in stage 0
        lim = sim.integrator.limiter if stage == 1 else 0
        heat, added = stage_kernel(W, sim.state.U, U_out, F1, F2, float(dt), lim,
                                   *self._stage_args)
        if stage == 1:
            self.tallies["cr_streaming_heating"] += heat
            self.tallies["cr_floor_energy"] += added

    def advice(self, sim) -> list[str]:
        """``max_speed`` against the gas signal speeds of the current state and the
        diffusion speed ``kappa / L`` (L the smaller extent of the grid): the
        two-moment method needs V_m well above both (about ten times, Jiang & Oh
        2018); too small a V_m distorts the transport and drives floor hits."""
        if self.tight:
            return []
        m, W = sim.mesh, sim.integrator.W
        sl = (slice(m.js, m.je), slice(m.is_, m.ie))
        rho = W[IDN][sl]
        g = 1.0 if sim.eos.isothermal else sim.eos.gamma
        c2 = g * W[IPR][sl]
        if self.mhd:
            c2 = c2 + W[IB1][sl] ** 2 + W[IB2][sl] ** 2 + W[IB3][sl] ** 2
        speed = np.sqrt(W[IV1][sl] ** 2 + W[IV2][sl] ** 2) + np.sqrt(c2 / rho)
        vgas = sim.global_max(float(speed.max()) if speed.size else 0.0)
        gm = sim.global_mesh
        L = min(gm.x1f[gm.ie] - gm.x1f[gm.is_], gm.x2f[gm.je] - gm.x2f[gm.js])
        vdif = max(self.d_par, self.d_perp) / 3.0 / L
        u = self.units

        def show(v):
            if u is None:
                return f"{v:.4g} (code units)"
            return f"{v * u.to_cgs('velocity') / 1e5:.4g} km/s"

        out = []
        for what, v in (("the largest gas signal speed |v| + c_fast", vgas),
                        ("the diffusion speed kappa / L", vdif)):
            if v > 0.0 and self.vm < 10.0 * v:
                out.append(f"{HERE}.max_speed = {show(self.vm)} is only "
                           f"{self.vm / v:.3g} times {what} ({show(v)}); the two-moment "
                           f"method needs about 10 times (Jiang & Oh 2018): give at least "
                           f"{show(10.0 * v)}")
        return out

    # ------------------------------------------------------------ output
    def derived_fields(self, sim):
        m = sim.mesh
        W = sim.integrator.W
        self._coefficients(sim, W, 0)
        sl = (slice(m.js, m.je), slice(m.is_, m.ie))
        vs = np.abs(self.C[CVS][sl])
        return {
            "Pc": ((self.gamma_c - 1.0) * W[self.iE][sl], "pressure"),
            "cr_energy_density": (W[self.iE][sl].copy(), "energy_density_ev"),
            "cr_streaming_speed": (vs, "velocity"),
            "cr_diffusivity": (self.C[CDPAR][sl] / 3.0, "diffusivity"),
            "cr_streaming_heating": (vs * np.abs(self.C[CGRAD][sl]), "power_density"),
        }

    def history(self, sim):
        m = sim.mesh
        e = float(np.sum(sim.state.U[self.iE, m.js:m.je, m.is_:m.ie] * m.cell_volumes()))
        return {"cr_energy": (float(sim.global_sum(e)), "energy")}

    def energy(self, sim) -> float:
        """Total cosmic-ray energy (per radian in cylindrical geometry), all ranks."""
        return self.history(sim)["cr_energy"][0]


class CosmicRaysWithLosses(CosmicRays):
    """:class:`CosmicRays` with collisional losses (built by ``CosmicRays(...)`` when
    ``losses`` switches one on): adds the split step of the losses."""

    def split_source(self, sim, dt) -> None:
        m = sim.mesh
        rc, rh, fh = self._loss
        heat, lost = apply_losses(sim.state.U, self.iE, rc, rh, fh, float(dt),
                                  bool(self.params.gas_feedback), sim.eos.isothermal,
                                  m.vol1, m.dx2, m.js, m.je, m.is_, m.ie)
        self.tallies["cr_loss_heating"] += heat
        self.tallies["cr_loss_escaped"] += lost


def _has_losses(params) -> bool:
    L = getattr(params, "losses", None)
    return L is not None and bool(L.coulomb or L.hadronic)


__all__ = ["CosmicRayParams", "CosmicRays", "CosmicRaysWithLosses"]
