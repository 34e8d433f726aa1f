"""The ``[flow]`` section: operating condition and the system behind the throat.

The airflow estimate's inputs; SI units inside. Flow quantities need a unit in the
spec file (``speed = "160 km/h"``, ``length = "1.2 m"``) because a bare number could be read
in several units; zero may be written bare. Dimensionless numbers (``recovery``,
``inlet_loss_factor``, ``exit_cp``, a cooler's ``k``) and angles in degrees are bare.

Losses behind the throat are a list of elements keyed by ``kind``: ``hose``, ``bend``,
``cooler`` (heat exchanger) and ``diffuser``. The inlet's own internal transition is added
automatically from the geometry (its loss method: ``transition_loss``,
``transition_effectiveness``); the exit (``exit_cp``, ``exit_area``) closes the balance, and
``exit_direction`` says whether the air is dumped inside the body (ram drag) or discharged
rearward into the free stream (net momentum drag). ``flow_angle_deg`` is the local flow's yaw
to the inlet centreline (it costs recovery: the axial part of the head, cos²).
``inlet_cp`` is the local static-pressure coefficient where the inlet sits;
``kinetic_energy_factor`` (α) and ``momentum_factor`` (β) describe the non-uniform flow that
leaves the inlet's own duct, and ``exit`` says where it goes: into a hose (where it mixes
out) or a plenum (where its kinetic energy is lost).
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Any, Literal

from pydantic import BeforeValidator, Field, StrictFloat, StrictStr, model_validator

from ductgen.spec.losses import (
    HOSE_ROUGHNESS_M,
    Area,
    BendLoss,
    CoolerLoss,
    Density,
    DiffuserLoss,
    HoseLoss,
    LossElement,
    VolumeFlow,
)
from ductgen.spec.recovery_table import find_recovery_table, read_recovery_table
from ductgen.spec.types import Deg, M, MPerS, Section, si

__all__ = [
    "FLOW_UNITS",
    "HOSE_ROUGHNESS_M",
    "INLET_LOSS_FACTOR",
    "KINETIC_ENERGY_FACTOR",
    "RECOVERY_NAMES",
    "TRANSITION_EFFECTIVENESS",
    "BendLoss",
    "CoolerLoss",
    "DiffuserLoss",
    "FlowSpec",
    "HoseLoss",
    "LossElement",
    "flow_data",
]

#: Default lip and ramp loss factor on the capture estimate: an assumption (no source).
INLET_LOSS_FACTOR = 0.95

#: Default diffuser effectiveness of the internal transition, the lossy end of the 0.6–0.8
#: range Blevins (*Applied Fluid Dynamics Handbook*, §7.4) gives for diffusers: the
#: transition is offset, rectangle-to-round and fed by the ramp's vortex-laden, distorted
#: boundary-layer air, all of which lower a diffuser's effectiveness.
TRANSITION_EFFECTIVENESS = 0.6

#: Default kinetic-energy (Coriolis) factor α of the air leaving the inlet's own duct: from
#: the project's own CFD cross-check (k-ω SST, three meshes), which measured α = 1.20–1.32
#: at the transition exit of the club-racer and e-kart samples (as they were then, before
#: their throats were deepened); 1.25 is inside that range.
#: Not a published value; α = 1 is the uniform flow of the one-dimensional model before it.
KINETIC_ENERGY_FACTOR = 1.25

#: Unit in which each dimensional field of this section is held (and written back).
FLOW_UNITS: dict[str, str] = {
    "speed": "m/s",
    "altitude": "m",
    "temperature_offset": "K",
    "density": "kg/m^3",
    "run_length": "m",
    "required_flow": "m^3/s",
    "exit_area": "m^2",
    "length": "m",
    "diameter": "m",
    "roughness": "m",
    "radius": "m",
    "inlet_diameter": "m",
    "outlet_diameter": "m",
    "face_area": "m^2",
    "pressure_drop": "Pa",
    "reference_flow": "m^3/s",
}


#: Named recovery models (``flow.recovery``): the capture estimate and the CFD map.
RECOVERY_NAMES = ("capture", "map")
_RECOVERY_EXPECTED = "expected 'capture', 'map', a number in (0, 1] or a .csv table path"


def _recovery_value(value: Any) -> Any:
    """``"capture"``, ``"map"``, a constant in (0, 1], or a CSV table path (validated here)."""
    if isinstance(value, bool):
        raise ValueError(_RECOVERY_EXPECTED)
    if isinstance(value, int | float):
        v = float(value)
        if not 0.0 < v <= 1.0:
            raise ValueError(f"a constant ram recovery must be in (0, 1], got {v:g}")
        return v
    if not isinstance(value, str):
        raise ValueError(_RECOVERY_EXPECTED)
    text = value.strip()
    if text in RECOVERY_NAMES:
        return text
    if not text.lower().endswith(".csv"):
        raise ValueError(_RECOVERY_EXPECTED.replace(".csv table path", "path ending in .csv"))
    path = find_recovery_table(text)
    read_recovery_table(path)  # raises ValueError naming the row
    return str(path)


class FlowSpec(Section):
    """Flight or driving condition and the duct system the inlet feeds.

    ``altitude`` is geometric (the US Standard Atmosphere 1976 of ``fluids`` converts it to
    geopotential), inside that model's range −610 m to 86 km. ``density``, when given,
    replaces the atmosphere's density (viscosity and speed of sound stay from the model).
    """

    speed: Annotated[MPerS, Field(gt=0, le=400, description="vehicle speed relative to the air")]
    altitude: Annotated[
        M,
        Field(
            default=0.0,
            ge=-610,
            le=86000,
            description="geometric altitude within the US Standard Atmosphere 1976 range",
        ),
    ]
    temperature_offset: Annotated[
        StrictFloat,
        si("temperature", "K"),
        Field(
            default=0.0, ge=-100, le=100, description="temperature above standard (a difference, K)"
        ),
    ]
    density: Annotated[
        Density | None,
        Field(default=None, gt=0, le=10, description="air density replacing the atmosphere's"),
    ]
    run_length: Annotated[
        M,
        Field(
            default=1.0,
            gt=0,
            le=100,
            description="wetted run from the body's leading edge to the ramp start",
        ),
    ]
    required_flow: Annotated[
        VolumeFlow | None,
        Field(
            default=None,
            gt=0,
            le=1000,
            description="volume flow needed; at most 1000 m^3/s, more than the largest throat "
            "(3 x 1 m) takes in at the fastest speed allowed",
        ),
    ]
    recovery: Annotated[
        StrictFloat | StrictStr,
        BeforeValidator(_recovery_value),
        Field(
            default="capture",
            description="ram recovery: 'capture' (boundary-layer estimate), 'map' (ductgen's "
            "CFD recovery map in ramp angle, W/D, delta/D and IVR), a constant, or an IVR "
            "table CSV",
        ),
    ]
    inlet_loss_factor: Annotated[
        StrictFloat,
        Field(
            default=INLET_LOSS_FACTOR,
            gt=0,
            le=1,
            description="lip and ramp loss factor on the capture estimate (0.95 is an "
            "assumption, no source)",
        ),
    ]
    exit_cp: Annotated[
        StrictFloat | None,
        Field(
            default=None,
            ge=-5,
            le=1,
            description="static-pressure coefficient where the air leaves; unset = 0 "
            "(ambient), which the report flags as defaulted",
        ),
    ]
    exit_direction: Annotated[
        Literal["internal", "rearward"],
        Field(
            default="internal",
            description="internal: air dumped in a wheel well, bay or cowling (ram drag m*V0); "
            "rearward: the exit discharges rearward into the free stream (net m*(V0 - Ve))",
        ),
    ]
    flow_angle_deg: Annotated[
        Deg,
        Field(
            default=0.0,
            ge=-45,
            le=45,
            description="angle between the local surface flow and the inlet centreline (yaw)",
        ),
    ]
    transition_loss: Annotated[
        Literal["effectiveness", "crane", "rennels", "idelchik"],
        Field(
            default="effectiveness",
            description="loss method of the internal transition: diffuser effectiveness on "
            "the ideal recovery (Blevins 7.4) or fluids' conical-diffuser method",
        ),
    ]
    transition_effectiveness: Annotated[
        StrictFloat,
        Field(
            default=TRANSITION_EFFECTIVENESS,
            gt=0,
            le=1,
            description="diffuser effectiveness of the internal transition (Blevins 7.4: "
            "0.6-0.8; default 0.6 for an offset rectangle-to-round duct)",
        ),
    ]
    inlet_cp: Annotated[
        float,
        Field(
            default=0.0,
            ge=-3,
            le=0.9,
            description="static-pressure coefficient of the surface where the inlet sits "
            "(0 = free-stream static, > 0 a stagnation region such as a bonnet's front, < 0 "
            "a suction region); it sets the local head the inlet recovers from",
        ),
    ]
    inlet_cp_gradient_per_m: Annotated[
        float | None,
        Field(
            default=None,
            ge=-20,
            le=20,
            description="dCp/dx of the surface along the run to the inlet (1/m; > 0 adverse: "
            "the pressure rises toward the inlet, < 0 favourable); Cp is taken linear, inlet_cp "
            "at the ramp start, and the boundary layer is then integrated by Head's method; "
            "unset = the flat-plate layer",
        ),
    ]
    kinetic_energy_factor: Annotated[
        float,
        Field(
            default=KINETIC_ENERGY_FACTOR,
            ge=1,
            le=3,
            description="kinetic-energy factor alpha of the air leaving the inlet's own duct "
            "(1 = uniform); default 1.25 from the project's CFD (1.20-1.32 measured at the "
            "transition exit), not a published value",
        ),
    ]
    momentum_factor: Annotated[
        float | None,
        Field(
            default=None,
            ge=1,
            le=2,
            description="momentum factor beta of that air; unset = 1 + (alpha - 1)/3 (the "
            "small-distortion relation, exact for laminar pipe flow)",
        ),
    ]
    exit: Annotated[
        Literal["hose", "plenum"] | None,
        Field(
            default=None,
            description="where the inlet's own duct delivers: 'hose' (the profile mixes out "
            "in the first element, loss (alpha - 2 beta + 1) q) or 'plenum' (alpha q lost); "
            "unset = plenum without loss elements, hose with them",
        ),
    ]
    external_drag_coefficient: Annotated[
        float | None,
        Field(
            default=None,
            ge=0,
            le=5,
            description="external drag increment of the opening (lip, ramp, spillage) on the "
            "free-stream dynamic pressure and the throat area W*D, from ESDU 86002 or a test; "
            "unset = not estimated (no sourced table is available to ductgen)",
        ),
    ]
    exit_area: Annotated[
        Area | None,
        Field(
            default=None,
            gt=0,
            le=10,
            description="area of the final exit (default: last element); at most 10 m^2, "
            "beyond any vehicle",
        ),
    ]
    losses: list[LossElement] = Field(default_factory=list)

    @model_validator(mode="after")
    def _momentum_vs_energy(self) -> FlowSpec:
        b = self.momentum_factor
        if b is not None and b * b > self.kinetic_energy_factor * (1.0 + 1e-12):
            raise ValueError(
                f"momentum_factor {b:g} exceeds sqrt(kinetic_energy_factor) = "
                f"{self.kinetic_energy_factor**0.5:.4g}: no velocity profile has "
                "beta^2 > alpha (Cauchy-Schwarz)"
            )
        return self

    @property
    def exit_kind(self) -> str:
        """``exit``, or its default: ``"plenum"`` without loss elements, else ``"hose"``."""
        if self.exit is not None:
            return self.exit
        return "hose" if self.losses else "plenum"

    @property
    def momentum_factor_value(self) -> float:
        """β used: ``momentum_factor``, or 1 + (α − 1)/3 when unset."""
        if self.momentum_factor is not None:
            return self.momentum_factor
        return 1.0 + (self.kinetic_energy_factor - 1.0) / 3.0

    @property
    def exit_cp_value(self) -> float:
        """The exit static-pressure coefficient used: ``exit_cp``, or 0 when unset."""
        return 0.0 if self.exit_cp is None else self.exit_cp

    @property
    def recovery_kind(self) -> str:
        """``"capture"``, ``"map"``, ``"constant"`` or ``"table"``."""
        if isinstance(self.recovery, float):
            return "constant"
        return self.recovery if self.recovery in RECOVERY_NAMES else "table"


def _with_unit(key: str, value: Any) -> Any:
    unit = FLOW_UNITS.get(key)
    if unit is None or not isinstance(value, float):
        return value
    return f"{value:.12g} {unit}"


def flow_data(flow: FlowSpec) -> dict[str, Any]:
    """The section as plain spec data with units written out (round-trips through
    :class:`FlowSpec`); defaults and unset options are left out."""
    out: dict[str, Any] = {
        k: _with_unit(k, v)
        for k, v in flow.model_dump(exclude_defaults=True).items()
        if v is not None and k != "losses"
    }
    out["losses"] = [
        {
            "kind": e.kind,
            **{
                k: _with_unit(k, v)
                for k, v in e.model_dump(exclude_defaults=True).items()
                if v is not None and k != "kind"
            },
        }
        for e in flow.losses
    ]
    if not out["losses"]:
        del out["losses"]
    if isinstance(flow.recovery, str) and flow.recovery not in RECOVERY_NAMES:
        out["recovery"] = str(Path(flow.recovery))
    return out
