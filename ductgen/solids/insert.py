"""The printable insert: cavity floor, walls, lip and transition as walls of ``insert.wall``,
a flange (or surface bezel) with fastener holes, and a round hose spigot.

Construction (measured: the kernel's shell/offset fails on these shapes): an explicit
outer body is built from simple exact pieces and the inner body (the cutter, extended
through the spigot and the top) is subtracted once.

Outer pieces (mm, x downstream, z up, skin outer surface z = 0):

* walls/floor — the top footprint offset in plan by wall + edge round
  (:func:`~ductgen.solids.footprint.offset_wire`, round joins), as a prism (under a convex
  skin widened for its curvature below the skin: :func:`_wall_body`), intersected
  with the floor profile offset downward by the wall (arc radius R − wall, ramp line moved
  along its normal);
* skin fill and flange — mount ``behind``: the cut-out prism through the skin thickness
  (flush with the outer surface) and the flange under the skin; ``surface``: a bezel on
  the outer surface whose outer edge is feathered to a 0.4 mm land;
* transition — a ruled loft of the duct sections offset by wall·√(1 + slope²) of the
  steepest ruling, so the wall normal to the duct is never below ``insert.wall``;
* spigot — shoulder, tube of OD = hose ID − ``outlet.fit_clearance``, retention bead
  (ramp towards the free end), with a bore of OD − 2·wall; a rectangular outlet gets a
  plain collar (:mod:`ductgen.solids.insert_outlet`); a raised lip is an exact nose plus
  its fairing wedge.

:func:`insert_bodies` makes the outer body and the inner pieces that are not the cutter, so a
build can make them in one worker while another builds the cutter; :func:`build_insert`
cuts.
"""

from __future__ import annotations

import contextlib
from collections.abc import Iterator
from typing import Literal

import cadquery as cq
import numpy as np

from ductgen.design import Design
from ductgen.errors import GeometryError, SpecError
from ductgen.geometry.fabrication import (
    FlangeLayout,
    InsertParams,
    bezel_land_mm,
    bezel_offsets_mm,
    footprint_end_mm,
    wall_for_curvature,
)
from ductgen.geometry.inlet import InletGeometry
from ductgen.geometry.panel import PanelSkin
from ductgen.geometry.panel_surface import convex_curvatures
from ductgen.solids.cutter import build_cutter
from ductgen.solids.deform import place
from ductgen.solids.footprint import footprint_face, offset_wire, prism
from ductgen.solids.insert_outlet import open_exit, outlet_pieces
from ductgen.solids.primitives import (
    boolean,
    box,
    extrude_xz,
    floor_profile_solid,
    polyline_edges,
    xz_ellipse_arc,
)

__all__ = [
    "bodies_from",
    "build_insert",
    "convex_curvature",
    "insert_bodies",
    "make_insert",
]

V = cq.Vector


def _raised_lip(g: InletGeometry, half_span: float) -> cq.Solid:
    """A raised lip above the skin: the elliptical nose and its fairing wedge."""
    lip = g.lip
    xc, t = lip.nose_end_mm, lip.thickness_mm
    y = -half_span
    edges = [
        xz_ellipse_arc(xc, t / 2.0, lip.semi_major_mm, lip.semi_minor_mm, 90.0, 270.0, y),
        *polyline_edges([(xc, y, 0.0), (xc + lip.fairing_length_mm, y, 0.0), (xc, y, t)]),
    ]
    return extrude_xz(edges, y, half_span)


def _drilled(shape: cq.Shape, lay: FlangeLayout) -> cq.Shape:
    """``shape`` with the flange's fastener holes drilled through (vertical, mm)."""
    if not len(lay.hole_centres_xy):
        return shape
    d = lay.hole_diameter_mm
    z0, z1 = lay.z_bottom_mm - 1.0, lay.z_top_mm + 1.0
    holes: list[cq.Shape] = [
        cq.Solid.makeCylinder(d / 2.0, z1 - z0, V(float(x), float(y), z0), V(0, 0, 1))
        for x, y in lay.hole_centres_xy
    ]
    return boolean("cut", shape, holes, "insert holes")


def convex_curvature(d: Design) -> float:
    """The convex skin curvature κ (1/mm; 0 when flat or concave) the insert's walls are
    widened for, by 1/(1 − κ·depth) (:func:`~ductgen.geometry.fabrication.wall_for_curvature`).

    On the analytic skins the larger of the curvatures along and across the flow. On the
    user's panel the largest principal curvature over the insert's footprint where convex:
    on a grid of 21 × 21 points over −(edge round + wall) ≤ u ≤ the footprint's end and
    |v| ≤ W/2 + edge round + wall (mm); the normal curvature across any wall is at most it,
    so the wall errs thick where the panel is flatter."""
    sk = d.skin
    if not isinstance(sk, PanelSkin):
        return max(float(getattr(sk, "k_stream", 0.0)), float(getattr(sk, "k_span", 0.0)), 0.0)
    g = d.geometry
    off = g.edge_radius_mm + d.fab.insert.wall
    u = np.linspace(max(-off, float(sk.u[0])), min(footprint_end_mm(g), float(sk.u[-1])), 21)
    v_max = min(g.width_mm / 2.0 + off, float(sk.v[-1]))
    uu, vv = np.meshgrid(u, np.linspace(-v_max, v_max, 21), indexing="ij")
    pts, _ = sk.surface_local(np.column_stack([uu.ravel(), vv.ravel()]))
    k = convex_curvatures(sk.surface, pts[:, 0], pts[:, 1])
    return max(float(np.max(k)), 0.0)


#: How the walls widened under a convex skin reach the skin (:func:`_wall_body`).
WallShape = Literal["under_skin", "ruled", "prism"]


def _wall_shape(d: Design) -> WallShape:
    """Mounted behind: ``"under_skin"``; surface-mounted: ``"prism"`` on the user's panel,
    ``"ruled"`` on the analytic skins (:func:`_wall_body`)."""
    if d.fab.insert.mount == "behind":
        return "under_skin"
    return "prism" if isinstance(d.skin, PanelSkin) else "ruled"


def _wall_body(
    g: InletGeometry, x_ne: float, r_edge: float, w: float, k: float, z0: float, shape: WallShape
) -> cq.Solid:
    """The walls' outer body down to z0 < 0: the footprint offset by edge round + wall, a
    prism; under a convex skin (k > 0, 1/mm) the offset at depth |z0| is edge round +
    wall/(1 − k·|z0|), so the wall measured on the skin is at least ``w`` at every depth.
    ``shape`` says how the body reaches the skin:

    * ``"under_skin"``: a prism of that offset up to the skin's inner face, z = −skin
      thickness; the skin fill above it (the cut-out's own offset) goes through the skin.
      For inserts mounted behind, whose flange covers the step at that face. Plain
      extrusions: the insert's Booleans 2.5–4× faster than on a loft's ruled faces.
    * ``"ruled"``: a ruled loft from the plain offset at the skin to that one (1/(1 − k·d)
      is convex in d, so the straight ruling is never thinner): surface-mounted inserts,
      whose walls pass through the cut-out, on the analytic skins.
    * ``"prism"``: a prism of that offset all the way up (thicker near the skin): surface
      mounted on the user's panel, where the loft's faces carried onto a B-spline panel
      left a crack at the apex that split pieces inherited."""
    square = g.transition is None
    if k <= 0.0:
        return prism(footprint_face(g, x_ne, r_edge + w, square_end=square), z0, 0.0)
    deep = r_edge + wall_for_curvature(w, k, -z0)
    if shape != "ruled":
        top = -g.skin_thickness_mm if shape == "under_skin" else 0.0
        return prism(footprint_face(g, x_ne, deep, square_end=square), z0, top)
    top_wire = offset_wire(g, x_ne, r_edge + w, 0.0, square_end=square)
    bottom = offset_wire(g, x_ne, deep, z0, square_end=square)
    return cq.Solid.makeLoft([bottom, top_wire], True)


def make_insert(d: Design, cutter: cq.Solid | None = None) -> cq.Solid:
    """The insert as one closed solid on the design's skin (mm, model coordinates).

    ``cutter``: the cutter in design coordinates (:func:`~ductgen.solids.cutter.build_cutter`),
    if already built for this design (saves building it again)."""
    return place(build_insert(d, cutter), d, "insert")


def build_insert(
    d: Design,
    cutter: cq.Solid | None = None,
    bodies: tuple[cq.Shape, list[cq.Shape]] | None = None,
) -> cq.Solid:
    """The insert in design coordinates (mm): an outer body minus the cutter. Raises
    :class:`GeometryError` when the kernel fails (the design was checked when it was built).

    ``cutter``: the cutter, if built already; ``bodies``: :func:`insert_bodies` of ``d``,
    if made already (a build makes them in its second worker while this one builds the
    cutter)."""
    g, lay, ins = d.geometry, d.layout, d.fab.insert
    outer, inner_extra = bodies if bodies is not None else insert_bodies(d)
    inner_extra = list(inner_extra)
    with _kernel_failures():
        inner: cq.Shape = cutter if cutter is not None else build_cutter(d)
        if ins.mount == "surface":
            x_open = g.length_mm if g.lip.style == "raised" else g.throat_end_mm
            inner_extra += _bezel_opening(inner, g.overcut_mm, ins.bezel_thickness + 1.0, x_open)
        if inner_extra:
            inner = boolean("fuse", inner, inner_extra, "insert inner body")
        body = boolean("cut", outer, [inner], "insert")
        if ins.mount == "surface" and len(lay.hole_centres_xy):
            body = _drilled(body, lay)
    solids = body.Solids()
    if len(solids) != 1:
        raise GeometryError("insert", f"expected one solid, the kernel produced {len(solids)}")
    return solids[0]


def insert_bodies(d: Design) -> tuple[cq.Shape, list[cq.Shape]]:
    """The insert's outer body (walls, skin fill, flange or bezel, raised lip, transition
    and spigot, fused) and the pieces of its inner body that do not come from the cutter
    (the spigot's bore, an open exit), mm, design coordinates: what :func:`build_insert`
    cuts, bar the cutter. Raises :class:`GeometryError` as it does."""
    g, lay, ins = d.geometry, d.layout, d.fab.insert
    off = ins.wall + g.edge_radius_mm
    k = convex_curvature(d)
    with _kernel_failures():
        fill = _fills_skin(g, k)
        walls = _walls(g, ins.wall, ins.flange_width, k, _wall_shape(d), fill)
        pieces = _skin_and_flange(g, ins, lay, off, with_fill=fill == 0.0)
        if g.lip.style == "raised":
            pieces.append(_raised_lip(g, g.width_mm / 2.0 + off))
        inner_extra: list[cq.Shape] = []
        if g.transition is not None:
            outer_parts, inner_parts = outlet_pieces(d, k)
            pieces += outer_parts
            inner_extra += inner_parts
        else:
            inner_extra += open_exit(g, ins, off)
        return boolean("fuse", walls, pieces, "insert outer body"), inner_extra


def bodies_from(compound: cq.Shape | None) -> tuple[cq.Shape, list[cq.Shape]] | None:
    """:func:`insert_bodies` out of the compound that carries them between workers (the
    outer body first, :func:`~ductgen.solids.handoff.insert_bodies_job`), read back; None:
    not made ahead."""
    if compound is None:
        return None
    outer, *inner = list(compound)
    return outer, inner


@contextlib.contextmanager
def _kernel_failures() -> Iterator[None]:
    """A kernel failure inside as the insert stage's :class:`GeometryError` (a geometry or
    spec error passes as it is; kernel exceptions share no base class on this stack)."""
    try:
        yield
    except (GeometryError, SpecError):
        raise
    except ValueError as err:
        raise GeometryError("insert", f"kernel failure: {err}") from err
    except Exception as err:
        raise GeometryError("insert", f"kernel failure: {type(err).__name__}: {err}") from err


def _bezel_opening(cutter: cq.Shape, z_cut: float, z_top: float, x_open: float) -> list[cq.Shape]:
    """The bezel's opening (inner body pieces, mm): the cutter's top face at the overcut
    height ``z_cut`` extruded up to ``z_top``, cut off downstream of ``x_open``.

    Its walls continue the cutter's overcut walls on the same curves (the edge round's
    boundary on the skin). A footprint offset by the edge radius, interpolated apart from the
    kernel's fillet boundary by ~1e-3 mm, left a sliver face between the two curves on the
    skin plane that the mesher could not triangulate (an open mesh, then a void bounding
    box in healing)."""
    if z_top <= z_cut:
        return []  # the overcut already clears the bezel
    tops = [f for f in cutter.Faces() if _is_top_plane(f, z_cut)]
    if not tops:
        raise GeometryError("insert", f"the cutter has no top face at z = {z_cut:g} mm")
    pieces: list[cq.Shape] = []
    for f in tops:
        body: cq.Shape = cq.Solid.extrudeLinear(f, V(0, 0, z_top - z_cut))
        bb = body.BoundingBox()
        if bb.xmax > x_open + 1e-6:
            keep = box(
                bb.xmin - 1.0, x_open, bb.ymin - 1.0, bb.ymax + 1.0, z_cut - 1.0, z_top + 1.0
            )
            body = boolean("intersect", body, [keep], "insert bezel opening")
        pieces.append(body)
    return pieces


def _is_top_plane(face: cq.Face, z: float) -> bool:
    """Whether ``face`` is a plane at height ``z`` (mm) facing up."""
    if face.geomType() != "PLANE":
        return False
    bb = face.BoundingBox()
    return abs(bb.zmin - z) < 1e-6 and abs(bb.zmax - z) < 1e-6 and face.normalAt().z > 0.5


def _walls(
    g: InletGeometry, w: float, flange_width: float, k: float, shape: WallShape, fill: float = 0.0
) -> cq.Shape:
    """The walls and floor: the wall body (:func:`_wall_body`) cut to the floor profile
    moved down by the wall ``w`` (mm), across the flange's width (mm) and 10 mm more;
    ``k`` the convex curvature (1/mm), ``shape`` as in :func:`_wall_body`; ``fill`` > 0:
    the profile reaches at least that far below the skin (mm), so the walls hold the skin
    fill too (:func:`_fills_skin`)."""
    r_edge = g.edge_radius_mm
    off = w + r_edge
    x_ne = g.throat_end_mm
    span = g.width_mm / 2.0 + off + flange_width + 10.0
    return boolean(
        "intersect",
        _wall_body(g, x_ne, r_edge, w, k, -g.drop_mm - w - 2.0, shape),
        [floor_profile_solid(g, w, -off - 2.0, x_ne + off + 1.0, span, down_to=-fill)],
        "insert walls",
    )


def _fills_skin(g: InletGeometry, k: float) -> float:
    """How far below the skin (mm) the walls themselves reach everywhere, so that they hold
    the skin fill (the cut-out through the skin's thickness): the skin's thickness where the
    wall body is a prism up to the skin (k ≤ 0, 1/mm) on the fill's own outline (a flush lip:
    the footprint ends where the walls do); else 0 and the fill is a piece of its own. The
    fill and the walls' body share their top and sides: fused, the kernel spent ~0.2 s on
    those coplanar faces (club racer sample), joined in the section it spends nothing."""
    if k > 0.0 or footprint_end_mm(g) != g.throat_end_mm:
        return 0.0
    return g.skin_thickness_mm


def _skin_and_flange(
    g: InletGeometry, ins: InsertParams, lay: FlangeLayout, off: float, with_fill: bool = True
) -> list[cq.Shape]:
    """The skin fill (the cut-out through the skin's thickness, unless ``with_fill`` is
    False: the walls hold it) and the flange behind the skin, or the surface bezel
    (feathered to :func:`~ductgen.geometry.fabrication.bezel_land_mm`), holes drilled;
    ``off`` the walls' reach beyond the cavity (mm)."""
    x_top = footprint_end_mm(g)
    square = g.transition is None and x_top == g.throat_end_mm
    pieces: list[cq.Shape] = []
    if with_fill:
        fill = footprint_face(g, x_top, off, square_end=square)
        pieces.append(prism(fill, -g.skin_thickness_mm, 0.0))
    outline = footprint_face(g, x_top, off + ins.flange_width)
    if ins.mount == "behind":
        pieces.append(_drilled(prism(outline, lay.z_bottom_mm, lay.z_top_mm), lay))
        return pieces
    tb = ins.bezel_thickness
    land = bezel_land_mm(ins)
    pieces.append(_drilled(prism(outline, 0.0, land), lay))
    if ins.feather_width > 0:
        d_inset, d_edge = bezel_offsets_mm(g, ins)
        inset = offset_wire(g, x_top, d_inset)
        edge = offset_wire(g, x_top, d_edge)
        pieces.append(
            cq.Solid.makeLoft([edge.translate(V(0, 0, land)), inset.translate(V(0, 0, tb))], True)
        )
        pieces.append(prism(cq.Face.makeFromWires(inset), 0.0, tb))
    else:
        pieces.append(prism(outline, 0.0, tb))
    return pieces
