"""The spec: one frozen, strict pydantic model for a whole inlet.

Lengths are floats in mm, angles in degrees, flow quantities SI, converted once at load
(:mod:`ductgen.spec.types`). Unknown keys are errors, so a typo never falls back silently
to a default. Cross-field rules that need geometry (an entry arc too large for the depth,
a lip thicker than the throat) are checked in :mod:`ductgen.geometry.inlet`, which raises
:class:`~ductgen.errors.SpecError` naming the key.
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field, StrictFloat, StrictStr, field_validator, model_validator

from ductgen.spec.fabrication import InsertSpec, PlugSpec
from ductgen.spec.flow import FlowSpec
from ductgen.spec.printing import PrintSpec
from ductgen.spec.template import TemplateSpec
from ductgen.spec.types import MAX_LENGTH_MM, Deg, Mm, Section, every_default

#: A direction component: any finite number within ±1e6 (directions are normalised).
Vec = Annotated[float, Field(ge=-1e6, le=1e6, allow_inf_nan=False)]

__all__ = [
    "SKIN_SHAPES",
    "CutterSpec",
    "CylinderSkinSpec",
    "DoublySkinSpec",
    "FlatSkinSpec",
    "LipSpec",
    "NoOutlet",
    "OutletSpec",
    "PanelSkinSpec",
    "PlanformSpec",
    "RampSpec",
    "RectOutlet",
    "RoundOutlet",
    "SkinSpec",
    "Spec",
    "ThroatSpec",
]


class ThroatSpec(Section):
    """The throat: the open rectangle at the lip station, ``width`` × ``depth`` (mm)."""

    width: Annotated[
        Mm,
        Field(
            ge=5,
            le=3000,
            description="throat width W at the lip station; at least 5 mm so the edge rounds, "
            "lip and printed walls fit (common practice, no source)",
        ),
    ]
    depth: Annotated[
        Mm,
        Field(
            ge=2,
            le=1000,
            description="throat depth D, floor to lip underside; at least 2 mm so the edge "
            "rounds and lip nose fit (common practice, no source)",
        ),
    ]


#: Ramp angle used when a spec gives neither ``ramp.angle_deg`` nor ``ramp.length`` (deg):
#: the top of the 5°–7° range NACA RM A7I30 recommends (shortest ramp in that range).
DEFAULT_RAMP_ANGLE_DEG = 7.0


class RampSpec(Section):
    """The ramp floor: a straight section at ``angle_deg`` joined to the skin by a convex
    tangent arc of ``entry_radius`` (0 = sharp). Give the angle or the ``length`` L, not
    both; with neither, :data:`DEFAULT_RAMP_ANGLE_DEG` is used."""

    angle_deg: Annotated[
        Deg | None,
        Field(default=None, gt=0, lt=30, description="ramp angle of the straight floor section"),
    ]
    length: Annotated[
        Mm | None,
        Field(
            default=None,
            gt=0,
            le=MAX_LENGTH_MM,
            description="ramp length L, ramp start to lip station; at most 20 m, beyond any "
            "vehicle panel",
        ),
    ]
    entry_radius: Annotated[
        Mm,
        Field(
            default=0.0,
            ge=0,
            le=MAX_LENGTH_MM,
            description="radius of the tangent arc at the ramp start; at most 20 m, beyond any "
            "vehicle panel",
        ),
    ]

    @model_validator(mode="after")
    def _angle_or_length(self) -> RampSpec:
        if self.angle_deg is not None and self.length is not None:
            raise ValueError(
                "give ramp.angle_deg or ramp.length, not both: the other one follows from the depth"
            )
        return self

    @property
    def angle_given(self) -> bool:
        return self.length is None


class PlanformSpec(Section):
    """The wall curve: a profile name from ``ductgen profiles`` or a path to a CSV table of
    ``x/L, 2y/W`` (relative paths are from the spec file's folder)."""

    profile: Annotated[
        StrictStr,
        Field(
            default="naca-standard", min_length=1, description="wall-curve table name or CSV path"
        ),
    ]
    edge_radius: Annotated[
        Mm, Field(default=0.0, ge=0, le=50, description="round where the walls meet the skin")
    ]


class LipSpec(Section):
    """The lip spanning the throat at x = L, with an elliptical nose of
    ``nose_ratio`` = major/minor semi-axis (major along the flow)."""

    style: Annotated[
        Literal["flush", "raised"],
        Field(default="flush", description="flush: lip top in the skin; raised: lip stands proud"),
    ]
    thickness: Annotated[Mm, Field(default=4.0, gt=0, le=100, description="lip thickness")]
    nose_ratio: Annotated[
        StrictFloat,
        Field(
            default=2.0,
            ge=1.1,
            le=8,
            description="elliptical nose major/minor ratio; from 1.1 (at 1.0, a circle, the "
            "kernel's nose cut fails: found by the hardening property test)",
        ),
    ]
    fairing_length: Annotated[
        Mm | None,
        Field(
            default=None,
            gt=0,
            le=2000,
            description="raised lip: length over which it fairs into the skin; at most 2 m "
            "(20 times the thickest lip)",
        ),
    ]


#: The throat-to-outlet transition's length, the same for every outlet kind.
_TRANSITION_LENGTH = Field(
    gt=0,
    le=10_000,
    description="length of the throat-to-outlet transition; at most 10 m (a longer run is a "
    "hose: a loss in [flow])",
)


class RoundOutlet(Section):
    """A round outlet: the duct ends in a hose spigot of inner diameter ``diameter``."""

    kind: Literal["round"] = "round"
    diameter: Annotated[Mm, Field(gt=0, le=1000, description="hose inner diameter")]
    transition_length: Annotated[Mm, _TRANSITION_LENGTH]
    spigot_length: Annotated[
        Mm,
        Field(
            default=40.0,
            gt=0,
            le=1000,
            description="hose spigot length; at most 1 m (a longer run is a hose: a loss in "
            "[flow])",
        ),
    ]
    fit_clearance: Annotated[
        Mm, Field(default=0.2, ge=0, le=5, description="spigot OD below the hose ID")
    ]


class RectOutlet(Section):
    """A rectangular outlet face ``width`` × ``height``."""

    kind: Literal["rect"] = "rect"
    width: Annotated[Mm, Field(gt=0, le=3000, description="outlet width")]
    height: Annotated[Mm, Field(gt=0, le=1000, description="outlet height")]
    transition_length: Annotated[Mm, _TRANSITION_LENGTH]
    spigot_length: Annotated[
        Mm,
        Field(
            default=30.0,
            gt=0,
            le=1000,
            description="outlet collar length; at most 1 m (a longer run is a duct: a loss in "
            "[flow])",
        ),
    ]


class NoOutlet(Section):
    """No internal duct: the cutter ends at the throat."""

    kind: Literal["none"] = "none"


OutletSpec = Annotated[RoundOutlet | RectOutlet | NoOutlet, Field(discriminator="kind")]


class _SkinBase(Section):
    """What every skin shape has: the panel's thickness."""

    thickness: Annotated[Mm, Field(default=2.0, gt=0, le=100, description="skin thickness")]


_SIDE = Field(default="convex", description="convex (bulges outward) or concave")


class FlatSkinSpec(_SkinBase):
    """A flat panel (the default when ``[skin]`` gives no ``shape``)."""

    shape: Literal["flat"] = "flat"


class CylinderSkinSpec(_SkinBase):
    """A cylindrical panel of ``radius``; ``axis = "spanwise"``: it curves along the flow,
    like a bonnet's leading edge; ``"streamwise"``: it curves across the flow, like a
    fuselage side or a round cowling."""

    shape: Literal["cylinder"] = "cylinder"
    radius: Annotated[Mm, Field(gt=0, le=1e7, description="cylinder: radius of the outer surface")]
    axis: Annotated[
        Literal["spanwise", "streamwise"],
        Field(
            description="cylinder: axis spanwise (curves along the flow) or streamwise "
            "(curves across the flow)",
        ),
    ]
    side: Annotated[Literal["convex", "concave"], _SIDE]


class DoublySkinSpec(_SkinBase):
    """A doubly curved panel: ``radius_streamwise`` along the flow and ``radius_spanwise``
    across it, both on the same ``side``."""

    shape: Literal["doubly"] = "doubly"
    radius_streamwise: Annotated[
        Mm, Field(gt=0, le=1e7, description="doubly: radius along the flow")
    ]
    radius_spanwise: Annotated[
        Mm, Field(gt=0, le=1e7, description="doubly: radius across the flow")
    ]
    side: Annotated[Literal["convex", "concave"], _SIDE]


class PanelSkinSpec(_SkinBase):
    """The user's own panel from ``file`` (STEP, or an STL/OBJ/PLY scan with ``units``), the
    inlet's ramp start ``at`` a point on its outer surface, the ramp pointing along
    ``flow_direction`` (``outward`` when the file cannot tell outside from inside)."""

    shape: Literal["panel"] = "panel"
    file: Annotated[
        StrictStr,
        Field(
            min_length=1,
            max_length=4096,
            description="panel: the panel's STEP file or STL/OBJ/PLY scan (relative paths are "
            "from the spec file's folder)",
        ),
    ]
    units: Annotated[
        Literal["mm", "cm", "m", "in"] | None,
        Field(default=None, description="panel: the units of a mesh scan's numbers"),
    ]
    at: Annotated[
        tuple[Mm, Mm, Mm],
        Field(
            description="panel: the point on the outer surface where the ramp starts, on the "
            "centreline, in the panel file's coordinates",
        ),
    ]
    flow_direction: Annotated[
        tuple[Vec, Vec, Vec],
        Field(description="panel: the local flow direction (any length)"),
    ]
    outward: Annotated[
        tuple[Vec, Vec, Vec] | None,
        Field(
            default=None,
            description="panel: a vector pointing out of the body, when the file's face "
            "orientation cannot tell outside from inside",
        ),
    ]

    @model_validator(mode="after")
    def _vectors(self) -> PanelSkinSpec:
        for key in ("flow_direction", "outward"):
            vec = getattr(self, key)
            if vec is not None and sum(c * c for c in vec) < 1e-12:
                raise ValueError(f"skin.{key} must not be the zero vector")
        return self


#: The panel the inlet is let into (outer surface through the ramp start), one model per
#: ``skin.shape``, each with only its own keys. The smallest radius that lets the inlet wrap
#: is checked with the geometry (:mod:`ductgen.design`).
SkinSpec = Annotated[
    FlatSkinSpec | CylinderSkinSpec | DoublySkinSpec | PanelSkinSpec,
    Field(discriminator="shape"),
]

#: Every ``skin.shape``, each with its model (code that works per shape is tested total
#: over this table).
SKIN_SHAPES: dict[str, type[Section]] = {
    "flat": FlatSkinSpec,
    "cylinder": CylinderSkinSpec,
    "doubly": DoublySkinSpec,
    "panel": PanelSkinSpec,
}


class CutterSpec(Section):
    """The cutter solid for the user's own CAD."""

    overcut: Annotated[
        Mm,
        Field(
            default=1.0,
            ge=0.1,
            le=50,
            description="height the cutter rises above the outer skin over the opening, so a "
            "subtraction in CAD meets no coplanar faces",
        ),
    ]


class Spec(Section):
    """A whole inlet: geometry, fabrication outputs and (optionally) the flow condition."""

    name: Annotated[
        StrictStr,
        Field(
            default="inlet",
            pattern=r"^[A-Za-z0-9][A-Za-z0-9._-]{0,63}$",
            description="file-name prefix: letters, digits, '.', '_', '-'",
        ),
    ]
    throat: ThroatSpec
    ramp: RampSpec = Field(default_factory=every_default(RampSpec))
    planform: PlanformSpec = Field(default_factory=every_default(PlanformSpec))
    lip: LipSpec = Field(default_factory=every_default(LipSpec))
    outlet: OutletSpec = Field(default_factory=NoOutlet)
    skin: SkinSpec = Field(default_factory=every_default(FlatSkinSpec))
    cutter: CutterSpec = Field(default_factory=every_default(CutterSpec))
    insert: InsertSpec = Field(default_factory=every_default(InsertSpec))
    plug: PlugSpec = Field(default_factory=every_default(PlugSpec))
    template: TemplateSpec = Field(default_factory=every_default(TemplateSpec))
    print: PrintSpec = Field(default_factory=every_default(PrintSpec))
    flow: FlowSpec | None = None

    @field_validator("skin", mode="before")
    @classmethod
    def _flat_by_default(cls, value: object) -> object:
        """A ``[skin]`` table without ``shape`` is a flat skin (as it always was)."""
        if isinstance(value, dict) and "shape" not in value:
            return {"shape": "flat", **value}
        return value
