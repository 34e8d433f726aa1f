"""``NAME-sheet.pdf``: one dimensioned drawing sheet of the inlet (matplotlib).

A3 landscape (420 × 297 mm) for ``template.paper = "A4"``, ANSI B / tabloid landscape
(431.8 × 279.4 mm) for ``"Letter"``. The views are drawn at a standard scale chosen to fit
(stated in each view's title): plan view of the skin opening, centreline section (skin,
ramp floor, lip, throat and transition, drawn on the skin in the datum's frame:
``sheets/section.py``), an enlarged lip detail, both plan and section marking the datum; the
PLACEMENT block (``sheets/placement.py``: the frame, the datum, the outlet's centre and
axis); the table of offsets (x, half-width, floor depth) at every station of the profile
(marked ``*``) and at 5 % steps, the key dimensions, a title block and the cautions (README,
Cautions). Every label of a view is placed clear of its lines (``sheets/views.py``); the
right column's rows are spaced over the text boxes a PDF reader measures. Dimensions in mm.
"""

from __future__ import annotations

import io
import textwrap
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

import numpy as np

from ductgen.export.template_layout import CAUTIONS, build_date
from ductgen.geometry.inlet import InletGeometry
from ductgen.sheets.placement import datum_label, placement_lines
from ductgen.sheets.section import section_extent, section_view
from ductgen.sheets.views import TITLE_MM, View, scale_for, scale_text
from ductgen.stamp import build_datetime
from ductgen.units import MM_PER_INCH

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure
    from matplotlib.typing import RcKeyType

    from ductgen.design import Design
    from ductgen.flow.record import FlowRecord

    _Size = tuple[float, float]  # paper (width, height), mm
    _Box = tuple[float, float, float, float]  # x, y, width, height on the paper, mm

__all__ = ["SHEET_MM", "offset_rows", "sheet_pdf"]

#: template.paper → drawing sheet (width, height) mm, landscape.
SHEET_MM: dict[str, tuple[float, float]] = {"A4": (420.0, 297.0), "Letter": (431.8, 279.4)}
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


def _plan(fig: Figure, page: _Size, box: _Box, g: InletGeometry, datum: str = "datum") -> float:
    pf, length, w = g.planform, g.length_mm, g.width_mm
    s = scale_for((length * 1.25, w * 1.6), (box[2], box[3] - TITLE_MM))
    v = View(fig, page, box, (0.5 * length, 0.5 * TITLE_MM / s), s)
    o = pf.outline(400)
    v.line(np.vstack([o, o[:1]]))
    v.line([[-0.06 * length, 0], [1.06 * length, 0]], colour="0.4", lw=0.3, ls=(0, (8, 2, 1, 2)))
    for x in pf.node_x_mm:
        hw = float(pf.half_width(x))
        v.line([[x, -hw], [x, hw]], colour="0.75", lw=0.25)
    v.datum((0.0, 0.0))
    v.dim((length, -0.5 * w), (length, 0.5 * w), (0.08 * length, 0.0), f"W {w:.2f}")
    v.dim((0, -0.5 * w), (length, -0.5 * w), (0.0, -0.18 * w), f"L {length:.2f}")
    half_apex = 0.5 * pf.apex_width_mm
    v.dim((0, -half_apex), (0, half_apex), (-0.05 * length, 0.0), f"{pf.apex_width_mm:.2f}")
    v.arrow((0.1 * length, 0.62 * w), (0.25 * length, 0.62 * w))
    v.label("FLOW", (0.05 * length, 0.62 * w), 7.0)
    v.label(datum, (0.0, 0.0), 6.0, colour="#b00020")
    v.finish()
    return s


def _lip_detail(fig: Figure, page: _Size, box: _Box, g: InletGeometry) -> float:
    lip = g.lip
    nose = lip.nose()
    a, t = lip.semi_major_mm, lip.thickness_mm
    s = scale_for((3.2 * a + 2 * t, 3.0 * t), (box[2], box[3] - TITLE_MM))
    v = View(fig, page, box, (lip.station_mm + 0.8 * a, lip.centre_z_mm + 0.5 * TITLE_MM / s), s)
    end = lip.nose_end_mm + 1.2 * a
    v.fill(np.vstack([nose, [[end, nose[-1, 1]], [end, nose[0, 1]]]]))
    v.line([[lip.station_mm - a, 0], [lip.nose_end_mm + 1.3 * a, 0]], colour="0.5", lw=0.4)
    v.dim((end, nose[-1, 1]), (end, nose[0, 1]), (0.25 * a, 0.0), f"t {t:.2f}")
    v.dim(
        (lip.station_mm, nose[-1, 1]), (lip.nose_end_mm, nose[-1, 1]), (0.0, -0.6 * t), f"a {a:.2f}"
    )
    v.label(
        f"{lip.style} lip, elliptical nose {lip.nose_ratio:g}:1",
        (lip.station_mm - 0.5 * a, lip.centre_z_mm + 1.1 * t),
        6.5,
    )
    v.finish()
    return s


def sheet_pdf(
    g: InletGeometry,
    spec: Any,
    spec_hash: str,
    version: str,
    preview: bytes | None = None,
    flow: FlowRecord | None = None,
    split_x_mm: tuple[float, ...] = (),
    skin_lines: tuple[tuple[str, str], ...] = (),
    design: Design | None = None,
) -> bytes:
    """Encode the drawing sheet PDF.

    ``split_x_mm``: stations (mm) where the insert is split across the flow, drawn on the
    centreline section.

    Args:
        g: inlet geometry; spec: the spec (name, template units and paper).
        spec_hash: ``spec_sha256``; version: ductgen version for the title block.
        preview: optional PNG drawn in the picture box.
        flow: the build's flow record, drawn as the AIRFLOW block when given.
        skin_lines: (name, value) lines on the skin, added to the key dimensions (a
            curved skin: its radii, how the template was developed).
        design: the design ``g`` belongs to: on a curved skin or the user's panel the
            section is drawn on the skin and the PLACEMENT block says where the datum and
            the outlet sit (``sheets/placement.py``); without it the section is drawn flat.
    """
    import logging

    from matplotlib import rc_context
    from matplotlib.backends.backend_pdf import PdfPages
    from matplotlib.figure import Figure
    from matplotlib.patches import Rectangle

    logging.getLogger("matplotlib.font_manager").setLevel(logging.ERROR)
    page = SHEET_MM[spec.template.paper]
    pw, ph = page
    placed = placement_lines(design) if design is not None else ()
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
        lip_w = (0.30 if placed else 0.45) * (tx - 18)
        plan_box, section_box = _split(ph, tx - 18, g, design)
        views = [
            (
                "PLAN VIEW (skin opening, outer surface)",
                plan_box,
                lambda f, p, b, gg: _plan(f, p, b, gg, datum_label(design)),
            ),
            (
                "CENTRELINE SECTION" + (" (datum frame)" if placed else ""),
                section_box,
                lambda f, p, b, gg: section_view(f, p, b, gg, design, tuple(split_x_mm)),
            ),
            ("LIP DETAIL", (14, 14, lip_w, 64), _lip_detail),
        ]
        for title, box, fn in views:
            s = fn(fig, page, box, g)
            bg.text(
                box[0],
                box[1] + box[3] - 1,
                f"{title}   scale {scale_text(s)}",
                fontsize=7.5,
                weight="bold",
                va="top",
            )
        bx = 14 + lip_w + 4
        if placed:
            _placement_block(bg, bx, 78.0, placed)
            bx += 96.0
        if preview:
            from PIL import Image

            img = np.asarray(Image.open(io.BytesIO(preview)).convert("RGB"))
            bw = tx - 4 - bx
            bh = min(64.0, bw * img.shape[0] / img.shape[1])
            iax = fig.add_axes((bx / pw, 12 / ph, bw / pw, bh / ph))
            iax.imshow(img, interpolation="bilinear")
            iax.set_axis_off()
        _column(bg, tx, ph, g, flow, skin_lines)
        _title_block(bg, tx, pw, g, spec, spec_hash, version)
        pdf.savefig(fig)
    return buf.getvalue()


def _split(ph: float, width: float, g: InletGeometry, design: Design | None) -> tuple[_Box, _Box]:
    """Plan and section boxes (paper mm) over the band from 82 mm to the top margin: the
    section gets the height that gives it the largest scale the plan's own scale allows
    (the plan never drops below its scale in 111 mm)."""
    top, bottom = ph - 16.0, 82.0
    plan_ext = (g.length_mm * 1.25, g.width_mm * 1.6)
    sec_ext = section_extent(g, design)
    floor = scale_for(plan_ext, (width, 111.0 - TITLE_MM))
    best = (0.0, 111.0)
    for h_plan in np.arange(150.0, 59.0, -2.0):
        if scale_for(plan_ext, (width, h_plan - TITLE_MM)) < floor:
            continue
        s = scale_for(sec_ext, (width - 10.0, top - bottom - h_plan - 12.0 - TITLE_MM))
        if s > best[0]:
            best = (s, float(h_plan))
    h_plan = best[1]
    # of the heights that give the best section scale, the plan takes the most
    while (
        h_plan + 2.0 <= 150.0
        and scale_for(sec_ext, (width - 10.0, top - bottom - h_plan - 14.0 - TITLE_MM)) >= best[0]
    ):
        h_plan += 2.0
    h_sec = top - bottom - h_plan - 4.0
    return (14.0, top - h_plan, width, h_plan), (14.0, bottom, width, h_sec)


#: Baseline steps (mm) of the right column's rows: each over the 6.5 pt text box a PDF
#: reader measures (1.374 em = 3.15 mm), so no row's box runs into the next.
_ROW_MM = 3.3


def _placement_block(bg: Axes, x: float, top: float, lines: tuple[tuple[str, str], ...]) -> None:
    """The PLACEMENT block (``sheets/placement.py``) from ``top`` (paper mm) down."""
    bg.text(x, top - 1, "PLACEMENT (where it sits)", fontsize=7.5, weight="bold", va="top")
    y = top - 9.0
    for k, v in lines:
        bg.text(x, y, k, fontsize=6.2)
        bg.text(x + 27, y, v, fontsize=6.2)
        y -= 3.2


def _column(
    bg: Axes,
    tx: float,
    ph: float,
    g: InletGeometry,
    flow: FlowRecord | None,
    extra: tuple[tuple[str, str], ...],
) -> None:
    """The right column above the cautions (its top at 105 mm): the table of offsets, the
    AIRFLOW block, the key dimensions, stacked; rows and their fonts shrink together (to
    no less than 0.75) when they would not fit, so no row's box meets the next."""
    from ductgen.flow.sheet_block import flow_block_lines

    n_flow = len(flow_block_lines(flow)) if flow is not None else 0
    need = 5.7 + len(offset_rows(g)) * _ROW_MM + 7.2 + (len(_KEY_DIMS) + 1 + len(extra)) * _ROW_MM
    if flow is not None:
        need += 7.7 + n_flow * 3.45
    k = max(0.75, min(1.0, (ph - 16.0 - 109.0) / need))
    y = _table(bg, tx, ph - 16.0, g, k)
    if flow is not None:
        y = _flow_block(bg, tx, y - 7.0 * k, flow, k)
    _key_dims(bg, tx, y - 6.5 * k, g, extra, k)


def _flow_block(bg: Axes, tx: float, top: float, flow: FlowRecord, k: float = 1.0) -> float:
    """The AIRFLOW block with its title's baseline at ``top``; returns the last row's."""
    from ductgen.flow.sheet_block import FLOW_BLOCK_TITLE, flow_block_lines

    bg.text(tx + 4, top, FLOW_BLOCK_TITLE, fontsize=7.5, weight="bold")
    y = top - 0.7 * k
    for line in flow_block_lines(flow):
        y -= 3.45 * k
        bg.text(tx + 4, y, line, fontsize=6.5 * k)
    return y


def _table(bg: Axes, tx: float, top: float, g: InletGeometry, k: float = 1.0) -> float:
    """The table of offsets from ``top``; returns the last row's baseline (mm)."""
    rows = offset_rows(g)
    y = top
    bg.text(tx + 4, y, "TABLE OF OFFSETS (mm)   * = profile station", fontsize=7.5, weight="bold")
    y -= 5.5 * k
    cols = (tx + 4, tx + 22, tx + 48, tx + 78)
    for cx, head in zip(cols, ("x/L", "x", "half-width", "floor depth"), strict=True):
        bg.text(cx, y, head, fontsize=6.8 * k, weight="bold")
    y -= 0.2 * k
    for r in rows:
        y -= _ROW_MM * k
        mark = "*" if r["station"] else " "
        cells = (
            f"{r['x_over_L']:.3f}{mark}",
            f"{r['x_mm']:.2f}",
            f"{r['half_width_mm']:.3f}",
            f"{r['floor_depth_mm']:.3f}",
        )
        for cx, c in zip(cols, cells, strict=True):
            bg.text(cx, y, c, fontsize=6.5 * k, weight="bold" if r["station"] else "normal")
    return y


#: The key dimensions' names (their values: :func:`_key_dims`).
#: The KEY DIMENSIONS rows: report key (label, unit and digits from ``display.SHOWN``) and
#: the value of the geometry (mm, deg, mm²); the lip's row is :func:`_lip_row`, after the
#: max wall divergence.
_KEY_DIMS: tuple[tuple[str, Callable[[InletGeometry], float]], ...] = (
    ("throat_width_mm", lambda g: g.width_mm),
    ("throat_depth_mm", lambda g: g.depth_mm),
    ("ramp_length_mm", lambda g: g.length_mm),
    ("ramp_angle_deg", lambda g: g.floor.angle_deg),
    ("ramp_entry_radius_mm", lambda g: g.floor.entry_radius_mm),
    ("floor_drop_mm", lambda g: g.drop_mm),
    ("apex_width_mm", lambda g: g.planform.apex_width_mm),
    ("max_wall_divergence_deg", lambda g: g.planform.max_divergence_deg),
    ("throat_area_mm2", lambda g: g.throat_area_mm2),
)


def _lip_row(g: InletGeometry) -> tuple[str, str]:
    lip = g.lip
    return "lip", f"{lip.style}, t {lip.thickness_mm:.2f} mm, nose {lip.nose_ratio:g}:1"


def _key_rows(g: InletGeometry) -> list[tuple[str, str]]:
    """The KEY DIMENSIONS rows (label, value) of the geometry."""
    from ductgen.display import SHOWN

    rows = [(SHOWN[k].ascii_label, SHOWN[k].ascii_text(get(g))) for k, get in _KEY_DIMS]
    rows.insert(8, _lip_row(g))
    return rows


def _key_dims(
    bg: Axes,
    tx: float,
    top: float,
    g: InletGeometry,
    extra: tuple[tuple[str, str], ...] = (),
    k: float = 1.0,
) -> None:
    y = top
    bg.text(tx + 4, y, "KEY DIMENSIONS", fontsize=7.5, weight="bold")
    y -= 0.7 * k
    for name, value in (*_key_rows(g), *extra):
        y -= _ROW_MM * k
        bg.text(tx + 4, y, name, fontsize=6.5 * k)
        bg.text(tx + 42, y, value, fontsize=6.5 * k)


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
