"""The ``[template]`` section: the 1:1 marking template (DXF and tiled PDF)."""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field

from ductgen.spec.types import Mm, Section

__all__ = ["TemplateSpec"]


class TemplateSpec(Section):
    units: Literal["mm", "in"] = "mm"
    tolerance: Annotated[Mm, Field(default=0.02, gt=0, le=1, description="arc-fit tolerance of the outline")]
    paper: Literal["A4", "Letter"] = "A4"
