"""CAD encoders: B-rep → STEP bytes, triangle mesh → binary STL bytes.

Encoders return bytes; :mod:`ductgen.export.atomic` writes them. The file unit is stated
from one lookup table (:data:`STEP_UNITS`). The STEP encoder needs the CAD kernel and so
runs in the kernel worker process.

Healing before STEP export: :func:`ductgen.export.heal.heal`; the file's uncertainty is
the greatest edge tolerance of the healed shape (``write.precision.mode`` 2 with that value).

Reproducible: the STEP header's ``FILE_NAME`` time stamp is the build date
(:func:`ductgen.export.stamp.build_datetime`), and STL normals are computed from the
float32 vertices the file stores, so one build's bytes equal the next one's.
"""

from __future__ import annotations

import re
import struct
import tempfile
from pathlib import Path
from typing import Any

import numpy as np

from ductgen.export.heal import heal
from ductgen.export.stamp import build_datetime

__all__ = ["STEP_UNITS", "read_step", "step_bytes", "stl_bytes"]

#: Internal unit name → STEP ``write.step.unit`` value.
STEP_UNITS = {"mm": "MM", "in": "INCH"}


_FILE_NAME = re.compile(rb"FILE_NAME\('([^']*)','[^']*'")


def step_bytes(shape: Any, name: str = "ductgen", unit: str = "mm") -> bytes:
    """Encode a cadquery shape as a STEP AP214 file in ``unit`` (lengths stay in mm inside),
    healed (:func:`heal`), time-stamped with the build date."""
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.Interface import Interface_Static
    from OCP.STEPControl import STEPControl_AsIs, STEPControl_Writer

    Interface_Static.SetCVal_s("write.step.schema", "AP214IS")
    Interface_Static.SetCVal_s("write.step.unit", STEP_UNITS[unit])
    Interface_Static.SetCVal_s("write.step.product.name", name)
    from OCP.ShapeAnalysis import ShapeAnalysis_ShapeTolerance

    healed = heal(shape.wrapped)
    # the file's uncertainty: the greatest edge tolerance, so a reader's edges cover their
    # measured deviation (session value: mode 2)
    Interface_Static.SetIVal_s("write.precision.mode", 2)
    Interface_Static.SetRVal_s(
        "write.precision.val", max(ShapeAnalysis_ShapeTolerance().Tolerance(healed, 1), 1e-7)
    )
    writer = STEPControl_Writer()
    writer.Transfer(healed, STEPControl_AsIs)
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "out.step"
        if writer.Write(str(path)) != IFSelect_RetDone:
            from ductgen.errors import ExportError

            raise ExportError("the STEP writer failed")
        data = path.read_bytes()
    stamp = build_datetime().strftime("%Y-%m-%dT%H:%M:%S").encode()
    return _FILE_NAME.sub(lambda m: b"FILE_NAME('" + m.group(1) + b"','" + stamp + b"'", data, 1)


def read_step(path: str | Path) -> Any:
    """Read a STEP file back into a cadquery shape (lengths in mm)."""
    import cadquery as cq

    return cq.importers.importStep(str(path)).val()


def stl_bytes(vertices: np.ndarray, faces: np.ndarray, name: str = "ductgen") -> bytes:
    """Encode a triangle mesh (mm) as binary STL with outward facet normals."""
    # normals from the float32 vertices the file stores: the same file for the same rounded
    # mesh, even when the kernel's float64 coordinates differ in their last bits
    v = np.asarray(vertices, dtype=np.float32).astype(np.float64)[np.asarray(faces)]
    n = np.cross(v[:, 1] - v[:, 0], v[:, 2] - v[:, 0])
    lens = np.linalg.norm(n, axis=1)
    n = n / np.where(lens > 0, lens, 1.0)[:, None]
    rec = np.zeros(len(v), dtype=[("n", "<f4", 3), ("v", "<f4", (3, 3)), ("attr", "<u2")])
    rec["n"], rec["v"] = n, v
    header = f"ductgen {name} (mm)".encode()[:80].ljust(80, b" ")
    return header + struct.pack("<I", len(v)) + rec.tobytes()
