"""CAD file encoders: B-rep → STEP bytes, triangle mesh → binary STL bytes; STEP reading.

Encoders return bytes; :mod:`ductgen.atomic` writes them. The STEP unit comes from
the one unit table, :data:`ductgen.units.FILE_UNITS`. STEP needs the CAD kernel and so
runs in the kernel worker process.

Healing before STEP export: :func:`ductgen.solids.heal.heal`; the file's uncertainty is
the greatest edge tolerance of the healed shape (``write.precision.mode`` 2 with that value).

Reproducible: the STEP header's ``FILE_NAME`` time stamp is the build date
(:func:`ductgen.stamp.build_datetime`), rounding noise is written as zero and every
statement is on one line (:func:`ductgen.solids.step_text.reproducible_step`), and STL
normals are computed from the float32 vertices the file stores, so one build's bytes equal
the next one's.
"""

from __future__ import annotations

import tempfile
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

from ductgen.solids.heal import heal
from ductgen.solids.step_text import reproducible_step
from ductgen.units import FILE_UNITS

__all__ = ["read_step", "step_bytes", "step_bytes_healed", "stl_bytes"]


def step_bytes(
    shape: Any,
    name: str = "ductgen",
    unit: str = "mm",
    exact_edges: bool = True,
    fresh: Callable[[Any], bool] | None = None,
) -> bytes:
    """Encode a cadquery shape as a STEP AP214 file in ``unit`` (lengths stay in mm inside),
    healed (:func:`heal`, ``exact_edges`` and ``fresh`` passed on), time-stamped with the
    build date."""
    return step_bytes_healed(shape, name, unit, exact_edges, fresh)[0]


def step_bytes_healed(
    shape: Any,
    name: str = "ductgen",
    unit: str = "mm",
    exact_edges: bool = True,
    fresh: Callable[[Any], bool] | None = None,
) -> tuple[bytes, Any]:
    """:func:`step_bytes` and the healed shape it wrote (a ``TopoDS_Shape``, mm): what a
    reader of the file gets, for later work on the same solid without reading it back."""
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.Interface import Interface_Static
    from OCP.STEPControl import STEPControl_AsIs, STEPControl_Controller, STEPControl_Writer

    # load the STEP controller's defaults first: the first writer of a process would
    # otherwise reset the settings below (the first file got the default product name and
    # uncertainty, the next ones ours)
    STEPControl_Controller.Init_s()
    Interface_Static.SetCVal_s("write.step.schema", "AP214IS")
    Interface_Static.SetCVal_s("write.step.unit", FILE_UNITS[unit].step)
    Interface_Static.SetCVal_s("write.step.product.name", name)
    from OCP.ShapeAnalysis import ShapeAnalysis_ShapeTolerance

    healed = heal(shape.wrapped, exact_edges, fresh)
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
    return reproducible_step(data, name), healed


def read_step(path: str | Path) -> Any:
    """Read a STEP file back into a cadquery shape (lengths in mm)."""
    import cadquery as cq

    return cq.importers.importStep(str(path)).val()


#: One binary STL facet (little-endian): unit normal, three vertices, attribute word.
_STL_FACET = np.dtype([("normal", "<f4", (3,)), ("vertices", "<f4", (3, 3)), ("attr", "<u2")])
#: Below this length (mm², the cross product's) a facet's normal is written as zero.
STL_ZERO_NORMAL = 1e-13


def stl_bytes(vertices: np.ndarray, faces: np.ndarray, name: str = "ductgen") -> bytes:
    """Encode a triangle mesh (mm) as binary STL with outward facet normals: an 80-byte zero
    header, the facet count, and per facet its unit normal, its three vertices (float32) and
    a zero attribute word — byte for byte what trimesh's exporter writes (the tests compare
    the two), without importing it in the kernel worker (~0.3 s). The vertices are rounded
    to the float32 the file stores before the normals are computed, so the same rounded mesh
    always gives the same bytes, even when the kernel's float64 coordinates differ in their
    last bits. Coordinates within 1e-9 mm of zero are written as +0.0: on a coordinate plane
    the kernel's rounding noise is 0.0 in one run and 6e-30 (or -0.0) in another, which
    float32 keeps apart. A facet of no area gets the zero normal."""
    rounded = np.asarray(vertices, dtype=np.float32).astype(np.float64)
    rounded[np.abs(rounded) < 1e-9] = 0.0  # also turns -0.0 into +0.0
    tri = rounded[np.asarray(faces, dtype=np.int64).reshape(-1, 3)]
    edges = tri[:, 1:, :] - tri[:, :2, :]
    cross = np.cross(edges[:, 0], edges[:, 1])
    norm = np.sqrt(np.dot(cross * cross, [1.0, 1.0, 1.0]))
    valid = norm > STL_ZERO_NORMAL
    normals = np.zeros_like(cross)
    normals[valid] = cross[valid] * (norm[valid] ** -1).reshape(-1, 1)
    del name  # binary STL headers carry no reliable metadata; the file name says it
    packed = np.zeros(len(tri), dtype=_STL_FACET)
    packed["normal"] = normals
    packed["vertices"] = tri
    return bytes(80) + len(tri).to_bytes(4, "little") + packed.tobytes()
