"""The ``[insert]`` and ``[plug]`` sections: printable insert and composite layup plug.

Lengths in mm, angles in degrees (bare numbers), read with pint like every section.
Cross-field rules that need the geometry (a wall thicker than half the throat depth, a
flange too narrow for its holes, a spigot the transition cannot carry) are checked in
:func:`ductgen.geometry.fabrication.validate_fabrication`.
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field, StrictBool, StrictFloat, StrictInt

from ductgen.spec.types import Deg, Mm, Section, every_default

__all__ = ["MATERIALS", "HolesSpec", "InsertSpec", "PlugSpec"]

#: Print materials with a row in ``ductgen/data/materials.csv``.
MATERIALS = ("PLA", "PETG", "ASA", "ABS", "PA-CF", "PC", "PEKK")

Material = Literal["PLA", "PETG", "ASA", "ABS", "PA-CF", "PC", "PEKK"]


class HolesSpec(Section):
    """Fastener holes, spaced evenly along the flange.

    ``edge_distance`` is the distance (mm) from the flange's outer edge to the hole
    centres; by default the holes sit on the flange centre line.
    """

    count: Annotated[
        StrictInt,
        Field(
            default=8,
            ge=0,
            le=200,
            description="fastener holes in the flange; 0 = none (a bonded flange)",
        ),
    ]
    diameter: Annotated[Mm, Field(default=4.2, gt=0, le=30, description="fastener hole diameter")]
    edge_distance: Annotated[
        Mm | None,
        Field(
            default=None,
            gt=0,
            le=200,
            description="flange outer edge to hole centres [default: half the flange width]; "
            "at most 200 mm, the widest flange",
        ),
    ]


class InsertSpec(Section):
    """The printed insert: cavity walls of ``wall`` thickness, a flange with holes, a spigot.

    ``mount = "behind"``: the flange is bonded/bolted under the skin and the walls rise
    through the skin thickness, so the ramp edge meets the outer surface flush.
    ``mount = "surface"``: a thin bezel of ``bezel_thickness`` sits on the outer surface,
    its outer edge feathered over ``feather_width``.
    """

    wall: Annotated[Mm, Field(default=2.4, gt=0, le=30, description="insert wall thickness")]
    flange_width: Annotated[
        Mm, Field(default=18.0, gt=0, le=200, description="flange width around the opening")
    ]
    flange_thickness: Annotated[
        Mm | None,
        Field(default=None, gt=0, le=30, description="flange thickness [default: the wall]"),
    ]
    mount: Annotated[
        Literal["behind", "surface"],
        Field(
            default="behind",
            description="behind: flange under the skin; surface: bezel on the skin",
        ),
    ]
    bezel_thickness: Annotated[
        Mm, Field(default=1.6, gt=0, le=10, description="surface mount: bezel thickness")
    ]
    feather_width: Annotated[
        Mm,
        Field(
            default=6.0,
            ge=0,
            le=100,
            description="surface mount: width of the bezel's feathered edge",
        ),
    ]
    holes: HolesSpec = Field(default_factory=every_default(HolesSpec))
    bead_height: Annotated[
        Mm, Field(default=1.2, ge=0, le=10, description="hose retention bead height on the spigot")
    ]
    clamp_land: Annotated[
        Mm,
        Field(
            default=15.0,
            ge=15,
            le=200,
            description="plain spigot length behind the bead for a clamp",
        ),
    ]
    material: Annotated[
        Material, Field(default="PETG", description="print material (density, heat limit)")
    ]
    near_heat: Annotated[
        StrictBool,
        Field(default=False, description="the insert sits near brakes, exhausts or an engine"),
    ]
    service_temperature: Annotated[
        StrictFloat | None,
        Field(default=None, ge=-60, le=400, description="highest expected part temperature (°C)"),
    ]

    @property
    def flange_thickness_mm(self) -> float:
        """Flange (or bezel backing) thickness in mm: the given value or the wall."""
        return self.flange_thickness if self.flange_thickness is not None else self.wall


class PlugSpec(Section):
    """The male layup plug: the cavity standing on a base plate (plate top = skin plane)."""

    draft_deg: Annotated[
        Deg, Field(default=3.0, ge=0, lt=45, description="draft angle of the plug walls")
    ]
    trim_margin: Annotated[
        Mm, Field(default=25.0, ge=0, le=500, description="base plate margin beyond the opening")
    ]
    base_thickness: Annotated[
        Mm, Field(default=10.0, gt=0, le=200, description="base plate thickness")
    ]
