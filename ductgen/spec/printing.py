"""``[print]``: the user's printer, so ductgen can say whether each part fits its bed.

``bed = [x, y, z]`` is the build volume in mm (units allowed: ``["8.6 in", "8.6 in",
"9.8 in"]``). The default, 220 × 220 × 250 mm, is the build volume of the most common class
of consumer FDM printers (bed-slinger printers with a 220 mm square bed; smaller 180 mm and
larger 250-300 mm beds are the other usual sizes): a part that fits it fits most hobby
printers, and one that does not gets a warning and a split proposal. Values recalled from
printer data sheets, no single source.
"""

from __future__ import annotations

from typing import Annotated

from pydantic import Field, field_validator

from ductgen.spec.types import Mm, Section

__all__ = ["DEFAULT_BED_MM", "PrintSpec"]

#: Default build volume (x, y, z) in mm; see the module docstring for why.
DEFAULT_BED_MM: tuple[float, float, float] = (220.0, 220.0, 250.0)


class PrintSpec(Section):
    """The printer: build volume ``bed`` = (x, y, z) in mm, each 10-2000 mm."""

    bed: Annotated[
        tuple[Mm, Mm, Mm],
        Field(default=DEFAULT_BED_MM, description="printer build volume x, y, z (mm)"),
    ]

    @field_validator("bed")
    @classmethod
    def _positive(cls, v: tuple[float, float, float]) -> tuple[float, float, float]:
        if any(not 10.0 <= s <= 2000.0 for s in v):
            raise ValueError("each bed size must be 10-2000 mm (x, y, z of the build volume)")
        return v
