"""The sheet's centreline section: skin, ramp floor, lip, throat and transition, the datum
and the outlet, drawn in the datum's frame (mm).

On a flat skin the section is the design's (x, z) as it stands. On a curved skin or the
user's panel every point goes through the design's maps (``sheets/skin_section.py``, the
same as the design page): the skin line is the skin through the centreline, the floor,
roof, lip and duct are placed as the solids are, depths along the skin's normal, so the
section shows how far the skin falls (or rises) under the duct and where the straight
spigot points. The datum (ramp start on the centreline, outer skin) is marked; an arrow
leaves the outlet face's centre along the spigot's axis.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING

import numpy as np

from ductgen.sheets.placement import datum_label
from ductgen.sheets.skin_section import dense, model_to_drawn, section_maps
from ductgen.sheets.views import TITLE_MM, View, scale_for

if TYPE_CHECKING:
    from matplotlib.figure import Figure

    from ductgen.design import Design
    from ductgen.geometry.inlet import InletGeometry
    from ductgen.sheets.views import PaperBox, Size

__all__ = ["section_extent", "section_view"]

_SPLIT = "#b05000"
_OUTLET = "#1f5fa0"


def _parts(g: InletGeometry) -> dict[str, np.ndarray]:
    """The section's polylines in design (u, w) mm (w up, 0 on the outer skin)."""
    lip, t = g.lip, g.transition
    x = np.linspace(0.0, g.length_mm, 200)
    floor = [np.column_stack([x, -g.floor.depth(x)]), np.array([[g.throat_end_mm, -g.drop_mm]])]
    roof = [np.array([[lip.nose_end_mm, lip.roof_z_mm], [g.throat_end_mm, lip.roof_z_mm]])]
    out: dict[str, np.ndarray] = {}
    if t is not None:
        bottom = t.outlet_top_z_mm - t.outlet_height_mm
        floor.append(np.array([[t.x_end_mm, bottom]]))
        roof.append(np.array([[t.x_end_mm, t.outlet_top_z_mm]]))
        out["face"] = np.array([[t.x_end_mm, bottom], [t.x_end_mm, t.outlet_top_z_mm]])
    out["floor"] = np.vstack(floor)
    out["roof"] = np.vstack(roof)
    out["nose"] = lip.nose()
    if lip.style == "raised" and lip.fairing_length_mm > 0:
        out["fairing"] = np.array(
            [[lip.nose_end_mm, lip.thickness_mm], [lip.nose_end_mm + lip.fairing_length_mm, 0.0]]
        )
    return out


def section_view(
    fig: Figure,
    page: Size,
    box: PaperBox,
    g: InletGeometry,
    design: Design | None = None,
    split_x: tuple[float, ...] = (),
) -> float:
    """Draw the centreline section in ``box`` (paper mm); returns its scale."""
    raw, parts, skin, mp = _drawn(g, design)

    def at(u: float, w: float) -> np.ndarray:
        return mp(np.array([[u, w]]))[0]

    x_end = float(raw["floor"][-1, 0])
    ext, lo, hi = _extent(g, parts, skin)
    s = scale_for(ext, (box[2] - 10.0, box[3] - TITLE_MM - 8.0))
    mid = 0.5 * (lo + hi)
    v = View(fig, page, box, (float(mid[0]), float(mid[1]) + 0.5 * TITLE_MM / s), s)
    v.line(skin["outer"], colour="0.5", lw=0.4)
    v.line(skin["inner"], colour="0.7", lw=0.3)
    for key in ("floor", "roof"):
        v.line(parts[key])
    if "face" in parts:
        v.line(parts["face"], colour="0.5", lw=0.3, ls=(0, (3, 2)))
    v.fill(parts["nose"])
    if "fairing" in parts:
        v.line(parts["fairing"], lw=0.6)
    v.datum((0.0, 0.0))
    length, lip = g.length_mm, g.lip
    v.dim(at(length, 0.0), at(length, -g.drop_mm), (0.0, 0.0), f"H {g.drop_mm:.2f}")
    # D downstream of H, inside the duct: extension lines along the skin's tangent there
    xe = g.throat_end_mm
    tangent = at(xe + 1.0, -g.drop_mm) - at(xe - 1.0, -g.drop_mm)
    tangent /= np.linalg.norm(tangent)
    v.dim(at(xe, -g.drop_mm), at(xe, lip.roof_z_mm), tangent * 7.0 / s, f"D {g.depth_mm:.2f}")
    gap = 1.5 / s
    for i, x_split in enumerate(split_x):  # the insert's glue faces: floor to above the skin
        if not 0.0 < x_split < x_end:
            continue
        zf = float(np.interp(x_split, raw["floor"][:, 0], raw["floor"][:, 1]))
        seg = mp(np.array([[x_split, zf], [x_split, 2 * gap]]))
        v.line(seg, colour=_SPLIT, lw=0.6, ls=(0, (6, 2, 1, 2)))
        v.label(f"split {i + 1}", seg[-1], 5.5, colour=_SPLIT)
    v.label(datum_label(design), (0.0, 0.0), 6.0, colour="#b00020")
    xa = 0.45 * length
    v.label(f"ramp {g.floor.angle_deg:.2f} deg", at(xa, -float(g.floor.depth(xa)) - gap), 6.5)
    t = g.transition
    if t is not None and design is not None and design.placement.outlet_point is not None:
        _outlet_axis(v, design, s)
    if t is not None:
        v.label(f"outlet {t.kind} {t.outlet_width_mm:.1f}", parts["floor"][-1], 6.0)
    v.finish()
    return s


def _outlet_axis(v: View, design: Design, s: float) -> None:
    """The arrow from the outlet face's centre along the spigot's axis, 14 paper mm long at
    the view's scale ``s`` (paper mm per mm), and its label."""
    c = model_to_drawn(design, np.asarray(design.placement.outlet_point))[0]
    axis = np.asarray(design.placement.outlet_axis, dtype=float)
    if design.panel_frame is not None:
        axis = axis @ design.panel_frame.axes.T
    centre, direction = c[[0, 2]], axis[[0, 2]] / np.linalg.norm(axis[[0, 2]])
    tip = centre + direction * 14.0 / s
    v.arrow(centre, tip, lw=0.6)
    v.label("outlet axis", tip, 6.0, colour=_OUTLET)


def _drawn(
    g: InletGeometry, design: Design | None
) -> tuple[
    dict[str, np.ndarray],
    dict[str, np.ndarray],
    dict[str, np.ndarray],
    Callable[[np.ndarray], np.ndarray],
]:
    """The section's parts unmapped (design (u, w)), mapped, the skin lines mapped, and the
    map of part points."""
    raw = _parts(g)
    x_end = float(raw["floor"][-1, 0])
    xu, x_far = -0.06 * x_end, 1.03 * x_end
    table = getattr(design.skin, "u", None) if design is not None else None
    if isinstance(table, np.ndarray) and table.size:  # the user's panel: its mapped table
        xu, x_far = max(xu, float(table[0])), min(x_far, float(table[-1]))
    ts = g.skin_thickness_mm
    skin = {
        "outer": np.array([[xu, 0.0], [x_far, 0.0]]),
        "inner": np.array([[xu, -ts], [0.0, -ts]]),
    }
    maps = section_maps(design) if design is not None else None
    step = x_end / 200.0
    parts = dict(raw)
    if maps is not None:
        parts = {k: maps[0](dense(v, step)) for k, v in raw.items()}
        skin = {k: maps[1](dense(v, step)) for k, v in skin.items()}

    def mp(uw: np.ndarray) -> np.ndarray:
        """Drawn points of design (u, w) (N, 2) on the centreline (parts' points)."""
        q = np.asarray(uw, dtype=float).reshape(-1, 2)
        return maps[0](dense(q, step)) if maps is not None else q

    return raw, parts, skin, mp


def _extent(
    g: InletGeometry, parts: dict[str, np.ndarray], skin: dict[str, np.ndarray]
) -> tuple[tuple[float, float], np.ndarray, np.ndarray]:
    """True size (w, h) mm the section needs with room for its labels, and its drawn box."""
    pts = np.vstack([*parts.values(), *skin.values()])
    lo, hi = pts.min(axis=0), pts.max(axis=0)
    return (
        (float(hi[0] - lo[0]) * 1.04, float(hi[1] - lo[1]) * 1.05 + 2.0 * g.lip.thickness_mm),
        lo,
        hi,
    )


def section_extent(g: InletGeometry, design: Design | None = None) -> tuple[float, float]:
    """True size (w, h) mm the section view needs (for the sheet's layout), drawn in a box
    10 mm narrower and 8 mm lower than its own (paper mm, room for the labels)."""
    _, parts, skin, _ = _drawn(g, design)
    return _extent(g, parts, skin)[0]
