"""Airflow estimate: air, boundary layer, ram recovery, losses, operating point.

Pure functions in SI units; no CAD kernel. The report section is made by
:func:`ductgen.flow.report.flow_section` from a
:class:`~ductgen.flow.inputs.DuctShape` (plain numbers; this package never imports the
geometry); ``ductgen size`` lives above both, in :mod:`ductgen.sizing`.
"""

from ductgen.flow.atmosphere import Air, standard_air
from ductgen.flow.boundary_layer import BoundaryLayer, turbulent_flat_plate
from ductgen.flow.operating_point import OperatingPoint, System, solve
from ductgen.flow.recovery import CaptureRecovery, ConstantRecovery, TableRecovery

__all__ = [
    "Air",
    "BoundaryLayer",
    "CaptureRecovery",
    "ConstantRecovery",
    "OperatingPoint",
    "System",
    "TableRecovery",
    "solve",
    "standard_air",
    "turbulent_flat_plate",
]
