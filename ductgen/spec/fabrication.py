"""The ``[insert]`` and ``[plug]`` sections: printable insert and composite layup plug."""

from __future__ import annotations

from typing import Annotated

from pydantic import Field

from ductgen.spec.types import Deg, Mm, Section

__all__ = ["HolesSpec", "InsertSpec", "PlugSpec"]


class HolesSpec(Section):
    count: Annotated[int, Field(default=8, ge=0, le=200, description="fastener holes in the flange")]
    diameter: Annotated[Mm, Field(default=4.2, gt=0, description="fastener hole diameter")]


class InsertSpec(Section):
    wall: Annotated[Mm, Field(default=2.4, gt=0, description="insert wall thickness")]
    flange_width: Annotated[Mm, Field(default=18.0, gt=0, description="flange width around the opening")]
    holes: HolesSpec = Field(default_factory=HolesSpec)


class PlugSpec(Section):
    draft_deg: Annotated[Deg, Field(default=3.0, ge=0, lt=45, description="draft angle of the plug walls")]
    trim_margin: Annotated[Mm, Field(default=25.0, ge=0, description="base plate margin beyond the opening")]
