"""Fabrication layout in plan for the insert and the plug (pure numpy, mm).

Public API (stable; the marking template and DXF import it):

* :class:`Fabrication` — the insert, plug and hose-fit values the solids need (plain
  numbers; :mod:`ductgen.design` fills it from the spec).
* :func:`flange_layout(g, insert) <flange_layout>` → :class:`FlangeLayout` with
  ``.outline_xy`` (N, 2) the flange's outer edge, ``.cutout_xy`` (N, 2) the skin cut-out
  the insert fills (mount "behind") or passes through ("surface"), ``.opening_xy`` the air
  opening, ``.centreline_xy`` the hole line, ``.hole_centres_xy`` (M, 2) and
  ``.hole_diameter_mm``. Every outline is a closed polyline, counter-clockwise, the first
  point not repeated, in plan coordinates (x downstream, y spanwise, mm).
* :func:`plug_trim_outline(g, plug) <plug_trim_outline>` → (N, 2): the plug's base plate
  edge, the opening offset outward by ``plug.trim_margin`` (round corners).

Cross-field rules live in :mod:`ductgen.geometry.fabrication_rules`. Offsets come from
:mod:`ductgen.geometry.outline` (normal offset, round joins).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Literal

import numpy as np

from ductgen.geometry.outline import (
    footprint_pieces,
    offset_outline,
    offset_runs,
    opening_outline,
    polyline_lengths,
)

if TYPE_CHECKING:
    from ductgen.geometry.inlet import InletGeometry

__all__ = [
    "BEAD_WIDTH_PER_HEIGHT",
    "FEATHER_LAND_MM",
    "LEAD_IN_MM",
    "Fabrication",
    "FlangeLayout",
    "HolesParams",
    "InsertParams",
    "PlugParams",
    "Spigot",
    "bezel_land_mm",
    "bezel_offsets_mm",
    "cutout_offset_mm",
    "cutout_runs",
    "feather_inner_edge",
    "flange_layout",
    "footprint_end_mm",
    "plug_trim_outline",
    "spigot_of",
    "transition_wall_mm",
    "wall_for_curvature",
]

#: Spigot: straight lead-in beyond the bead at the free end (mm); bead width = 2.5 × height.
LEAD_IN_MM = 3.0
BEAD_WIDTH_PER_HEIGHT = 2.5
#: Thickness left at a surface bezel's feathered edge (mm): about one 0.4 mm nozzle width.
FEATHER_LAND_MM = 0.4


@dataclass(frozen=True)
class HolesParams:
    """Fastener holes spaced evenly along the flange (mm); ``edge_distance`` from the
    flange's outer edge to the hole centres, None = on the flange centre line."""

    count: int = 8
    diameter: float = 4.2
    edge_distance: float | None = None


@dataclass(frozen=True)
class InsertParams:
    """The printed insert's values (mm): the ``[insert]`` section as plain numbers."""

    wall: float = 2.4
    flange_width: float = 18.0
    flange_thickness_mm: float = 2.4
    mount: Literal["behind", "surface"] = "behind"
    bezel_thickness: float = 1.6
    feather_width: float = 6.0
    holes: HolesParams = field(default_factory=HolesParams)
    bead_height: float = 1.2
    clamp_land: float = 15.0


@dataclass(frozen=True)
class PlugParams:
    """The layup plug's values: draft (deg), trim margin and base plate thickness (mm)."""

    draft_deg: float = 3.0
    trim_margin: float = 25.0
    base_thickness: float = 10.0


@dataclass(frozen=True)
class Fabrication:
    """Insert, plug and hose-fit values for the solids (mm, deg)."""

    insert: InsertParams = field(default_factory=InsertParams)
    plug: PlugParams = field(default_factory=PlugParams)
    fit_clearance_mm: float = 0.2


# --- outlines ------------------------------------------------------------------------------
def footprint_end_mm(g: InletGeometry) -> float:
    """x where the insert's top footprint ends (mm): the nose end, or for a raised lip the
    end of its fairing (the fairing lies in the skin cut-out, see the module text)."""
    end = g.throat_end_mm
    if g.lip.style == "raised":
        end += g.lip.fairing_length_mm
    return end


def bezel_offsets_mm(g: InletGeometry, ins: InsertParams) -> tuple[float, float]:
    """A surface bezel's two plan edges as outward offsets of the footprint (mm): where its
    feathered band begins (``feather_width`` inside the edge) and its outer edge (wall +
    edge round + flange width)."""
    outer = ins.wall + g.edge_radius_mm + ins.flange_width
    return outer - ins.feather_width, outer


def bezel_land_mm(ins: InsertParams) -> float:
    """Thickness of a surface bezel at its feathered edge (mm): :data:`FEATHER_LAND_MM`, at
    most half the bezel."""
    return min(FEATHER_LAND_MM, ins.bezel_thickness / 2.0)


def feather_inner_edge(
    g: InletGeometry, ins: InsertParams, margin_mm: float = 0.0, n: int = 400
) -> np.ndarray | None:
    """Where a surface bezel's feathered band begins, in plan (CCW (N, 2), mm): outside this
    outline the bezel tapers from ``bezel_thickness`` to :data:`FEATHER_LAND_MM` at its edge
    by design (:func:`bezel_offsets_mm`); ``margin_mm`` moves the line that much further
    in. None for a flange behind the skin or an unfeathered bezel."""
    if ins.mount != "surface" or ins.feather_width <= 0.0:
        return None
    d = bezel_offsets_mm(g, ins)[0] - margin_mm
    return offset_outline(footprint_pieces(g.planform, footprint_end_mm(g), n), max(d, 0.0))


def plug_trim_outline(g: InletGeometry, plug: PlugParams, n: int = 400) -> np.ndarray:
    """Base-plate edge of the plug: the opening offset outward by ``plug.trim_margin``
    with round corners, CCW (N, 2) in mm. Its area is A + P·m + π·m² (Steiner)."""
    return offset_outline(footprint_pieces(g.planform, g.throat_end_mm, n), plug.trim_margin)


# --- insert flange -------------------------------------------------------------------------
def transition_wall_mm(g: InletGeometry, wall: float) -> float:
    """Section offset (mm) of the insert's transition so the wall measured normal to the
    steepest ruling is still ``wall``: wall·√(1 + (max ruling run / length)²)."""
    t = g.transition
    if t is None:
        return wall
    return wall * t.ruling_stretch


def wall_for_curvature(wall: float, curvature_per_mm: float, depth_mm: float) -> float:
    """The design-coordinate offset (mm) that gives a wall of ``wall`` mm at ``depth_mm``
    below a convex skin of curvature κ (1/mm). Design offsets across the flow are arc
    lengths at the skin surface; at depth d they shrink by 1 − κ·d (the parallel circle of
    radius R − d), so the offset is wall / (1 − κ·d). A concave or flat skin (κ ≤ 0) needs
    none (its walls only grow)."""
    if curvature_per_mm <= 0.0 or depth_mm <= 0.0:
        return wall
    shrink = 1.0 - curvature_per_mm * depth_mm
    if shrink <= 0.0:
        raise ValueError("depth beyond the skin's centre of curvature")
    return wall / shrink


@dataclass(frozen=True)
class Spigot:
    """Round hose spigot of the insert (mm): shoulder, plain tube with clamp land, bead.

    Stations along x: ``x0`` the outlet face, shoulder to ``x0 + shoulder``, tube to
    ``x_end``; the bead spans ``bead_x0``..``bead_x1`` (ramp towards the free end).
    """

    od_mm: float
    bore_mm: float
    centre_z_mm: float
    x0_mm: float
    shoulder_mm: float
    shoulder_radius_mm: float
    x_end_mm: float
    bead_height_mm: float
    bead_x0_mm: float
    bead_x1_mm: float

    @property
    def clamp_land_mm(self) -> float:
        """Plain tube between the shoulder and the bead (mm)."""
        return self.bead_x0_mm - (self.x0_mm + self.shoulder_mm)


def spigot_of(g: InletGeometry, fab: Fabrication) -> Spigot | None:
    """The round spigot for a round outlet (None otherwise): OD = hose ID − clearance."""
    t = g.transition
    if t is None or t.kind != "round":
        return None
    ins = fab.insert
    od = t.outlet_width_mm - fab.fit_clearance_mm
    wt = transition_wall_mm(g, ins.wall)
    x0 = t.x_end_mm
    shoulder = ins.wall
    x_end = x0 + shoulder + g.spigot_length_mm
    h = ins.bead_height
    bw = BEAD_WIDTH_PER_HEIGHT * h
    b1 = x_end - LEAD_IN_MM
    return Spigot(
        od_mm=od,
        bore_mm=od - 2.0 * ins.wall,
        centre_z_mm=t.outlet_centre_z_mm,
        x0_mm=x0,
        shoulder_mm=shoulder,
        shoulder_radius_mm=t.outlet_width_mm / 2.0 + wt,
        x_end_mm=x_end,
        bead_height_mm=h,
        bead_x0_mm=b1 - bw,
        bead_x1_mm=b1,
    )


@dataclass(frozen=True)
class FlangeLayout:
    """The insert's flange in plan (mm; closed CCW polylines, first point not repeated).

    Attributes:
        mount: ``"behind"`` or ``"surface"``.
        opening_xy: air opening in the skin plane, (N, 2).
        cutout_xy: skin cut-out the insert fills / passes through: the top footprint
            offset by ``cutout_offset_mm``, (N, 2).
        outline_xy: flange (or bezel) outer edge, (N, 2).
        centreline_xy: the closed line the holes lie on, (N, 2).
        hole_centres_xy: (M, 2) hole centres; ``hole_diameter_mm`` their diameter.
        cutout_offset_mm: wall + edge round.
        flange_width_mm: flange width beyond the cut-out.
        edge_distance_mm: hole centre to the nearer flange edge.
        spacing_mm: hole pitch along the centre line (inf for fewer than 2 holes).
        z_top_mm, z_bottom_mm: flange faces (behind: under the skin; surface: bezel).
        keepout: (x_min, half-width) of the region over the transition kept free of holes,
            or None.
    """

    mount: str
    opening_xy: np.ndarray
    cutout_xy: np.ndarray
    outline_xy: np.ndarray
    centreline_xy: np.ndarray
    hole_centres_xy: np.ndarray
    hole_diameter_mm: float
    cutout_offset_mm: float
    flange_width_mm: float
    edge_distance_mm: float
    spacing_mm: float
    z_top_mm: float
    z_bottom_mm: float
    keepout: tuple[float, float] | None


def _keepout(g: InletGeometry, ins: InsertParams) -> tuple[float, float] | None:
    t = g.transition
    if t is None:  # the open throat exit notches the flange downstream
        return g.throat_end_mm, g.width_mm / 2.0 + ins.holes.diameter
    wt = transition_wall_mm(g, ins.wall)
    half = max(g.width_mm, t.outlet_width_mm) / 2.0 + wt + ins.bead_height + ins.holes.diameter
    return g.throat_end_mm, half


def _place_holes(
    line: np.ndarray, n: int, keep: tuple[float, float] | None
) -> tuple[np.ndarray, float]:
    if n == 0:
        return np.zeros((0, 2)), math.inf
    free = np.ones(len(line), dtype=bool)
    if keep is not None:
        free = ~((line[:, 0] > keep[0]) & (np.abs(line[:, 1]) < keep[1]))
    if free.all():
        i = int(np.argmin(line[:, 0] + 1e-9 * line[:, 1]))  # apex line, lower end
        j = (i - 1) % len(line)  # CCW: the apex line runs from +y down to -y
        mid = 0.5 * (line[i] + line[j])
        loop = np.vstack([mid, np.roll(line, -i, axis=0)])  # start on the centreline
        s = polyline_lengths(loop)
        total = s[-1]
        pos = np.arange(n) * total / n
        closed = np.vstack([loop, loop[:1]])
        pitch = total / n
    else:
        first = int(np.argmax(~free[:-1] & free[1:])) + 1  # first free point after a blocked run
        loop = np.roll(line, -first, axis=0)
        run = loop[: int(np.argmin(np.roll(free, -first)))]
        s = polyline_lengths(run, closed=False)
        total = s[-1]
        pos = (np.arange(n) + 0.5) * total / n
        closed = run
        pitch = total / n
    cx = np.interp(pos, s, closed[:, 0])
    cy = np.interp(pos, s, closed[:, 1])
    return np.column_stack([cx, cy]), float(pitch) if n > 1 else math.inf


def cutout_offset_mm(g: InletGeometry, insert: InsertParams) -> float:
    """How far the skin cut-out lies outside the insert's top footprint (mm): its wall and
    edge round."""
    return insert.wall + g.edge_radius_mm


def cutout_runs(g: InletGeometry, insert: InsertParams, n: int = 400) -> list[np.ndarray]:
    """The skin cut-out of :func:`flange_layout` (``cutout_xy``, same sampling ``n``) as its
    smooth runs (:func:`~ductgen.geometry.outline.offset_runs`, mm): the offset walls, end
    and apex lines and the round joins between them, each (k, 2)."""
    pieces = footprint_pieces(g.planform, footprint_end_mm(g), n)
    return offset_runs(pieces, cutout_offset_mm(g, insert))


def flange_layout(g: InletGeometry, insert: InsertParams, n: int = 400) -> FlangeLayout:
    """The flange outline, skin cut-out and fastener holes of the insert (mm).

    Args:
        g: inlet geometry (its skin thickness places the flange).
        insert: the insert's values.
        n: samples along the wall curve.
    """
    t_skin = g.skin_thickness_mm
    off = cutout_offset_mm(g, insert)
    fw = insert.flange_width
    pieces = footprint_pieces(g.planform, footprint_end_mm(g), n)
    ed = insert.holes.edge_distance if insert.holes.edge_distance is not None else fw / 2.0
    line = offset_outline(pieces, off + fw - ed)
    keep = _keepout(g, insert)
    holes, pitch = _place_holes(line, insert.holes.count, keep)
    if insert.mount == "behind":
        z_top, z_bot = -t_skin, -t_skin - insert.flange_thickness_mm
    else:
        z_top, z_bot = insert.bezel_thickness, 0.0
    return FlangeLayout(
        mount=insert.mount,
        opening_xy=opening_outline(g.planform, g.throat_end_mm, n),
        cutout_xy=offset_outline(pieces, off),
        outline_xy=offset_outline(pieces, off + fw),
        centreline_xy=line,
        hole_centres_xy=holes,
        hole_diameter_mm=insert.holes.diameter,
        cutout_offset_mm=off,
        flange_width_mm=fw,
        edge_distance_mm=min(ed, fw - ed),
        spacing_mm=pitch,
        z_top_mm=z_top,
        z_bottom_mm=z_bot,
        keepout=keep,
    )
