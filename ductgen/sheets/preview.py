"""``NAME-preview.png``: a shaded 3D picture of the insert (or the cutter) via VTK offscreen.

The picture is rendered with pyvista/VTK off screen (EGL or OSMesa through Mesa; no display
needed, ~1 s measured) from the triangulation the build already made
(``ctx.solids[kind]["mesh"]``), or from a draft triangulation of the cutter made in the kernel
worker when no solid was built in this run. This module composes the scene (the skin patch,
its marks, the plate round a flat cutter); :mod:`ductgen.render` draws it, in a worker process
(the build's second one, beside the kernel worker, or the kernel worker itself), so a broken
OpenGL stack cannot take the build down: it becomes an :class:`ExportError` that says which
system libraries are missing. matplotlib 3D is not used: it mis-orders faces on these shapes
(seen on this stack).
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np

from ductgen.errors import ExportError, GeometryError
from ductgen.render import gl_message, render_png
from ductgen.sheets.skin_patch import curved_panel, patch_marks
from ductgen.solids.jobs import cutter_mesh_job

if TYPE_CHECKING:
    from ductgen.design import Design
    from ductgen.geometry.panel_surface import PanelFrame

__all__ = ["preview_png"]

#: The part the picture shows: the first of these the build made.
_KINDS = ("insert", "cutter", "plug")

Tri = tuple[np.ndarray, np.ndarray]


def _scene(
    d: Design, kind: str
) -> tuple[np.ndarray | None, Tri | None, dict[str, Any], Tri | None]:
    """What the picture shows round a part of ``kind`` (model coordinates, mm): a flat
    cutter's opening (the plate is drawn round it), or a patch of the skin with the part's
    cut-out; the marks on it; the skin patch a cutter is clipped by (see :func:`render_png`)."""
    g = d.geometry
    turned = d.placement.plug_map if kind == "plug" else None
    clip_by = None
    if d.skin.is_flat and kind == "cutter":  # the flat plate, the cutter clipped under it
        opening = g.planform.outline(300)
        span = float(np.ptp(opening[:, 0]))
        around = np.vstack([opening.min(axis=0), opening.max(axis=0)])
        around = around + np.array([[-1.0], [1.0]]) * (0.3 * span - 20.0)
        return opening, None, patch_marks(d.skin, around, opening, g.length_mm, g.width_mm), None
    hole = d.layout.opening_xy if kind == "cutter" else d.layout.cutout_xy
    panel = curved_panel(d.skin, d.plug_trim_xy, hole, turned=turned)
    marks = patch_marks(d.skin, d.plug_trim_xy, hole, g.length_mm, g.width_mm, turned)
    if kind == "cutter":  # cut its overcut away along the skin, so the cavity shows
        clip_by = curved_panel(d.skin, d.plug_trim_xy, None)
    return None, panel, marks, clip_by


def _in_frame(
    frame: PanelFrame, mesh: Tri, panel: Tri, clip_by: Tri | None, marks: dict[str, Any]
) -> tuple[Tri, Tri, Tri | None, dict[str, Any]]:
    """The part's mesh, the panel, the clipping patch and the marks moved into the user's
    panel's datum frame (mm)."""
    mesh = (frame.to_local(mesh[0]), mesh[1])
    panel = (frame.to_local(panel[0]), panel[1])
    if clip_by is not None:
        clip_by = (frame.to_local(clip_by[0]), clip_by[1])
    marks = {
        "lines": [frame.to_local(p) for p in marks["lines"]],
        "datum": frame.to_local(marks["datum"])[0],
        "normal": marks["normal"] @ frame.axes.T,
        "arrow": frame.to_local(marks["arrow"]),
    }
    return mesh, panel, clip_by, marks


def preview_png(ctx: Any, worker: Any = None, renderer: Any = None) -> bytes:
    """PNG of the built insert, else the cutter or plug; builds a draft cutter mesh if none.
    With ``ctx.cache`` (the solid cache), a picture of the same meshes is taken from it.

    Args:
        ctx: the build context (its design and any solids already built).
        worker: a :class:`~ductgen.worker.KernelWorker` (default: the process-wide one), for
            the draft cutter mesh.
        renderer: the worker that draws the picture (default: ``worker``).
    """
    from ductgen.worker import default_worker

    w = worker or default_worker()
    draw = renderer or w
    kind = next((k for k in _KINDS if k in ctx.solids), None)
    if kind is None:
        kind, mesh = "cutter", w.run(cutter_mesh_job, ctx.design)
    else:
        mesh = ctx.solids[kind].mesh
    d = ctx.design
    opening, panel, marks, clip_by = _scene(d, kind)
    frame = d.panel_frame
    if frame is not None and panel is not None:  # the user's panel: view it in the datum's
        # frame, as the analytic skins are viewed
        mesh, panel, clip_by, marks = _in_frame(frame, mesh, panel, clip_by, marks)
    from ductgen.cache import cached_bytes, kernel_versions, source_fingerprint

    def picture() -> bytes:
        try:
            return draw.run_within(
                120.0,
                render_png,
                mesh[0],
                mesh[1],
                opening,
                panel=panel,
                marks=marks,
                clip_by=clip_by,
            )
        except GeometryError as err:  # the renderer crashed the worker (no GL driver at all)
            raise ExportError(gl_message(err.detail)) from err

    store = getattr(ctx, "cache", None)
    if store is None:
        return picture()
    # the same picture of the same meshes: from the solid cache
    code = source_fingerprint(("sheets/preview.py", "render.py"))
    parts = ("preview", kernel_versions(("vtk",)), code, mesh, opening, panel, marks, clip_by)
    return cached_bytes(store, parts, picture)
