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
        raise SpecError.many(problems)


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
