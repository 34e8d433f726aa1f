"""Offscreen pictures of triangle meshes: VTK through pyvista, no display (EGL or OSMesa
through Mesa).

A leaf module: numpy at import, pyvista/VTK inside :func:`render_png` only, nothing else of
ductgen but its errors, so a process that only draws (the build's second worker, which renders
the preview while the kernel worker goes on) starts in a fraction of a second. The scene
(what is drawn round the part) is composed by :mod:`ductgen.sheets.preview`.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ductgen.errors import ExportError

__all__ = ["GL_PACKAGES", "MARGIN", "gl_message", "render_png", "warm_up_drawing"]


#: Debian/Ubuntu packages that offscreen VTK rendering needs on a bare machine.
GL_PACKAGES = "libgl1 libegl1 libegl-mesa0 libgl1-mesa-dri libx11-6 libxrender1"


#: Empty border kept round the part on each side, as a fraction of the picture's width or
#: height (common practice for product pictures, no source).
MARGIN = 0.06


def _projected_box(pl: Any, points: np.ndarray, w: int, h: int) -> tuple[int, int, int, int]:
    """Pixel box (row0, row1, col0, col1) of ``points`` (N, 3) seen by the plotter's camera
    (its composite projection, the same transform the renderer applies)."""
    cam = pl.renderer.GetActiveCamera()
    m = cam.GetCompositeProjectionTransformMatrix(w / h, -1.0, 1.0)
    a = np.array([[m.GetElement(i, j) for j in range(4)] for i in range(4)])
    q = np.column_stack([points, np.ones(len(points))]) @ a.T
    ndc = q[:, :2] / q[:, 3:4]
    cols = (ndc[:, 0] + 1.0) * 0.5 * w - 0.5
    rows = (1.0 - ndc[:, 1]) * 0.5 * h - 0.5  # rows grow downward
    return (
        int(np.floor(rows.min())),
        int(np.ceil(rows.max())),
        int(np.floor(cols.min())),
        int(np.ceil(cols.max())),
    )


def _framed(pl: Any, margin: float, points: np.ndarray) -> np.ndarray:
    """Screenshot with the part (every drawn point, ``points`` (N, 3) mm) centred and
    ``margin`` free on its tightest sides.

    The part's pixel box is its points projected by the camera (no picture needed); the
    camera is then panned by the box's offset from the centre (at the focal distance, a
    pixel spans 2·d·tan(angle/2)/height) and moved along its view so the box fills
    1 − 2·margin of the picture; further passes (at most twelve) correct what the
    perspective leaves. One picture is rendered, at the end.
    """
    w, h = (int(v) for v in pl.window_size)
    for _ in range(12):
        r0, r1, c0, c1 = _projected_box(pl, points, w, h)
        fill = max((c1 - c0 + 1) / w, (r1 - r0 + 1) / h)
        centred = abs(c0 - (w - 1 - c1)) < 0.005 * w and abs(r0 - (h - 1 - r1)) < 0.005 * h
        if centred and abs(fill - (1 - 2 * margin)) < 0.005:
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
        dy = 0.5 * (h - 1) - 0.5 * (r0 + r1)
        shift = per_px * (dx * right + dy * up)
        zoom = min((1 - 2 * margin) * w / (c1 - c0 + 1), (1 - 2 * margin) * h / (r1 - r0 + 1))
        # dolly along the view (the view angle stays): the picture scales as 1 / distance
        focal = focal + shift
        cam.focal_point, cam.position = tuple(focal), tuple(focal - view * d / zoom)
    pl.renderer.ResetCameraClippingRange()
    pl.render()
    return pl.screenshot(return_img=True, transparent_background=False)


def _skin_plate(opening: np.ndarray, margin: float) -> Any:
    """The skin at z = 0 as a flat plate with the opening (CCW (K, 2) mm) as a hole."""
    import pyvista as pv

    x0, y0 = opening.min(axis=0) - margin
    x1, y1 = opening.max(axis=0) + margin
    rect = np.array([[x0, y0], [x1, y0], [x1, y1], [x0, y1]])
    pts = np.column_stack([np.vstack([rect, opening[::-1]]), np.zeros(4 + len(opening))])
    loops = np.hstack([[4, 0, 1, 2, 3], [len(opening), *range(4, 4 + len(opening))]])
    return pv.PolyData(pts).delaunay_2d(edge_source=pv.PolyData(pts, faces=loops))


def warm_up_drawing() -> None:
    """Worker job: import the drawing stack (pyvista and its plotting, VTK) now, so a
    picture drawn next does not wait for it (about a second here; a build queues this in its
    second worker when that worker has finished its solids, :mod:`ductgen.pipeline.ahead`)."""
    import pyvista.plotting  # noqa: F401
    from vtkmodules.vtkCommonCore import vtkLogger  # noqa: F401


def render_png(
    verts: np.ndarray,
    faces: np.ndarray,
    opening: np.ndarray | None = None,
    size: tuple[int, int] = (1600, 1000),
    colour: str = "#c9a86b",
    panel: tuple[np.ndarray, np.ndarray] | None = None,
    marks: dict[str, Any] | None = None,
    clip_by: tuple[np.ndarray, np.ndarray] | None = None,
) -> bytes:
    """Shaded 3D view of a triangle mesh (vertices mm (N, 3), faces (M, 3)), seen from above,
    upstream and to one side, centred with :data:`MARGIN` free round it.

    With ``opening`` (the skin opening, CCW (K, 2) mm) the mesh is a cutter: it is clipped at
    the skin plane and a skin plate with the opening is drawn, so the picture shows
    the cavity as it looks let into a panel.

    With ``panel`` (vertices (N, 3), faces (M, 3), model coordinates) a curved skin panel is
    drawn round the part, with the part's cut-out in it.

    With ``clip_by`` (a skin patch without the cut-out, its normals outward) the mesh keeps
    only what lies inside the skin: a curved cutter's overcut above the skin is cut away, as
    the flat cutter's is at the skin plane, so the cavity shows.

    With ``marks`` (:func:`patch_marks`, model coordinates): the patch's edges and the cut
    edge as dark lines, the datum as a red pin (a ball on a short stalk along the skin's
    normal, so a flange over it does not hide it) and the flow direction as a blue arrow.

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
        img = _draw(pv, verts, faces, (opening, panel, marks, clip_by), size, colour)
    except Exception as err:  # VTK raises plain RuntimeError/ValueError on GL failures
        raise ExportError(gl_message(f"{type(err).__name__}: {err}")) from err
    from PIL import Image

    buf = io.BytesIO()
    # zlib level 3: the same pixels, ~20 % larger than level 6 in a third of the time
    # (optimize=True: 5 s more)
    Image.fromarray(np.asarray(img)).save(buf, format="PNG", compress_level=3)
    return buf.getvalue()


def _draw(
    pv: Any,
    verts: np.ndarray,
    faces: np.ndarray,
    extras: tuple[Any, Any, Any, Any],
    size: tuple[int, int],
    colour: str,
) -> Any:
    """The picture's pixels: :func:`render_png`'s scene (``extras`` = its ``opening``,
    ``panel``, ``marks`` and ``clip_by``) drawn offscreen and framed."""
    opening, panel, marks, clip_by = extras
    mesh, plate = _clipped(verts, faces, opening, clip_by)
    pl = pv.Plotter(off_screen=True, window_size=list(size))
    pl.set_background("white", top="#dfe7ef")
    pl.add_mesh(mesh, color=colour, smooth_shading=True, specular=0.3, specular_power=20)
    edges = mesh.extract_feature_edges(
        35.0, boundary_edges=False, manifold_edges=False, non_manifold_edges=False
    )
    if edges.n_points:
        pl.add_mesh(edges, color="#3a3a3a", line_width=1.5)
    if plate is not None:
        pl.add_mesh(plate, color="#9aa3ad", specular=0.2, smooth_shading=False)
    if panel is not None:
        plate = _polydata(*panel)
        pl.add_mesh(plate, color="#9aa3ad", opacity=0.55, smooth_shading=True)
    if marks is not None:
        _add_marks(pl, marks, mesh.bounds)
    pl.enable_lightkit()
    _aim(pl, (plate if plate is not None else mesh).bounds)
    drawn = [np.asarray(mesh.points)]
    if plate is not None:
        drawn.append(np.asarray(plate.points))
    img = _framed(pl, MARGIN, np.vstack(drawn))
    pl.close()
    return img


def _clipped(
    verts: np.ndarray,
    faces: np.ndarray,
    opening: np.ndarray | None,
    clip_by: tuple[np.ndarray, np.ndarray] | None,
) -> tuple[Any, Any]:
    """The mesh to draw (pyvista, mm, with point normals split at 35° creases) and the flat
    skin plate round a cutter's ``opening`` (None without one): a cutter is clipped at the
    skin plane, or inside ``clip_by`` on a curved skin (see :func:`render_png`)."""
    import pyvista as pv

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
    if clip_by is not None:
        mesh = mesh.clip_surface(_polydata(*clip_by), invert=True)
        mesh = mesh.extract_surface(algorithm="dataset_surface")
    mesh = mesh.compute_normals(cell_normals=False, split_vertices=True, feature_angle=35.0)
    return mesh, plate


def _aim(pl: Any, b: Any) -> None:
    """Point the camera at the box ``b`` (xmin, xmax, ymin, ymax, zmin, zmax; mm) from
    above, upstream and to one side, so the ramp, walls and lip all show."""
    c = np.array([(b[0] + b[1]) / 2, (b[2] + b[3]) / 2, (b[4] + b[5]) / 2])
    span = max(b[1] - b[0], b[3] - b[2], b[5] - b[4])
    pl.camera_position = [tuple(c + span * np.array([-0.55, -0.85, 0.75])), tuple(c), (0, 0, 1)]


def _polydata(verts: np.ndarray, faces: np.ndarray) -> Any:
    """A pyvista triangle mesh (vertices (N, 3) mm, faces (M, 3))."""
    import pyvista as pv

    tri = np.hstack([np.full((len(faces), 1), 3, dtype=np.int64), np.asarray(faces, np.int64)])
    return pv.PolyData(np.asarray(verts, dtype=float), tri.ravel())


def _add_marks(pl: Any, marks: dict[str, Any], bounds: Any) -> None:
    """Draw :func:`patch_marks` (edges, datum pin, flow arrow) into a pyvista plotter."""
    import pyvista as pv

    span = max(bounds[1] - bounds[0], bounds[3] - bounds[2], bounds[5] - bounds[4])
    for line in marks.get("lines", ()):
        pl.add_mesh(pv.lines_from_points(np.asarray(line, float)), color="#2b2b2b", line_width=2)
    datum, up = np.asarray(marks["datum"], float), np.asarray(marks["normal"], float)
    top = datum + 0.06 * span * up
    pl.add_mesh(pv.Line(datum, top), color="#b00020", line_width=3)
    pl.add_mesh(pv.Sphere(radius=0.012 * span, center=top), color="#b00020")
    tail, head = (np.asarray(p, float) for p in marks["arrow"])
    d = head - tail
    arrow = pv.Arrow(
        start=tail,
        direction=d,
        scale=float(np.linalg.norm(d)),
        tip_length=0.18,
        tip_radius=0.05,
        shaft_radius=0.015,
    )
    pl.add_mesh(arrow, color="#1f5fa0")


def gl_message(detail: str) -> str:
    """The error a failed render gives: what failed and which packages to install."""
    return (
        "preview.png: offscreen OpenGL rendering failed "
        f"({detail}). On Debian/Ubuntu install: apt-get install {GL_PACKAGES}; "
        "or leave 'sheet' out of --only"
    )
