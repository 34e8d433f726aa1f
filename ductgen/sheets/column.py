"""The drawing sheet's right column: the table of offsets, the AIRFLOW block, the key
dimensions (labels, units and digits from :data:`ductgen.display.SHOWN`), the cautions and
the title block (paper mm)."""

from __future__ import annotations

import textwrap
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

import numpy as np

from ductgen.export.template_layout import CAUTIONS, build_date
from ductgen.geometry.inlet import InletGeometry

if TYPE_CHECKING:
    from matplotlib.axes import Axes

    from ductgen.flow.record import FlowRecord

__all__ = ["offset_rows", "right_column", "title_block"]


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


#: Baseline steps (mm) of the right column's rows: each over the 6.5 pt text box a PDF
#: reader measures (1.374 em = 3.15 mm), so no row's box runs into the next.
_ROW_MM = 3.3


def right_column(
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


def title_block(
    bg: Axes, tx: float, pw: float, g: InletGeometry, spec: Any, ident: str, version: str
) -> None:
    """The cautions and the title rows; ``ident``: the hashes row (what the sheet and its
    template were made from)."""
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
        (ident, 5.6, "normal"),
        (f"ductgen {version}    profile {g.planform.profile.name}", 7, "normal"),
        ("Dimensions in mm. Do not scale from this sheet: use the 1:1 template.", 6.5, "normal"),
    ]
    y = 42.0
    for text, fs, wt in rows:
        bg.text(tx + 4, y, text, fontsize=fs, weight=wt)
        y -= 5.6
