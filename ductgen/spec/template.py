"""The ``[template]`` section: the 1:1 marking template (DXF and tiled PDF).

Shop vocabulary: the *kerf* is the width of material a cutter removes; the opening is a
hole, so its cut line moves inward by kerf/2 and outer trim lines move outward by kerf/2.
``scale_x`` / ``scale_y`` correct a printer measured a few percent off (print the
calibration page, measure the 100 mm square: ``scale_x = 100 / measured width``).
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import Field, StrictFloat

from ductgen.spec.types import Mm, Section

__all__ = ["TemplateSpec", "with_template_options"]


class TemplateSpec(Section):
    """Marking-template options.

    Attributes:
        units: drawing unit of the DXF (``$INSUNITS`` 4 = mm, 1 = inch).
        tolerance: largest distance of the fitted lines and arcs from the true curve (mm).
        paper: PDF paper size, ``"A4"`` or ``"Letter"``.
        kerf: cutter kerf (mm); 0 = cut on the line.
        overlap: overlap of neighbouring PDF tiles (mm).
        scale_x, scale_y: printer correction factors applied to the PDF (1 = none).
    """

    units: Literal["mm", "in"] = "mm"
    tolerance: Annotated[
        Mm, Field(default=0.02, gt=0, le=1, description="arc-fit tolerance of the outline")
    ]
    paper: Literal["A4", "Letter"] = "A4"
    kerf: Annotated[
        Mm,
        Field(default=0.0, ge=0, le=10, description="cutter kerf: the opening shrinks by kerf/2"),
    ]
    overlap: Annotated[
        Mm, Field(default=15.0, ge=5, le=40, description="overlap of neighbouring PDF tiles")
    ]
    scale_x: Annotated[
        StrictFloat,
        Field(default=1.0, ge=0.9, le=1.1, description="printer correction along the page width"),
    ]
    scale_y: Annotated[
        StrictFloat,
        Field(default=1.0, ge=0.9, le=1.1, description="printer correction along the page height"),
    ]


def with_template_options(spec: Any, **values: Any) -> Any:
    """``spec`` with command-line template options (``kerf``, ``paper``, ...) applied to its
    ``[template]`` section and validated like the file's own values; None means not given.

    Raises:
        SpecError: an option's value is outside its range (the key is ``--OPTION``).
    """
    given = {k: v for k, v in values.items() if v is not None}
    if not given:
        return spec
    from pydantic import ValidationError

    from ductgen.errors import SpecError

    try:
        tpl = type(spec.template).model_validate({**spec.template.model_dump(), **given})
    except ValidationError as err:
        e = err.errors(include_url=False)[0]
        key = f"--{e['loc'][0]}" if e["loc"] else "--template"
        raise SpecError(key, e.get("input"), "", str(e["msg"])) from None
    return spec.model_copy(update={"template": tpl})
