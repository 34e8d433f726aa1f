"""The insert's outlet and exit (mm, design coordinates): the transition's outer wall, the
round spigot (shoulder, tube, retention bead) or a rectangular collar, with the bore that
goes into the inner body; without a transition, the throat's exit opened through the
downstream wall (:func:`~ductgen.solids.insert.insert_bodies` takes them)."""

from __future__ import annotations

import dataclasses

import cadquery as cq

from ductgen.design import Design
from ductgen.geometry.fabrication import (
    InsertParams,
    Spigot,
    transition_wall_mm,
    wall_for_curvature,
)
from ductgen.geometry.inlet import InletGeometry
from ductgen.solids.cutter import make_transition
from ductgen.solids.primitives import box, polyline_edges

__all__ = ["open_exit", "outlet_pieces"]

V = cq.Vector


def _cylinder_x(radius: float, x0: float, x1: float, zc: float) -> cq.Solid:
    return cq.Solid.makeCylinder(radius, x1 - x0, V(x0, 0.0, zc), V(1, 0, 0))


def _bead(sp: Spigot, radius: float) -> cq.Solid:
    """Retention bead: a ring whose outer face ramps up towards the free end... reversed:
    it rises gently from the free end (the hose slides on) and drops steeply behind."""
    x0, x1, h, zc = sp.bead_x0_mm, sp.bead_x1_mm, sp.bead_height_mm, sp.centre_z_mm
    r_in = radius - 0.5  # overlaps the tube
    ramp = x1 - 0.2 * (x1 - x0)
    pts = [(x0, r_in), (x1, r_in), (x1, radius), (ramp, radius + h), (x0, radius + h)]
    # profile in the xz plane at y = 0, offset by the centre height, revolved about the axis
    edges = polyline_edges([(x, 0.0, zc + r) for x, r in [*pts, pts[0]]])
    wire = cq.Wire.assembleEdges(edges)
    return cq.Solid.revolve(wire, [], 360.0, V(0, 0, zc), V(1, 0, zc))


def outlet_pieces(d: Design, k: float) -> tuple[list[cq.Shape], list[cq.Shape]]:
    """The transition's outer wall and the spigot (shoulder, tube, bead) or rectangular
    collar: the pieces to add to the outer body and to the inner one (the bore), mm; ``k``
    the convex curvature (1/mm)."""
    g = d.geometry
    t = g.transition
    assert t is not None
    # inside a convex skin the section's sides close in with depth (the fade only lessens
    # it): the wall is sized for the deepest point of the outer section
    wt = transition_wall_mm(g, d.fab.insert.wall)
    bottom = min(t.floor_z_mm, t.outlet_top_z_mm - t.outlet_height_mm)
    wt = wall_for_curvature(wt, k, wt - bottom)
    t_out = dataclasses.replace(
        t,
        width_mm=t.width_mm + 2 * wt,
        roof_z_mm=t.roof_z_mm + wt,
        floor_z_mm=t.floor_z_mm - wt,
        outlet_width_mm=t.outlet_width_mm + 2 * wt,
        outlet_height_mm=t.outlet_height_mm + 2 * wt,
        outlet_top_z_mm=t.outlet_top_z_mm + wt,
    )
    outer: list[cq.Shape] = [make_transition(t_out)]
    sp = d.spigot
    if sp is not None:
        zc = sp.centre_z_mm
        outer.append(_cylinder_x(sp.shoulder_radius_mm, sp.x0_mm, sp.x0_mm + sp.shoulder_mm, zc))
        outer.append(_cylinder_x(sp.od_mm / 2.0, sp.x0_mm, sp.x_end_mm, zc))
        if sp.bead_height_mm > 0:
            outer.append(_bead(sp, sp.od_mm / 2.0))
        return outer, [_cylinder_x(sp.bore_mm / 2.0, sp.x0_mm - 0.5, sp.x_end_mm + 1.0, zc)]
    # rectangular collar
    h, top = t.outlet_width_mm / 2.0, t.outlet_top_z_mm
    bot = top - t.outlet_height_mm
    x1 = t.x_end_mm + g.spigot_length_mm
    outer.append(box(t.x_end_mm, x1, -h - wt, h + wt, bot - wt, top + wt))
    return outer, [box(t.x_end_mm - 0.5, x1 + 1.0, -h, h, bot, top)]


def open_exit(g: InletGeometry, ins: InsertParams, off: float) -> list[cq.Shape]:
    """Without a transition, the throat's exit open through the downstream wall, and
    beyond it up to the skin (the flange is notched there, rather than left as a sliver
    over the throat's roof): pieces of the inner body (mm); ``off`` the walls' reach."""
    x_ne, h, hw = g.throat_end_mm, g.drop_mm, g.width_mm / 2.0
    t_skin = g.skin_thickness_mm
    top = min(g.lip.roof_z_mm, -t_skin)
    inner: list[cq.Shape] = [box(x_ne - 0.5, x_ne + off + 0.5, -hw, hw, -h, g.lip.roof_z_mm)]
    if max(top, -t_skin) > -h + 1e-6:  # a floor at the skin's inner face: no notch
        inner.append(
            box(x_ne + off, x_ne + off + ins.flange_width + 2.0, -hw, hw, -h, max(top, -t_skin))
        )
    return inner
