"""CAD file encoders: B-rep → STEP bytes, triangle mesh → binary STL bytes; STEP reading.

Encoders return bytes; :mod:`ductgen.atomic` writes them. The STEP unit comes from
the one unit table, :data:`ductgen.units.FILE_UNITS`. STEP needs the CAD kernel and so
runs in the kernel worker process.
"""

from __future__ import annotations

import tempfile
from pathlib import Path
from typing import Any

import numpy as np

from ductgen.units import FILE_UNITS

__all__ = ["read_step", "step_bytes", "stl_bytes"]


def step_bytes(shape: Any, name: str = "ductgen", unit: str = "mm") -> bytes:
    """Encode a cadquery shape as a STEP AP214 file in ``unit`` (lengths stay in mm inside)."""
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.Interface import Interface_Static
    from OCP.STEPControl import STEPControl_AsIs, STEPControl_Writer

    Interface_Static.SetCVal_s("write.step.schema", "AP214IS")
    Interface_Static.SetCVal_s("write.step.unit", FILE_UNITS[unit].step)
    Interface_Static.SetCVal_s("write.step.product.name", name)
    writer = STEPControl_Writer()
    writer.Transfer(shape.wrapped, STEPControl_AsIs)
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "out.step"
        if writer.Write(str(path)) != IFSelect_RetDone:
            from ductgen.errors import ExportError

            raise ExportError("the STEP writer failed")
        return path.read_bytes()


def read_step(path: str | Path) -> Any:
    """Read a STEP file back into a cadquery shape (lengths in mm)."""
    import cadquery as cq

    return cq.importers.importStep(str(path)).val()


def stl_bytes(vertices: np.ndarray, faces: np.ndarray, name: str = "ductgen") -> bytes:
    """Encode a triangle mesh (mm) as binary STL with outward facet normals (trimesh's
    exporter)."""
    import trimesh

    mesh = trimesh.Trimesh(
        np.asarray(vertices, dtype=np.float64), np.asarray(faces), process=False, validate=False
    )
    del name  # binary STL headers carry no reliable metadata; the file name says it
    return bytes(trimesh.exchange.stl.export_stl(mesh))
