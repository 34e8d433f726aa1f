"""Loss elements of the ``[flow]`` section: what the duct system behind the throat is made
of, each keyed by ``kind`` (``hose``, ``bend``, ``cooler``, ``diffuser``), SI units inside.

A new element is a model here with its ``kind`` in :data:`LossElement`, its element class in
:mod:`ductgen.flow.losses` and its construction in :mod:`ductgen.flow.report`.
"""

from __future__ import annotations

from typing import Annotated, Literal, get_args

from pydantic import Field, StrictFloat, StrictStr, model_validator

from ductgen.spec.types import Deg, M, Section, si

__all__ = [
    "HOSE_ROUGHNESS_M",
    "LOSS_KINDS",
    "Area",
    "BendLoss",
    "CoolerLoss",
    "Density",
    "DiffuserLoss",
    "HoseLoss",
    "Label",
    "LossElement",
    "Pressure",
    "VolumeFlow",
]

#: Default roughness of a flexible / corrugated hose (m): 0.5 mm, inside the 0.09–0.9 mm
#: range quoted for such hoses (common practice, no source; measure or pass your own).
HOSE_ROUGHNESS_M = 0.5e-3

Area = Annotated[float, si("area", "m^2")]
VolumeFlow = Annotated[float, si("volume_flow", "m^3/s")]
Pressure = Annotated[float, si("pressure", "Pa")]
#: Air density in kg/m³; needs a unit.
Density = Annotated[float, si("density", "kg/m^3")]
Label = Annotated[
    StrictStr | None,
    Field(default=None, min_length=1, max_length=60, description="name in the budget"),
]


class HoseLoss(Section):
    """A straight run of hose: Darcy friction ``f·L/D`` at the hose velocity."""

    kind: Literal["hose"] = "hose"
    length: Annotated[
        M, Field(gt=0, le=100, description="hose length; at most 100 m, beyond any vehicle")
    ]
    diameter: Annotated[M, Field(gt=0, le=2, description="hose inner diameter")]
    roughness: Annotated[
        M,
        Field(
            default=HOSE_ROUGHNESS_M,
            ge=0,
            le=0.01,
            description="wall roughness; default 0.5 mm for corrugated hose (common practice)",
        ),
    ]
    label: Label


class BendLoss(Section):
    """A smooth bend of centreline ``radius``; K from ``fluids.fittings.bend_rounded``."""

    kind: Literal["bend"] = "bend"
    angle_deg: Annotated[Deg, Field(gt=0, le=180, description="bend angle, deg")]
    radius: Annotated[M, Field(gt=0, description="centreline bend radius")]
    diameter: Annotated[M, Field(gt=0, le=2, description="hose inner diameter")]
    roughness: Annotated[
        M, Field(default=HOSE_ROUGHNESS_M, ge=0, le=0.01, description="wall roughness")
    ]
    label: Label

    @model_validator(mode="after")
    def _radius_vs_diameter(self) -> BendLoss:
        if self.radius < 0.5 * self.diameter:
            raise ValueError(
                f"bend radius {self.radius:g} m is below half the diameter "
                f"({0.5 * self.diameter:g} m): the inner wall would fold"
            )
        return self


class CoolerLoss(Section):
    """A heat exchanger (or filter, grille): either a loss coefficient ``k`` on its
    ``face_area``, or a measured ``pressure_drop`` at ``reference_flow`` (scaled with the
    square of the flow; same air density assumed)."""

    kind: Literal["cooler"] = "cooler"
    k: Annotated[
        StrictFloat | None,
        Field(default=None, gt=0, le=1e4, description="loss coefficient on the face velocity"),
    ]
    face_area: Annotated[Area | None, Field(default=None, gt=0, description="core face area")]
    pressure_drop: Annotated[
        Pressure | None,
        Field(default=None, gt=0, description="measured pressure drop at reference_flow"),
    ]
    reference_flow: Annotated[
        VolumeFlow | None,
        Field(default=None, gt=0, description="volume flow of the measured pressure drop"),
    ]
    label: Label

    @model_validator(mode="after")
    def _one_model(self) -> CoolerLoss:
        by_k = self.k is not None
        by_dp = self.pressure_drop is not None or self.reference_flow is not None
        if by_k == by_dp:
            raise ValueError(
                "give either k with face_area, or pressure_drop with reference_flow (not both)"
            )
        if by_k and self.face_area is None:
            raise ValueError("a cooler given by k needs face_area (k applies to the face velocity)")
        if by_dp and (self.pressure_drop is None or self.reference_flow is None):
            raise ValueError("a measured cooler needs both pressure_drop and reference_flow")
        return self


class DiffuserLoss(Section):
    """A conical diffuser (or contraction) between two diameters, given its included
    ``angle_deg`` or its ``length``; K on the inlet velocity from ``fluids``."""

    kind: Literal["diffuser"] = "diffuser"
    inlet_diameter: Annotated[M, Field(gt=0, le=2, description="small-end inner diameter")]
    outlet_diameter: Annotated[M, Field(gt=0, le=2, description="outlet inner diameter")]
    angle_deg: Annotated[
        Deg | None, Field(default=None, gt=0, le=180, description="included angle, deg")
    ]
    length: Annotated[
        M | None,
        Field(default=None, gt=0, le=100, description="diffuser length; at most 100 m"),
    ]
    label: Label

    @model_validator(mode="after")
    def _angle_or_length(self) -> DiffuserLoss:
        if (self.angle_deg is None) == (self.length is None):
            raise ValueError("give the diffuser's angle_deg or its length, exactly one")
        return self


LossElement = Annotated[
    HoseLoss | BendLoss | CoolerLoss | DiffuserLoss, Field(discriminator="kind")
]

#: Loss ``kind`` → its spec model, read off :data:`LossElement` (the one list of kinds; the
#: flow model's :data:`ductgen.flow.system.ELEMENT_OF` must cover it).
LOSS_KINDS: dict[str, type[Section]] = {
    m.model_fields["kind"].default: m for m in get_args(get_args(LossElement)[0])
}
