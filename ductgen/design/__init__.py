"""The inlet design: built once from a validated spec, read by every output."""

from ductgen.design.build import (
    Design,
    build_design,
    duct_shape,
    fabrication_from_spec,
    geometry_from_spec,
)

__all__ = [
    "Design",
    "build_design",
    "duct_shape",
    "fabrication_from_spec",
    "geometry_from_spec",
]
