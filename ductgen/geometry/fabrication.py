"""Fabrication layout in plan for the insert and the plug (pure numpy, mm).

Public API (stable; the marking template and DXF import it):

* :func:`fabrication_params(spec) <fabrication_params>` → :class:`Fabrication` — the
  insert, plug and hose-fit values the solids need, taken from a spec.
* :func:`flange_layout(g, insert, skin) <flange_layout>` → :class:`FlangeLayout` with
  ``.outline_xy`` (N, 2) the flange's outer edge, ``.cutout_xy`` (N, 2) the skin cut-out
  the insert fills (mount "behind") or passes through ("surface"), ``.opening_xy`` the air
  opening, ``.centreline_xy`` the hole line, ``.hole_centres_xy`` (M, 2) and
  ``.hole_diameter_mm``. Every outline is a closed polyline, counter-clockwise, the first
  point not repeated, in plan coordinates (x downstream, y spanwise, mm).
* :func:`plug_trim_outline(g, plug) <plug_trim_outline>` → (N, 2): the plug's base plate
  edge, the opening offset outward by ``plug.trim_margin`` (round corners).
* :func:`validate_fabrication(g, fab) <validate_fabrication>` raises
  :class:`~ductgen.errors.SpecError` on cross-field problems (call before the kernel);
  :func:`fabrication_warnings` lists the soft ones.

Offsets are taken normal to the outline with round joins at the corners, which is also
how the kernel's planar wire offset (``offset2D(kind="arc")``) builds the solids' flange
and plate, so a drawn outline and the solid's edge agree to the sampling error (< 0.01 mm
at the default sampling).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from ductgen.errors import DesignWarning, SpecError
from ductgen.spec.fabrication import InsertSpec, PlugSpec

if TYPE_CHECKING:
    from ductgen.geometry.inlet import InletGeometry
    from ductgen.spec.model import SkinSpec, Spec

__all__ = [
    "EDGE_FACTOR",
    "MIN_LIGAMENT_MM",
    "SPACING_FACTOR",
    "Fabrication",
    "FlangeLayout",
    "Spigot",
    "fabrication_of",
    "fabrication_params",
    "fabrication_warnings",
    "flange_layout",
    "footprint_end_mm",
    "offset_outline",
    "opening_outline",
    "plug_trim_outline",
    "polygon_area",
    "spigot_of",
    "transition_wall_mm",
    "validate_fabrication",
]

#: Hole edge distance ≥ 2 × diameter (common practice, no source).
EDGE_FACTOR = 2.0
#: Hole spacing ≥ 4 × diameter (common practice, no source).
SPACING_FACTOR = 4.0
#: Below this ligament (mm) between a hole and an edge or the next hole the hole breaks
#: out: about two FDM perimeters of a 0.4 mm nozzle (common practice, no source).
MIN_LIGAMENT_MM = 1.0
#: Spigot: straight lead-in beyond the bead at the free end (mm); bead width = 2.5 × height.
LEAD_IN_MM = 3.0
BEAD_WIDTH_PER_HEIGHT = 2.5


@dataclass(frozen=True)
class Fabrication:
    """Insert and plug parameters for the solids (spec sections; mm, deg)."""

    insert: InsertSpec = field(default_factory=InsertSpec)
    plug: PlugSpec = field(default_factory=PlugSpec)
    fit_clearance_mm: float = 0.2


def fabrication_params(spec: Spec) -> Fabrication:
    """The :class:`Fabrication` values of a spec."""
    clearance = float(getattr(spec.outlet, "fit_clearance", 0.2))
    return Fabrication(insert=spec.insert, plug=spec.plug, fit_clearance_mm=clearance)


def fabrication_of(g: InletGeometry) -> Fabrication:
    """The fabrication values carried by the geometry (``g.fabrication``), or the
    defaults when the geometry carries none."""
    fab = getattr(g, "fabrication", None)
    return fab if isinstance(fab, Fabrication) else Fabrication()


# --- outlines ------------------------------------------------------------------------------
def footprint_end_mm(g: InletGeometry) -> float:
    """x where the insert's top footprint ends (mm): the nose end, or for a raised lip the
    end of its fairing (the fairing lies in the skin cut-out, see the module text)."""
    end = g.throat_end_mm
    if g.lip.style == "raised":
        end += g.lip.fairing_length_mm
    return end


def _pieces(g: InletGeometry, x_end: float, n: int) -> list[tuple[np.ndarray, np.ndarray]]:
    """Smooth pieces of the CCW outline 0 ≤ x ≤ x_end: (points (k, 2), outward normals)."""
    pf = g.planform
    x = np.union1d(np.linspace(0.0, g.length_mm, n), pf.node_x_mm)
    if x_end > g.length_mm:
        x = np.append(x, x_end)
    hw = pf.half_width(x)
    s = pf.slope(x)
    den = np.sqrt(1.0 + s * s)
    lower = (np.column_stack([x, -hw]), np.column_stack([-s, -np.ones_like(s)]) / den[:, None])
    upper = (
        np.column_stack([x, hw])[::-1],
        (np.column_stack([-s, np.ones_like(s)]) / den[:, None])[::-1],
    )
    h1, h0 = g.width_mm / 2.0, float(hw[0])
    end = (np.array([[x_end, -h1], [x_end, h1]]), np.array([[1.0, 0.0], [1.0, 0.0]]))
    apex = (np.array([[0.0, h0], [0.0, -h0]]), np.array([[-1.0, 0.0], [-1.0, 0.0]]))
    return [lower, end, upper, apex]


def offset_outline(
    pieces: list[tuple[np.ndarray, np.ndarray]], d: float, arc_step_deg: float = 3.0
) -> np.ndarray:
    """Offset a closed CCW outline made of smooth pieces outward by ``d`` (mm), with round
    joins at the convex corners between pieces. Returns (N, 2), first point not repeated."""
    out: list[np.ndarray] = []
    k = len(pieces)
    for i, (pts, nrm) in enumerate(pieces):
        seg = pts + d * nrm
        out.append(seg[:-1] if d == 0 else seg)
        _, nxt_n = pieces[(i + 1) % k]
        if d > 0:
            a0 = math.atan2(nrm[-1, 1], nrm[-1, 0])
            a1 = math.atan2(nxt_n[0, 1], nxt_n[0, 0])
            turn = (a1 - a0) % (2 * math.pi)
            if 1e-9 < turn < math.pi:
                m = max(math.ceil(math.degrees(turn) / arc_step_deg), 1)
                ang = a0 + turn * np.arange(1, m) / m
                c = pts[-1]
                out.append(np.column_stack([c[0] + d * np.cos(ang), c[1] + d * np.sin(ang)]))
    poly = np.vstack(out)
    keep = np.ones(len(poly), dtype=bool)
    keep[1:] = np.linalg.norm(np.diff(poly, axis=0), axis=1) > 1e-9
    return poly[keep]


def polygon_area(xy: np.ndarray) -> float:
    """Signed area of a closed polygon (mm², positive when counter-clockwise)."""
    x, y = xy[:, 0], xy[:, 1]
    return float(0.5 * (np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1))))


def _length(xy: np.ndarray, closed: bool = True) -> np.ndarray:
    p = np.vstack([xy, xy[:1]]) if closed else xy
    return np.concatenate([[0.0], np.cumsum(np.linalg.norm(np.diff(p, axis=0), axis=1))])


def opening_outline(g: InletGeometry, n: int = 400) -> np.ndarray:
    """The air opening in the skin plane, 0 ≤ x ≤ throat end, CCW (N, 2) in mm."""
    return offset_outline(_pieces(g, g.throat_end_mm, n), 0.0)


def plug_trim_outline(g: InletGeometry, plug: PlugSpec, n: int = 400) -> np.ndarray:
    """Base-plate edge of the plug: the opening offset outward by ``plug.trim_margin``
    with round corners, CCW (N, 2) in mm. Its area is A + P·m + π·m² (Steiner)."""
    return offset_outline(_pieces(g, g.throat_end_mm, n), plug.trim_margin)


# --- insert flange -------------------------------------------------------------------------
def transition_wall_mm(g: InletGeometry, wall: float) -> float:
    """Section offset (mm) of the insert's transition so the wall measured normal to the
    steepest ruling is still ``wall``: wall·√(1 + (max ruling run / length)²)."""
    t = g.transition
    if t is None:
        return wall
    return wall * t.ruling_stretch


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


def _keepout(g: InletGeometry, ins: InsertSpec) -> tuple[float, float] | None:
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
        s = _length(loop)
        total = s[-1]
        pos = np.arange(n) * total / n
        closed = np.vstack([loop, loop[:1]])
        pitch = total / n
    else:
        first = int(np.argmax(~free[:-1] & free[1:])) + 1  # first free point after a blocked run
        loop = np.roll(line, -first, axis=0)
        run = loop[: int(np.argmin(np.roll(free, -first)))]
        s = _length(run, closed=False)
        total = s[-1]
        pos = (np.arange(n) + 0.5) * total / n
        closed = run
        pitch = total / n
    cx = np.interp(pos, s, closed[:, 0])
    cy = np.interp(pos, s, closed[:, 1])
    return np.column_stack([cx, cy]), float(pitch) if n > 1 else math.inf


def flange_layout(
    g: InletGeometry, insert: InsertSpec, skin: SkinSpec | float | None = None, n: int = 400
) -> FlangeLayout:
    """The flange outline, skin cut-out and fastener holes of the insert (mm).

    Args:
        g: inlet geometry.
        insert: the ``[insert]`` section.
        skin: the ``[skin]`` section or its thickness (mm); default the geometry's.
        n: samples along the wall curve.
    """
    t_skin = g.skin_thickness_mm if skin is None else float(getattr(skin, "thickness", skin))
    off = insert.wall + g.edge_radius_mm
    fw = insert.flange_width
    pieces = _pieces(g, footprint_end_mm(g), n)
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
        opening_xy=opening_outline(g, n),
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


# --- checks ------------------------------------------------------------------------------
def validate_fabrication(g: InletGeometry, fab: Fabrication) -> None:
    """Raise :class:`SpecError` (every problem at once) when the insert or plug cannot be
    made: wall thicker than half the throat depth, flange too narrow for the holes, holes
    overlapping, a spigot the transition cannot carry, a plug draft of 45° or more."""
    ins, plug = fab.insert, fab.plug
    problems: list[tuple[str, object, str, str]] = []
    if ins.wall > g.depth_mm / 2.0:
        problems.append(
            (
                "insert.wall",
                ins.wall,
                f"<= {g.depth_mm / 2.0:.2f} mm (half the throat depth)",
                "walls thicker than half the throat depth leave no room for a sound part",
            )
        )
    d = ins.holes.diameter
    if ins.holes.count > 0:
        fw = ins.flange_width
        ed = ins.holes.edge_distance if ins.holes.edge_distance is not None else fw / 2.0
        need = d + 2.0 * MIN_LIGAMENT_MM
        if ed >= fw:
            problems.append(
                (
                    "insert.holes.edge_distance",
                    ed,
                    f"< {fw:.2f} mm (the flange width)",
                    "the holes would lie outside the flange",
                )
            )
        elif min(ed, fw - ed) - d / 2.0 < MIN_LIGAMENT_MM:
            key, val = (
                ("insert.flange_width", fw)
                if ins.holes.edge_distance is None
                else ("insert.holes.edge_distance", ed)
            )
            problems.append(
                (
                    key,
                    val,
                    f"flange >= {need:.2f} mm with the holes centred",
                    f"holes of {d:g} mm would break out of the flange "
                    f"(ligament < {MIN_LIGAMENT_MM:g} mm)",
                )
            )
        else:
            lay = flange_layout(g, ins)
            if ins.holes.count > 1 and lay.spacing_mm - d < MIN_LIGAMENT_MM:
                problems.append(
                    (
                        "insert.holes.count",
                        ins.holes.count,
                        f"<= {int(lay.spacing_mm * ins.holes.count / (d + MIN_LIGAMENT_MM))} "
                        "for this flange",
                        f"hole pitch {lay.spacing_mm:.1f} mm leaves holes of {d:g} mm overlapping",
                    )
                )
    t = g.transition
    sp = spigot_of(g, fab)
    if t is not None and sp is not None:
        wt = transition_wall_mm(g, ins.wall)
        if sp.bore_mm < 0.5 * t.outlet_width_mm:
            problems.append(
                (
                    "outlet.diameter",
                    t.outlet_width_mm,
                    f">= {2.0 * (2.0 * ins.wall + fab.fit_clearance_mm):.1f} mm "
                    f"for insert.wall = {ins.wall:g} mm",
                    f"the spigot bore ({sp.bore_mm:.1f} mm) would be under half the hose diameter",
                )
            )
        shoulder = t.outlet_width_mm / 2.0 + wt
        if sp.od_mm / 2.0 + sp.bead_height_mm > shoulder:
            problems.append(
                (
                    "insert.bead_height",
                    ins.bead_height,
                    f"<= {shoulder - sp.od_mm / 2.0:.2f} mm",
                    "the spigot with its bead would be larger than the transition's outer wall it "
                    "continues (the hose could not seat against the shoulder)",
                )
            )
        if sp.clamp_land_mm < ins.clamp_land:
            need_len = ins.clamp_land + (sp.bead_x1_mm - sp.bead_x0_mm) + LEAD_IN_MM
            problems.append(
                (
                    "outlet.spigot_length",
                    g.spigot_length_mm,
                    f">= {need_len:.1f} mm",
                    f"the spigot needs a clamp land of {ins.clamp_land:g} mm, a bead and a lead-in",
                )
            )
    if (
        t is not None
        and t.kind == "rect"
        and min(t.outlet_width_mm, t.outlet_height_mm) <= 2.0 * ins.wall
    ):
        problems.append(
            (
                "insert.wall",
                ins.wall,
                f"< {min(t.outlet_width_mm, t.outlet_height_mm) / 2:.2f} mm",
                "the collar walls would close the rectangular outlet",
            )
        )
    if not plug.draft_deg < 45.0:
        problems.append(
            (
                "plug.draft_deg",
                plug.draft_deg,
                "0 to < 45°",
                "a plug drafted 45° or more is not the cavity",
            )
        )
    else:
        shrink = g.drop_mm * math.tan(math.radians(plug.draft_deg))
        if shrink >= g.width_mm / 2.0:
            problems.append(
                (
                    "plug.draft_deg",
                    plug.draft_deg,
                    f"< {math.degrees(math.atan(g.width_mm / 2.0 / g.drop_mm)):.1f}° "
                    "for this throat",
                    "the drafted walls would meet before the floor",
                )
            )
    if problems:
        raise SpecError.many(problems)  # type: ignore[arg-type]


def fabrication_warnings(g: InletGeometry, fab: Fabrication) -> list[DesignWarning]:
    """Soft problems of the insert layout: hole edge distance and spacing (common practice,
    no source: edge ≥ 2 × d, spacing ≥ 4 × d), thin walls (FDM: warn below 1.2 mm), a
    part that rises into the skin beyond the cut-out (mount "behind")."""
    ins = fab.insert
    out: list[DesignWarning] = []
    d = ins.holes.diameter
    if ins.holes.count > 0:
        lay = flange_layout(g, ins)
        if lay.edge_distance_mm < EDGE_FACTOR * d:
            out.append(
                DesignWarning(
                    "hole_edge_distance",
                    f"fastener holes of {d:g} mm sit {lay.edge_distance_mm:.1f} mm "
                    "from the flange edge; "
                    f"≥ {EDGE_FACTOR * d:.1f} mm (2 × diameter) is common practice",
                )
            )
        if ins.holes.count > 1 and lay.spacing_mm < SPACING_FACTOR * d:
            out.append(
                DesignWarning(
                    "hole_spacing",
                    f"fastener hole pitch {lay.spacing_mm:.1f} mm "
                    f"is under {SPACING_FACTOR * d:.1f} mm "
                    "(4 × diameter, common practice)",
                )
            )
    if ins.wall < 1.2:
        out.append(
            DesignWarning(
                "thin_wall",
                f"insert.wall = {ins.wall:g} mm is under 1.2 mm, too thin for FDM "
                "(≥ 2 mm is common practice)",
            )
        )
    t = g.transition
    if ins.mount == "behind" and t is not None:
        # the duct's top ruling falls linearly from the throat roof to the outlet top; the
        # skin is intact downstream of the cut-out's end, so look from there on
        s = min(max((footprint_end_mm(g) - t.x_start_mm) / t.length_mm, 0.0), 1.0)
        roof_at_cutout_end = t.roof_z_mm + s * (t.outlet_top_z_mm - t.roof_z_mm)
        roof_out = max(roof_at_cutout_end, t.outlet_top_z_mm) + transition_wall_mm(g, ins.wall)
        if roof_out > -g.skin_thickness_mm + 1e-6:
            out.append(
                DesignWarning(
                    "insert_skin_clash",
                    "the insert's transition wall rises "
                    f"{roof_out + g.skin_thickness_mm:.1f} mm into the "
                    "skin downstream of the cut-out: relieve the skin or lower the duct",
                )
            )
    return out
