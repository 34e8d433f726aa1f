"""Small B-rep builders shared by the solids (cadquery only; mm; x downstream, z up)."""

from __future__ import annotations

import itertools
from collections.abc import Sequence

import cadquery as cq
import numpy as np

from ductgen.errors import GeometryError
from ductgen.geometry.floor import FloorSection, floor_section
from ductgen.geometry.inlet import InletGeometry
from ductgen.geometry.planform import Planform

__all__ = [
    "boolean",
    "box",
    "extrude_xz",
    "floor_edges",
    "floor_profile_solid",
    "polyline_edges",
    "wall_spline",
    "xz_ellipse_arc",
]

V = cq.Vector


def wall_spline(planform: Planform, sign: float = 1.0, z: float = 0.0) -> cq.Edge:
    """The wall curve y = sign·(W/2)·F(x/L) at height z as an exact B-spline edge.

    Given the Hermite slopes as tangents at every station, the stations' x as parameters
    and no tangent scaling, the kernel's interpolation is the same piecewise cubic as
    :class:`~ductgen.geometry.planform.Planform` (x(t) = t, y(t) the Hermite cubic).
    """
    xs = planform.node_x_mm
    ys = sign * planform.node_half_width_mm
    ds = sign * planform.node_slopes
    pts = [V(float(x), float(y), z) for x, y in zip(xs, ys, strict=True)]
    tans = [V(1.0, float(d), 0.0) for d in ds]
    return cq.Edge.makeSpline(pts, tangents=tans, parameters=[float(x) for x in xs], scale=False)


def polyline_edges(points: Sequence[Sequence[float]]) -> list[cq.Edge]:
    """Straight edges joining consecutive 3D points (open polyline)."""
    return [cq.Edge.makeLine(V(*a), V(*b)) for a, b in itertools.pairwise(points)]


def xz_ellipse_arc(
    centre_x: float, centre_z: float, a: float, b: float, start_deg: float, end_deg: float, y: float
) -> cq.Edge:
    """Arc of the ellipse (x − cx)²/a² + (z − cz)²/b² = 1 in the plane at ``y``, from
    ``start_deg`` to ``end_deg`` (angles from +x towards +z), a ≥ b."""
    if abs(a - b) < 1e-12:
        return cq.Edge.makeCircle(a, V(centre_x, y, centre_z), V(0, -1, 0), start_deg, end_deg)
    return cq.Edge.makeEllipse(
        a, b, V(centre_x, y, centre_z), V(0, -1, 0), V(1, 0, 0), start_deg, end_deg
    )


def extrude_xz(edges: list[cq.Edge], y0: float, y1: float) -> cq.Solid:
    """Close planar edges drawn in the plane y = y0 into a face and extrude it to y1."""
    wire = cq.Wire.assembleEdges(edges)
    face = cq.Face.makeFromWires(wire)
    solid = cq.Solid.extrudeLinear(face, V(0, y1 - y0, 0))
    if solid.Volume() < 0:  # orientation of the profile decides the sign
        solid = cq.Solid(solid.wrapped.Reversed())
    return solid


def arc3(p0: Sequence[float], pm: Sequence[float], p1: Sequence[float]) -> cq.Edge:
    """Circular arc through three 3D points."""
    return cq.Edge.makeThreePointArc(V(*p0), V(*pm), V(*p1))


def floor_edges(sec: FloorSection, y: float) -> list[cq.Edge]:
    """Edges of a floor section in the plane at ``y``: the entry arc (if any) and the
    straight ramp, from ``sec.entry`` to ``sec.ramp_end`` (mm)."""
    (xe, ze), (xs, zs), (xr, zr) = sec.entry, sec.ramp_start, sec.ramp_end
    edges: list[cq.Edge] = []
    if sec.arc_mid is not None:
        xm, zm = sec.arc_mid
        edges.append(arc3((xe, y, ze), (xm, y, zm), (xs, y, zs)))
    edges += polyline_edges([(xs, y, zs), (xr, y, zr)])
    return edges


def floor_profile_solid(
    g: InletGeometry,
    offset: float,
    x_lo: float,
    x_end: float,
    half_span: float,
    down_to: float = 0.0,
) -> cq.Solid:
    """Region between the skin plane and the floor moved down by ``offset`` (mm, normal to
    the floor), x_lo ≤ x ≤ x_end, across ±half_span. Offset 0 is the cavity's own floor.
    ``down_to`` < 0: the region reaches at least that far below the skin everywhere (mm;
    the section joined with that band, in the plane, before it is extruded)."""
    sec = floor_section(g.floor, offset)
    y = -half_span
    (xe, ze), (xr, zr) = sec.entry, sec.ramp_end
    lead = [(x_lo, y, 0.0), (x_lo, y, ze), (xe, y, ze)] if ze < 0 else [(x_lo, y, 0.0), (xe, y, ze)]
    edges = polyline_edges(lead) + floor_edges(sec, y)
    edges += polyline_edges([(xr, y, zr), (x_end, y, zr), (x_end, y, 0.0), (x_lo, y, 0.0)])
    if down_to >= 0.0 or down_to <= zr:
        return extrude_xz(edges, y, half_span)
    section = cq.Face.makeFromWires(cq.Wire.assembleEdges(edges))
    band = [(x_lo, y, 0.0), (x_lo, y, down_to), (x_end, y, down_to), (x_end, y, 0.0)]
    band_face = cq.Face.makeFromWires(cq.Wire.assembleEdges(polyline_edges([*band, band[0]])))
    joined = section.fuse(band_face).clean()
    if len(joined.Faces()) != 1:
        raise GeometryError("insert walls", "the floor section and the skin band did not join")
    solid = cq.Solid.extrudeLinear(joined.Faces()[0], V(0, 2.0 * half_span, 0))
    return solid if solid.Volume() > 0 else cq.Solid(solid.wrapped.Reversed())


def box(x0: float, x1: float, y0: float, y1: float, z0: float, z1: float) -> cq.Solid:
    """The axis-aligned box between the given coordinates (mm)."""
    return cq.Solid.makeBox(x1 - x0, y1 - y0, z1 - z0, V(x0, y0, z0))


def np3(a: np.ndarray) -> list[tuple[float, float, float]]:
    return [tuple(float(v) for v in row) for row in a]  # type: ignore[misc]


#: Fuzzy tolerances (mm) tried in turn when a boolean comes out invalid. A near-tangent
#: contact (a short entry arc meeting a wall) was seen to give an invalid exact result on
#: this kernel that a 1e-5 mm fuzzy boolean builds cleanly.
FUZZY_STEPS_MM: tuple[float | None, ...] = (None, 1e-5, 1e-4)


def _run_boolean(op: str, a: cq.Shape, tools: list[cq.Shape], tol: float | None, glue: bool):
    from OCP.BOPAlgo import BOPAlgo_GlueShift
    from OCP.BRepAlgoAPI import BRepAlgoAPI_Common, BRepAlgoAPI_Cut, BRepAlgoAPI_Fuse
    from OCP.TopTools import TopTools_ListOfShape

    algo = {"fuse": BRepAlgoAPI_Fuse, "cut": BRepAlgoAPI_Cut, "intersect": BRepAlgoAPI_Common}
    builder = algo[op]()
    args, tls = TopTools_ListOfShape(), TopTools_ListOfShape()
    args.Append(a.wrapped)
    for t in tools:
        tls.Append(t.wrapped)
    builder.SetArguments(args)
    builder.SetTools(tls)
    # serial: the parallel mode orders the result's sub-shapes by thread timing, so two
    # builds of one spec could write different (equally valid) STEP files
    builder.SetRunParallel(False)
    builder.SetUseOBB(True)  # oriented bounding boxes: ~1.7x faster on the insert's booleans
    if glue:
        builder.SetGlue(BOPAlgo_GlueShift)
    if tol:
        builder.SetFuzzyValue(tol)
    builder.Build()
    if not builder.IsDone():
        raise RuntimeError(f"the kernel's {op} did not finish")
    return cq.Shape.cast(builder.Shape()).clean()


def boolean(
    op: str, a: cq.Shape, b: cq.Shape | list[cq.Shape], stage: str, glue: bool = False
) -> cq.Shape:
    """``a`` op ``b`` (op: fuse, cut, intersect; ``b`` one tool or several), cleaned, retried
    with a fuzzy tolerance while the result is invalid or not one solid; raises
    :class:`GeometryError` naming ``stage``.

    ``glue`` (fuse only): the operands touch along shared faces and do not otherwise
    overlap, which lets the kernel skip face-face intersection (measured 8x faster)."""

    tools = b if isinstance(b, list) else [b]
    last = ""
    for tol in FUZZY_STEPS_MM:
        try:
            res = _run_boolean(op, a, tools, tol, glue)
        except Exception as err:  # kernel exceptions share no base class
            last = f"{type(err).__name__}: {err}"
            continue
        if res.isValid() and len(res.Solids()) == 1:
            return res
        last = f"the result is invalid or not one solid ({len(res.Solids())} solids)"
    raise GeometryError(stage, f"{op} failed: {last}")
