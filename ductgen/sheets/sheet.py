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
from typing import TYPE_CHECKING, Any

import numpy as np

from ductgen.design.identity import design_sha256
from ductgen.geometry.inlet import InletGeometry
from ductgen.sheets.column import offset_rows, right_column, title_block
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

__all__ = ["SHEET_MM", "offset_rows", "sheet_pdf"]  # offset_rows: sheets/column.py

#: template.paper → drawing sheet (width, height) mm, landscape.
SHEET_MM: dict[str, tuple[float, float]] = {"A4": (420.0, 297.0), "Letter": (431.8, 279.4)}
_INCH = MM_PER_INCH
_RC: dict[RcKeyType, Any] = {
    "path.simplify": False,
    "pdf.use14corefonts": True,
    "font.family": "sans-serif",
    "font.sans-serif": ["Helvetica"],
}


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
        spec_hash: ``spec_sha256``; version: ductgen version for the title block (with
            ``design``, the design's hash beside the spec's, as the template prints it).
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

    logging.getLogger("matplotlib.font_manager").setLevel(logging.ERROR)
    page = SHEET_MM[spec.template.paper]
    pw, ph = page
    placed = placement_lines(design) if design is not None else ()
    buf = io.BytesIO()
    with rc_context(_RC), PdfPages(buf, metadata=_metadata(spec.name)) as pdf:
        fig = Figure(figsize=(pw / _INCH, ph / _INCH))
        bg, tx = _frame(fig, pw, ph)
        lip_w = _views(fig, bg, page, tx, g, design, split_x_mm, bool(placed))
        bx = 14 + lip_w + 4
        if placed:
            _placement_block(bg, bx, 78.0, placed)
            bx += 96.0
        if preview:
            _picture(fig, page, preview, bx, tx)
        right_column(bg, tx, ph, g, flow, skin_lines)
        ident = f"spec sha256 {spec_hash}"
        design_hash = design_sha256(design) if design is not None else None
        if design_hash is not None:  # the template prints the design's
            ident = f"spec sha256 {spec_hash[:16]}    design sha256 {design_hash[:16]}"
        title_block(bg, tx, pw, g, spec, ident, version)
        pdf.savefig(fig)
    return buf.getvalue()


def _metadata(name: str) -> dict[str, Any]:
    """The PDF's document information for the spec ``name``; its creation date is the build
    date, so a rebuild writes the same file."""
    return {
        "Title": f"{name} drawing sheet",
        "Creator": "ductgen",
        "CreationDate": build_datetime(),
    }


def _frame(fig: Figure, pw: float, ph: float) -> tuple[Axes, float]:
    """The paper's axes (mm) with the border and the right column's rule; the column's x."""
    from matplotlib.patches import Rectangle

    bg = fig.add_axes((0, 0, 1, 1))
    bg.set_xlim(0, pw)
    bg.set_ylim(0, ph)
    bg.set_axis_off()
    bg.add_patch(Rectangle((10, 10), pw - 20, ph - 20, fill=False, lw=1.0))
    tx = pw - 10 - 118  # right column: table, dimensions, title block
    bg.plot([tx, tx], [10, ph - 10], color="k", lw=0.6)
    return bg, tx


def _views(
    fig: Figure,
    bg: Axes,
    page: _Size,
    tx: float,
    g: InletGeometry,
    design: Design | None,
    split_x_mm: tuple[float, ...],
    placed: bool,
) -> float:
    """The plan, the centreline section and the lip detail with their titles and scales;
    returns the lip detail's width (paper mm)."""
    lip_w = (0.30 if placed else 0.45) * (tx - 18)
    plan_box, section_box = _split(page[1], tx - 18, g, design)
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
    return lip_w


#: Resolution (dots per inch on the paper) the preview picture is embedded at.
PICTURE_DPI = 200.0


def _picture(fig: Figure, page: _Size, preview: bytes, bx: float, tx: float) -> None:
    """The preview PNG in the box from ``bx`` to the right column (paper mm), scaled once
    (Lanczos) to :data:`PICTURE_DPI` at its printed size and embedded as it is (the PDF
    viewer scales it: no resampling on the figure's 100 dpi grid, which printed it at
    ~100 dpi and took ~0.2 s)."""
    from PIL import Image

    pw, ph = page
    pic = Image.open(io.BytesIO(preview)).convert("RGB")
    bw = tx - 4 - bx
    bh = min(64.0, bw * pic.height / pic.width)
    size = (round(bw / _INCH * PICTURE_DPI), round(bh / _INCH * PICTURE_DPI))
    if size[0] < pic.width:
        pic = pic.resize(size, Image.Resampling.LANCZOS)
    iax = fig.add_axes((bx / pw, 12 / ph, bw / pw, bh / ph))
    iax.imshow(np.asarray(pic), interpolation="none")
    iax.set_axis_off()


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


def _placement_block(bg: Axes, x: float, top: float, lines: tuple[tuple[str, str], ...]) -> None:
    """The PLACEMENT block (``sheets/placement.py``) from ``top`` (paper mm) down."""
    bg.text(x, top - 1, "PLACEMENT (where it sits)", fontsize=7.5, weight="bold", va="top")
    y = top - 9.0
    for k, v in lines:
        bg.text(x, y, k, fontsize=6.2)
        bg.text(x + 27, y, v, fontsize=6.2)
        y -= 3.2
