"""A rotating isothermal gas disk in a hot isothermal halo, both in equilibrium
in the run's gravitational potential Phi(R, z) (cylindrical geometry).

Disk (construction from memory after Sutherland & Bicknell 2007, ApJS 173,
37), with sound speed c_d^2 = theta_d and rotation parameter e:

    rho_d = rho_d0 exp(-[Phi(R, z) - e^2 Phi(R, 0) - (1 - e^2) Phi(0, 0)] / c_d^2),
    v_phi = e v_c(R, 0),   v_c^2 = R dPhi/dR (R, 0).

Then c_d^2 d ln rho/dz = -dPhi/dz and c_d^2 d ln rho/dR = -dPhi/dR + v_phi^2/R:
rotation is constant on cylinders and the disk is an exact equilibrium.
Halo: rho_h = rho_h0 exp(-(Phi - Phi(0, 0))/c_h^2), at rest; or, with
``corotating_halo: true``, rotating like the disk, v_phi = e v_c(R, 0), with
rho_h = rho_h0 exp(-[Phi - e^2 Phi(R, 0) - (1 - e^2) Phi(0, 0)]/c_h^2).  Each cell holds
the disk where the disk pressure exceeds the halo's, else the halo, so the
pressure is continuous across the disk surface (a contact with a jump of
density and rotation).

Field (optional, ``field: {kind, beta}``):

* ``vertical``: uniform B_z with plasma beta ``beta`` at the disk centre,
  B_z^2/2 = rho_d0 c_d^2 / beta; it exerts no force.  With a static halo the
  field lines join rotating disk gas to non-rotating halo gas, so the
  rotation winds them up at the disk surface (Ferraro's isorotation law,
  Ferraro 1937, MNRAS 97, 458, from memory, is broken): an equilibrium only
  at t = 0.  With ``corotating_halo: true`` every field line rotates at one
  angular velocity and the magnetised state is an exact equilibrium.
* ``toroidal``: in the disk B_phi^2 = 2 p_d f(R)/beta with
  f = R^2/(R^2 + R_B^2) (``core_radius`` R_B; B_phi vanishes on the axis and
  beta -> ``beta`` for R >> R_B).  Vertical balance then needs the
  effective sound speed c_d^2 h(R), h = 1 + f/beta:
  rho_d = rho_m(R) exp(-[Phi(R, z) - Phi(R, 0)]/(c_d^2 h)) with the unmagnetised
  midplane density rho_m(R) = rho_d0 exp(-(1 - e^2)[Phi(R, 0) - Phi(0, 0)]/c_d^2);
  radial balance, including magnetic pressure and hoop stress
  (rho v^2/R = d(p h)/dR + B_phi^2/R + rho dPhi/dR), gives

      v_phi^2 = v_c^2 [e^2 - (f/beta)(1 - e^2)] + (R f'/beta)(c_d^2 + dPhi/h)
                + 2 c_d^2 f/beta,   dPhi = Phi(R, z) - Phi(R, 0),

  which must be >= 0: beta >= (1 - e^2)/e^2 is required.  This is an exact
  equilibrium of the axisymmetric MHD equations (derivation above; not from a
  paper), no longer rotating on cylinders.  The halo has no field; the disk is
  where its total pressure p_d h exceeds the halo pressure.  On the grid every
  equilibrium holds to the scheme's truncation error: the initial state is
  set from point values at cell centres (volume centroid in R).
"""
from __future__ import annotations

from typing import Literal, Optional

import numpy as np
from pydantic import Field

from ..errors import ParameterError
from ..problem.schema import Q, Strict
from . import register
from .hydrostatic_atmosphere import centre_potential


class DiskField(Strict):
    """Magnetic field of the disk."""
    kind: Literal["vertical", "toroidal"] = Field(description="uniform vertical field, "
                                                  "or a toroidal field in the disk")
    beta: float = Field(gt=0.0, description="plasma beta p / (B^2/2): at the disk centre "
                        "(vertical), or far from the axis (toroidal)")
    core_radius: Optional[Q("length", "toroidal field: radius R_B inside which B_phi "
                               "falls to zero on the axis")] = Field(None, gt=0.0)


@register("disk_in_halo")
class DiskInHalo:
    """Rotating isothermal disk embedded in a hot hydrostatic halo."""

    class Params(Strict):
        rho_disk: Q("density", "disk density at the centre (R, z) = (0, 0)") = Field(gt=0.0)
        T_disk: Q("temperature", "disk temperature") = Field(gt=0.0)
        rotation: float = Field(0.9, ge=0.0, le=1.0, description="e: v_phi = e v_c(R, 0); "
                                "1 = fully rotation supported in R")
        rho_halo: Q("density", "halo density at the centre") = Field(gt=0.0)
        T_halo: Q("temperature", "halo temperature") = Field(gt=0.0)
        corotating_halo: bool = Field(False, description="the halo rotates like the disk "
                                      "(v_phi = e v_c); false: the halo is at rest")
        field: Optional[DiskField] = Field(None, description="optional field: {kind: "
                                           "vertical or toroidal, beta, core_radius}")

    def apply(self, sim, q, ctx):
        where = "setup.kind = 'disk_in_halo'"
        m = sim.mesh
        if not m.cylindrical:
            raise ParameterError(f"{where} needs grid.geometry: cylindrical")
        if sim.eos.isothermal:
            raise ParameterError(f"{where} needs gas.eos: ideal (disk and halo have "
                                 "different temperatures)")
        if q.field is not None and not sim.varmap.mhd:
            raise ParameterError("setup.field: a field needs gas.magnetised: true")
        if q.field is not None and q.field.kind == "toroidal":
            if q.field.core_radius is None:
                raise ParameterError("setup.field.core_radius: the toroidal field needs the "
                                     "radius inside which it falls to zero on the axis")
            e2 = q.rotation ** 2
            if e2 == 0.0 or q.field.beta < (1.0 - e2) / e2:
                raise ParameterError(f"setup.field.beta = {q.field.beta:g}: with rotation "
                                     f"e = {q.rotation:g} the toroidal field needs beta >= "
                                     "(1 - e^2)/e^2 (else v_phi^2 < 0 somewhere)")
        from ..physics.gravity import total_potential
        pot = total_potential(sim, where)
        phi = centre_potential(sim, where)
        R, z = m.centres()
        R = np.abs(R)
        phi_mid = pot.phi(R, np.zeros_like(R))
        phi00 = float(pot.phi(np.array(0.0), np.array(0.0)))
        if not np.isfinite(phi00):
            raise ParameterError(f"{where}: the potential is not finite at (0, 0); give the "
                                 "point mass a softening")
        gR, _ = pot.accel(R, np.zeros_like(R))
        vc2 = np.maximum(-R * gR, 0.0)
        cd2, ch2, e2 = q.T_disk, q.T_halo, q.rotation ** 2
        tor = q.field is not None and q.field.kind == "toroidal"
        with np.errstate(over="ignore", under="ignore"):
            if tor:
                beta, RB = q.field.beta, q.field.core_radius
                f = R * R / (R * R + RB * RB)
                Rfp = 2.0 * f * (1.0 - f)                    # R df/dR
                h = 1.0 + f / beta
                dphi = phi - phi_mid
                rho_d = q.rho_disk * np.exp(-(1.0 - e2) * (phi_mid - phi00) / cd2
                                            - dphi / (cd2 * h))
                p_d = rho_d * cd2
                P_d = p_d * h
                v2 = vc2 * (e2 - (f / beta) * (1.0 - e2)) + (Rfp / beta) * (cd2 + dphi / h) \
                    + 2.0 * cd2 * f / beta
                bphi_d = np.sqrt(2.0 * p_d * f / beta)
            else:
                rho_d = q.rho_disk * np.exp(-(phi - e2 * phi_mid - (1.0 - e2) * phi00) / cd2)
                p_d = P_d = rho_d * cd2
                v2 = e2 * vc2
            eh2 = e2 if q.corotating_halo else 0.0
            rho_h = q.rho_halo * np.exp(-(phi - eh2 * phi_mid - (1.0 - eh2) * phi00) / ch2)
        p_h = rho_h * ch2
        disk = P_d > p_h
        rho = np.where(disk, rho_d, rho_h)
        if not (np.all(np.isfinite(rho)) and rho.min() > 0.0):
            raise ParameterError(f"{where}: the density overflows or vanishes on the grid; "
                                 "use warmer gas or a smaller grid")
        state = {"rho": rho, "p": np.where(disk, p_d, p_h),
                 "vphi": np.where(disk, np.sqrt(np.maximum(v2, 0.0)),
                                  np.sqrt(eh2 * vc2))}
        if q.field is not None and q.field.kind == "vertical":
            sim.set_field(b2=float(np.sqrt(2.0 * q.rho_disk * cd2 / q.field.beta)))
        elif tor:
            state["Bphi"] = np.where(disk, bphi_d, 0.0)
        sim.set_primitive(**state)
