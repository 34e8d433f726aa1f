"""Cross-field rules of the insert and the plug: what cannot be made (a
:class:`~ductgen.errors.SpecError` naming the spec key) and what is only unwise (a
:class:`~ductgen.errors.DesignWarning`). Checked once, when the design is built.
"""

from __future__ import annotations

import math

from ductgen.errors import DesignWarning, SpecError
from ductgen.geometry.fabrication import (
    LEAD_IN_MM,
    Fabrication,
    InsertParams,
    PlugParams,
    flange_layout,
    footprint_end_mm,
    spigot_of,
    transition_wall_mm,
)
from ductgen.geometry.inlet import InletGeometry

__all__ = [
    "EDGE_FACTOR",
    "MIN_LIGAMENT_MM",
    "SPACING_FACTOR",
    "fabrication_warnings",
    "validate_fabrication",
]

#: Hole edge distance ≥ 2 × diameter (common practice, no source).
EDGE_FACTOR = 2.0
#: Hole spacing ≥ 4 × diameter (common practice, no source).
SPACING_FACTOR = 4.0
#: Below this ligament (mm) between a hole and an edge or the next hole the hole breaks
#: out: about two FDM perimeters of a 0.4 mm nozzle (common practice, no source).
MIN_LIGAMENT_MM = 1.0


#: One problem for :meth:`SpecError.many`: (spec key, value, allowed, reason).
Problem = tuple[str, object, str, str]


def validate_fabrication(g: InletGeometry, fab: Fabrication) -> None:
    """Raise :class:`SpecError` (every problem at once) when the insert or plug cannot be
    made: wall thicker than half the throat depth, flange too narrow for the holes, holes
    overlapping, a spigot the transition cannot carry, a plug draft of 45° or more."""
    ins = fab.insert
    problems: list[Problem] = []
    if ins.wall > g.depth_mm / 2.0:
        problems.append(
            (
                "insert.wall",
                ins.wall,
                f"<= {g.depth_mm / 2.0:.2f} mm (half the throat depth)",
                "walls thicker than half the throat depth leave no room for a sound part",
            )
        )
    if ins.holes.count > 0:
        problems += _hole_problems(g, ins)
    problems += _spigot_problems(g, fab)
    t = g.transition
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
    problems += _plug_problems(g, fab.plug)
    if problems:
        raise SpecError.many(problems)


def _hole_problems(g: InletGeometry, ins: InsertParams) -> list[Problem]:
    """The flange's holes (mm): inside the flange, a ligament of :data:`MIN_LIGAMENT_MM` to
    its edges and between neighbours."""
    d = ins.holes.diameter
    fw = ins.flange_width
    ed = ins.holes.edge_distance if ins.holes.edge_distance is not None else fw / 2.0
    need = d + 2.0 * MIN_LIGAMENT_MM
    if ed >= fw:
        return [
            (
                "insert.holes.edge_distance",
                ed,
                f"< {fw:.2f} mm (the flange width)",
                "the holes would lie outside the flange",
            )
        ]
    if min(ed, fw - ed) - d / 2.0 < MIN_LIGAMENT_MM:
        key, val = (
            ("insert.flange_width", fw)
            if ins.holes.edge_distance is None
            else ("insert.holes.edge_distance", ed)
        )
        return [
            (
                key,
                val,
                f"flange >= {need:.2f} mm with the holes centred",
                f"holes of {d:g} mm would break out of the flange "
                f"(ligament < {MIN_LIGAMENT_MM:g} mm)",
            )
        ]
    lay = flange_layout(g, ins)
    if ins.holes.count > 1 and lay.spacing_mm - d < MIN_LIGAMENT_MM:
        return [
            (
                "insert.holes.count",
                ins.holes.count,
                f"<= {int(lay.spacing_mm * ins.holes.count / (d + MIN_LIGAMENT_MM))} "
                "for this flange",
                f"hole pitch {lay.spacing_mm:.1f} mm leaves holes of {d:g} mm overlapping",
            )
        ]
    return []


def _spigot_problems(g: InletGeometry, fab: Fabrication) -> list[Problem]:
    """A round spigot the transition cannot carry (mm): its bore under half the hose, its
    bead proud of the transition's outer wall, no room for the clamp land."""
    t = g.transition
    sp = spigot_of(g, fab)
    if t is None or sp is None:
        return []
    ins = fab.insert
    problems: list[Problem] = []
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
    return problems


def _plug_problems(g: InletGeometry, plug: PlugParams) -> list[Problem]:
    """The plug's draft (deg): under 45°, and shallow enough that the drafted walls do not
    meet above the floor."""
    if not plug.draft_deg < 45.0:
        return [
            (
                "plug.draft_deg",
                plug.draft_deg,
                "0 to < 45°",
                "a plug drafted 45° or more is not the cavity",
            )
        ]
    shrink = g.drop_mm * math.tan(math.radians(plug.draft_deg))
    if shrink >= g.width_mm / 2.0:
        return [
            (
                "plug.draft_deg",
                plug.draft_deg,
                f"< {math.degrees(math.atan(g.width_mm / 2.0 / g.drop_mm)):.1f}° for this throat",
                "the drafted walls would meet before the floor",
            )
        ]
    return []


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
