"""CAD encoders: B-rep → STEP bytes, triangle mesh → binary STL bytes.

Encoders return bytes; :mod:`ductgen.export.atomic` writes them. The file unit is stated
from one lookup table (:data:`STEP_UNITS`). The STEP encoder needs the CAD kernel and so
runs in the kernel worker process.
"""

from __future__ import annotations

import struct
import tempfile
from pathlib import Path
from typing import Any

import numpy as np

__all__ = ["STEP_UNITS", "read_step", "step_bytes", "stl_bytes"]

#: Internal unit name → STEP ``write.step.unit`` value.
STEP_UNITS = {"mm": "MM", "in": "INCH"}


def step_bytes(shape: Any, name: str = "ductgen", unit: str = "mm") -> bytes:
    """Encode a cadquery shape as a STEP AP214 file in ``unit`` (lengths stay in mm inside)."""
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.Interface import Interface_Static
    from OCP.STEPControl import STEPControl_AsIs, STEPControl_Writer

    Interface_Static.SetCVal_s("write.step.schema", "AP214IS")
    Interface_Static.SetCVal_s("write.step.unit", STEP_UNITS[unit])
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
    """Encode a triangle mesh (mm) as binary STL with outward facet normals."""
    v = np.asarray(vertices, dtype=np.float64)[np.asarray(faces)]
    n = np.cross(v[:, 1] - v[:, 0], v[:, 2] - v[:, 0])
    lens = np.linalg.norm(n, axis=1)
    n = n / np.where(lens > 0, lens, 1.0)[:, None]
    rec = np.zeros(len(v), dtype=[("n", "<f4", 3), ("v", "<f4", (3, 3)), ("attr", "<u2")])
    rec["n"], rec["v"] = n, v
    header = f"ductgen {name} (mm)".encode()[:80].ljust(80, b" ")
    return header + struct.pack("<I", len(v)) + rec.tobytes()
