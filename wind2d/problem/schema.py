"""The problem-file schema (pydantic models), with units.

Quantities are written with units (``"10 kpc"``) and converted into the run's
code units while the file is validated; a plain number is taken as already in
code units.  Every model forbids unknown keys.  ``docs/problem-files.md`` is
generated from these models (``tools/make_problem_docs.py``) and a test
checks that it is current.
"""
from __future__ import annotations

import math
import re
from fractions import Fraction
from functools import partial
from typing import Annotated, Any, Literal, Optional

from pydantic import (BaseModel, BeforeValidator, ConfigDict, Field, ValidationInfo,
                      field_validator, model_validator)

from ..boundaries import KINDS as EDGE_KINDS
from ..core.reconstruct import LIMITERS, METHODS
from ..core.riemann import SOLVERS
from ..errors import ParameterError


def _to_code(kind: str, value: Any, info: ValidationInfo) -> float:
    units = (info.context or {}).get("units")
    if units is None:
        raise ValueError("internal: no unit system in the validation context")
    try:
        return units.code_value(value, kind, "")
    except ParameterError as exc:
        raise ValueError(str(exc).lstrip(": ")) from None


def Q(kind: str, doc: str):
    """A quantity of the given kind, stored in code units after validation."""
    return Annotated[float, BeforeValidator(partial(_to_code, kind)),
                     Field(description=f"{doc} [{kind.replace('_', ' ')}]",
                           json_schema_extra={"kind": kind})]


def _wallclock_seconds(value: Any) -> float:
    # wall-clock durations: "HH:MM:SS", or a time quantity ("30 min")
    bad = ValueError(f"{value!r} is not a wall-clock duration (use HH:MM:SS or e.g. "
                     "'30 min')")
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        seconds = float(value)
    else:
        text = str(value).strip()
        m = re.fullmatch(r"(\d+):([0-5]?\d):([0-5]?\d)", text)
        if m:
            h, mi, s = (int(g) for g in m.groups())
            seconds = float(h * 3600 + mi * 60 + s)
        else:
            import astropy.units as u
            try:
                seconds = float(u.Quantity(text).to(u.s).value)
            except Exception:
                raise bad from None
    if not (math.isfinite(seconds) and seconds >= 0):
        raise bad
    return seconds


WallClock = Annotated[float, BeforeValidator(_wallclock_seconds),
                      Field(description="wall-clock duration, HH:MM:SS or e.g. '30 min' "
                                        "[seconds of real time]")]


class Strict(BaseModel):
    model_config = ConfigDict(extra="forbid", populate_by_name=True)


class UnitsSpec(Strict):
    """Code units: every quantity in the file is converted to these."""
    length: str = Field("kpc", description="code unit of length (astropy unit name)")
    time: str = Field("Myr", description="code unit of time (astropy unit name)")
    mass: str = Field("Msun", description="code unit of mass (astropy unit name)")


MAX_CELLS_AXIS = 2 ** 20         # cells along one axis
MAX_CELLS = 2 ** 28              # cells of the whole grid (about 64 GiB of arrays)
MIN_CELL_FRACTION = 1e-12        # narrowest stretched cell / axis length (float64 room)


class AxisSpec(Strict):
    """One grid axis."""
    lo: Q("length", "lower edge") = Field(alias="from")
    hi: Q("length", "upper edge") = Field(alias="to")
    cells: int = Field(ge=2, le=MAX_CELLS_AXIS, description="number of cells (at least 2, "
                       "the depth of the ghost zone)")
    stretch: float = Field(1.0, gt=0.0, description="ratio between neighbouring cell "
                                                    "widths (1 = uniform)")

    @model_validator(mode="after")
    def _range(self):
        if not (math.isfinite(self.lo) and math.isfinite(self.hi)):
            raise ValueError("'from' and 'to' must be finite")
        if not self.lo < self.hi:
            raise ValueError(f"'from' ({self.lo:g}) must be smaller than 'to' ({self.hi:g}), "
                             "both in code units")
        if not math.isfinite(self.stretch):
            raise ValueError("'stretch' must be a finite number")
        if self.stretch != 1.0 and self.cells > 1:
            # narrowest cell as a fraction of the axis, from logs (no overflow)
            r, n = max(self.stretch, 1.0 / self.stretch), self.cells
            log_frac = math.log(r - 1.0) - (n * math.log(r) + math.log1p(-r ** -n))
            if log_frac < math.log(MIN_CELL_FRACTION):
                raise ValueError(f"stretch = {self.stretch:g} over {n} cells makes the "
                                 f"narrowest cell smaller than {MIN_CELL_FRACTION:g} of the "
                                 "axis; use a stretch closer to 1 or fewer cells")
        return self


class GridSpec(Strict):
    """The mesh: geometry and the two axes (R and z, or x and y)."""
    geometry: Literal["cylindrical", "cartesian"] = Field(description="axisymmetric (R, z) "
                                                                      "or planar (x, y)")
    R: Optional[AxisSpec] = Field(None, description="radial axis (cylindrical)")
    z: Optional[AxisSpec] = Field(None, description="vertical axis (cylindrical)")
    x: Optional[AxisSpec] = Field(None, description="first axis (cartesian)")
    y: Optional[AxisSpec] = Field(None, description="second axis (cartesian)")

    @model_validator(mode="after")
    def _axes(self):
        need, other = (("R", "z"), ("x", "y")) if self.geometry == "cylindrical" \
            else (("x", "y"), ("R", "z"))
        for a in need:
            if getattr(self, a) is None:
                raise ValueError(f"a {self.geometry} grid needs the axis '{a}' "
                                 f"(axes: {', '.join(need)})")
        for a in other:
            if getattr(self, a) is not None:
                raise ValueError(f"axis '{a}' is not part of a {self.geometry} grid "
                                 f"(axes: {', '.join(need)})")
        if self.geometry == "cylindrical" and self.R.lo < 0:
            raise ValueError(f"grid.R.from = {self.R.lo:g}: the radius starts at 0 or above "
                             "in cylindrical geometry")
        a1, a2 = self.axes
        if a1.cells * a2.cells > MAX_CELLS:
            raise ValueError(f"{a1.cells} x {a2.cells} cells is more than the "
                             f"{MAX_CELLS} cells wind2d allows on one grid")
        return self

    @property
    def axes(self) -> tuple[AxisSpec, AxisSpec]:
        return (self.R, self.z) if self.geometry == "cylindrical" else (self.x, self.y)


class FloorsSpec(Strict):
    """Positivity floors."""
    density: Q("density", "density floor (mass or number density)") = Field(0.0, ge=0.0)
    pressure: Q("pressure", "pressure floor") = Field(0.0, ge=0.0)


def _gamma(value: Any) -> float:
    if isinstance(value, str):
        try:
            return float(Fraction(value.strip()))
        except (ValueError, ZeroDivisionError):
            raise ValueError(f"{value!r} is not a number or a fraction like '5/3'") from None
    return value


# names of state variables (both geometries, with field) and T: not scalar names
RESERVED_NAMES = frozenset(["rho", "p", "T", "vR", "vz", "vphi", "vx", "vy", "BR", "Bz",
                            "Bphi", "Bx", "By"])


class GasSpec(Strict):
    """Equation of state and gas properties."""
    eos: Literal["ideal", "isothermal"] = Field("ideal", description="equation of state")
    gamma: Annotated[float, BeforeValidator(_gamma)] = Field(
        5.0 / 3.0, gt=1.0, description="adiabatic index of the ideal gas (number or '5/3')")
    sound_speed: Optional[Q("velocity", "sound speed of the isothermal gas")] = Field(
        None, gt=0.0)
    mean_molecular_weight: float = Field(0.6, gt=0.0, description="mu, for temperatures "
                                         "and number densities")
    magnetised: bool = Field(False, description="evolve the magnetic field (MHD)")
    scalars: list[str] = Field(default_factory=list, description="names of passive scalars")
    floors: FloorsSpec = Field(default_factory=FloorsSpec)

    @field_validator("scalars")
    @classmethod
    def _scalar_names(cls, v: list[str]) -> list[str]:
        for name in v:
            if not name.isidentifier():
                raise ValueError(f"scalar name {name!r}: use letters, digits and '_'")
            if name in RESERVED_NAMES:
                raise ValueError(f"scalar name {name!r} is the name of a state variable; "
                                 f"not allowed: {', '.join(sorted(RESERVED_NAMES))}")
        dup = sorted({n for n in v if v.count(n) > 1})
        if dup:
            raise ValueError(f"scalar name(s) given twice: {', '.join(dup)}")
        return v

    @model_validator(mode="after")
    def _iso(self):
        if self.eos == "isothermal" and self.sound_speed is None:
            raise ValueError("eos 'isothermal' needs 'sound_speed'")
        if self.eos == "ideal" and self.sound_speed is not None:
            raise ValueError("'sound_speed' is only for eos 'isothermal'")
        return self


class SchemeSpec(Strict):
    """Numerical scheme."""
    riemann: Literal[tuple(["auto"] + list(SOLVERS))] = Field(
        "auto", description="Riemann solver; auto = hllc without field, hlld with field "
                            "(hlle for isothermal MHD)")
    reconstruction: Literal[tuple(METHODS)] = Field("plm", description="reconstruction")
    limiter: Literal[tuple(LIMITERS)] = Field("mc", description="slope limiter")
    courant: float = Field(0.4, gt=0.0, le=1.0, description="CFL number")


class SetupSpec(BaseModel):
    """Initial condition: ``kind`` names a registered setup; the other keys are its
    parameters (see the setups section)."""
    model_config = ConfigDict(extra="allow")
    kind: str = Field(description="registered setup name")


class StopSpec(Strict):
    """When the run ends."""
    time: Q("time", "simulated time at which the run ends") = Field(gt=0.0)
    max_steps: Optional[int] = Field(None, gt=0, description="step limit")
    walltime: Optional[WallClock] = Field(None, gt=0.0, description="wall-clock limit of "
                                          "the job; the run checkpoints and exits before it")
    walltime_margin: WallClock = Field(300.0, description="safety margin before the "
                                       "wall-clock limit")


class SnapshotsSpec(Strict):
    """Snapshots: the full state at regular simulated times, for analysis."""

    every: Optional[Q("time", "simulated time between snapshots")] = Field(None, gt=0.0)


class CheckpointsSpec(Strict):
    """Checkpoints: restart files, by simulated or wall-clock time."""

    every: Optional[Q("time", "simulated time between checkpoints")] = Field(None, gt=0.0)
    every_wallclock: Optional[WallClock] = Field(None, gt=0.0, description="wall-clock time "
                                                 "between checkpoints")
    keep: int = Field(3, ge=1, description="how many checkpoints to keep")


class HistorySpec(Strict):
    """History: one row of global quantities at regular simulated times."""

    every: Optional[Q("time", "simulated time between history rows")] = Field(None, gt=0.0)


class LogSpec(Strict):
    """Progress lines in the log."""

    every_steps: int = Field(100, ge=1, description="steps between log lines")


class OutputsSpec(Strict):
    """What the run writes and how often."""
    snapshots: SnapshotsSpec = Field(default_factory=SnapshotsSpec)
    checkpoints: CheckpointsSpec = Field(default_factory=CheckpointsSpec)
    history: HistorySpec = Field(default_factory=HistorySpec)
    log: LogSpec = Field(default_factory=LogSpec)


EdgeValue = Any


class Problem(Strict):
    """A complete problem file."""
    title: str = Field(description="one line naming the run")
    description: str = Field("", description="free text")
    units: UnitsSpec = Field(default_factory=UnitsSpec)
    grid: GridSpec
    edges: dict[str, EdgeValue] = Field(description="boundary kind per edge: R_low, R_high, "
                                        "z_low, z_high (or x_/y_); axis, reflecting, outflow, "
                                        "periodic, or {kind: fixed, state: {...}}")
    gas: GasSpec = Field(default_factory=GasSpec)
    scheme: SchemeSpec = Field(default_factory=SchemeSpec)
    setup: SetupSpec
    stop: StopSpec
    outputs: OutputsSpec = Field(default_factory=OutputsSpec)
    physics: dict[str, Optional[dict[str, Any]]] = Field(
        default_factory=dict, description="physics modules by name, each with its parameters "
        "(see the physics modules section); they act in a fixed order (docs/plugins.md)")
    load_modules: list[str] = Field(
        default_factory=list, description="Python files (paths relative to this problem file) "
        "that register extra physics modules")

    @field_validator("edges")
    @classmethod
    def _edges(cls, v: dict) -> dict:
        for name, val in v.items():
            if not isinstance(val, (str, dict)):
                raise ValueError(f"edges.{name} = {val!r}: give a boundary kind "
                                 f"({', '.join(EDGE_KINDS)}) or {{kind: fixed, state: ...}}")
        return v

    @field_validator("title")
    @classmethod
    def _title(cls, v: str) -> str:
        if not v.strip():
            raise ValueError("must not be empty")
        return v
