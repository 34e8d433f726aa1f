"""``NAME-sheet.pdf``: one dimensioned drawing sheet of the inlet (matplotlib).

A3 landscape (420 × 297 mm) for ``template.paper = "A4"``, ANSI B / tabloid landscape
(431.8 × 279.4 mm) for ``"Letter"``. The views are drawn at a standard scale chosen to fit
(stated under each view): plan view of the skin opening, centreline section (skin, ramp
floor, lip, throat and transition), an enlarged lip detail; the table of offsets (x,
half-width, floor depth) at every station of the profile (marked ``*``) and at 5 % steps,
the key dimensions, a title block and the cautions (README, Cautions). Dimensions in mm.
"""

from __future__ import annotations

import io
import textwrap
from typing import TYPE_CHECKING, Any

import numpy as np

from ductgen.export.placement import text_width_em
from ductgen.export.template_layout import CAUTIONS, build_date
from ductgen.geometry.inlet import InletGeometry
from ductgen.stamp import build_datetime
from ductgen.units import MM_PER_INCH

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure
    from matplotlib.typing import RcKeyType
    from numpy.typing import ArrayLike

    _Size = tuple[float, float]  # paper (width, height), mm
    _Box = tuple[float, float, float, float]  # x, y, width, height on the paper, mm

__all__ = ["SHEET_MM", "offset_rows", "sheet_pdf"]

#: template.paper → drawing sheet (width, height) mm, landscape.
SHEET_MM: dict[str, tuple[float, float]] = {"A4": (420.0, 297.0), "Letter": (431.8, 279.4)}
_SCALES = (5.0, 2.0, 1.0, 0.5, 0.2, 0.1, 0.05, 0.02, 0.01)
_INCH = MM_PER_INCH
_RC: dict[RcKeyType, Any] = {
    "path.simplify": False,
    "pdf.use14corefonts": True,
    "font.family": "sans-serif",
    "font.sans-serif": ["Helvetica"],
}


def offset_rows(g: InletGeometry) -> list[dict[str, Any]]:
    """Offsets at the profile's stations and at 5 % steps of L, sorted by x.

    Each row: ``x_over_L``, ``x_mm``, ``half_width_mm``, ``floor_depth_mm`` and ``station``
    (True at a tabulated station of the profile). Values come from
    :meth:`InletGeometry.offsets`, the same function ``report.json`` uses.
    """
    prof = np.asarray(g.planform.profile.x, dtype=float)
    steps = np.round(np.linspace(0.0, 1.0, 21), 12)
    s = np.array(sorted(set(np.round(prof, 12)) | set(steps)))
    rows = g.offsets(s)
    out = []
    for si, r in zip(s, rows, strict=True):
        out.append({"x_over_L": float(si), **r, "station": bool(np.any(np.abs(prof - si) < 1e-9))})
    return out


_PT_PER_MM = 72.0 / 25.4


def _scale_for(extent: tuple[float, float], box: tuple[float, float]) -> float:
    k = min(box[0] / extent[0], box[1] / extent[1])
    return next((s for s in _SCALES if s <= k), _SCALES[-1])


def _view(fig: Figure, page: _Size, box: _Box, centre: tuple[float, float], scale: float) -> Axes:
    """Axes covering paper box (x, y, w, h) mm, data in true mm at ``scale`` around ``centre``."""
    x, y, w, h = box
    ax = fig.add_axes((x / page[0], y / page[1], w / page[0], h / page[1]))
    ax.set_xlim(centre[0] - 0.5 * w / scale, centre[0] + 0.5 * w / scale)
    ax.set_ylim(centre[1] - 0.5 * h / scale, centre[1] + 0.5 * h / scale)
    ax.set_axis_off()
    return ax


def _scale_text(s: float) -> str:
    return f"{s:g}:1" if s >= 1 else f"1:{1 / s:g}"


def _dim(
    ax: Axes,
    a: ArrayLike,
    b: ArrayLike,
    off: float,
    text: str,
    horizontal: bool = True,
    fs: float = 6.5,
) -> None:
    """Linear dimension between a and b, offset ``off`` (data mm) perpendicular to it."""
    a, b = np.asarray(a, float), np.asarray(b, float)
    if horizontal:
        pa, pb = a + np.array([0.0, off]), np.array([b[0], a[1] + off])
        ext = [(a, pa), (b, np.array([b[0], pa[1]]))]
    else:
        pa, pb = a + np.array([off, 0.0]), np.array([a[0] + off, b[1]])
        ext = [(a, pa), (b, np.array([pa[0], b[1]]))]
    for p, q in ext:
        ax.plot([p[0], q[0]], [p[1], q[1]], color="0.45", lw=0.3)
    ax.annotate(
        "",
        (pa[0], pa[1]),
        (pb[0], pb[1]),
        arrowprops={"arrowstyle": "<->", "lw": 0.5, "color": "0.2", "shrinkA": 0, "shrinkB": 0},
    )
    m = 0.5 * (pa + pb)
    ax.text(
        m[0],
        m[1],
        text,
        fontsize=fs,
        ha="center",
        va="center",
        rotation=0 if horizontal else 90,
        bbox={"fc": "white", "ec": "none", "pad": 0.6},
    )


def _plan(fig: Figure, page: _Size, box: _Box, g: InletGeometry) -> float:
    pf, length, w = g.planform, g.length_mm, g.width_mm
    s = _scale_for((length * 1.25, w * 1.6), box[2:])
    ax = _view(fig, page, box, (0.5 * length, 0.0), s)
    o = pf.outline(400)
    o = np.vstack([o, o[:1]])
    ax.plot(o[:, 0], o[:, 1], color="k", lw=0.7)
    ax.plot([-0.06 * length, 1.06 * length], [0, 0], color="0.4", lw=0.3, ls=(0, (8, 2, 1, 2)))
    for x in pf.node_x_mm:
        hw = float(pf.half_width(x))
        ax.plot([x, x], [-hw, hw], color="0.75", lw=0.25)
    _dim(ax, (length, -0.5 * w), (length, 0.5 * w), 0.08 * length, f"W {w:.2f}", horizontal=False)
    _dim(ax, (0, -0.5 * w), (length, -0.5 * w), -0.18 * w, f"L {length:.2f}")
    _dim(
        ax,
        (0, -0.5 * pf.apex_width_mm),
        (0, 0.5 * pf.apex_width_mm),
        -0.05 * length,
        f"{pf.apex_width_mm:.2f}",
        horizontal=False,
    )
    ax.annotate(
        "FLOW",
        (0.25 * length, 0.62 * w),
        (0.05 * length, 0.62 * w),
        fontsize=7,
        va="center",
        arrowprops={"arrowstyle": "->", "lw": 0.6},
    )
    return s


def _section_profile(g: InletGeometry) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Centreline section: floor (x, z) from the ramp start to the outlet, and roof (x, z)."""
    length = g.length_mm
    x = np.linspace(0.0, length, 300)
    floor = [np.column_stack([x, -g.floor.depth(x)])]
    roof = [np.array([[g.lip.nose_end_mm, g.lip.roof_z_mm]])]
    xe = g.throat_end_mm
    floor.append(np.array([[xe, -g.drop_mm]]))
    if g.transition is not None:
        t = g.transition
        floor.append(np.array([[t.x_end_mm, t.outlet_top_z_mm - t.outlet_height_mm]]))
        roof.append(np.array([[t.x_end_mm, t.outlet_top_z_mm]]))
    return np.vstack(floor), np.vstack(roof), g.lip.nose()


def _section(
    fig: Figure, page: _Size, box: _Box, g: InletGeometry, split_x: tuple[float, ...] = ()
) -> float:
    floor, roof, nose = _section_profile(g)
    x_end = float(floor[-1, 0])
    zmin = float(floor[:, 1].min())
    s = _scale_for((x_end * 1.2, (-zmin + 2 * g.lip.thickness_mm) * 1.3), box[2:])
    ax = _view(fig, page, box, (0.5 * x_end, 0.5 * zmin + 0.5 * g.lip.thickness_mm), s)
    ax.plot([-0.06 * x_end, 1.03 * x_end], [0, 0], color="0.5", lw=0.4)  # skin outer surface
    ax.plot([-0.06 * x_end, 0], [-g.skin_thickness_mm] * 2, color="0.7", lw=0.3)
    ax.plot(floor[:, 0], floor[:, 1], color="k", lw=0.7)
    ax.plot(roof[:, 0], roof[:, 1], color="k", lw=0.7)
    ax.fill(nose[:, 0], nose[:, 1], color="0.85", ec="k", lw=0.6)
    lip = g.lip
    if lip.style == "raised" and lip.fairing_length_mm > 0:
        ax.plot(
            [lip.nose_end_mm, lip.nose_end_mm + lip.fairing_length_mm],
            [lip.thickness_mm, 0],
            color="k",
            lw=0.6,
        )
    length = g.length_mm
    _dim(
        ax,
        (length, -g.drop_mm),
        (length, 0.0),
        -0.06 * x_end,
        f"H {g.drop_mm:.2f}",
        horizontal=False,
    )
    _dim(
        ax,
        (g.throat_end_mm, -g.drop_mm),
        (g.throat_end_mm, lip.roof_z_mm),
        0.06 * x_end,
        f"D {g.depth_mm:.2f}",
        horizontal=False,
    )
    # labels clear of every line: below the floor over the label's whole width (paper
    # gap 1.5 mm, text width from the Helvetica metrics at 72/25.4 pt per mm)
    gap = 1.5 / s
    xa = 0.45 * length
    label = f"ramp {g.floor.angle_deg:.2f} deg"
    half_w = 0.5 * text_width_em(label) * (6.5 / _PT_PER_MM) / s
    xs = np.linspace(max(xa - half_w, 0.0), min(xa + half_w, length), 50)
    ax.text(
        xa,
        -float(np.max(g.floor.depth(xs))) - gap,
        label,
        fontsize=6.5,
        ha="center",
        va="top",
    )
    for i, x_split in enumerate(split_x):  # the insert's glue faces: floor to above the skin
        if not 0.0 < x_split < x_end:
            continue
        zf = float(np.interp(x_split, floor[:, 0], floor[:, 1]))
        ax.plot([x_split, x_split], [zf, 2 * gap], color="#b05000", lw=0.6, ls=(0, (6, 2, 1, 2)))
        ax.text(x_split, 2.5 * gap, f"split {i + 1}", fontsize=5.5, color="#b05000", ha="center")
    if g.transition is not None:
        t = g.transition
        # under the section's lowest point, right-aligned with the outlet face: no line
        # of the section passes below it
        ax.text(
            t.x_end_mm,
            zmin - gap,
            f"outlet {t.kind} {t.outlet_width_mm:.1f}",
            fontsize=6,
            ha="right",
            va="top",
        )
    return s


def _lip_detail(fig: Figure, page: _Size, box: _Box, g: InletGeometry) -> float:
    lip = g.lip
    nose = lip.nose()
    a, t = lip.semi_major_mm, lip.thickness_mm
    s = _scale_for((3.2 * a + 2 * t, 3.0 * t), box[2:])
    ax = _view(fig, page, box, (lip.station_mm + 0.8 * a, lip.centre_z_mm), s)
    ax.fill(
        np.r_[nose[:, 0], lip.nose_end_mm + 1.2 * a, lip.nose_end_mm + 1.2 * a],
        np.r_[nose[:, 1], nose[-1, 1], nose[0, 1]],
        color="0.85",
        ec="k",
        lw=0.6,
    )
    ax.plot([lip.station_mm - a, lip.nose_end_mm + 1.3 * a], [0, 0], color="0.5", lw=0.4)
    _dim(
        ax,
        (lip.nose_end_mm + 1.2 * a, nose[-1, 1]),
        (lip.nose_end_mm + 1.2 * a, nose[0, 1]),
        0.25 * a,
        f"t {t:.2f}",
        horizontal=False,
    )
    _dim(ax, (lip.station_mm, nose[-1, 1]), (lip.nose_end_mm, nose[-1, 1]), -0.6 * t, f"a {a:.2f}")
    ax.text(
        lip.station_mm - 0.9 * a,
        lip.centre_z_mm + 1.1 * t,
        f"{lip.style} lip, elliptical nose {lip.nose_ratio:g}:1",
        fontsize=6.5,
    )
    return s


def sheet_pdf(
    g: InletGeometry,
    spec: Any,
    spec_hash: str,
    version: str,
    preview: bytes | None = None,
    flow: dict[str, Any] | None = None,
    split_x_mm: tuple[float, ...] = (),
    skin_lines: tuple[tuple[str, str], ...] = (),
) -> bytes:
    """Encode the drawing sheet PDF.

    ``split_x_mm``: stations (mm) where the insert is split across the flow, drawn on the
    centreline section.

    Args:
        g: inlet geometry; spec: the spec (name, template units and paper).
        spec_hash: ``spec_sha256``; version: ductgen version for the title block.
        preview: optional PNG drawn in the picture box.
        flow: the report's ``flow`` section, drawn as the AIRFLOW block when given.
        skin_lines: (name, value) lines on the skin and the installation datum, added to
            the key dimensions (a curved skin: its radii, the datum, where the outlet points).
    """
    import logging

    from matplotlib import rc_context
    from matplotlib.backends.backend_pdf import PdfPages
    from matplotlib.figure import Figure
    from matplotlib.patches import Rectangle

    logging.getLogger("matplotlib.font_manager").setLevel(logging.ERROR)
    page = SHEET_MM[spec.template.paper]
    pw, ph = page
    buf = io.BytesIO()
    with (
        rc_context(_RC),
        PdfPages(
            buf,
            metadata={
                "Title": f"{spec.name} drawing sheet",
                "Creator": "ductgen",
                "CreationDate": build_datetime(),  # reproducible: the build date
            },
        ) as pdf,
    ):
        fig = Figure(figsize=(pw / _INCH, ph / _INCH))
        bg = fig.add_axes((0, 0, 1, 1))
        bg.set_xlim(0, pw)
        bg.set_ylim(0, ph)
        bg.set_axis_off()
        bg.add_patch(Rectangle((10, 10), pw - 20, ph - 20, fill=False, lw=1.0))
        tx = pw - 10 - 118  # right column: table, dimensions, title block
        bg.plot([tx, tx], [10, ph - 10], color="k", lw=0.6)
        views = [
            ("PLAN VIEW (skin opening, outer surface)", (14, 160, tx - 18, ph - 160 - 16), _plan),
            (
                "CENTRELINE SECTION",
                (14, 92, tx - 18, 62),
                lambda f, p, b, gg: _section(f, p, b, gg, tuple(split_x_mm)),
            ),
            ("LIP DETAIL", (14, 14, 0.45 * (tx - 18), 70), _lip_detail),
        ]
        for title, box, fn in views:
            s = fn(fig, page, box, g)
            bg.text(
                box[0],
                box[1] + box[3] - 1,
                f"{title}   scale {_scale_text(s)}",
                fontsize=7.5,
                weight="bold",
                va="top",
            )
        if preview:
            from PIL import Image

            img = np.asarray(Image.open(io.BytesIO(preview)).convert("RGB"))
            bx = 14 + 0.45 * (tx - 18) + 4
            bw = tx - 4 - bx
            bh = min(74.0, bw * img.shape[0] / img.shape[1])
            iax = fig.add_axes((bx / pw, 12 / ph, bw / pw, bh / ph))
            iax.imshow(img, interpolation="bilinear")
            iax.set_axis_off()
        _table(bg, tx, ph, g, 200.0 if flow else 150.0)
        _key_dims(bg, tx, g, skin_lines)
        if flow:
            _flow_block(bg, tx, flow)
        _title_block(bg, tx, pw, g, spec, spec_hash, version)
        pdf.savefig(fig)
    return buf.getvalue()


def _flow_block(bg: Axes, tx: float, flow: dict[str, Any]) -> None:
    from ductgen.flow.sheet_block import FLOW_BLOCK_TITLE, flow_block_lines

    bg.text(tx + 4, 193.0, FLOW_BLOCK_TITLE, fontsize=7.5, weight="bold")
    for i, line in enumerate(flow_block_lines(flow)):
        bg.text(tx + 4, 189.0 - 3.7 * i, line, fontsize=6.5)


def _table(bg: Axes, tx: float, ph: float, g: InletGeometry, bottom: float = 150.0) -> None:
    rows = offset_rows(g)
    y = ph - 16
    bg.text(tx + 4, y, "TABLE OF OFFSETS (mm)   * = profile station", fontsize=7.5, weight="bold")
    y -= 5.5
    cols = (tx + 4, tx + 22, tx + 48, tx + 78)
    for cx, head in zip(cols, ("x/L", "x", "half-width", "floor depth"), strict=True):
        bg.text(cx, y, head, fontsize=6.8, weight="bold")
    step = min(3.6, (ph - bottom - 30) / max(len(rows), 1))
    for r in rows:
        y -= step
        mark = "*" if r["station"] else " "
        cells = (
            f"{r['x_over_L']:.3f}{mark}",
            f"{r['x_mm']:.2f}",
            f"{r['half_width_mm']:.3f}",
            f"{r['floor_depth_mm']:.3f}",
        )
        for cx, c in zip(cols, cells, strict=True):
            bg.text(cx, y, c, fontsize=6.5, weight="bold" if r["station"] else "normal")


def _key_dims(
    bg: Axes, tx: float, g: InletGeometry, extra: tuple[tuple[str, str], ...] = ()
) -> None:
    pf = g.planform
    items = [
        ("throat width W", f"{g.width_mm:.2f} mm"),
        ("throat depth D", f"{g.depth_mm:.2f} mm"),
        ("ramp length L", f"{g.length_mm:.2f} mm"),
        ("ramp angle", f"{g.floor.angle_deg:.2f} deg"),
        ("entry radius", f"{g.floor.entry_radius_mm:.2f} mm"),
        ("floor drop H", f"{g.drop_mm:.2f} mm"),
        ("apex width", f"{pf.apex_width_mm:.2f} mm"),
        ("max wall divergence", f"{pf.max_divergence_deg:.1f} deg"),
        ("lip", f"{g.lip.style}, t {g.lip.thickness_mm:.2f} mm, nose {g.lip.nose_ratio:g}:1"),
        ("throat area W x D", f"{g.throat_area_mm2:.0f} mm2"),
        *extra,
    ]
    y = 150.0
    step = min(3.9, 39.0 / len(items))  # the block ends above the cautions
    bg.text(tx + 4, y, "KEY DIMENSIONS", fontsize=7.5, weight="bold")
    for k, v in items:
        y -= step
        bg.text(tx + 4, y, k, fontsize=6.8)
        bg.text(tx + 50, y, v, fontsize=6.8)


def _title_block(
    bg: Axes, tx: float, pw: float, g: InletGeometry, spec: Any, spec_hash: str, version: str
) -> None:
    from matplotlib.patches import Rectangle

    bg.add_patch(Rectangle((tx, 10), pw - 10 - tx, 95, fill=False, lw=0.6))
    bg.text(tx + 4, 99, "CAUTIONS", fontsize=7.5, weight="bold")
    y = 95.0
    for line in textwrap.wrap(CAUTIONS, 78):
        bg.text(tx + 4, y, line, fontsize=6.2)
        y -= 3.1
    bg.plot([tx, pw - 10], [48, 48], color="k", lw=0.6)
    units = "mm" if spec.template.units == "mm" else "mm (template in inches)"
    rows = [
        (spec.name, 11, "bold"),
        ("NACA-type flush inlet - drawing sheet", 7.5, "normal"),
        (f"date {build_date()}    units {units}", 7, "normal"),
        (f"spec sha256 {spec_hash}", 5.6, "normal"),
        (f"ductgen {version}    profile {g.planform.profile.name}", 7, "normal"),
        ("Dimensions in mm. Do not scale from this sheet: use the 1:1 template.", 6.5, "normal"),
    ]
    y = 42.0
    for text, fs, wt in rows:
        bg.text(tx + 4, y, text, fontsize=fs, weight=wt)
        y -= 5.6
