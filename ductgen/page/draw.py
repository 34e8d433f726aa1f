"""The two live drawings of the design page as SVG text, from a :class:`Design` (mm).

* plan view: the air opening, the skin cut-out, the insert's flange with its fastener
  holes, the transition's footprint under the skin, and dimensions W (at the lip station),
  L (ramp start to lip station) and the flange's overall length and width;
* centreline section: the skin, the floor (entry arc, straight ramp, flat throat), the lip
  nose, the throat roof and the transition to the outlet, with L, H and the ramp angle.

Flow runs left to right in both. Drawn in mm (the viewBox is in mm, y/z flipped so the
drawing reads as seen from outside and from the side); strokes do not scale.

On a curved skin or the user's panel the section is drawn on the skin: every point of the
centreline section goes through the design's maps (depths along the normal), as the solids
do. The plan is the opening developed flat, as the template is; :mod:`~ductgen.page.captions`
says which of the two drawings is flat and how much the development stretches lengths.
"""

from __future__ import annotations

from html import escape

import numpy as np

from ductgen.design import Design
from ductgen.sheets.skin_section import XZ, section_maps
from ductgen.sheets.skin_section import dense as densified

__all__ = ["densified", "plan_svg", "section_svg"]

_INK = "#1d2b36"
_OPENING = "#2f6f73"
_FLANGE = "#efe2c6"
_SKIN = "#c9ced3"
_DIM = "#8a3b12"
_AIR = "#dcecf2"


def _pts(xy: np.ndarray, flip: bool = True) -> str:
    p = np.round(np.asarray(xy, dtype=float).reshape(-1, 2) * (1.0, -1.0 if flip else 1.0), 2)
    return " ".join(map("{:.2f},{:.2f}".format, p[:, 0].tolist(), p[:, 1].tolist()))


def _line(x1: float, y1: float, x2: float, y2: float, cls: str = "ln", extra: str = "") -> str:
    return f'<line class="{cls}" x1="{x1:.2f}" y1="{y1:.2f}" x2="{x2:.2f}" y2="{y2:.2f}"{extra}/>'


def _text(x: float, y: float, text: str, size: float, anchor: str = "middle", cls: str = "") -> str:
    return (
        f'<text class="{cls}" x="{x:.2f}" y="{y:.2f}" font-size="{size:.2f}" '
        f'text-anchor="{anchor}">{escape(text)}</text>'
    )


def _dim(
    a: tuple[float, float],
    b: tuple[float, float],
    label: str,
    size: float,
    name: str,
    left: bool = False,
) -> str:
    """A dimension line between two SVG points with arrow heads and a label at its middle."""
    (x1, y1), (x2, y2) = a, b
    mx, my = (x1 + x2) / 2.0, (y1 + y2) / 2.0
    vertical = abs(x2 - x1) < abs(y2 - y1)
    if vertical:
        tx = mx - 0.5 * size if left else mx + 0.5 * size
        label_svg = (
            f'<text class="dim" x="{tx:.2f}" y="{my:.2f}" font-size="{size:.2f}" '
            f'text-anchor="{"end" if left else "start"}" dominant-baseline="middle">'
            f"{escape(label)}</text>"
        )
    else:
        label_svg = _text(mx, my - 0.4 * size, label, size, cls="dim")
    marks = ' marker-start="url(#arrow)" marker-end="url(#arrow)"'
    return f'<g data-dim="{name}">{_line(x1, y1, x2, y2, "dim", marks)}{label_svg}</g>'


def _frame(
    kind: str, xmin: float, ymin: float, xmax: float, ymax: float, body: str, title: str
) -> str:
    w, h = xmax - xmin, ymax - ymin
    return (
        f'<svg xmlns="http://www.w3.org/2000/svg" id="{kind}-svg" class="drawing" role="img" '
        f'viewBox="{xmin:.2f} {ymin:.2f} {w:.2f} {h:.2f}" preserveAspectRatio="xMidYMid meet">'
        f"<title>{escape(title)}</title>"
        '<defs><marker id="arrow" viewBox="0 0 10 10" refX="5" refY="5" markerWidth="7" '
        'markerHeight="7" orient="auto-start-reverse"><path d="M0,2 L10,5 L0,8 z" '
        f'fill="{_DIM}"/></marker></defs>'
        "<style>"
        f".ln{{stroke:{_INK};stroke-width:1.2;vector-effect:non-scaling-stroke}}"
        f".dim{{stroke:{_DIM};stroke-width:1;fill:{_DIM};vector-effect:non-scaling-stroke}}"
        f"text.dim{{stroke:none;font-family:sans-serif}}"
        f"text{{fill:{_INK};font-family:sans-serif}}"
        f".thin{{stroke:{_INK};stroke-width:0.8;fill:none;stroke-dasharray:6 4;"
        "vector-effect:non-scaling-stroke}"
        f".axis{{stroke:{_INK};stroke-width:0.6;fill:none;stroke-dasharray:14 4 2 4;"
        "vector-effect:non-scaling-stroke}"
        "</style>"
        f"{body}</svg>"
    )


def plan_svg(d: Design) -> str:
    """Plan view of the opening and the flange seen from outside (flow left to right)."""
    g, lay = d.geometry, d.layout
    outline = d.development.xy(lay.outline_xy)  # flattened as the template; exact: identity
    x0, x1 = float(outline[:, 0].min()), float(outline[:, 0].max())
    y0, y1 = float(outline[:, 1].min()), float(outline[:, 1].max())
    t = g.transition
    if t is not None and lay.mount == "behind":
        x1 = max(x1, t.x_end_mm + g.spigot_length_mm)
    span = max(x1 - x0, y1 - y0)
    fs = span * 0.035
    gap = fs * 2.2
    parts = _plan_parts(d, outline) + _plan_dimensions(d, outline, (x0, x1, y0, y1), fs, gap)
    return _frame(
        "plan",
        x0 - 5 * gap,
        -y1 - 2 * gap,
        x1 + 5 * gap,
        -y0 + 4 * gap,
        "".join(parts),
        f"plan view of {d.name}",
    )


def _plan_parts(d: Design, outline: np.ndarray) -> list[str]:
    """The plan's shapes (mm, flattened as the template): the flange (``outline``), the
    skin's cut-out, the transition's footprint, the opening and the holes."""
    g, lay = d.geometry, d.layout
    w = g.width_mm
    flat = d.development.xy
    t = g.transition
    parts = [
        f'<polygon id="plan-flange" points="{_pts(outline)}" fill="{_FLANGE}" class="ln"/>',
        f'<polygon id="plan-cutout" points="{_pts(flat(lay.cutout_xy))}" class="thin"/>',
    ]
    if t is not None:
        half_out = t.outlet_width_mm / 2.0
        xe = t.x_end_mm
        foot = np.array(
            [
                (t.x_start_mm, w / 2.0),
                (xe, half_out),
                (xe + g.spigot_length_mm, half_out),
                (xe + g.spigot_length_mm, -half_out),
                (xe, -half_out),
                (t.x_start_mm, -w / 2.0),
            ]
        )
        parts.append(f'<polyline id="plan-transition" points="{_pts(foot)}" class="thin"/>')
    parts.append(
        f'<polygon id="plan-opening" points="{_pts(flat(lay.opening_xy))}" fill="{_OPENING}" '
        'class="ln"/>'
    )
    r = lay.hole_diameter_mm / 2.0
    for hx, hy in flat(lay.hole_centres_xy):
        parts.append(
            f'<circle class="ln hole" fill="#ffffff" cx="{hx:.2f}" cy="{-hy:.2f}" r="{r:.2f}"/>'
        )
    return parts


def _plan_dimensions(
    d: Design,
    outline: np.ndarray,
    box: tuple[float, float, float, float],
    fs: float,
    gap: float,
) -> list[str]:
    """The plan's axis, dimensions and notes (mm): W at the lip station, L, the flange's
    length and width, the flow arrow and the flange's note; ``box`` (x0, x1, y0, y1) the
    drawn extent, ``fs`` the font size, ``gap`` the dimension lines' offset."""
    g, lay = d.geometry, d.layout
    w, length = g.width_mm, g.length_mm
    x0, x1, y0, y1 = box
    parts = [_line(x0 - gap, 0.0, x1 + gap, 0.0, "axis")]
    # W at the lip station, dimensioned beyond the flange's downstream end
    xd = x1 + gap
    parts.append(_line(length, -w / 2.0, xd + fs, -w / 2.0, "thin"))
    parts.append(_line(length, w / 2.0, xd + fs, w / 2.0, "thin"))
    parts.append(_dim((xd, -w / 2.0), (xd, w / 2.0), f"W {w:.1f}", fs, "W"))
    # L from the ramp start to the lip station, below the flange
    yd = -y0 + gap
    apex = g.planform.apex_width_mm / 2.0
    parts.append(_line(0.0, apex, 0.0, yd + fs * 0.5, "thin"))
    parts.append(_line(length, w / 2.0, length, yd + fs * 0.5, "thin"))
    parts.append(_dim((0.0, yd), (length, yd), f"L {length:.1f}", fs, "L"))
    # flange overall length and width
    yf = yd + 2.2 * fs
    parts.append(
        _dim(
            (x0, yf),
            (float(outline[:, 0].max()), yf),
            f"flange {float(outline[:, 0].max()) - x0:.1f}",
            fs,
            "flange_length",
        )
    )
    xw = x0 - gap
    parts.append(_dim((xw, -y1), (xw, -y0), f"{y1 - y0:.1f}", fs, "flange_width", left=True))
    parts.append(_text(x0 - 4 * gap, -y1 - gap * 0.6, "flow →", fs, anchor="start"))
    holes = len(lay.hole_centres_xy)
    note = f"flange {lay.flange_width_mm:g} wide, {holes} holes Ø{lay.hole_diameter_mm:g}"
    parts.append(_text(x0 + (x1 - x0) / 2.0, -y1 - gap * 0.6, note, fs * 0.9))
    return parts


def section_svg(d: Design, samples: int = 160) -> str:
    """Centreline section (flow left to right, outer skin at the top); on a curved skin
    drawn on the skin (see the module text)."""
    g = d.geometry
    x_end = g.outlet_x_mm + g.spigot_length_mm
    span = max(x_end, 1.0)
    fs = span * 0.03
    gap = fs * 2.0
    shapes, skins, xu = _section_outlines(d, samples, x_end, gap)
    zmin = min(z for _, z in shapes["floor"])
    maps = section_maps(d)
    if maps is not None:
        step = span / 60.0
        shapes = {k: maps[0](densified(v, step)) for k, v in shapes.items()}  # type: ignore[misc]
        skins = {k: maps[1](densified(v, step)) for k, v in skins.items()}  # type: ignore[misc]
    pts = {k: _pts(np.array(v)) for k, v in (shapes | skins).items()}
    parts = [
        f'<polygon id="section-air" points="{pts["air"]}" fill="{_AIR}"/>',
        f'<polygon points="{pts["a"]}" fill="{_SKIN}" class="ln" id="section-skin"/>',
        f'<polygon points="{pts["b"]}" fill="{_SKIN}" class="ln"/>',
        f'<polyline id="section-floor" points="{pts["floor"]}" class="ln" fill="none"/>',
        f'<polyline id="section-roof" points="{pts["roof"]}" class="ln" fill="none"/>',
        f'<polygon id="section-lip" points="{pts["body"]}" fill="{_OPENING}" class="ln"/>',
        f'<polyline id="section-top" points="{pts["top"]}" class="ln" fill="none"/>',
    ]
    drawn = np.vstack([np.asarray(v, dtype=float) for v in (shapes | skins).values()])
    zmin = min(zmin, float(drawn[:, 1].min()))
    yd = -gap
    parts += _section_labels(d, maps, zmin, xu, yd, fs, gap)
    ymax = -zmin + 3 * fs
    return _frame(
        "section",
        min(xu, float(drawn[:, 0].min())) - gap,
        min(yd, -float(drawn[:, 1].max())) - 3 * fs,
        max(x_end, float(drawn[:, 0].max())) + 3 * gap,
        max(ymax, g.drop_mm + 3 * fs),
        "".join(parts),
        f"centreline section of {d.name}",
    )


Outline = list[tuple[float, float]]


def _section_outlines(
    d: Design, samples: int, x_end: float, gap: float
) -> tuple[dict[str, Outline], dict[str, Outline], float]:
    """The section's outlines in design (u, w) (mm): the parts (``air``, ``floor``,
    ``roof``, the lip's ``body``) and the skin (``a`` ahead of the opening, ``b`` behind
    it, its ``top`` line), and the u where the skin drawn ahead begins (mm)."""
    g = d.geometry
    fl, lip, t = g.floor, g.lip, g.transition
    length = g.length_mm
    xs = np.linspace(0.0, g.throat_end_mm, samples)
    floor = list(zip(xs.tolist(), (-fl.depth(xs)).tolist(), strict=True))
    roof = [(lip.nose_end_mm, lip.roof_z_mm), (g.throat_end_mm, lip.roof_z_mm)]
    if t is not None:
        bottom = t.outlet_top_z_mm - t.outlet_height_mm
        floor += [(t.x_end_mm, bottom), (x_end, bottom)]
        roof += [(t.x_end_mm, t.outlet_top_z_mm), (x_end, t.outlet_top_z_mm)]
    span = max(x_end, 1.0)
    ts = g.skin_thickness_mm
    xu = -0.12 * span
    air = [(0.0, 0.0), *floor, *roof[::-1], (length, lip.centre_z_mm), (length, 0.0)]
    body = [*lip.nose(), *roof, (x_end, max(0.0, lip.centre_z_mm + lip.semi_minor_mm))]
    x_far = x_end + gap
    table = getattr(d.skin, "u", None)  # the user's panel is mapped over a table only
    if isinstance(table, np.ndarray) and table.size:
        xu, x_far = max(xu, float(table[0])), min(x_far, float(table[-1]))
    skin_a = [(xu, 0.0), (0.0, 0.0), (0.0, -ts), (xu, -ts)]
    skin_b = [(lip.nose_end_mm, 0.0), (x_far, 0.0), (x_far, -ts), (lip.nose_end_mm, -ts)]
    top = [(xu, 0.0), (x_far, 0.0)]
    shapes = {"air": air, "floor": floor, "roof": roof, "body": body}
    return shapes, {"a": skin_a, "b": skin_b, "top": top}, xu


def _section_labels(
    d: Design,
    maps: tuple[XZ, XZ] | None,
    zmin: float,
    xu: float,
    yd: float,
    fs: float,
    gap: float,
) -> list[str]:
    """The section's dimensions and labels (mm, deg): L above the skin, H at the lip
    station, the ramp angle along the ramp, the flow arrow, the transition's start and
    outlet; ``zmin`` the lowest drawn point, ``yd`` the height of the L line, ``fs`` the
    font size."""
    g = d.geometry
    t = g.transition
    length, h = g.length_mm, g.drop_mm
    parts: list[str] = []
    if t is not None:
        parts.append(_line(t.x_start_mm, 0.0, t.x_start_mm, -zmin + gap * 0.3, "thin"))
    parts.append(_line(0.0, 0.0, 0.0, yd - 0.5 * fs, "thin"))
    parts.append(_line(length, 0.0, length, yd - 0.5 * fs, "thin"))
    parts.append(_dim((0.0, yd), (length, yd), f"L {length:.1f}", fs, "L"))
    xh = length - 0.18 * length
    parts.append(_line(*_on_skin(maps, xh - fs, h), *_on_skin(maps, length, h), "thin"))
    parts.append(_dim(_on_skin(maps, xh, 0.0), _on_skin(maps, xh, h), f"H {h:.1f}", fs, "H"))
    parts.append(_ramp_label(d, maps, fs))
    parts.append(_text(xu, yd - 1.5 * fs, "flow →", fs, anchor="start"))
    if t is not None:
        kind = f"Ø{t.outlet_width_mm:.1f}" if t.kind == "round" else "rect"
        parts.append(
            _text(
                t.x_start_mm + t.length_mm / 2.0,
                -zmin + 1.6 * fs,
                f"transition {t.length_mm:g} → {kind}",
                fs * 0.9,
            )
        )
    return parts


def _on_skin(maps: tuple[XZ, XZ] | None, u: float, depth: float) -> tuple[float, float]:
    """SVG point (mm) of design (u, w = −depth) (mm): mapped onto the skin when it is
    curved."""
    if maps is None:
        return u, depth
    x, z = maps[0](np.array([[u, -depth]]))[0]
    return float(x), float(-z)


def _ramp_label(d: Design, maps: tuple[XZ, XZ] | None, fs: float) -> str:
    """The ramp angle (deg) and entry radius (mm) written under the ramp's straight part,
    turned with the ramp and, on a curved skin, with the skin's slope there; ``fs`` the
    font size (mm)."""
    fl, length = d.geometry.floor, d.geometry.length_mm
    xa, _ = fl.arc_end_mm
    xm = 0.5 * (xa + length)
    zm = float(fl.depth(xm))
    if maps is not None:  # turn the label with the skin's slope there
        (x_a, z_a), (x_b, z_b) = _on_skin(maps, xm - 1.0, zm), _on_skin(maps, xm + 1.0, zm)
        slope = float(np.degrees(np.arctan2(z_b - z_a, x_b - x_a)))
        xm, zm = _on_skin(maps, xm, zm)
        th_rot = fl.angle_deg + slope
    else:
        th_rot = fl.angle_deg
    th = fl.angle_deg
    label = f"{th:.2f}°" + (f", entry R {fl.entry_radius_mm:g}" if fl.entry_radius_mm else "")
    return (
        f'<text x="{xm:.2f}" y="{zm + 1.6 * fs:.2f}" font-size="{fs:.2f}" text-anchor="middle" '
        f'transform="rotate({th_rot:.3f} {xm:.2f} {zm:.2f})">ramp {escape(label)}</text>'
    )
