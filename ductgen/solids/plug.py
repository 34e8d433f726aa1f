"""The composite layup plug: the cavity shape, drafted, standing on a base plate.

The plug is the male tool a laminate is laid over, so it is built upside down relative to
the inlet: the plate's top face is the skin plane (z = 0), the plate hangs below it by
``plug.base_thickness``, and the cavity rises above it (z = floor depth at each x). The
walls (and the throat end face) lean inward by ``plug.draft_deg`` so the laminate
releases; the lip is not part of the plug (its undercut would lock the part). The plate
extends ``plug.trim_margin`` beyond the opening with round corners (the trim line of
:func:`ductgen.geometry.fabrication.plug_trim_outline`). Inside radii: where the walls meet
the plate, the edge round ``planform.edge_radius`` is not modelled on the plug (reported).
"""

from __future__ import annotations

import math

import cadquery as cq
import numpy as np

from ductgen.design import Design
from ductgen.errors import GeometryError
from ductgen.geometry.floor import x_at_depth
from ductgen.geometry.inlet import InletGeometry
from ductgen.solids.deform import place
from ductgen.solids.footprint import footprint_face, footprint_wire, prism
from ductgen.solids.primitives import boolean, floor_profile_solid, polyline_edges

__all__ = ["build_plug", "make_plug", "plug_volume_mm3"]

V = cq.Vector


def make_plug(d: Design) -> cq.Solid:
    """The plug on the design's skin, upside down: its plate follows the skin (mm)."""
    return place(build_plug(d), d, "plug")


def build_plug(d: Design) -> cq.Solid:
    """The plug in design coordinates, upside down (mm; plate top z = 0, cavity above)."""
    g, plug = d.geometry, d.fab.plug
    x_ne, H = g.throat_end_mm, g.drop_mm
    try:
        base = footprint_wire(g, x_ne, 0.0)
        height = H + 1.0
        if plug.draft_deg > 0:
            top = _inset_wire(g, x_ne, height * math.tan(math.radians(plug.draft_deg)), height)
            body = cq.Solid.makeLoft([base, top], True)
        else:
            body = cq.Solid.extrudeLinear(cq.Face.makeFromWires(base), V(0, 0, height))
        span = g.width_mm / 2.0 + 10.0
        wedge = floor_profile_solid(g, 0.0, -5.0, x_ne + 5.0, span).mirror("XY")
        cavity = boolean("intersect", body, [wedge], "plug cavity")
        plate = prism(footprint_face(g, x_ne, plug.trim_margin), -plug.base_thickness, 0.0)
        shape = boolean("fuse", plate, [cavity], "plug")
    except GeometryError:
        raise
    except Exception as err:  # kernel exceptions share no base class (seen on this stack)
        raise GeometryError("plug", f"kernel failure: {type(err).__name__}: {err}") from err
    solids = shape.Solids()
    if len(solids) != 1:
        raise GeometryError("plug", f"expected one solid, the kernel produced {len(solids)}")
    return solids[0]


def _inset_wire(g: InletGeometry, x_end: float, d: float, z: float, n: int = 40) -> cq.Wire:
    """The footprint moved inward by ``d`` (mm) at height z, edge for edge like
    :func:`footprint_wire`, each wall point moved along its normal and the wall spline
    given the same parameters (x) as the base, so a ruled loft between the two wires has
    rulings normal to the wall: a draft of atan(d / z)."""
    pf = g.planform
    L, h1 = g.length_mm, g.width_mm / 2.0
    x = np.union1d(np.linspace(0.0, L, n), pf.node_x_mm)
    xo, yo = pf.wall_offset(x, -d).T
    par = [float(v) for v in x]
    upper = cq.Edge.makeSpline(
        [V(float(a), float(b), z) for a, b in zip(xo, yo, strict=True)], parameters=par
    )
    lower = cq.Edge.makeSpline(
        [V(float(a), float(-b), z) for a, b in zip(xo, yo, strict=True)], parameters=par
    )
    xe, hi = x_end - d, h1 - d
    edges = [upper]
    edges += polyline_edges(
        [(float(xo[-1]), hi, z), (xe, hi, z), (xe, -hi, z), (float(xo[-1]), -hi, z)]
    )
    edges += [
        lower,
        cq.Edge.makeLine(V(float(xo[0]), -float(yo[0]), z), V(float(xo[0]), float(yo[0]), z)),
    ]
    return cq.Wire.assembleEdges(edges)


def plug_volume_mm3(d: Design, n: int = 4000) -> float:
    """Expected plug volume (mm³), integrated without the kernel.

    Plate: the opening offset by the margin m has area A + P·m + π·m² (Steiner's formula
    for an outward offset with round corners), times the plate thickness. Drafted cavity:
    at height z the section is the opening offset inward by δ = z·tan(draft) (walls and
    throat end face), cut by the floor; its area is integrated over x along the offset
    wall, then over z (trapezoid rule on ``n`` × 200 points).
    """
    g, plug = d.geometry, d.fab.plug
    pf, fl = g.planform, g.floor
    x_ne = g.throat_end_mm
    x = np.union1d(np.linspace(0.0, x_ne, n), pf.node_x_mm[pf.node_x_mm <= x_ne])
    hw = pf.half_width(x)
    seg = np.hypot(np.diff(x), np.diff(hw))
    perimeter = 2.0 * seg.sum() + (g.width_mm) + float(2.0 * hw[0])
    area = 2.0 * np.trapezoid(hw, x)
    m = plug.trim_margin
    plate = (area + perimeter * m + math.pi * m * m) * plug.base_thickness
    tan_a = math.tan(math.radians(plug.draft_deg))
    zs = np.linspace(0.0, g.drop_mm, 200)
    areas = []
    for z in zs:
        delta = z * tan_a
        xo, yo = pf.wall_offset(x, -delta).T  # wall moved inward along its normal
        x_lo = x_at_depth(fl, z)
        x_hi = x_ne - delta
        if x_hi <= x_lo:
            areas.append(0.0)
            continue
        grid = np.linspace(x_lo, x_hi, 800)
        half = np.interp(grid, xo, yo)
        areas.append(float(2.0 * np.trapezoid(np.clip(half, 0.0, None), grid)))
    return float(plate + np.trapezoid(np.array(areas), zs))
