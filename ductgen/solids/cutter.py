"""The cutter: the air volume below the skin (ramp cavity + throat + internal duct).

Construction (measured on this stack): the planform is extruded as a prism up to the
overcut above the skin, its edges along the walls rounded (the edge round, sewn face by face
with the raised opening, :func:`~ductgen.solids.edge_round.rounded_prism`); that is
intersected with the floor "wedge" (the centreline section with the entry arc, the lip's
nose notched into its end, extruded across the span), and the ruled transition duct is
fused on. Every face is exact: the walls are the table's Hermite cubic, not a loft
approximation. On the club racer sample the cavity took three Booleans (the
overcut fused on, the wedge, the lip cut; 0.96 s) and takes 0.60 s as one.
"""

from __future__ import annotations

import math

import cadquery as cq

from ductgen.design import Design
from ductgen.errors import GeometryError
from ductgen.geometry.floor import floor_section
from ductgen.geometry.inlet import InletGeometry
from ductgen.geometry.transition import Transition
from ductgen.solids.deform import place
from ductgen.solids.edge_round import rounded_prism
from ductgen.solids.footprint import footprint_wire
from ductgen.solids.primitives import (
    arc3,
    boolean,
    extrude_xz,
    floor_edges,
    polyline_edges,
    xz_ellipse_arc,
)

__all__ = ["build_cutter", "make_cavity", "make_cutter", "make_transition"]

V = cq.Vector


def _planform_prism(g: InletGeometry, x_end: float, z_bottom: float, z_top: float) -> cq.Solid:
    """Planform (walls straight at ±W/2 beyond the lip station to ``x_end``) as a prism."""
    face = cq.Face.makeFromWires(footprint_wire(g, x_end, z_bottom))
    return cq.Solid.extrudeLinear(face, V(0, 0, z_top - z_bottom))


def _floor_wedge(g: InletGeometry, x_end: float, half_span: float, top: float) -> cq.Solid:
    """Region between the floor and z = ``top`` for 0 ≤ x ≤ x_end, across ±half_span.

    With ``top`` above the skin the section starts with a vertical edge at x = 0, so the
    tangent entry arc never meets a face at zero angle (a cusp the booleans mishandle)."""
    sec = floor_section(g.floor)
    y = -half_span
    xr, zr = sec.ramp_end
    edges: list[cq.Edge] = [cq.Edge.makeLine(V(0.0, y, top), V(0.0, y, 0.0))]
    edges += floor_edges(sec, y)
    edges += polyline_edges([(xr, y, zr), (x_end, y, zr), (x_end, y, top), (0.0, y, top)])
    return extrude_xz(edges, y, half_span)


#: How far (mm) the section of :func:`_wedge_less_lip` reaches above the overcut's top: the
#: prism's top face makes the cavity's, and two coplanar tops cost the kernel time.
WEDGE_ABOVE_MM = 1.0


def _wedge_less_lip(g: InletGeometry, half_span: float, top: float) -> cq.Solid | None:
    """The floor wedge (:func:`_floor_wedge`, to the throat's end) less the lip's nose, as
    one section extruded across ±half_span (mm): the nose ends where the throat does, so it
    is a notch in the section's end, and the intersection with the prism is the cavity
    (one Boolean instead of an intersection and a cut). None where the nose does not lie
    inside the section clear of the floor and the top (a raised lip above the overcut)."""
    lip = g.lip
    sec = floor_section(g.floor)
    x_end = g.throat_end_mm
    xc, zc = lip.nose_end_mm, lip.centre_z_mm
    a, b = lip.semi_major_mm, lip.semi_minor_mm
    xr, zr = sec.ramp_end
    # the floor falls downstream: below the nose's tip, it is below the whole nose
    clear = -float(g.floor.depth(xc - a)) < zc - b - 1e-6 and zc + b < top - 1e-6
    if xc != x_end or xr > x_end or not clear:
        return None
    y = -half_span
    nose = xz_ellipse_arc(xc, zc, a, b, 90.0, 270.0, y)  # from its top, round its tip
    edges = [cq.Edge.makeLine(V(0.0, y, top), V(0.0, y, 0.0)), *floor_edges(sec, y)]
    edges += [
        *polyline_edges([(xr, y, zr), (x_end, y, zr)]),
        cq.Edge.makeLine(V(x_end, y, zr), nose.endPoint()),
        nose,
        cq.Edge.makeLine(nose.startPoint(), V(x_end, y, top)),
        cq.Edge.makeLine(V(x_end, y, top), V(0.0, y, top)),
    ]
    return extrude_xz(edges, y, half_span)


def _lip_body(g: InletGeometry, half_span: float) -> cq.Solid:
    """The lip's nose (half-ellipse) plus a short block behind it, across the span."""
    lip = g.lip
    xc, zc = lip.nose_end_mm, lip.centre_z_mm
    a, b = lip.semi_major_mm, lip.semi_minor_mm
    y = -half_span
    top, bot = zc + b, zc - b
    back = xc + 1.0
    edges = [
        xz_ellipse_arc(xc, zc, a, b, 90.0, 270.0, y),
        *polyline_edges([(xc, y, bot), (back, y, bot), (back, y, top), (xc, y, top)]),
    ]
    return extrude_xz(edges, y, half_span)


def make_cavity(g: InletGeometry) -> cq.Solid:
    """Ramp cavity and straight throat, 0 ≤ x ≤ nose end, with edge round, overcut and
    lip cut."""
    r = g.edge_radius_mm
    h = g.overcut_mm
    x_end = g.throat_end_mm
    half_span = g.width_mm / 2.0 + 2.0 * r + 5.0
    x_prism = x_end + 2.0 * r + 2.0  # past the wedge's end, so the round there is cut away
    z_bot = -g.drop_mm - 1.0
    prism: cq.Shape
    if r > 0:
        prism = rounded_prism(g, x_prism, z_bot, rise=h)  # the flared opening raised by h
    else:
        prism = _planform_prism(g, x_prism, z_bot, h)
    less_lip = _wedge_less_lip(g, half_span, h + WEDGE_ABOVE_MM)
    if less_lip is not None:
        return _one_solid(boolean("intersect", prism, less_lip, "cavity floor"), "cavity")
    wedge = _floor_wedge(g, x_end, half_span, h)
    cavity = boolean("intersect", prism, wedge, "cavity floor")
    cavity = boolean("cut", cavity, _lip_body(g, half_span), "lip cut")
    return _one_solid(cavity, "cavity")


def _section_wire(points: list[tuple[float, float, float]], arcs: list | None) -> cq.Wire:
    if arcs is None:
        edges = polyline_edges([*points, points[0]])
    else:
        edges = [arc3(points[i], arcs[i], points[(i + 1) % 4]) for i in range(4)]
    return cq.Wire.assembleEdges(edges)


def make_transition(t: Transition) -> cq.Solid:
    """Ruled duct from the throat rectangle to the outlet (4 edges matched to 4 edges)."""
    x0, x1 = t.x_start_mm, t.x_end_mm
    rc = t.throat_corners()
    w0 = _section_wire([(x0, float(y), float(z)) for y, z in rc], None)
    oc = t.outlet_points()
    pts1 = [(x1, float(y), float(z)) for y, z in oc]
    if t.kind == "round":
        r, cz = t.outlet_width_mm / 2.0, t.outlet_centre_z_mm
        mids = [
            (x1, r * math.cos(math.radians(a)), cz + r * math.sin(math.radians(a)))
            for a in (90.0, 180.0, 270.0, 360.0)
        ]
        w1 = _section_wire(pts1, mids)
    else:
        w1 = _section_wire(pts1, None)
    return cq.Solid.makeLoft([w0, w1], True)


def build_cutter(d: Design) -> cq.Solid:
    """The whole cutter as one closed solid in design coordinates (mm)."""
    g = d.geometry
    cavity = make_cavity(g)
    if g.transition is None:
        return cavity
    t = g.transition
    duct = make_transition(t)
    # the duct starts on the throat's exit plane and lies wholly downstream of it, so the two
    # only share (part of) that face: a glued fuse (no face-face intersection) gives the same
    # solid, byte for byte in STEP on every sample, at a fifth of the time
    # (the check's volume against the integral catches a wrong one; a failed one is retried
    # as a general fuse)
    if t.x_start_mm == g.throat_end_mm and _ends_at(cavity, t.x_start_mm):
        try:
            return _one_solid(boolean("fuse", cavity, duct, "transition", glue=True), "cutter")
        except GeometryError:
            pass
    return _one_solid(boolean("fuse", cavity, duct, "transition"), "cutter")


def _ends_at(solid: cq.Shape, x_mm: float) -> bool:
    """Whether ``solid`` lies wholly at x ≤ ``x_mm`` (mm), to within 1e-6 mm."""
    return bool(solid.BoundingBox().xmax <= x_mm + 1e-6)


def make_cutter(d: Design) -> cq.Solid:
    """The whole cutter as one closed solid on the design's skin (mm, model coordinates)."""
    return place(build_cutter(d), d, "cutter")


def _one_solid(shape: cq.Shape, stage: str) -> cq.Solid:
    solids = shape.Solids()
    if len(solids) != 1:
        raise GeometryError(stage, f"expected one solid, the kernel produced {len(solids)}")
    return solids[0]
