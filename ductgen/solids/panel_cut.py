"""``NAME-panel.step``: the user's panel with the inlet cut, in the kernel worker.

A closed solid panel is used as it is; an open surface (a face or shell) is first thickened
by ``skin.thickness`` into the body. The cutter (and the insert, whose walls pass through
the skin, through its cut-out) are subtracted; the panel's volume before and after is
reported.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np

from ductgen.design import Design
from ductgen.solids.panel import load_panel

__all__ = ["SLIVER_FRACTION", "cut_panel_job", "cutout_tool"]

#: Largest total volume of the thin films dropped from a cut panel, as a fraction of its
#: volume.
SLIVER_FRACTION = 1e-4


def _simplify(p: np.ndarray, tol: float) -> np.ndarray:
    """Douglas–Peucker: the points of the open polyline ``p`` (N, 2) needed to stay within
    ``tol`` mm of it."""
    keep = np.zeros(len(p), dtype=bool)
    keep[0] = keep[-1] = True
    stack = [(0, len(p) - 1)]
    while stack:
        i, j = stack.pop()
        if j <= i + 1:
            continue
        ab = p[j] - p[i]
        q = p[i + 1 : j] - p[i]
        dist = np.abs(ab[0] * q[:, 1] - ab[1] * q[:, 0]) / max(float(np.hypot(*ab)), 1e-12)
        k = int(np.argmax(dist))
        if dist[k] > tol:
            keep[i + 1 + k] = True
            stack += [(i, i + 1 + k), (i + 1 + k, j)]
    return p[keep]


def _ring(xy: np.ndarray, tol: float = 0.01) -> np.ndarray:
    """A closed outline (N, 2) simplified to ``tol`` mm (split at its farthest point)."""
    k = int(np.argmax(np.hypot(*(xy - xy[0]).T)))
    return np.vstack(
        [_simplify(xy[: k + 1], tol)[:-1], _simplify(np.vstack([xy[k:], xy[:1]]), tol)[:-1]]
    )


def cutout_tool(d: Design) -> Any:
    """The insert's skin cut-out as a cutting tool in model coordinates: a ruled solid whose
    walls run along the skin normals through the cut-out outline (simplified to 0.01 mm)
    from 1 mm under the skin's inner surface to 1 mm above its outer one, closed beyond by
    planar caps square to the datum normal. Nothing of it lies on a panel face (the insert
    itself does: its rim and flange follow the panel's surfaces to the mapping tolerance,
    which defeats a Boolean)."""
    import cadquery as cq

    t = d.geometry.skin_thickness_mm
    ring = _ring(np.asarray(d.layout.cutout_xy, dtype=float))
    n = d.skin.frame.axes[2]  # type: ignore[union-attr]
    low = d.placement.solid_map(np.column_stack([ring, np.full(len(ring), -(t + 1.0))]))
    high = d.placement.solid_map(np.column_stack([ring, np.full(len(ring), 1.0)]))
    below = low + ((float(np.min(low @ n)) - 1.0) - low @ n)[:, None] * n
    above = high + ((float(np.max(high @ n)) + 1.0) - high @ n)[:, None] * n
    wires = [
        cq.Wire.makePolygon([cq.Vector(*p) for p in pts], close=True)
        for pts in (below, low, high, above)
    ]
    tool = cq.Solid.makeLoft(wires, ruled=True)
    if not tool.isValid():
        from ductgen.errors import GeometryError

        raise GeometryError("panel", "the insert's cut-out tool is not a valid solid")
    return tool


def cut_panel_job(
    d: Design, path: str, units: str | None, tools: list[str], staging: str, with_cutout: bool
) -> dict[str, Any]:
    """``NAME-panel.step``: the panel (a closed solid, or its surface thickened inward by
    ``skin.thickness``) minus the cutter (the STEP files ``tools`` in ``staging``) and, when
    the insert is made, its skin cut-out (:func:`cutout_tool`); its volume and the volume
    removed (mm³). Runs in the worker."""
    import cadquery as cq

    from ductgen.errors import GeometryError
    from ductgen.solids.cad_io import step_bytes

    name, thickness_mm = d.name, d.geometry.skin_thickness_mm
    outward = d.skin.frame.axes[2]  # type: ignore[union-attr]
    kind, shape = load_panel(path, units)
    if kind != "brep":
        raise GeometryError("panel", "a mesh scan is not a CAD solid: no panel STEP is made")
    solids = [s for s in shape.Solids() if s.isValid()]
    source = "closed solid"
    if solids:
        body: Any = solids[0] if len(solids) == 1 else cq.Compound.makeCompound(solids)
    else:
        body = _thicken(shape, np.asarray(outward, dtype=float), thickness_mm)
        source = "surface thickened"
    before = float(body.Volume())
    cutters = [cq.importers.importStep(str(Path(staging) / t)).val() for t in tools]
    if with_cutout:
        cutters.append(cutout_tool(d))
    result = body
    for c in cutters:
        result = result.cut(c)
    # a film of skin a few micrometres thick might remain where a tool's face follows the
    # panel within the mapping tolerance: dropped (and reported); any larger piece means
    # the cut split the panel, which is an error
    out = sorted(result.Solids(), key=lambda so: -so.Volume())
    slivers = sum(float(so.Volume()) for so in out[1:])
    if not out or not out[0].isValid() or slivers > SLIVER_FRACTION * before:
        raise GeometryError("panel", "the cut panel is not one valid solid")
    after = float(out[0].Volume())
    file = f"{name}-panel.step"
    (Path(staging) / file).write_bytes(step_bytes(out[0], f"{name}-panel"))
    return {
        "file": file,
        "source": source,
        "volume_mm3": after,
        "panel_volume_mm3": before,
        "removed_mm3": before - after,
        "slivers_dropped_mm3": slivers,
    }


def _thicken(shape: Any, outward: np.ndarray, t: float) -> Any:
    """The panel's surface thickened by ``t`` mm away from ``outward`` (into the body)."""
    import cadquery as cq
    from OCP.BRepOffset import BRepOffset_MakeOffset, BRepOffset_Skin
    from OCP.GeomAbs import GeomAbs_Intersection

    from ductgen.errors import GeometryError

    faces = shape.Faces()
    n0 = faces[0].normalAt()
    sign = -1.0 if float(np.dot([n0.x, n0.y, n0.z], outward)) > 0 else 1.0
    src = faces[0].wrapped if len(faces) == 1 else cq.Shell.makeShell(faces).wrapped
    try:
        builder = BRepOffset_MakeOffset()
        builder.Initialize(
            src, sign * t, 1.0e-6, BRepOffset_Skin, False, False, GeomAbs_Intersection, True
        )
        builder.MakeOffsetShape()
        solid = cq.Shape.cast(builder.Shape())
    except Exception as err:  # kernel exceptions share no base class
        raise GeometryError("panel", f"thickening the panel surface failed: {err}") from err
    sols = solid.Solids()
    if len(sols) != 1 or not sols[0].isValid():
        raise GeometryError("panel", "the thickened panel is not one valid solid")
    return sols[0]
