"""``NAME-preview.png``: a shaded 3D picture of the insert (or the cutter) via VTK offscreen.

The picture is rendered with pyvista/VTK off screen (EGL or OSMesa through Mesa; no display
needed, ~1 s measured) from the triangulation the build already made
(``ctx.solids[kind]["mesh"]``), or from a draft triangulation of the cutter made in the kernel
worker when no solid was built in this run. Rendering also runs in the worker process, so a
broken OpenGL stack cannot take the build down: it becomes an :class:`ExportError` that says
which system libraries are missing. matplotlib 3D is not used: it mis-orders faces on these
shapes (seen on this stack).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ductgen.errors import ExportError, GeometryError
from ductgen.solids.jobs import cutter_mesh_job

__all__ = ["GL_PACKAGES", "MARGIN", "curved_panel", "preview_png", "render_png"]

#: Debian/Ubuntu packages that offscreen VTK rendering needs on a bare machine.
GL_PACKAGES = "libgl1 libegl1 libegl-mesa0 libgl1-mesa-dri libx11-6 libxrender1"

_KINDS = ("insert", "cutter", "plug")

#: Empty border kept round the part on each side, as a fraction of the picture's width or
#: height (common practice for product pictures, no source).
MARGIN = 0.06


def _ink(img: np.ndarray, background: np.ndarray) -> tuple[int, int, int, int] | None:
    """Pixel box (row0, row1, col0, col1) of what differs from the background picture."""
    diff = np.any(np.abs(img.astype(int) - background.astype(int)) > 6, axis=2)
    rows, cols = np.nonzero(diff.any(axis=1))[0], np.nonzero(diff.any(axis=0))[0]
    if len(rows) == 0:
        return None
    return int(rows[0]), int(rows[-1]), int(cols[0]), int(cols[-1])


def _framed(pl: Any, margin: float) -> np.ndarray:
    """Screenshot with the part centred and ``margin`` free on its tightest sides.

    One picture of the background alone and one of the scene give the part's pixel box;
    the camera is then panned by its offset from the centre (at the focal distance, a pixel
    spans 2·d·tan(angle/2)/height) and moved along its view so the box fills 1 − 2·margin
    of the picture;
    further passes (at most six) correct what the perspective leaves, stepping back first
    when the part runs off the picture.
    """
    actors = list(pl.renderer.actors.values())
    for a in actors:
        a.SetVisibility(False)
    pl.render()
    background = pl.screenshot(return_img=True, transparent_background=False)
    for a in actors:
        a.SetVisibility(True)
    pl.render()
    img = pl.screenshot(return_img=True, transparent_background=False)
    h, w = img.shape[:2]
    for _ in range(6):
        box = _ink(img, background)
        if box is None:
            return img
        r0, r1, c0, c1 = box
        clipped = r0 == 0 or c0 == 0 or r1 == h - 1 or c1 == w - 1
        fill = max((c1 - c0 + 1) / w, (r1 - r0 + 1) / h)
        centred = abs(c0 - (w - 1 - c1)) < 0.01 * w and abs(r0 - (h - 1 - r1)) < 0.01 * h
        if not clipped and centred and abs(fill - (1 - 2 * margin)) < 0.01:
            break
        cam = pl.camera
        pos, focal = np.array(cam.position), np.array(cam.focal_point)
        d = float(np.linalg.norm(focal - pos))
        view = (focal - pos) / d
        up = np.array(cam.up) - np.dot(cam.up, view) * view
        up /= np.linalg.norm(up)
        right = np.cross(view, up)
        per_px = 2.0 * d * np.tan(np.radians(cam.view_angle) / 2.0) / h
        dx = 0.5 * (c0 + c1) - 0.5 * (w - 1)
        dy = 0.5 * (h - 1) - 0.5 * (r0 + r1)  # rows grow downward
        shift = per_px * (dx * right + dy * up)
        zoom = min((1 - 2 * margin) * w / (c1 - c0 + 1), (1 - 2 * margin) * h / (r1 - r0 + 1))
        if clipped:  # part of it is out of the picture: its true size is unknown, step back
            zoom = min(zoom, 0.6)
        # dolly along the view (the view angle stays): the picture scales as 1 / distance
        focal = focal + shift
        cam.focal_point, cam.position = tuple(focal), tuple(focal - view * d / zoom)
        pl.renderer.ResetCameraClippingRange()
        pl.render()
        img = pl.screenshot(return_img=True, transparent_background=False)
    return img


def _skin_plate(opening: np.ndarray, margin: float) -> Any:
    """The skin at z = 0 as a flat plate with the opening (CCW (K, 2) mm) as a hole."""
    import pyvista as pv

    x0, y0 = opening.min(axis=0) - margin
    x1, y1 = opening.max(axis=0) + margin
    rect = np.array([[x0, y0], [x1, y0], [x1, y1], [x0, y1]])
    pts = np.column_stack([np.vstack([rect, opening[::-1]]), np.zeros(4 + len(opening))])
    loops = np.hstack([[4, 0, 1, 2, 3], [len(opening), *range(4, 4 + len(opening))]])
    return pv.PolyData(pts).delaunay_2d(edge_source=pv.PolyData(pts, faces=loops))


def render_png(
    verts: np.ndarray,
    faces: np.ndarray,
    opening: np.ndarray | None = None,
    size: tuple[int, int] = (1600, 1000),
    colour: str = "#c9a86b",
    panel: tuple[np.ndarray, np.ndarray] | None = None,
) -> bytes:
    """Shaded 3D view of a triangle mesh (vertices mm (N, 3), faces (M, 3)), seen from above,
    upstream and to one side, centred with :data:`MARGIN` free round it.

    With ``opening`` (the skin opening, CCW (K, 2) mm) the mesh is a cutter: it is clipped at
    the skin plane and a skin plate with the opening is drawn, so the picture shows
    the cavity as it looks let into a panel.

    With ``panel`` (vertices (N, 3), faces (M, 3), model coordinates) a curved skin panel is
    drawn round the part, with the part's cut-out in it.

    Returns PNG bytes. Raises :class:`ExportError` when no offscreen OpenGL context can be made.
    """
    import io

    try:
        import pyvista as pv
        from vtkmodules.vtkCommonCore import vtkLogger, vtkObject

        # headless: VTK tries X first and logs a harmless warning before falling back to EGL
        vtkLogger.SetStderrVerbosity(vtkLogger.VERBOSITY_OFF)
        vtkObject.GlobalWarningDisplayOff()

        pv.OFF_SCREEN = True
        tri = np.hstack(
            [np.full((len(faces), 1), 3, dtype=np.int64), np.asarray(faces, dtype=np.int64)]
        )
        mesh = pv.PolyData(np.asarray(verts, dtype=float), tri.ravel())
        plate = None
        if opening is not None:
            # keep what lies below the skin plane (the cutter's overcut rises above it)
            mesh = mesh.clip(normal=(0, 0, 1), origin=(0, 0, 0), invert=True)
            mesh = mesh.extract_surface(algorithm="dataset_surface")
            span = float(np.ptp(opening[:, 0]))
            plate = _skin_plate(np.asarray(opening, dtype=float), 0.3 * span)
        mesh = mesh.compute_normals(cell_normals=False, split_vertices=True, feature_angle=35.0)
        pl = pv.Plotter(off_screen=True, window_size=list(size))
        # pyvista types this method as functools.wraps of a function that takes self first
        pl.set_background("white", top="#dfe7ef")  # type: ignore[arg-type]
        pl.add_mesh(mesh, color=colour, smooth_shading=True, specular=0.3, specular_power=20)
        edges = mesh.extract_feature_edges(
            35.0, boundary_edges=False, manifold_edges=False, non_manifold_edges=False
        )
        if edges.n_points:
            pl.add_mesh(edges, color="#3a3a3a", line_width=1.5)
        if plate is not None:
            pl.add_mesh(plate, color="#9aa3ad", specular=0.2, smooth_shading=False)
        if panel is not None:
            ptri = np.hstack(
                [np.full((len(panel[1]), 1), 3, dtype=np.int64), np.asarray(panel[1], np.int64)]
            )
            plate = pv.PolyData(np.asarray(panel[0], dtype=float), ptri.ravel())
            pl.add_mesh(plate, color="#9aa3ad", opacity=0.55, smooth_shading=True)
        pl.enable_lightkit()
        # looking from above, upstream and to one side: the ramp, walls and lip all show
        b = (plate if plate is not None else mesh).bounds
        c = np.array([(b[0] + b[1]) / 2, (b[2] + b[3]) / 2, (b[4] + b[5]) / 2])
        span = max(b[1] - b[0], b[3] - b[2], b[5] - b[4])
        pl.camera_position = [tuple(c + span * np.array([-0.55, -0.85, 0.75])), tuple(c), (0, 0, 1)]
        img = _framed(pl, MARGIN)
        pl.close()
    except Exception as err:  # VTK raises plain RuntimeError/ValueError on GL failures
        raise ExportError(_gl_message(f"{type(err).__name__}: {err}")) from err
    from PIL import Image

    buf = io.BytesIO()
    Image.fromarray(np.asarray(img)).save(buf, format="PNG")  # optimize=True: 5 s more
    return buf.getvalue()


def curved_panel(
    skin: Any,
    around_xy: np.ndarray,
    hole_xy: np.ndarray,
    turned: Any = None,
    step: float = 4.0,
) -> tuple[np.ndarray, np.ndarray]:
    """A patch of the curved skin's outer surface round a part (model coordinates, mm): a
    grid over ``around_xy``'s extent plus a margin, less the cells inside ``hole_xy`` (both
    closed outlines in design coordinates). ``turned``: the plug's map (it is built turned
    over), used instead of the skin's."""
    from matplotlib.path import Path as MplPath

    lo, hi = around_xy.min(axis=0) - 20.0, around_xy.max(axis=0) + 20.0
    nu, nv = int((hi[0] - lo[0]) / step) + 2, int((hi[1] - lo[1]) / step) + 2
    uu, vv = np.meshgrid(
        np.linspace(lo[0], hi[0], nu), np.linspace(lo[1], hi[1], nv), indexing="ij"
    )
    idx = np.arange(nu * nv).reshape(nu, nv)
    a, b, c, e = (
        idx[:-1, :-1].ravel(),
        idx[1:, :-1].ravel(),
        idx[:-1, 1:].ravel(),
        idx[1:, 1:].ravel(),
    )
    faces = np.vstack([np.column_stack([a, b, c]), np.column_stack([e, c, b])])
    uv = np.column_stack([uu.ravel(), vv.ravel()])
    inside = MplPath(hole_xy).contains_points(uv[faces].mean(axis=1))
    faces = faces[~inside]
    pts = np.column_stack([uv, np.zeros(len(uv))])
    xyz = skin.to_model(pts) if turned is None else turned(pts)
    return xyz, faces


def _gl_message(detail: str) -> str:
    return (
        "preview.png: offscreen OpenGL rendering failed "
        f"({detail}). On Debian/Ubuntu install: apt-get install {GL_PACKAGES}; "
        "or leave 'sheet' out of --only"
    )


def preview_png(ctx: Any, worker: Any = None) -> bytes:
    """PNG of the built insert, else the cutter or plug; builds a draft cutter mesh if none.
    With ``ctx.cache`` (the solid cache), a picture of the same meshes is taken from it.

    Args:
        ctx: the build context (its design and any solids already built).
        worker: a :class:`~ductgen.worker.KernelWorker` (default: the process-wide one).
    """
    from ductgen.worker import default_worker

    w = worker or default_worker()
    kind = next((k for k in _KINDS if k in ctx.solids), None)
    if kind is None:
        kind, mesh = "cutter", w.run(cutter_mesh_job, ctx.design)
    else:
        mesh = ctx.solids[kind].mesh
    d = ctx.design
    panel = None
    if d.skin.is_flat:
        opening = d.geometry.planform.outline(300) if kind == "cutter" else None
    else:  # the curved panel, with the part's cut-out, stands in for the flat skin plate
        opening = None
        hole = d.layout.opening_xy if kind == "cutter" else d.layout.cutout_xy
        turned = d.placement.plug_map if kind == "plug" else None
        panel = curved_panel(d.skin, d.plug_trim_xy, hole, turned=turned)
    frame = d.panel_frame
    if frame is not None and panel is not None:  # the user's panel: view it in the datum's
        mesh = (frame.to_local(mesh[0]), mesh[1])  # frame, as the analytic skins are viewed
        panel = (frame.to_local(panel[0]), panel[1])
    store = getattr(ctx, "cache", None)
    key = None
    if store is not None:  # the same picture of the same meshes: from the solid cache
        from ductgen.cache import fingerprint, kernel_versions, source_fingerprint

        code = source_fingerprint(("sheets/preview.py",))
        key = fingerprint("preview", kernel_versions(("vtk",)), code, mesh, opening, panel)
        entry = store.get(key)
        if entry is not None:
            return bytes(entry.blobs["png"])
    try:
        png = w.run_within(120.0, render_png, mesh[0], mesh[1], opening, panel=panel)
    except GeometryError as err:  # the renderer crashed the worker (no GL driver at all)
        raise ExportError(_gl_message(err.detail)) from err
    if key is not None and store is not None:
        store.put(key, {}, {"png": png})
    return png
